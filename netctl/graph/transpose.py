"""Transposition of CSR index arrays (columns -> rows), and the kernels' index type.

The engine's searches need both directions of a bipartite graph or digraph: a CSR
pattern lists, for each row, its columns; the transpose lists, for each column, its
rows (for a state matrix ``A``, the states each state influences: see :mod:`netctl` for
the orientation). One counting pass and one fill pass, O(nnz + rows + columns), indices
sorted in the result since the rows are visited in order (counting sort). Compiled with
numba; the kernel trusts its input.
"""

from __future__ import annotations

import numpy as np

from netctl._jit import njit

__all__ = ["transpose_csr", "transpose_index", "index_dtype", "index_array"]


def index_array(a: np.ndarray) -> np.ndarray:
    """Contiguous integer index array: int32 and int64 pass as they are (no copy when
    already contiguous; the kernels are compiled for both), anything else becomes
    int64."""
    a = np.asarray(a)
    if a.dtype == np.int32 or a.dtype == np.int64:
        return np.ascontiguousarray(a)
    return np.ascontiguousarray(a, np.int64)


def index_dtype(n_rows: int, n_cols: int, nnz: int) -> type:
    """Integer type of the kernels' work arrays: int32 while every vertex id, edge
    position and encoded state fits (halves the bytes each random access pulls into
    cache), int64 beyond."""
    return np.int32 if max(n_rows, n_cols, nnz) < 2**31 - 4 else np.int64


@njit(cache=True, nogil=True)
def _transpose_fill(indptr, indices, tptr, tind):  # pragma: no cover - compiled
    """Fill ``tptr`` (zeros, size n_cols + 1) and ``tind`` with the transpose.

    No work arrays beyond the output: the pointer array is used as the fill cursor and
    shifted back afterwards. Works for any integer types of the outputs.
    """
    n_rows = indptr.size - 1
    n_cols = tptr.size - 1
    for k in range(indices.size):
        tptr[indices[k] + 1] += 1
    for c in range(n_cols):
        tptr[c + 1] += tptr[c]
    for r in range(n_rows):
        for k in range(indptr[r], indptr[r + 1]):
            c = indices[k]
            tind[tptr[c]] = r
            tptr[c] += 1
    for c in range(n_cols, 0, -1):
        tptr[c] = tptr[c - 1]
    tptr[0] = 0


def transpose_index(indptr: np.ndarray, indices: np.ndarray, n_cols: int,
                    dtype: type | None = None) -> tuple[np.ndarray, np.ndarray]:
    """CSR index arrays of the transpose (columns -> rows), indices sorted, of ``dtype``
    (default: :func:`index_dtype` of the sizes)."""
    n_rows = indptr.size - 1
    if dtype is None:
        dtype = index_dtype(n_rows, int(n_cols), indices.size)
    tptr: np.ndarray = np.zeros(int(n_cols) + 1, dtype)
    tind: np.ndarray = np.empty(indices.size, dtype)
    if indices.size:
        _transpose_fill(indptr, indices, tptr, tind)
    return tptr, tind


def transpose_csr(indptr: np.ndarray, indices: np.ndarray,
                  n_cols: int) -> tuple[np.ndarray, np.ndarray]:
    """CSR index arrays (int64) of the transpose (columns -> rows), indices sorted."""
    return transpose_index(np.asarray(indptr), np.asarray(indices), int(n_cols), np.int64)
