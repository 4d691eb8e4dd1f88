"""Compiled kernels run after an edge list is scanned: marking and renumbering integer
names, their decimal text, and the CSR build that merges duplicate links (helpers of
:mod:`netctl.io.edgelist`; the scanner itself is :mod:`netctl.io._edgescan`).
"""

from __future__ import annotations

import numpy as np
from netctl._jit import njit

__all__ = ["mark_present", "remap", "int_names_text", "build_csr"]


@njit(cache=True, nogil=True)
def mark_present(a: np.ndarray, present: np.ndarray, lo: int) -> None:
    """``present[v - lo] = True`` for every value ``v`` of ``a``."""
    for i in range(a.size):
        present[a[i] - lo] = True


@njit(cache=True, nogil=True)
def remap(a: np.ndarray, ids: np.ndarray, lo: int) -> None:
    """``a[i] = ids[a[i] - lo]`` in place."""
    for i in range(a.size):
        a[i] = ids[a[i] - lo]


@njit(cache=True, nogil=True)
def int_names_text(values: np.ndarray) -> np.ndarray:
    """The decimal text of ``values``, one a line, as bytes (for one fast decode)."""
    out = np.empty(values.size * 21 + 1, np.uint8)
    k = 0
    digits = np.empty(20, np.uint8)
    for i in range(values.size):
        v = values[i]
        if v < 0:
            out[k] = 45
            k += 1
            v = -v
        m = 0
        while True:
            digits[m] = 48 + v % 10
            m += 1
            v //= 10
            if v == 0:
                break
        for j in range(m - 1, -1, -1):
            out[k] = digits[j]
            k += 1
        out[k] = 10
        k += 1
    return out[:k]


@njit(cache=True, nogil=True)
def build_csr(rows: np.ndarray, cols: np.ndarray, vals: np.ndarray, n: int,
              weighted: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray, int, int]:
    """Canonical CSR of an ``n x n`` matrix from coordinates, in O(nnz + n) for rows of
    bounded length (rows longer than 32 entries are sorted with a comparison sort).

    Duplicates are summed (``weighted``) or merged to 1.0, column indices sorted,
    entries of weight zero skipped (not counted as duplicates), sums that cancel to
    exactly zero dropped. Returns ``(indptr, indices, data,
    n_duplicates, n_cancelled)``.
    """
    m = rows.size
    indptr = np.zeros(n + 1, np.int64)
    for k in range(m):
        indptr[rows[k] + 1] += 1
    for i in range(n):
        indptr[i + 1] += indptr[i]
    fill = indptr[:-1].copy()
    ci = np.empty(m, np.int64)
    cv = np.empty(m if weighted else 0, np.float64)
    for k in range(m):  # scatter, keeping file order within a row
        r = rows[k]
        ci[fill[r]] = cols[k]
        if weighted:
            cv[fill[r]] = vals[k]
        fill[r] += 1
    out = 0
    n_dup = 0
    n_cancel = 0
    start = 0
    for i in range(n):
        end = indptr[i + 1]
        ln = end - start
        if ln > 32:  # stable sort of a long row
            o = np.argsort(ci[start:end], kind="mergesort")
            ci[start:end] = ci[start:end][o]
            if weighted:
                cv[start:end] = cv[start:end][o]
        else:  # insertion sort (stable)
            for t in range(start + 1, end):
                c = ci[t]
                v = cv[t] if weighted else 0.0
                u = t - 1
                while u >= start and ci[u] > c:
                    ci[u + 1] = ci[u]
                    if weighted:
                        cv[u + 1] = cv[u]
                    u -= 1
                ci[u + 1] = c
                if weighted:
                    cv[u + 1] = v
        row_start = out
        t = start
        while t < end:
            if weighted and cv[t] == 0.0:  # a link of weight 0 is not a link
                t += 1
                continue
            c = ci[t]
            v = cv[t] if weighted else 1.0
            t += 1
            while t < end and ci[t] == c:
                if weighted:
                    if cv[t] == 0.0:
                        t += 1
                        continue
                    v += cv[t]
                n_dup += 1
                t += 1
            if weighted and v == 0.0:
                n_cancel += 1
                continue
            ci[out] = c  # out <= t - 1: compaction never overwrites unread entries
            if weighted:
                cv[out] = v
            out += 1
        indptr[i] = row_start
        start = end
    indptr[n] = out
    data = cv[:out].copy() if weighted else np.ones(out, np.float64)
    return indptr, ci[:out].copy(), data, n_dup, n_cancel
