"""Exact maximum bipartite matching on CSR index arrays.

The bipartite graph has *rows* and *columns*; ``indices[indptr[r]:indptr[r+1]]`` are the
columns adjacent to row ``r``. For a state matrix ``A`` in CSR form, row ``i`` lists the
states that influence ``i`` (its in-neighbours), so a matching pairs each influenced
state with one distinct influencing state or input.

Method: Karp–Sipser initialisation (degree-one reductions, which are optimal, then
greedy choices), completed to a maximum matching by the Pothen–Fan depth-first augmenting
search with lookahead and alternating scan direction (PF+). See Duff, Kaya & Uçar (2011)
for the comparison that motivates this pair. Compiled with numba; the kernels trust their
input (validate at the public boundary). Matching extra columns into a maximum matching
found here is :mod:`netctl.graph.extra_columns`.

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
from netctl._jit import njit
from netctl.graph.transpose import index_dtype, transpose_csr, transpose_index

__all__ = ["maximum_matching", "matching_from_csr", "is_valid_matching", "transpose_csr",
           "transpose_index", "index_dtype", "matching_work"]


@njit(cache=True, nogil=True)
def _ks_match(r, c, indptr, indices, tptr, tind, rst, cst, queue, tail):  # pragma: no cover
    """Match r-c and lower the degrees of their unmatched neighbours; returns new tail.

    ``rst``/``cst`` hold one word per vertex: the number of unmatched neighbours (>= 0)
    while unmatched, ``-(mate + 2)`` once matched, so each neighbour costs one random
    access instead of two (match array and degree array).
    """
    rst[r] = -(c + 2)
    cst[c] = -(r + 2)
    for k in range(indptr[r], indptr[r + 1]):
        c2 = indices[k]
        s = cst[c2]
        if s > 0:
            s -= 1
            cst[c2] = s
            if s == 1:
                queue[tail] = -(c2 + 1)
                tail += 1
    for k in range(tptr[c], tptr[c + 1]):
        r2 = tind[k]
        s = rst[r2]
        if s > 0:
            s -= 1
            rst[r2] = s
            if s == 1:
                queue[tail] = r2
                tail += 1
    return tail


# Karp–Sipser is bound by memory latency: every match leads to a chain of dependent
# random loads (queue entry -> pointers -> neighbour list -> neighbour states -> the
# mate's pointers -> ...). The kernel below keeps the algorithm's order but, before
# working through the next _WINDOW queue entries (or greedy rows), walks the same chains
# for all of them level by level with loads only, so that the loads of one level are
# independent of each other and overlap in the memory system (the "group prefetching"
# idea of Chen, Ailamaki, Gibbons, Mowry, ACM TODS 32(3), 2007). When no degree-one
# vertex is left, _GREEDY greedy choices are made at once, so that their cascades share
# windows. The walks pay off only once the arrays no longer fit in cache: below
# _PREFETCH_BYTES of kernel arrays they cost more than they save. The constants were
# chosen with benchmarks/bench_drivers.py on the project's machine kind (2 MiB L2 per
# core; common practice, no source).
_WINDOW = 16
_GREEDY = 16
_PREFETCH_BYTES = 16 * 2**20


_NO_MATE = -(2**31)  # "no likely mate" in the walks' code arrays (fits int32 and int64)
_NEVER = -(2**63)  # the least int64: what the cache-warming sums are compared with


@njit(cache=True, nogil=True)
def _touch_queue(queue, lo, hi, indptr, indices, tptr, tind, rst, cst, a0, a1,
                 mate):  # pragma: no cover - compiled
    """Loads only (no state changes): the data queue[lo:hi] will need, level by level."""
    w = hi - lo
    acc = 0
    for j in range(w):  # level 1: own state and pointers
        code = queue[lo + j]
        if code >= 0:
            a0[j] = indptr[code]
            a1[j] = indptr[code + 1]
            acc += rst[code]
        else:
            c = -code - 1
            a0[j] = tptr[c]
            a1[j] = tptr[c + 1]
            acc += cst[c]
    for j in range(w):  # level 2: the neighbour lists
        if a1[j] > a0[j]:
            acc += indices[a0[j]] if queue[lo + j] >= 0 else tind[a0[j]]
    for j in range(w):  # level 3: neighbour states; the likely mate, as a queue code
        code = queue[lo + j]
        m = _NO_MATE
        if code >= 0:
            for k in range(a0[j], a1[j]):
                if cst[indices[k]] >= 0:
                    m = -(indices[k] + 1)
                    break
        else:
            for k in range(a0[j], a1[j]):
                if rst[tind[k]] >= 0:
                    m = tind[k]
                    break
        mate[j] = m
    return acc + _touch_mates(w, indptr, indices, tptr, tind, rst, cst, a0, a1, mate)


@njit(cache=True, nogil=True)
def _touch_mates(w, indptr, indices, tptr, tind, rst, cst, a0, a1,
                 mate):  # pragma: no cover - compiled
    """Loads only: pointers, lists and neighbour states of the likely mates
    ``mate[:w]`` (codes as in the queue: row ``r >= 0``, column ``-(c+1)``)."""
    acc = 0
    for j in range(w):  # level 4: the mate's pointers
        m = mate[j]
        if m >= 0:
            a0[j] = indptr[m]
            a1[j] = indptr[m + 1]
        elif m != _NO_MATE:
            a0[j] = tptr[-m - 1]
            a1[j] = tptr[-m]
    for j in range(w):  # level 5: the mate's neighbour list
        m = mate[j]
        if m != _NO_MATE and a1[j] > a0[j]:
            acc += indices[a0[j]] if m >= 0 else tind[a0[j]]
    for j in range(w):  # level 6: the states of the mate's neighbours
        m = mate[j]
        if m >= 0:
            for k in range(a0[j], a1[j]):
                acc += cst[indices[k]]
        elif m != _NO_MATE:
            for k in range(a0[j], a1[j]):
                acc += rst[tind[k]]
    return acc


@njit(cache=True, nogil=True)
def _touch_rows(lo, hi, indptr, indices, tptr, tind, rst, cst, a0, a1,
                mate):  # pragma: no cover - compiled
    """Loads only: the data the greedy rows lo..hi will need."""
    w = hi - lo
    for j in range(w):  # rows are consecutive: their lists stream in
        r = lo + j
        m = _NO_MATE
        if rst[r] > 0:
            for k in range(indptr[r], indptr[r + 1]):
                if cst[indices[k]] >= 0:
                    m = -(indices[k] + 1)
                    break
        mate[j] = m
    return _touch_mates(w, indptr, indices, tptr, tind, rst, cst, a0, a1, mate)


@njit(cache=True, nogil=True)
def _karp_sipser(indptr, indices, tptr, tind, row_match, col_match, fresh,
                 visited, core_row, prefetch):  # pragma: no cover - compiled
    """Karp–Sipser: match degree-one vertices first (optimal), else greedily.

    Works in place on ``row_match``/``col_match`` (-1 = unmatched), which are turned into
    state words for the duration (see :func:`_ks_match`) and back. Degrees count
    unmatched neighbours only; a vertex's degree only falls, so it enters the queue at
    most once (when its degree is or becomes one). Rows and columns already matched on
    entry are respected (``fresh`` False).

    The degree-one reductions made before the first greedy choice belong to some maximum
    matching (Karp & Sipser), so a maximum matching of the whole graph is those pairs plus
    a maximum matching of the rest (the *core*). At the first greedy choice this records
    the core for the augmenting phase: ``visited[c] = -1`` for core columns and a value
    larger than any phase number for the others (they then always look visited), and
    ``core_row[r]`` for the unmatched rows that still have an unmatched neighbour.
    Returns False when no greedy choice was needed: the matching is then maximum.
    With ``fresh`` False (a given start matching, not made of such reductions) the
    whole graph is the core from the start.
    """
    n_rows = indptr.size - 1
    n_cols = tptr.size - 1
    rst = row_match
    cst = col_match
    if fresh:
        for r in range(n_rows):
            rst[r] = indptr[r + 1] - indptr[r]
        for c in range(n_cols):
            cst[c] = tptr[c + 1] - tptr[c]
    else:
        # matched -> -(mate + 2); unmatched stay -1 until their degree is counted
        for r in range(n_rows):
            if rst[r] >= 0:
                rst[r] = -(rst[r] + 2)
        for c in range(n_cols):
            if cst[c] >= 0:
                cst[c] = -(cst[c] + 2)
        for r in range(n_rows):
            if rst[r] == -1:
                d = 0
                for k in range(indptr[r], indptr[r + 1]):
                    if cst[indices[k]] >= -1:
                        d += 1
                rst[r] = d
        for c in range(n_cols):
            if cst[c] == -1:
                d = 0
                for k in range(tptr[c], tptr[c + 1]):
                    if rst[tind[k]] >= 0:
                        d += 1
                cst[c] = d
    snapshot = not fresh
    if snapshot:
        # a start matching that is not maximum may need paths through any vertex
        for c in range(n_cols):
            visited[c] = -1
        for r in range(n_rows):
            core_row[r] = True
    # queue of degree-one vertices: code r >= 0 for rows, -(c+1) for columns
    queue = np.empty(n_rows + n_cols + 1, rst.dtype)
    a0 = np.empty(_WINDOW, indptr.dtype)
    a1 = np.empty(_WINDOW, indptr.dtype)
    mate = np.empty(_WINDOW, np.int64)
    head = 0
    tail = 0
    for r in range(n_rows):
        if rst[r] == 1:
            queue[tail] = r
            tail += 1
    for c in range(n_cols):
        if cst[c] == 1:
            queue[tail] = -(c + 1)
            tail += 1
    next_greedy = 0
    touched_q = 0
    touched_g = 0
    acc = 0
    big = np.iinfo(np.int32).max
    while True:
        while head < tail:
            if prefetch and head >= touched_q:
                touched_q = min(head + _WINDOW, tail)
                acc += _touch_queue(queue, head, touched_q, indptr, indices, tptr, tind,
                                    rst, cst, a0, a1, mate)
            code = queue[head]
            head += 1
            if code >= 0:
                r = code
                if rst[r] <= 0:
                    continue
                c = -1
                for k in range(indptr[r], indptr[r + 1]):
                    if cst[indices[k]] >= 0:
                        c = indices[k]
                        break
                if c == -1:
                    continue
            else:
                c = -code - 1
                if cst[c] <= 0:
                    continue
                r = -1
                for k in range(tptr[c], tptr[c + 1]):
                    if rst[tind[k]] >= 0:
                        r = tind[k]
                        break
                if r == -1:
                    continue
            tail = _ks_match(r, c, indptr, indices, tptr, tind, rst, cst, queue, tail)
        # no degree-one vertex left: a few greedy choices, then back to the reductions
        progressed = 0
        while next_greedy < n_rows and progressed < _GREEDY:
            if prefetch and next_greedy >= touched_g:
                touched_g = min(next_greedy + _WINDOW, n_rows)
                acc += _touch_rows(next_greedy, touched_g, indptr, indices, tptr, tind,
                                   rst, cst, a0, a1, mate)
            r = next_greedy
            next_greedy += 1
            if rst[r] <= 0:
                continue
            for k in range(indptr[r], indptr[r + 1]):
                c = indices[k]
                if cst[c] >= 0:
                    if not snapshot:
                        snapshot = True
                        for c2 in range(n_cols):
                            visited[c2] = -1 if cst[c2] >= 0 else big
                        for r2 in range(n_rows):
                            core_row[r2] = rst[r2] > 0
                    tail = _ks_match(r, c, indptr, indices, tptr, tind, rst, cst, queue,
                                     tail)
                    progressed += 1
                    break
        if progressed == 0:
            break
    for r in range(n_rows):
        s = rst[r]
        rst[r] = -s - 2 if s < 0 else -1
    for c in range(n_cols):
        s = cst[c]
        cst[c] = -s - 2 if s < 0 else -1
    # the loads above must not be optimised away: their sum decides nothing. It is
    # compared with the least int64, which a sum of fewer than 2**32 terms each below
    # 2**31 in size cannot reach (compared with -1, as it was, a sum of the negative
    # state words could reach it and claim a core that was never recorded)
    return snapshot or acc == _NEVER


@njit(cache=True, nogil=True)
def _pothen_fan(indptr, indices, row_match, col_match, visited,
                core_row):  # pragma: no cover - compiled
    """Complete a matching to a maximum one: Pothen–Fan DFS with lookahead (PF+).

    Searches start from the free rows with ``core_row`` set and only enter columns whose
    ``visited`` is below the phase number (see :func:`_karp_sipser` for the core).
    """
    n_rows = indptr.size - 1
    # vertex ids and phase numbers fit in int32 (checked by the caller); positions into
    # ``indices`` have the pointer type. This keeps the working memory near two CSR
    # index arrays.
    lookahead = indptr[:-1].copy()
    stack_row = np.empty(n_rows + 1, np.int32)
    stack_pos = np.empty(n_rows + 1, indptr.dtype)
    stack_col = np.empty(n_rows + 1, np.int32)
    free = np.empty(n_rows, np.int32)
    n_free = 0
    for r in range(n_rows):
        if row_match[r] == -1 and core_row[r] and indptr[r + 1] > indptr[r]:
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
                        if visited[c] < phase:
                            nxt = c
                            break
                    stack_pos[top] = pos
                else:
                    pos = stack_pos[top]
                    beg = indptr[r]
                    while pos >= beg:
                        c = indices[pos]
                        pos -= 1
                        if visited[c] < phase:
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


def _prefetch_pays(indptr: np.ndarray, indices: np.ndarray, tptr: np.ndarray,
                   tind: np.ndarray, row_match: np.ndarray) -> bool:
    """Whether the kernel arrays outgrow the caches (module constant read at call time,
    so tests can force either path)."""
    n_rows, n_cols = indptr.size - 1, tptr.size - 1
    footprint = (indptr.itemsize * n_rows + indices.itemsize * indices.size
                 + tptr.itemsize * n_cols + tind.itemsize * tind.size
                 + 2 * row_match.itemsize * (n_rows + n_cols))
    return bool(footprint > _PREFETCH_BYTES)


@njit(cache=True, nogil=True)
def _matching_kernel(indptr, indices, tptr, tind, row_match, col_match, fresh,
                     prefetch):  # pragma: no cover - compiled
    n_cols = tptr.size - 1
    n_rows = indptr.size - 1
    visited = np.empty(n_cols, np.int32)
    core_row = np.empty(n_rows, np.bool_)
    if _karp_sipser(indptr, indices, tptr, tind, row_match, col_match, fresh, visited,
                    core_row, prefetch):
        _pothen_fan(indptr, indices, row_match, col_match, visited, core_row)


def matching_work(
    indptr: np.ndarray,
    indices: np.ndarray,
    n_cols: int,
    transpose: tuple[np.ndarray, np.ndarray] | None = None,
    row_match: np.ndarray | None = None,
    col_match: np.ndarray | None = None,
    dtype: type | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """:func:`maximum_matching` for callers that keep their arrays across kernels.

    ``indptr``/``indices`` are used as given (int64 as a system stores them; no copy);
    the transpose and the matching are of the work type ``dtype`` (default:
    :func:`index_dtype` of the sizes), and the matching is returned in that type.
    ``row_match``/``col_match``, when given, must be of that type and are completed in
    place.
    """
    n_rows = indptr.size - 1
    if max(n_rows, int(n_cols)) >= 2**31 - 4:  # vertex ids on the search stacks are int32
        raise ValueError(f"the matching kernel handles fewer than 2**31 - 4 rows and "
                         f"columns, found {n_rows} x {n_cols}.")
    dt = index_dtype(n_rows, int(n_cols), indices.size) if dtype is None else dtype
    fresh = row_match is None
    rm = np.full(n_rows, -1, dt) if row_match is None else row_match
    cm = np.full(int(n_cols), -1, dt) if col_match is None else col_match
    if n_rows and n_cols and indices.size:
        if transpose is None:
            transpose = transpose_index(indptr, indices, int(n_cols), dt)
        _matching_kernel(indptr, indices, transpose[0], transpose[1], rm, cm, fresh,
                         _prefetch_pays(indptr, indices, transpose[0], transpose[1], rm))
    return rm, cm


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
    indptr, indices : ndarray of int
        Row ``r`` is adjacent to columns ``indices[indptr[r]:indptr[r+1]]``.
    n_cols : int
        Number of columns.
    row_match, col_match : ndarray of int, optional
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
    Worst case O(V E); near-linear on the sparse networks netctl targets. The index
    arrays are read as int64; the transpose and the work arrays are int32 whenever the
    sizes allow (less memory traffic); the result is int64.
    """
    n_rows = np.asarray(indptr).size - 1
    n_cols = int(n_cols)
    dt = index_dtype(n_rows, n_cols, np.asarray(indices).size)
    ptr = np.ascontiguousarray(indptr, dtype=np.int64)
    ind = np.ascontiguousarray(indices, dtype=np.int64)
    rm: np.ndarray | None = None if row_match is None else np.array(row_match, dt)
    cm: np.ndarray | None = None if col_match is None else np.array(col_match, dt)
    if rm is not None and cm is None:
        cm = np.full(n_cols, -1, dt)
        rows = np.flatnonzero(rm >= 0)
        cm[rm[rows]] = rows
    elif cm is not None and rm is None:
        rm = np.full(n_rows, -1, dt)
        cols = np.flatnonzero(cm >= 0)
        rm[cm[cols]] = cols
    tr: tuple[np.ndarray, np.ndarray] | None = None
    if transpose is not None:
        tr = (np.ascontiguousarray(transpose[0], dt), np.ascontiguousarray(transpose[1], dt))
    rm, cm = matching_work(ptr, ind, n_cols, tr, rm, cm, dt)
    return rm.astype(np.int64), cm.astype(np.int64)


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
