"""Extra columns matched into a maximum matching, which keeps its size.

Given a *maximum* matching of a bipartite graph (CSR over rows, as in
:mod:`netctl.graph.matching`) and extra columns, each adjacent to some rows, match as
many extra columns as possible without unmatching any real vertex. The structural
analyses use it to ask how many unreached source components can hold an unmatched
state at once, over all maximum matchings (:func:`netctl.structural._engine.completion`):
each such component becomes one extra column adjacent to its states.

Method: a depth-first augmenting-path search from every free extra column, in phases
until a phase augments none. An augmenting path never unmatches a vertex, and since the
real matching is maximum none ends at a free real column, so the real part keeps its
size. Compiled with numba (see :mod:`netctl._jit`); the kernel trusts its input.

References
----------
.. [1] L. Lovász, M. D. Plummer, *Matching Theory*, North-Holland, 1986 (augmenting
   paths; from memory).
"""

from __future__ import annotations

import numpy as np
from netctl._jit import njit

__all__ = ["extend_matching"]


@njit(cache=True, nogil=True)
def _flip_path(stack_col, stack_row, top, row_match, col_match, x_match,
               n_cols):  # pragma: no cover - compiled
    """Augment along the alternating path on the search stack: row ``stack_row[t]``
    takes column ``stack_col[t]`` for ``t = top .. 0`` (columns from ``n_cols`` on are
    the extra columns, matched in ``x_match``)."""
    t = top
    while t >= 0:
        c = stack_col[t]
        r = stack_row[t]
        row_match[r] = c
        if c < n_cols:
            col_match[c] = r
        else:
            x_match[c - n_cols] = r
        t -= 1


@njit(cache=True, nogil=True)
def _extend(tptr, tind, n_cols, row_match, col_match, xptr, xind, x_match):  # pragma: no cover
    """DFS from every free extra column; see :func:`extend_matching`."""
    n_rows = row_match.size
    n_x = xptr.size - 1
    # ids and phase numbers fit in int32 (checked by matching.matching_work); positions int64
    visited = np.full(n_rows, -1, np.int32)
    stack_col = np.empty(n_rows + 1, np.int32)
    stack_pos = np.empty(n_rows + 1, np.int64)
    stack_row = np.empty(n_rows + 1, np.int32)
    phase = 0
    while True:
        augmented = 0
        for k in range(n_x):
            if x_match[k] != -1:
                continue
            top = 0
            stack_col[0] = n_cols + k
            stack_pos[0] = xptr[k]
            found = -1
            while top >= 0:
                c = stack_col[top]
                if c < n_cols:
                    end = tptr[c + 1]
                    adj = tind
                else:
                    end = xptr[c - n_cols + 1]
                    adj = xind
                pos = stack_pos[top]
                nxt = -1
                while pos < end:
                    r = adj[pos]
                    pos += 1
                    if visited[r] != phase and row_match[r] != c:
                        nxt = r
                        break
                stack_pos[top] = pos
                if nxt == -1:
                    top -= 1
                    continue
                visited[nxt] = phase
                stack_row[top] = nxt
                c2 = row_match[nxt]
                if c2 == -1:
                    found = nxt
                    break
                top += 1
                stack_col[top] = c2
                stack_pos[top] = tptr[c2] if c2 < n_cols else xptr[c2 - n_cols]
            if found != -1:
                _flip_path(stack_col, stack_row, top, row_match, col_match, x_match, n_cols)
                augmented += 1
        if augmented == 0:
            break
        phase += 1


def extend_matching(
    transpose: tuple[np.ndarray, np.ndarray],
    n_cols: int,
    row_match: np.ndarray,
    col_match: np.ndarray,
    extra: tuple[np.ndarray, np.ndarray],
    extra_match: np.ndarray,
    *,
    inplace: bool = False,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Add extra columns to a *maximum* matching and match as many of them as possible.

    Parameters
    ----------
    transpose : (tptr, tind)
        Column-wise adjacency of the real columns (column ``c`` is adjacent to rows
        ``tind[tptr[c]:tptr[c+1]]``).
    row_match, col_match : ndarray
        A maximum matching of the real graph; ``row_match[r] >= n_cols`` encodes a row
        matched to extra column ``row_match[r] - n_cols``.
    extra : (xptr, xind)
        Adjacency of the extra columns (rows each one may take).
    extra_match : ndarray
        Row matched to each extra column, ``-1`` if free.

    inplace : bool, default False
        Complete the given arrays (all of one integer type) in place instead of int64
        copies (saves memory when the caller owns them).

    Returns
    -------
    row_match, col_match, extra_match
        Completed (copies unless ``inplace``). Augmenting paths from the free extra columns never unmatch a
        vertex and, because the real matching is maximum, never end at a free real column
        from a free row; so the real part keeps its size and the number of matched extra
        columns is the largest possible among matchings whose real part is maximum.
    """
    if inplace:
        rm, cm, xm = row_match, col_match, extra_match
    else:
        rm = np.array(row_match, np.int64)
        cm = np.array(col_match, np.int64)
        xm = np.array(extra_match, np.int64)
    if xm.size and np.any(xm == -1):
        # every array in the type of the matching (int32 work arrays stay int32)
        dt = rm.dtype
        _extend(np.ascontiguousarray(transpose[0], dt),
                np.ascontiguousarray(transpose[1], dt), dt.type(n_cols), rm, cm,
                np.ascontiguousarray(extra[0], dt),
                np.ascontiguousarray(extra[1], dt), xm)
    return rm, cm, xm
