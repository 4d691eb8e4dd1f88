"""Exact maximum bipartite matching on CSR index arrays.

The bipartite graph has *rows* and *columns*; ``indices[indptr[r]:indptr[r+1]]`` are the
columns adjacent to row ``r``. For a state matrix ``A`` in CSR form, row ``i`` lists the
states that influence ``i`` (its in-neighbours), so a matching pairs each influenced
state with one distinct influencing state or input.

Method: Karp–Sipser initialisation (degree-one reductions, which are optimal, then
greedy choices), completed to a maximum matching by the Pothen–Fan depth-first augmenting
search with lookahead and alternating scan direction (PF+). See Duff, Kaya & Uçar (2011)
for the comparison that motivates this pair. Compiled with numba; the kernels trust their
input (validate at the public boundary).

References
----------
.. [1] R. M. Karp, M. Sipser, "Maximum matchings in sparse random graphs", FOCS 1981.
.. [2] A. Pothen, C.-J. Fan, "Computing the block triangular form of a sparse matrix",
   ACM TOMS 16(4):303-324, 1990.
.. [3] I. S. Duff, K. Kaya, B. Uçar, "Design, implementation, and analysis of maximum
   transversal algorithms", ACM TOMS 38(2):13, 2011. doi:10.1145/2049673.2049677
"""

from __future__ import annotations

import numpy as np
from numba import njit

__all__ = ["maximum_matching", "extend_matching", "matching_from_csr", "is_valid_matching",
           "transpose_csr"]


@njit(cache=True, nogil=True)
def transpose_csr(indptr, indices, n_cols):  # pragma: no cover - compiled
    """CSR index arrays of the transpose (columns -> rows), indices sorted.

    No work arrays beyond the output: the pointer array is used as the fill cursor and
    shifted back afterwards.
    """
    n_rows = indptr.size - 1
    tptr = np.zeros(n_cols + 1, np.int64)
    for k in range(indices.size):
        tptr[indices[k] + 1] += 1
    for c in range(n_cols):
        tptr[c + 1] += tptr[c]
    tind = np.empty(indices.size, np.int64)
    for r in range(n_rows):
        for k in range(indptr[r], indptr[r + 1]):
            c = indices[k]
            tind[tptr[c]] = r
            tptr[c] += 1
    for c in range(n_cols, 0, -1):
        tptr[c] = tptr[c - 1]
    tptr[0] = 0
    return tptr, tind


@njit(cache=True, nogil=True)
def _ks_match(r, c, indptr, indices, tptr, tind, row_match, col_match, rdeg, cdeg,
              queue, tail):  # pragma: no cover - compiled
    """Match r-c and lower the degrees of their unmatched neighbours; returns new tail."""
    row_match[r] = c
    col_match[c] = r
    for k in range(indptr[r], indptr[r + 1]):
        c2 = indices[k]
        if col_match[c2] == -1:
            cdeg[c2] -= 1
            if cdeg[c2] == 1:
                queue[tail] = -(c2 + 1)
                tail += 1
    for k in range(tptr[c], tptr[c + 1]):
        r2 = tind[k]
        if row_match[r2] == -1:
            rdeg[r2] -= 1
            if rdeg[r2] == 1:
                queue[tail] = r2
                tail += 1
    return tail


