"""scipy sparse ``.npz`` files: the matrix ``A`` (``scipy.sparse.save_npz`` layout).

Read with ``numpy.load(allow_pickle=False)``: a file holding pickled Python objects is
refused, never executed. netctl writes the CSR arrays plus ``state_names`` and
``weighted``; files written by ``scipy.sparse.save_npz`` (any of csr, csc, coo) read too.
"""

from __future__ import annotations

import io
import os
import zipfile

import numpy as np

from netctl.io._common import (
    atomic_write,
    check_states,
    file_error,
    read_bytes,
    refuse_lone_surrogates,
)
from netctl.system import StructuredSystem

__all__ = ["read_npz", "write_npz", "MAX_STATES"]

#: Refuse matrices that claim more states than this (protects memory).
MAX_STATES = 2_000_000_000


#: The arrays a .npz of A holds (scipy.sparse.save_npz's, and netctl's names and flag).
_KNOWN = frozenset({"format", "shape", "data", "indices", "indptr", "row", "col", "coords",
                    "_is_array",  # scipy: a sparse array (not matrix) was saved
                    "state_names", "weighted"})


def _load(path: object, data: bytes) -> dict[str, np.ndarray]:
    try:
        with np.load(io.BytesIO(data), allow_pickle=False) as z:
            return {k: z[k] for k in z.files}
    except ValueError as exc:
        if "pickle" in str(exc).lower():
            raise file_error(path, None, "the file holds pickled Python objects, which netctl "
                             "never loads (they can run code). Save plain numeric arrays "
                             "(scipy.sparse.save_npz does).") from None
        raise file_error(path, None, f"not a readable .npz file: {exc}.") from None
    except (zipfile.BadZipFile, OSError, EOFError) as exc:
        raise file_error(path, None, f"not a readable .npz file ({exc}); is it damaged or "
                         "truncated?") from None


def read_npz(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read ``A`` from a scipy sparse ``.npz`` file.

    Raises
    ------
    NetworkFileError
        Pickled objects, missing arrays, a non-square or absurdly large shape, arrays
        inconsistent with the shape.
    """
    z = _load(path, read_bytes(path))
    need = ("format", "shape")
    if any(k not in z for k in need):
        raise file_error(path, None, f"expected the arrays of scipy.sparse.save_npz "
                         f"(format, shape, data, ...); found {sorted(z)}.")
    other = sorted(k for k in z if k not in _KNOWN)
    if other:  # an .npz holds A only: anything else would be passed over
        import warnings
        warnings.warn(f"{path}: the arrays {', '.join(map(repr, other))} are not read: an "
                      ".npz holds the matrix A only (scipy.sparse.save_npz's arrays, with "
                      "state_names and weighted). Write inputs, outputs and node tables to a "
                      ".toml description to keep them.", stacklevel=2)
    fmt = z["format"].item()
    fmt = fmt.decode("ascii", "replace") if isinstance(fmt, bytes) else str(fmt)
    raw_shape = np.asarray(z["shape"]).ravel()
    if (raw_shape.dtype.kind not in "iuf" or raw_shape.size != 2
            or not np.all(np.isfinite(raw_shape)) or np.any(raw_shape < 0)
            or np.any(raw_shape != np.floor(raw_shape)) or np.any(raw_shape > 2**62)):
        raise file_error(path, None, f"the 'shape' array must hold two non-negative whole "
                         f"numbers (rows, columns); found {raw_shape.tolist()[:4]!r}.")
    shape = tuple(int(x) for x in raw_shape)
    if len(shape) != 2 or shape[0] != shape[1]:
        raise file_error(path, None, f"the matrix has shape {shape}; a state matrix A must "
                         "be square (n x n).")
    n = shape[0]
    if n < 0 or n > MAX_STATES:
        raise file_error(path, None, f"the file claims {n} states, more than netctl reads "
                         f"({MAX_STATES}); check the file.")
    check_states(path, n)
    import scipy.sparse as sp  # here: only reading needs it (writing stores the arrays)

    try:
        data = z["data"]
        if fmt in ("csr", "csc"):
            if z["indptr"].size != n + 1 or z["indices"].size != data.size:
                raise ValueError(f"indptr has {z['indptr'].size} entries for {n} rows and "
                                 f"indices/data have {z['indices'].size}/{data.size}")
            cls = sp.csr_array if fmt == "csr" else sp.csc_array
            M = cls((data, z["indices"], z["indptr"]), shape=shape)
        elif fmt == "coo":
            row = z["row"] if "row" in z else z["coords"][0]
            col = z["col"] if "col" in z else z["coords"][1]
            M = sp.coo_array((data, (row, col)), shape=shape)
        else:
            raise ValueError(f"the sparse format {fmt!r} is not supported (use csr, csc or coo)")
        M.check_format() if hasattr(M, "check_format") and fmt != "coo" else None
    except (KeyError, ValueError, TypeError, IndexError) as exc:
        raise file_error(path, None, f"the sparse arrays are inconsistent: {exc}.") from None
    if not np.issubdtype(M.dtype, np.number) and M.dtype != np.bool_:
        raise file_error(path, None, f"the values have dtype {M.dtype}; expected numbers.")
    names = z["state_names"].tolist() if "state_names" in z else None
    weighted = bool(z["weighted"]) if "weighted" in z else M.dtype != np.bool_
    if names is not None and len(names) != n:
        raise file_error(path, None, f"state_names has {len(names)} entries for {n} states.")
    A = sp.csr_array(M, dtype=np.float64)
    if A.nnz and not np.all(np.isfinite(A.data)):
        raise file_error(path, None, "some values are NaN or infinite; give finite weights.")
    stored = int(M.nnz)  # coo counts a repeat, even where csr_array already summed it
    A.sum_duplicates()  # an entry stored twice is summed (scipy): said, as edge lists do
    if A.nnz < stored:
        import warnings
        k = stored - A.nnz
        warnings.warn(f"{path}: {k} entr{'y' if k == 1 else 'ies'} stored twice "
                      f"{'was' if k == 1 else 'were'} merged (values summed).", stacklevel=2)
    zero = int(np.count_nonzero(A.data == 0))
    if zero:
        import warnings
        warnings.warn(f"{path}: {zero} explicitly stored zero entr"
                      f"{'y is no link and was' if zero == 1 else 'ies are no links and were'}"
                      " left out.", stacklevel=2)
    return StructuredSystem.from_matrices(A, state_names=names, weighted=weighted, model=model)


def write_npz(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write ``A`` as a compressed CSR ``.npz`` (readable by ``scipy.sparse.load_npz``)."""
    refuse_lone_surrogates(system, ".npz")
    bad = next((x for x in system.state_names if x.endswith("\x00")), None)
    if bad is not None:  # numpy's text arrays drop trailing NULs: the name would change
        from netctl.errors import InvalidSystemError
        raise InvalidSystemError(f"the state name {bad[:80]!r} ends with a NUL character, "
                                 "which .npz cannot keep; rename it or write node-link JSON.")
    A = system.pattern("A")  # the arrays of system.A, without building it
    buf = io.BytesIO()
    np.savez_compressed(buf, format=np.array(b"csr"), shape=np.array(A.shape),
                        data=A.data, indices=A.indices, indptr=A.indptr,
                        state_names=np.array(system.state_names, dtype=str),
                        weighted=np.array(system.weighted))
    with atomic_write(path, "wb") as fh:
        fh.write(buf.getvalue())
