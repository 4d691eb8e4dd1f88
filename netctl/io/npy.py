"""Dense ``.npy`` arrays: the square matrix ``A`` (nonzero entries are links).

Read with ``numpy.load(allow_pickle=False)`` after checking the header: object arrays
(pickles) are refused, and so are shapes that would not fit in memory.
"""

from __future__ import annotations

import io
import os

import numpy as np

from netctl.io._common import atomic_write, check_states, file_error, read_bytes
from netctl.system import StructuredSystem

__all__ = ["read_npy", "write_npy", "MAX_DENSE_BYTES", "MAX_DENSE_STATES"]

#: Refuse dense arrays larger than this many bytes (use a sparse format instead).
MAX_DENSE_BYTES = 4 * 1024**3
#: The writer refuses systems with more states than this (the dense array would be huge).
MAX_DENSE_STATES = 20_000


def read_npy(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read a dense square ``.npy`` array as ``A`` (boolean arrays are patterns).

    Raises
    ------
    NetworkFileError
        Not an .npy file, object dtype (pickles), not square, too large, NaN/inf values.
    """
    data = read_bytes(path)
    fh = io.BytesIO(data)
    try:
        version = np.lib.format.read_magic(fh)
        reader = (np.lib.format.read_array_header_1_0 if version == (1, 0)
                  else np.lib.format.read_array_header_2_0)
        shape, _, dtype = reader(fh)
    except ValueError as exc:
        raise file_error(path, None, f"not a .npy array file ({exc}).") from None
    if dtype.hasobject:
        raise file_error(path, None, "the array holds Python objects (a pickle), which netctl "
                         "never loads (they can run code). Save a numeric array.")
    if len(shape) != 2 or shape[0] != shape[1]:
        raise file_error(path, None, f"the array has shape {shape}; a state matrix A must be "
                         "square (n x n).")
    size = int(np.prod(shape, dtype=object)) * dtype.itemsize
    if size > MAX_DENSE_BYTES:
        raise file_error(path, None, f"the header claims a {shape[0]} x {shape[1]} dense array "
                         f"({size / 1e9:.3g} GB), more than netctl reads densely; store the "
                         "network as .npz or .mtx (sparse).")
    have = len(data) - fh.tell()
    if size > have:
        raise file_error(path, None, f"the header claims a {shape[0]} x {shape[1]} array of "
                         f"{dtype} ({size:,} bytes) but the file holds {have:,} bytes after "
                         "the header; the file is truncated or its header is wrong.")
    check_states(path, int(shape[0]))
    if not (np.issubdtype(dtype, np.number) or dtype == np.bool_) or np.issubdtype(
            dtype, np.complexfloating):
        raise file_error(path, None, f"the array has dtype {dtype}; expected real numbers or "
                         "booleans.")
    try:
        arr = np.load(io.BytesIO(data), allow_pickle=False)
    except (ValueError, EOFError, OSError) as exc:
        raise file_error(path, None, f"the array data is damaged or truncated ({exc}).") from None
    if not np.all(np.isfinite(arr)):
        bad = np.argwhere(~np.isfinite(arr))[0]
        raise file_error(path, None, f"the entry A[{bad[0]}, {bad[1]}] is NaN or infinite; "
                         "give finite weights.")
    return StructuredSystem.from_matrices(arr, weighted=arr.dtype != np.bool_, model=model)


def write_npy(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write ``A`` as a dense float64 (or boolean pattern) ``.npy`` array, atomically.

    The format holds no names: a warning says so unless the names are ``x0, x1, ...``.
    """
    from netctl.errors import InvalidSystemError
    from netctl.io.mtx import warn_names_not_kept

    if system.n_states > MAX_DENSE_STATES:
        raise InvalidSystemError(f"{path}: {system.n_states} states are too many for a dense "
                                 f"array (limit {MAX_DENSE_STATES}); write .npz or .mtx.")
    warn_names_not_kept(system, path, ".npy")
    from netctl._csr import to_dense

    A = to_dense(system.pattern("A"))
    if not system.weighted:
        A = A != 0
    buf = io.BytesIO()
    np.save(buf, A, allow_pickle=False)
    with atomic_write(path, "wb") as fh:
        fh.write(buf.getvalue())