@njit(cache=True, nogil=True)
def _karp_sipser(indptr, indices, tptr, tind, n_cols, row_match, col_match):  # pragma: no cover
    """Karp–Sipser: match degree-one vertices first (optimal), else greedily.

    Degrees count unmatched neighbours only; a vertex's degree only falls, so it enters
    the queue at most once (when its degree is or becomes one). Rows and columns already
    matched on entry are respected.
    """
    n_rows = indptr.size - 1
    # degrees and queue codes fit in int32 (fewer than 2**31 rows and columns, checked by
    # the caller); half-size arrays keep more of the random accesses in cache
    rdeg = np.zeros(n_rows, np.int32)
    cdeg = np.zeros(n_cols, np.int32)
    fresh = True
    for r in range(n_rows):
        if row_match[r] != -1:
            fresh = False
            break
    if fresh:
        for r in range(n_rows):
            rdeg[r] = indptr[r + 1] - indptr[r]
        for c in range(n_cols):
            cdeg[c] = tptr[c + 1] - tptr[c]
    else:
        for r in range(n_rows):
            if row_match[r] == -1:
                for k in range(indptr[r], indptr[r + 1]):
                    if col_match[indices[k]] == -1:
                        rdeg[r] += 1
        for c in range(n_cols):
            if col_match[c] == -1:
                for k in range(tptr[c], tptr[c + 1]):
                    if row_match[tind[k]] == -1:
                        cdeg[c] += 1
    # queue of degree-one vertices: code r >= 0 for rows, -(c+1) for columns
    queue = np.empty(n_rows + n_cols + 1, np.int32)
    head = 0
    tail = 0
    for r in range(n_rows):
        if row_match[r] == -1 and rdeg[r] == 1:
            queue[tail] = r
            tail += 1
    for c in range(n_cols):
        if col_match[c] == -1 and cdeg[c] == 1:
            queue[tail] = -(c + 1)
            tail += 1
    next_greedy = 0
    while True:
        while head < tail:
            code = queue[head]
            head += 1
            if code >= 0:
                r = code
                if row_match[r] != -1:
                    continue
                c = -1
                for k in range(indptr[r], indptr[r + 1]):
                    if col_match[indices[k]] == -1:
                        c = indices[k]
                        break
                if c == -1:
                    continue
            else:
                c = -code - 1
                if col_match[c] != -1:
                    continue
                r = -1
                for k in range(tptr[c], tptr[c + 1]):
                    if row_match[tind[k]] == -1:
                        r = tind[k]
                        break
                if r == -1:
                    continue
            tail = _ks_match(r, c, indptr, indices, tptr, tind, row_match, col_match,
                             rdeg, cdeg, queue, tail)
        # no degree-one vertex left: one greedy choice, then back to the reductions
        progressed = False
        while next_greedy < n_rows and not progressed:
            r = next_greedy
            next_greedy += 1
            if row_match[r] != -1 or rdeg[r] == 0:
                continue
            for k in range(indptr[r], indptr[r + 1]):
                c = indices[k]
                if col_match[c] == -1:
                    tail = _ks_match(r, c, indptr, indices, tptr, tind, row_match,
                                     col_match, rdeg, cdeg, queue, tail)
                    progressed = True
                    break
        if not progressed:
            break


@njit(cache=True, nogil=True)
def _pothen_fan(indptr, indices, n_cols, row_match, col_match):  # pragma: no cover
    """Complete a matching to a maximum one: Pothen–Fan DFS with lookahead (PF+)."""
    n_rows = indptr.size - 1
    # vertex ids and phase numbers fit in int32 (checked by the caller); positions into
    # ``indices`` stay int64. This keeps the working memory near two CSR index arrays.
    lookahead = indptr[:-1].copy()
    visited = np.full(n_cols, -1, np.int32)
    stack_row = np.empty(n_rows + 1, np.int32)
    stack_pos = np.empty(n_rows + 1, np.int64)
    stack_col = np.empty(n_rows + 1, np.int32)
    free = np.empty(n_rows, np.int32)
    n_free = 0
    for r in range(n_rows):
        if row_match[r] == -1 and indptr[r + 1] > indptr[r]:
            free[n_free] = r
            n_free += 1
    phase = 0
    while n_free > 0:
        forward = (phase % 2) == 0
        augmented = 0
        for f in range(n_free):
            r0 = free[f]
            top = 0
            stack_row[0] = r0
            stack_pos[0] = indptr[r0] if forward else indptr[r0 + 1] - 1
            found = -1
            while top >= 0:
                r = stack_row[top]
                # lookahead: a free column adjacent to r ends the search at once
                la = lookahead[r]
                end = indptr[r + 1]
                while la < end:
                    c = indices[la]
                    la += 1
                    if col_match[c] == -1:
                        found = c
                        break
                lookahead[r] = la
                if found != -1:
                    break
                # depth-first step into an unvisited matched column
                nxt = -1
                if forward:
                    pos = stack_pos[top]
                    while pos < end:
                        c = indices[pos]
                        pos += 1
                        if visited[c] != phase:
                            nxt = c
                            break
                    stack_pos[top] = pos
                else:
                    pos = stack_pos[top]
                    beg = indptr[r]
                    while pos >= beg:
                        c = indices[pos]
                        pos -= 1
                        if visited[c] != phase:
                            nxt = c
                            break
                    stack_pos[top] = pos
                if nxt == -1:
                    top -= 1
                    continue
                visited[nxt] = phase
                r2 = col_match[nxt]
                stack_col[top] = nxt
                top += 1
                stack_row[top] = r2
                stack_pos[top] = indptr[r2] if forward else indptr[r2 + 1] - 1
            if found != -1:
                visited[found] = phase
                c = found
                t = top
                while t >= 0:
                    r = stack_row[t]
                    row_match[r] = c
                    col_match[c] = r
                    if t > 0:
                        c = stack_col[t - 1]
                    t -= 1
                augmented += 1
        if augmented == 0:
            break
        # keep only the rows still free
        k = 0
        for f in range(n_free):
            if row_match[free[f]] == -1:
                free[k] = free[f]
                k += 1
        n_free = k
        phase += 1


