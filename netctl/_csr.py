"""Canonical CSR patterns held as NumPy arrays, without scipy (private).

A :class:`~netctl.system.StructuredSystem` stores each of its matrices as a
:class:`Pattern`: the three CSR arrays of a canonical float64 matrix (duplicates merged,
no explicit zeros, column indices sorted, int64 indices, read-only) and its shape. The
engine and the structural analyses read these arrays directly; the scipy ``csr_array``
that ``system.A`` returns is built from them (sharing them) only when something asks for
it, so that a structural verb on a small file never imports scipy (issue 15: scipy.sparse
and its array-API layer cost more than the rest of such a run).

Small patterns are assembled and transposed here with NumPy; above :data:`SMALL_ENTRIES`
entries the same work goes to scipy's compiled routines, as before, so that nothing
gets slower at scale.
"""

from __future__ import annotations

import sys
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np

if TYPE_CHECKING:
    import scipy.sparse as sp

__all__ = ["Pattern", "SMALL_ENTRIES", "SparseView", "coo_pattern", "diagonal", "diagonal_mask",
           "empty_pattern", "hstack_patterns", "is_sparse", "n_diagonal", "padded", "take",
           "to_dense", "transpose_pattern", "with_full_diagonal", "without_diagonal"]

#: Up to this many entries, patterns are assembled and transposed with NumPy (no scipy
#: import); above it, with scipy's compiled routines (common practice, no source: NumPy's
#: sorts cost about as much as scipy's linear passes up to here, and the import of
#: scipy.sparse, about 0.1 s, is paid once a run anyway on networks this large).
SMALL_ENTRIES = 100_000


class Pattern(NamedTuple):
    """The CSR arrays of a canonical float64 matrix: ``data``, ``indices`` (int64,
    sorted within each row), ``indptr`` (int64) and ``shape``.

    It answers the attributes of a scipy CSR array that the engine reads (``shape``,
    ``nnz``, ``indptr``, ``indices``, ``data``, ``has_sorted_indices``), so kernels take
    either.
    """

    data: np.ndarray
    indices: np.ndarray
    indptr: np.ndarray
    shape: tuple[int, int]

    @property
    def has_sorted_indices(self) -> bool:
        """Always true (as scipy's attribute of the same name)."""
        return True

    @property
    def has_canonical_format(self) -> bool:
        """Always true (as scipy's attribute of the same name)."""
        return True

    @property
    def nnz(self) -> int:
        """Number of stored entries."""
        return int(self.indices.size)

    def to_scipy(self) -> sp.csr_array:
        """A canonical ``scipy.sparse.csr_array`` sharing these (read-only) arrays."""
        import scipy.sparse as sp

        m = sp.csr_array(self.shape, dtype=np.float64)
        m.data, m.indices, m.indptr = self.data, self.indices, self.indptr
        m.has_sorted_indices = True
        m.has_canonical_format = True
        return m

    @classmethod
    def of_scipy(cls, m: Any) -> Pattern:
        """The arrays of a canonical float64 CSR matrix with int64 indices (shared)."""
        return cls(m.data, m.indices, m.indptr, (int(m.shape[0]), int(m.shape[1])))

    def frozen(self) -> Pattern:
        """This pattern with its arrays made read-only (in place)."""
        for a in (self.data, self.indices, self.indptr):
            a.setflags(write=False)
        return self


def is_sparse(x: object) -> bool:
    """Whether ``x`` is a scipy sparse matrix or array, without importing scipy (an
    object cannot be one unless scipy.sparse is already loaded)."""
    mod = sys.modules.get("scipy.sparse")
    return mod is not None and bool(mod.issparse(x))


_EMPTY: dict[tuple[int, int], Pattern] = {}


def empty_pattern(shape: tuple[int, int]) -> Pattern:
    """A read-only pattern without entries, shared between systems of the same sizes.
    Its pointer array comes from ``np.zeros``, whose pages the operating system maps
    lazily: an empty ``B`` of a 10^7-state system costs no memory until something
    writes to it (nothing can)."""
    shape = (int(shape[0]), int(shape[1]))
    p = _EMPTY.get(shape)
    if p is None:
        if len(_EMPTY) >= 32:
            _EMPTY.clear()
        p = _EMPTY[shape] = Pattern(np.zeros(0, np.float64), np.zeros(0, np.int64),
                                    np.zeros(shape[0] + 1, np.int64), shape).frozen()
    return p


