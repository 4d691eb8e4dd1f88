"""Alternating reachability and the Dulmage–Mendelsohn coarse decomposition.

Given a maximum matching of a bipartite graph (rows x columns, CSR over rows):

* rows reachable by an *even* alternating path from an unmatched row are exactly the rows
  that are left unmatched by *some* maximum matching; together with the columns reached
  on the way they form the over-determined ("horizontal tail") part of the
  Dulmage–Mendelsohn decomposition when the matching is not row-perfect;
* symmetrically for columns reachable from unmatched columns.

References
----------
.. [1] A. L. Dulmage, N. S. Mendelsohn, "Coverings of bipartite graphs", Canad. J. Math.
   10:517-534, 1958.
.. [2] A. Pothen, C.-J. Fan, "Computing the block triangular form of a sparse matrix",
   ACM TOMS 16(4):303-324, 1990.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from netctl._jit import njit

from netctl.graph.matching import transpose_csr

__all__ = ["alternating_reach_rows", "alternating_reach_cols", "dm_coarse", "DMCoarse"]


@njit(cache=True, nogil=True)
def _alt_bfs(indptr, indices, partner_of_col, starts, row_seen, col_seen):  # pragma: no cover
    """From rows ``starts``: row -> any adjacent column -> the row matched to it."""
    n_rows = indptr.size - 1
    queue = np.empty(n_rows, np.int64)
    tail = 0
    for s in starts:
        if not row_seen[s]:
            row_seen[s] = True
            queue[tail] = s
            tail += 1
    head = 0
    while head < tail:
        r = queue[head]
        head += 1
        for k in range(indptr[r], indptr[r + 1]):
            c = indices[k]
            if col_seen[c]:
                continue
            col_seen[c] = True
            r2 = partner_of_col[c]
            if r2 >= 0 and not row_seen[r2]:
                row_seen[r2] = True
                queue[tail] = r2
                tail += 1


def alternating_reach_rows(indptr: np.ndarray, indices: np.ndarray, n_cols: int,
                           col_match: np.ndarray, starts: np.ndarray | None = None,
                           banned: np.ndarray | int | None = None,
                           ) -> tuple[np.ndarray, np.ndarray]:
    """Rows and columns reachable by alternating paths from ``starts`` (default: the
    unmatched rows). Returns boolean masks ``(rows, cols)``.

    With a maximum matching, every column reached is matched, and the rows reached are
    exactly those that some maximum matching leaves unmatched.

    ``banned`` (a column or an array of columns, default none) are taken as absent: no
    path crosses them and they are never marked reached. With the matched column of row
    ``r`` banned and ``starts = [r]``, the rows reached are those that compete with
    ``r`` for too few columns once that column is lost (the failure analyses). The
    search itself is unchanged: a banned column is marked seen before it starts.
    """
    n_rows = indptr.size - 1
    if starts is None:
        row_has = np.zeros(n_rows, bool)
        matched_rows = col_match[col_match >= 0]
        row_has[matched_rows] = True
        starts = np.flatnonzero(~row_has)
    row_seen = np.zeros(n_rows, np.bool_)
    col_seen = np.zeros(n_cols, np.bool_)
    if banned is not None:
        col_seen[banned] = True
    if n_rows and np.asarray(starts).size:
        _alt_bfs(np.ascontiguousarray(indptr, np.int64), np.ascontiguousarray(indices, np.int64),
                 np.ascontiguousarray(col_match, np.int64),
                 np.ascontiguousarray(starts, np.int64), row_seen, col_seen)
    if banned is not None:
        col_seen[banned] = False
    return row_seen, col_seen


def alternating_reach_cols(indptr: np.ndarray, indices: np.ndarray, n_cols: int,
                           row_match: np.ndarray, starts: np.ndarray | None = None,
                           ) -> tuple[np.ndarray, np.ndarray]:
    """Columns and rows reachable by alternating paths from ``starts`` (default: the
    unmatched columns). Returns boolean masks ``(cols, rows)``."""
    tptr, tind = transpose_csr(np.ascontiguousarray(indptr, np.int64),
                               np.ascontiguousarray(indices, np.int64), np.int64(n_cols))
    if starts is None:
        col_has = np.zeros(n_cols, bool)
        col_has[row_match[row_match >= 0]] = True
        starts = np.flatnonzero(~col_has)
    return alternating_reach_rows(tptr, tind, indptr.size - 1, row_match, starts)


@dataclass(frozen=True)
class DMCoarse:
    """Coarse Dulmage–Mendelsohn decomposition (boolean masks).

    ``rows_over``/``cols_over``: reached from unmatched rows (more rows than columns can
    cover there). ``rows_under``/``cols_under``: reached from unmatched columns. The rest
    is the square, perfectly matched part.
    """

    rows_over: np.ndarray
    cols_over: np.ndarray
    rows_under: np.ndarray
    cols_under: np.ndarray


def dm_coarse(indptr: np.ndarray, indices: np.ndarray, n_cols: int, row_match: np.ndarray,
              col_match: np.ndarray) -> DMCoarse:
    """The coarse DM decomposition from a maximum matching (linear time)."""
    ro, co = alternating_reach_rows(indptr, indices, n_cols, col_match)
    cu, ru = alternating_reach_cols(indptr, indices, n_cols, row_match)
    return DMCoarse(rows_over=ro, cols_over=co, rows_under=ru, cols_under=cu)