@njit(cache=True, nogil=True)
def _matching_kernel(indptr, indices, tptr, tind, n_cols, row_match, col_match):  # pragma: no cover
    _karp_sipser(indptr, indices, tptr, tind, n_cols, row_match, col_match)
    _pothen_fan(indptr, indices, n_cols, row_match, col_match)


def maximum_matching(
    indptr: np.ndarray,
    indices: np.ndarray,
    n_cols: int,
    *,
    row_match: np.ndarray | None = None,
    col_match: np.ndarray | None = None,
    transpose: tuple[np.ndarray, np.ndarray] | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Maximum matching of a bipartite graph given as CSR index arrays.

    Parameters
    ----------
    indptr, indices : ndarray of int64
        Row ``r`` is adjacent to columns ``indices[indptr[r]:indptr[r+1]]``.
    n_cols : int
        Number of columns.
    row_match, col_match : ndarray of int64, optional
        A valid (not necessarily maximum) matching to start from; it is completed, and
        every row and column matched in it stays matched (augmenting paths never unmatch
        a vertex). Copies are made.
    transpose : (tptr, tind), optional
        The column-wise adjacency (see :func:`transpose_csr`) when the caller already has
        it; computed otherwise.

    Returns
    -------
    row_match : ndarray of int64, shape (n_rows,)
        Column matched to each row, ``-1`` if unmatched.
    col_match : ndarray of int64, shape (n_cols,)
        Row matched to each column, ``-1`` if unmatched.

    Notes
    -----
    Exact. Deterministic: the same arrays give the same matching. Maximum matchings are
    not unique; which one is returned depends on the order of rows and columns.
    Worst case O(V E); near-linear on the sparse networks netctl targets.
    """
    indptr = np.ascontiguousarray(indptr, dtype=np.int64)
    indices = np.ascontiguousarray(indices, dtype=np.int64)
    n_rows = indptr.size - 1
    if max(n_rows, n_cols) >= 2**31 - 1:
        raise ValueError(f"the matching kernel handles fewer than 2**31 rows and columns, "
                         f"found {n_rows} x {n_cols}.")
    rm = np.full(n_rows, -1, np.int64) if row_match is None else np.array(row_match, np.int64)
    cm = np.full(n_cols, -1, np.int64) if col_match is None else np.array(col_match, np.int64)
    if n_rows and n_cols and indices.size:
        if transpose is None:
            tptr, tind = transpose_csr(indptr, indices, np.int64(n_cols))
        else:
            tptr = np.ascontiguousarray(transpose[0], dtype=np.int64)
            tind = np.ascontiguousarray(transpose[1], dtype=np.int64)
        _matching_kernel(indptr, indices, tptr, tind, np.int64(n_cols), rm, cm)
    return rm, cm


@njit(cache=True, nogil=True)
def _extend(tptr, tind, n_cols, row_match, col_match, xptr, xind, x_match):  # pragma: no cover
    """DFS from every free extra column; see :func:`extend_matching`."""
    n_rows = row_match.size
    n_x = xptr.size - 1
    # ids and phase numbers fit in int32 (checked by maximum_matching); positions int64
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
        Complete the given int64 arrays in place instead of copies (saves memory when
        the caller owns them).

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
        _extend(np.ascontiguousarray(transpose[0], np.int64),
                np.ascontiguousarray(transpose[1], np.int64), np.int64(n_cols), rm, cm,
                np.ascontiguousarray(extra[0], np.int64),
                np.ascontiguousarray(extra[1], np.int64), xm)
    return rm, cm, xm


def matching_from_csr(matrix: object) -> tuple[np.ndarray, np.ndarray]:
    """Maximum matching of the rows and columns of a scipy sparse CSR matrix's pattern."""
    m = matrix  # type: ignore[assignment]
    return maximum_matching(m.indptr, m.indices, m.shape[1])  # type: ignore[attr-defined]


def is_valid_matching(indptr: np.ndarray, indices: np.ndarray, row_match: np.ndarray,
                      col_match: np.ndarray) -> bool:
    """True when ``row_match``/``col_match`` are mutually consistent and use real edges."""
    rows = np.flatnonzero(row_match >= 0)
    cols = row_match[rows]
    if np.unique(cols).size != cols.size:
        return False
    if not np.array_equal(col_match[cols], rows):
        return False
    if np.count_nonzero(col_match >= 0) != rows.size:
        return False
    for r, c in zip(rows.tolist(), cols.tolist()):
        seg = indices[indptr[r]:indptr[r + 1]]
        if not np.any(seg == c):
            return False
    return True