def coo_pattern(rows: np.ndarray, cols: np.ndarray, vals: np.ndarray | None,
                shape: tuple[int, int], *, count: bool = True) -> tuple[Pattern, int]:
    """The canonical pattern of coordinates ``(rows[k], cols[k]) = vals[k]`` (1.0 each
    when ``vals`` is None) and the number of duplicates merged (values summed; entries
    that sum to 0 are dropped; ``count=False`` skips counting on large inputs and
    returns 0). Indices must be in range (the caller checked them). Non-finite values
    are kept: the caller checks them. Frozen."""
    rows = np.asarray(rows, np.int64)
    cols = np.asarray(cols, np.int64)
    data = np.ones(rows.size) if vals is None else np.asarray(vals, np.float64)
    width = max(shape[1], 1)
    if rows.size > SMALL_ENTRIES:
        import scipy.sparse as sp

        n_dup = 0
        if count:  # sort-based count: faster than np.unique
            key = np.sort(rows * width + cols)
            n_dup = int(key.size - 1 - np.count_nonzero(key[1:] != key[:-1]))
            del key
        M = sp.coo_array((data, (rows, cols)), shape=shape).tocsr()
        M.sum_duplicates()
        M.eliminate_zeros()
        M.sort_indices()
        return Pattern(M.data, M.indices.astype(np.int64, copy=False),
                       M.indptr.astype(np.int64, copy=False), shape).frozen(), n_dup
    key = rows * width + cols
    order = np.argsort(key, kind="stable")
    key = key[order]
    data = data[order]
    first = np.ones(key.size, bool)
    first[1:] = key[1:] != key[:-1]
    starts = np.flatnonzero(first)
    n_dup = int(key.size - starts.size)
    if n_dup:
        data = np.add.reduceat(data, starts)
        key = key[starts]
    keep = data != 0
    if not keep.all():
        data, key = data[keep], key[keep]
    r = key // width
    indptr = np.zeros(shape[0] + 1, np.int64)
    np.cumsum(np.bincount(r, minlength=shape[0]), out=indptr[1:])
    return Pattern(np.ascontiguousarray(data, np.float64), key - r * width,
                   indptr, shape).frozen(), n_dup


def transpose_pattern(p: Pattern) -> Pattern:
    """The transpose of a canonical pattern, itself canonical and read-only.

    Reading the entries in row order and placing each in its column keeps every new row
    sorted; a canonical pattern has no duplicates, zeros or non-finite values, and
    neither has its transpose."""
    r, c = p.shape
    if p.nnz == 0:
        return empty_pattern((c, r))
    if p.nnz > SMALL_ENTRIES:
        T = p.to_scipy().T.tocsr()
        return Pattern(T.data, T.indices.astype(np.int64, copy=False),
                       T.indptr.astype(np.int64, copy=False), (c, r)).frozen()
    rows = np.repeat(np.arange(r, dtype=np.int64), np.diff(p.indptr))
    order = np.argsort(p.indices, kind="stable")
    indptr = np.zeros(c + 1, np.int64)
    np.cumsum(np.bincount(p.indices, minlength=c), out=indptr[1:])
    return Pattern(p.data[order], rows[order], indptr, (c, r)).frozen()


def diagonal_mask(p: Pattern) -> np.ndarray:
    """Boolean per row: whether the pattern stores the diagonal entry."""
    if p.nnz > SMALL_ENTRIES:
        return p.to_scipy().diagonal() != 0  # type: ignore[no-any-return]
    rows = np.repeat(np.arange(p.shape[0], dtype=np.int64), np.diff(p.indptr))
    mask = np.zeros(min(p.shape), bool)
    mask[rows[p.indices == rows]] = True
    return mask


def diagonal(p: Pattern) -> np.ndarray:
    """The diagonal's values, 0.0 where none is stored (scipy's ``M.diagonal()``)."""
    rows = np.repeat(np.arange(p.shape[0], dtype=np.int64), np.diff(p.indptr))
    on = p.indices == rows
    out = np.zeros(min(p.shape), np.float64)
    out[rows[on]] = p.data[on]
    return out


def to_dense(p: Pattern) -> np.ndarray:
    """The matrix as a dense float64 array (scipy's ``M.toarray()``)."""
    out = np.zeros(p.shape, np.float64)
    out[np.repeat(np.arange(p.shape[0], dtype=np.int64), np.diff(p.indptr)), p.indices] = p.data
    return out


def n_diagonal(p: Pattern) -> int:
    """Number of stored entries on the diagonal."""
    return int(np.count_nonzero(diagonal_mask(p)))


def padded(p: Pattern, shape: tuple[int, int]) -> Pattern:
    """The pattern grown to ``shape`` with empty rows and columns after its own (scipy's
    ``vstack`` / ``hstack`` with an empty block), read-only; shares ``data`` and
    ``indices``."""
    rows, cols = int(shape[0]), int(shape[1])
    if rows < p.shape[0] or cols < p.shape[1]:
        raise ValueError(f"padded: {shape} is smaller than {p.shape}")
    indptr = p.indptr
    if rows > p.shape[0]:
        indptr = np.concatenate([indptr, np.full(rows - p.shape[0], indptr[-1], np.int64)])
    return Pattern(p.data, p.indices, indptr, (rows, cols)).frozen()


