"""The parts a :class:`~netctl.system.StructuredSystem` is built from: canonical sparse
patterns, name lists, index arrays and node-table columns.

Orientation as everywhere (see :mod:`netctl`): ``A[v, u] != 0`` means state ``u``
influences state ``v``. Every pattern is canonicalized here: duplicates merged, explicitly
stored zeros removed, indices sorted, arrays frozen.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

import numpy as np

from netctl._csr import Pattern, empty_pattern, is_sparse
from netctl.errors import InvalidSystemError

__all__ = ["DistinctNames", "NameList", "canonical_csr", "check_not_states", "name_lookup"]


def canonical_csr(matrix: Any, shape: tuple[int, int], what: str) -> Pattern:
    """Return ``matrix`` as the :class:`~netctl._csr.Pattern` of a canonical float64 CSR
    matrix (read-only arrays).

    Canonical means: duplicates summed, explicitly stored zeros removed, column indices
    sorted. NaN or infinite entries are rejected with a message naming ``what``. A
    ``Pattern`` is taken as it is (only netctl builds them, canonical by construction).
    """
    if isinstance(matrix, Pattern):
        if matrix.shape != shape:
            raise InvalidSystemError(
                f"{what} must have shape {shape}, found {matrix.shape}. Check the number "
                "of states, inputs and outputs.")
        return matrix.frozen()
    shared = _share_canonical(matrix, shape)
    if shared is not None:
        return shared
    import scipy.sparse as sp

    if sp.issparse(matrix) and matrix.nnz == 0 and matrix.shape == shape:
        return _empty_csr(shape)
    if sp.issparse(matrix):
        m = sp.csr_array(matrix, dtype=np.float64, copy=True)
    else:
        arr = np.asarray(matrix)
        if arr.dtype == object:
            raise InvalidSystemError(f"{what} must be numeric, found an object array.")
        if arr.ndim != 2:
            raise InvalidSystemError(
                f"{what} must be two-dimensional, found an array of shape {arr.shape}.")
        m = sp.csr_array(arr.astype(np.float64))
    if m.shape != shape:
        raise InvalidSystemError(
            f"{what} must have shape {shape}, found {m.shape}. Check the number of states, "
            "inputs and outputs.")
    check_finite(m.data, what)
    m.sum_duplicates()
    m.eliminate_zeros()
    m.sort_indices()
    return Pattern(m.data, m.indices.astype(np.int64, copy=False),
                   m.indptr.astype(np.int64, copy=False), shape).frozen()


def check_finite(data: np.ndarray, what: str) -> None:
    """Refuse NaN or infinite weights, naming the matrix."""
    if data.size and not np.all(np.isfinite(data)):
        bad = int(np.count_nonzero(~np.isfinite(data)))
        raise InvalidSystemError(
            f"{what} has {bad} NaN or infinite entr{'y' if bad == 1 else 'ies'}; "
            "give finite weights, or omit the weights to analyse the pattern only.")


def _share_canonical(matrix: Any, shape: tuple[int, int]) -> Pattern | None:
    """Reuse the arrays of an already canonical float64/int64 CSR matrix (read-only views,
    no copy), or return None. Saves a full copy of large networks at every step."""
    if not is_sparse(matrix):
        return None
    import scipy.sparse as sp

    if not (isinstance(matrix, (sp.csr_array, sp.csr_matrix)) and matrix.shape == shape
            and matrix.dtype == np.float64 and matrix.indices.dtype == np.int64
            and matrix.indptr.dtype == np.int64):
        return None
    if matrix.nnz and not (matrix.has_canonical_format and np.all(matrix.data != 0)
                           and np.all(np.isfinite(matrix.data))):
        return None
    return Pattern(matrix.data.view(), matrix.indices.view(), matrix.indptr.view(),
                   shape).frozen()


def _empty_csr(shape: tuple[int, int]) -> Pattern:
    """A canonical pattern without entries, frozen and shared between systems of the same
    sizes (:func:`netctl._csr.empty_pattern`)."""
    return empty_pattern(shape)


class NameList(Sequence[str]):
    """A read-only sequence of names computed on demand, for very large systems.

    ``NameList.prefixed("x", n)`` is ``("x0", ..., f"x{n-1}")`` and
    ``NameList.from_ints(ids)`` is ``tuple(str(i) for i in ids)``, without materializing
    millions of Python strings. It compares equal to the tuple it stands for.
    """

    __slots__ = ("_prefix", "_ids", "_n", "_lookup")

    def __init__(self, prefix: str, ids: np.ndarray | None, n: int) -> None:
        self._prefix = prefix
        self._ids = ids
        self._n = int(n)
        self._lookup: dict[str, int] | None = None

    @classmethod
    def prefixed(cls, prefix: str, n: int) -> NameList:
        return cls(prefix, None, n)

    @classmethod
    def from_ints(cls, ids: Any) -> NameList:
        arr = np.asarray(ids, dtype=np.int64)
        if arr.ndim != 1 or np.unique(arr).size != arr.size:
            raise InvalidSystemError("integer names must be one-dimensional and unique.")
        arr = arr.copy()
        arr.setflags(write=False)
        return cls("", arr, arr.size)

    def __len__(self) -> int:
        return self._n

    def __getitem__(self, i: Any) -> Any:
        if isinstance(i, slice):
            return [self[k] for k in range(*i.indices(self._n))]
        k = int(i)
        if k < 0:
            k += self._n
        if not 0 <= k < self._n:
            raise IndexError(f"name index {i} out of range for {self._n} names")
        return f"{self._prefix}{k if self._ids is None else int(self._ids[k])}"

    def position(self, name: str) -> int | None:
        """Index of ``name``, or None (constant time for prefixed names)."""
        if self._ids is None:
            tail = name[len(self._prefix):] if name.startswith(self._prefix) else ""
            if tail.isdigit() and (tail == "0" or not tail.startswith("0")):
                k = int(tail)
                return k if k < self._n else None
            return None
        if self._lookup is None:
            self._lookup = {str(int(v)): k for k, v in enumerate(self._ids)}
        return self._lookup.get(name)

    def __eq__(self, other: object) -> bool:
        if isinstance(other, NameList):
            return tuple(self) == tuple(other)
        if isinstance(other, (tuple, list)):
            return len(other) == self._n and tuple(self) == tuple(other)
        return NotImplemented

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        head = ", ".join(repr(self[k]) for k in range(min(self._n, 3)))
        return f"NameList([{head}{', ...' if self._n > 3 else ''}], n={self._n})"


class DistinctNames(tuple):  # type: ignore[type-arg]
    """A tuple of names that its maker has already checked: ``str``, distinct. Readers
    that build names from a hash table or a factorization return one, so that a system
    of 10^6 states does not check a million strings a second time."""

    __slots__ = ()


def _names(names: Sequence[object] | None, count: int, prefix: str, what: str
           ) -> tuple[str, ...] | NameList:
    if type(names) is DistinctNames:
        if len(names) != count:
            raise InvalidSystemError(f"{what}: expected {count} names, found {len(names)}.")
        return names
    if names is None:
        return NameList.prefixed(prefix, count) if count > 1000 else tuple(
            f"{prefix}{i}" for i in range(count))
    if isinstance(names, NameList):
        if len(names) != count:
            raise InvalidSystemError(f"{what}: expected {count} names, found {len(names)}.")
        return names
    if isinstance(names, tuple) and all(type(x) is str for x in names):
        out = names  # already what we store; skip rebuilding a million strings
    else:
        out = tuple(str(x) for x in names)
    if len(out) != count:
        raise InvalidSystemError(f"{what}: expected {count} names, found {len(out)}.")
    if len(set(out)) != len(out):
        seen: set[str] = set()
        dup = next(x for x in out if x in seen or seen.add(x))  # type: ignore[func-returns-value]
        raise InvalidSystemError(f"{what}: the name {dup!r} is used twice; names must be unique.")
    return out


def _as_index_array(values: Any, upper: int, what: str) -> np.ndarray:
    arr = np.asarray(values)
    if arr.size == 0:
        return np.zeros(0, dtype=np.int64)
    if arr.ndim != 1:
        raise InvalidSystemError(f"{what} must be one-dimensional, found shape {arr.shape}.")
    if not np.issubdtype(arr.dtype, np.integer):
        if np.issubdtype(arr.dtype, np.floating) and np.all(np.isfinite(arr)) and np.all(
                arr == np.round(arr)):
            arr = arr.astype(np.int64)
        else:
            raise InvalidSystemError(
                f"{what} must hold integer state indices, found dtype {arr.dtype}; "
                "use StructuredSystem.from_named_edges for string names.")
    arr = arr.astype(np.int64, copy=False)
    if arr.min() < 0 or arr.max() >= upper:
        bad = arr[(arr < 0) | (arr >= upper)][0]
        raise InvalidSystemError(
            f"{what} holds the index {int(bad)}, outside 0..{upper - 1}; "
            f"indices count from 0 and there are {upper} states.")
    return arr


def _freeze(a: Any) -> Any:
    for arr in (a.data, a.indices, a.indptr):
        arr.setflags(write=False)
    return a


def _count_unique_pairs(rows: np.ndarray, cols: np.ndarray, n: int) -> int:
    if rows.size == 0:
        return 0
    key = np.sort(rows.astype(np.int64) * max(n, 1) + cols.astype(np.int64))
    return int(1 + np.count_nonzero(key[1:] != key[:-1]))  # sort-based: faster than unique


def _table(columns: Mapping[str, Any], count: int, what: str, per: str
           ) -> dict[str, np.ndarray]:
    out: dict[str, np.ndarray] = {}
    for key, col in dict(columns).items():
        arr = np.array(col, copy=True)
        if arr.shape != (count,):
            raise InvalidSystemError(
                f"{what} column {key!r} must have one value per {per} ({count}), "
                f"found shape {arr.shape}.")
        arr.setflags(write=False)
        out[str(key)] = arr
    return out


def check_not_states(disturbances: Sequence[str], states: Sequence[str]) -> None:
    """Raise :class:`~netctl.errors.InvalidSystemError` naming the first disturbance name
    that is also a state name (a disturbance is never a state)."""
    if len(disturbances) and len(states):
        clash = _first_common(disturbances, states)
        if clash is not None:
            raise InvalidSystemError(
                f"{clash!r} is both a state and a disturbance; a disturbance is never a "
                "state: rename one of them.")


def _first_common(a: Sequence[str], b: Sequence[str]) -> str | None:
    if isinstance(b, NameList):
        return next((x for x in a if b.position(x) is not None), None)
    pool = set(b)
    return next((x for x in a if x in pool), None)


def _missing(count: int, like: Any) -> np.ndarray:
    """Filler for a node-table column one side lacks: NaN for numbers, None otherwise."""
    arr = np.asarray(like) if like is not None else np.zeros(0)
    if arr.dtype.kind == "f":
        return np.full(count, np.nan)
    if arr.dtype.kind == "b":
        return np.ones(count, bool)
    out = np.empty(count, dtype=object)
    out[:] = None
    return out


def _seq(names: Any) -> Any:
    """Names as given (a NameList stays lazy), or an empty tuple for None."""
    if names is None:
        return ()
    if isinstance(names, NameList):
        return names
    return tuple(names)


def _shape(M: Any, what: str) -> tuple[int, ...]:
    shape = M.shape if hasattr(M, "shape") else np.asarray(M).shape
    if len(shape) != 2 or shape[0] != shape[1]:
        raise InvalidSystemError(f"{what} must be square (n x n), found shape {tuple(shape)}.")
    return tuple(shape)


def _is_bool(M: Any) -> bool:
    dt = M.dtype if hasattr(M, "dtype") else np.asarray(M).dtype
    return bool(dt == np.bool_)


def _as_list(v: Any) -> list[Any]:
    if isinstance(v, (str, bytes)) or not isinstance(v, Iterable):
        return [v]
    return list(v)


def _py(v: Any) -> Any:
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and math.isnan(v):
        return None
    return v


def _node_table_from_attrs(attrs: Sequence[Mapping[str, Any]]) -> dict[str, np.ndarray]:
    """Turn per-node attribute dicts into node-table columns.

    Known numeric columns become float (NaN where missing); ``actuator``/``sensor``
    become bool (missing means allowed). Other attributes are kept as object arrays.
    """
    n = len(attrs)
    keys: list[str] = []
    for a in attrs:
        for k in a:
            if k not in keys:
                keys.append(k)
    table: dict[str, np.ndarray] = {}
    for k in keys:
        vals = [a.get(k) for a in attrs]
        if k in ("actuator", "sensor"):
            table[k] = np.array([True if v is None else _truthy(v) for v in vals], dtype=bool)
        elif k in ("x", "y", "actuator_cost", "sensor_cost"):
            table[k] = np.array([np.nan if v is None else float(v) for v in vals])
        else:
            arr = np.empty(n, dtype=object)
            arr[:] = vals
            table[k] = arr
    return table


def _truthy(v: Any) -> bool:
    if isinstance(v, str):
        return v.strip().lower() in ("1", "true", "yes", "y", "t")
    return bool(v)



#: :func:`name_lookup` finds at most this many names in a pool of at least
#: ``LARGE_POOL`` by one pass over the pool instead of hashing all of it: 0.2 s instead
#: of 1.3-2.6 s for 100 names among 3*10^6 (benchmarks/RESULTS.md).
FEW_NAMES = 256
LARGE_POOL = 200_000


def name_lookup(pool: Sequence[str], names: Sequence[object], cache: dict[str, Any],
                key: str) -> dict[str, int]:
    """A name -> position dict for looking up ``names`` in ``pool``: of the whole pool
    (then kept in ``cache[key]`` for the next lookup), or, for a few names in a large
    pool, of those names only (one pass, nothing kept)."""
    if len(names) <= FEW_NAMES and len(pool) >= LARGE_POOL:
        wanted = {str(name) for name in names}
        found: dict[str, int] = {}
        for i, name in zip(itertools.count(), pool):
            if name in wanted and name not in found:
                found[name] = i
        return found
    cache[key] = whole = {name: i for i, name in enumerate(pool)}
    return whole