def without_diagonal(p: Pattern) -> Pattern:
    """The pattern with its diagonal entries removed, canonical and read-only (scipy's
    ``A - dia(A.diagonal())`` with the cancelled entries eliminated). One linear pass,
    any size."""
    rows = np.repeat(np.arange(p.shape[0], dtype=np.int64), np.diff(p.indptr))
    keep = p.indices != rows
    if keep.all():
        return p
    indptr = np.zeros(p.shape[0] + 1, np.int64)
    np.cumsum(np.bincount(rows[keep], minlength=p.shape[0]), out=indptr[1:])
    return Pattern(p.data[keep], p.indices[keep], indptr, p.shape).frozen()


def with_full_diagonal(p: Pattern, value: float = 1.0) -> Pattern:
    """The square pattern with ``value`` on every diagonal entry it does not store
    (stored ones kept), canonical and read-only (scipy's ``A + dia(add)``). One linear
    pass, any size."""
    n = p.shape[0]
    rows = np.repeat(np.arange(n, dtype=np.int64), np.diff(p.indptr))
    has = np.zeros(n, bool)
    has[rows[p.indices == rows]] = True
    miss = np.flatnonzero(~has)
    if miss.size == 0:
        return p
    below = np.bincount(rows[p.indices < rows], minlength=n)  # entries left of the diagonal
    at = p.indptr[miss] + below[miss]  # insert before these (sorted) positions
    added = np.zeros(n + 1, np.int64)
    added[miss + 1] = 1
    return Pattern(np.insert(p.data, at, value), np.insert(p.indices, at, miss),
                   p.indptr + np.cumsum(added), p.shape).frozen()


def take(p: Pattern, rows: np.ndarray | None = None, cols: np.ndarray | None = None
         ) -> Pattern:
    """The submatrix of the given rows and columns (distinct indices, in the order given;
    ``None``: all), canonical and read-only (scipy's ``M[rows][:, cols]``)."""
    if p.nnz > SMALL_ENTRIES:
        M = p.to_scipy()
        if rows is not None:
            M = M[rows]
        if cols is not None:
            M = M[:, cols]
        return Pattern.of_scipy(_int64(M.tocsr())).frozen()
    r = np.repeat(np.arange(p.shape[0], dtype=np.int64), np.diff(p.indptr))
    c = p.indices
    shape = (p.shape[0] if rows is None else len(rows), p.shape[1] if cols is None else len(cols))
    keep = np.ones(r.size, bool)
    if rows is not None:
        rmap = np.full(p.shape[0], -1, np.int64)
        rmap[rows] = np.arange(len(rows))
        r = rmap[r]
        keep &= r >= 0
    if cols is not None:
        cmap = np.full(p.shape[1], -1, np.int64)
        cmap[cols] = np.arange(len(cols))
        c = cmap[c]
        keep &= c >= 0
    return coo_pattern(r[keep], c[keep], p.data[keep], shape, count=False)[0]


def hstack_patterns(a: Pattern, b: Pattern) -> Pattern:
    """``[a b]`` (equal row counts), canonical and read-only."""
    shape = (a.shape[0], a.shape[1] + b.shape[1])
    if a.nnz + b.nnz > SMALL_ENTRIES:
        import scipy.sparse as sp

        return Pattern.of_scipy(_int64(sp.hstack([a.to_scipy(), b.to_scipy()],
                                                 format="csr"))).frozen()
    ra = np.repeat(np.arange(a.shape[0], dtype=np.int64), np.diff(a.indptr))
    rb = np.repeat(np.arange(b.shape[0], dtype=np.int64), np.diff(b.indptr))
    return coo_pattern(np.concatenate([ra, rb]), np.concatenate([a.indices, b.indices
                                                                 + a.shape[1]]),
                       np.concatenate([a.data, b.data]), shape, count=False)[0]


def _int64(M: Any) -> Any:
    """A scipy CSR matrix in canonical form with int64 index arrays."""
    M.sum_duplicates()
    M.sort_indices()
    M.indices = M.indices.astype(np.int64, copy=False)
    M.indptr = M.indptr.astype(np.int64, copy=False)
    return M


class SparseView:
    """``system.A`` (``B``, ``C``, ``E``, ``H``): a scipy ``csr_array`` sharing the stored
    arrays of that part, built on first access and kept (a non-data descriptor: the
    instance's own attribute wins once set). Structural analyses read the stored arrays
    (``StructuredSystem.pattern``) and never build it, so scipy stays unloaded."""

    def __init__(self, name: str) -> None:
        self.name = name

    def __get__(self, obj: Any, owner: Any = None) -> Any:
        if obj is None:
            return self
        m = obj._parts[self.name].to_scipy()
        obj.__dict__[self.name] = m
        return m
