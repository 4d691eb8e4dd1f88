"""Extra columns added to a maximum matching at least cost, rewards 0/1 on the rows.

The job: a maximum matching ``M`` of a bipartite graph (rows, real columns) is given,
and extra columns, each adjacent to a set of rows, are to be matched as well. Among the
matchings of largest size of the graph with the extra columns (their real part keeps
its size: an augmenting path never unmatches a column), find one of largest *reward*:
a row matched to a real column earns ``barred[row]``, a row matched to an extra column
``k`` earns ``barred[row]`` when ``full[k]`` and nothing otherwise. (In
:func:`netctl.structural._engine.completion` this is the smallest fix that holds as few
barred states as possible: see its Notes.)

Method: successive shortest augmenting paths (min-cost flow; Ahuja, Magnanti & Orlin
1993, ch. 9) from the free extra columns, started from ``M``, with node potentials so
that every search is Dijkstra's on non-negative reduced costs, stopped as soon as the
cheapest free row is known; each search is followed by a depth-first search that
augments along as many vertex-disjoint zero-reduced-cost paths as it finds (the
primal-dual method, ibid. 9.8), so that equal-cost augmentations share one search.
Rows that every maximum matching of the real graph takes are left out of the searches
(they lie on no augmenting path). Successive shortest paths stay optimal for each size
provided the start is; ``M`` is optimal for its size when it matches as many rewarded
(barred) rows as any maximum matching of the real graph, which is the caller's duty
(the potentials the kernel starts from, 0 on columns and ``-barred`` on rows, give
every arc between rows and columns a non-negative reduced cost, so no cycle of them
gains; a path from a free row to a matched one gains nothing by that choice of ``M``).
Arc costs are -1, 0 or 1.

References
----------
.. [1] R. K. Ahuja, T. L. Magnanti, J. B. Orlin, *Network Flows: Theory, Algorithms,
   and Applications*, Prentice Hall, 1993 (successive shortest paths, reduced costs,
   the primal-dual algorithm; from memory).
.. [2] R. Jonker, A. Volgenant, "A shortest augmenting path algorithm for dense and
   sparse linear assignment problems", Computing 38:325-340, 1987
   (doi:10.1007/BF02278710; Dijkstra stopped early with the potentials of the settled
   nodes updated).
"""

from __future__ import annotations

import numpy as np
from netctl._jit import njit
from netctl.graph.dm import alternating_reach_rows
from netctl.graph.extra_columns import _flip_path

__all__ = ["extend_matching_least_cost"]


def extend_matching_least_cost(
    csr: tuple[np.ndarray, np.ndarray],
    transpose: tuple[np.ndarray, np.ndarray],
    n_cols: int,
    row_match: np.ndarray,
    col_match: np.ndarray,
    extra: tuple[np.ndarray, np.ndarray],
    barred: np.ndarray,
    full: np.ndarray,
) -> np.ndarray:
    """Match as many extra columns as possible, then earn the largest reward, in place.

    Parameters
    ----------
    csr : (indptr, indices)
        Row-wise adjacency of the real graph (columns adjacent to each row).
    transpose : (tptr, tind)
        Column-wise adjacency of the real columns.
    row_match, col_match : ndarray
        A maximum matching of the real graph that matches as many ``barred`` rows as any
        maximum matching (one integer type). Completed in place; a row matched to extra
        column ``k`` holds ``n_cols + k``.
    extra : (xptr, xind)
        Rows each extra column may take.
    barred : ndarray of bool, one per row
    full : ndarray of bool, one per extra column
        Whether a row matched to that extra column earns its ``barred``.

    Returns
    -------
    ndarray
        Row matched to each extra column, ``-1`` if none (type of ``row_match``).

    Notes
    -----
    Reward of a matching: the number of barred rows matched to a real column or to a
    ``full`` extra column. The result has the most extra columns matched of any
    matching whose real part is maximum and, among those, the largest reward. The
    searches visit only rows that some maximum matching of the real graph leaves free
    (the rows an alternating search from the free rows reaches, found once, linear: the
    horizontal tail of the Dulmage-Mendelsohn decomposition), since an augmenting path
    read backwards is an alternating path from a free row. Each round is one Dijkstra
    search and depth-first passes over that part; the number of rounds is at most the
    number of extra columns, and in practice a handful.
    """
    dt = row_match.dtype
    x_match = np.full(extra[0].size - 1, -1, dt)
    if x_match.size:
        # rows that no maximum matching of the real graph leaves free (the alternating
        # search from the free rows does not reach them) lie on no augmenting path: an
        # augmenting path read backwards is an alternating path from a free row
        live = alternating_reach_rows(csr[0], csr[1], n_cols,
                                      col_match)[0].view(np.uint8)
        # node ids (rows, then real and extra columns) in the type of the indices
        tdt = dt if row_match.size + n_cols + x_match.size < 2**31 - 1 else np.int64
        _extend(np.ascontiguousarray(transpose[0], dt),
                np.ascontiguousarray(transpose[1], tdt), int(n_cols), row_match, col_match,
                np.ascontiguousarray(extra[0], dt), np.ascontiguousarray(extra[1], dt),
                x_match, np.ascontiguousarray(barred, np.uint8),
                np.ascontiguousarray(full, np.uint8), live)
    return x_match


#: Entries of the search's heap at the start; 8 times longer whenever a search runs out.
_HEAP_START = 1024


def _extend(tptr: np.ndarray, tind: np.ndarray, n_cols: int, row_match: np.ndarray,
            col_match: np.ndarray, xptr: np.ndarray, xind: np.ndarray, x_match: np.ndarray,
            barred: np.ndarray, full: np.ndarray, live: np.ndarray,
            heap_start: int | None = None, grow: int = 8) -> tuple[int, int]:
    """:func:`_least_cost_extend`, called again with a heap ``grow`` times longer
    whenever a search runs out of it (the potentials and the rounds done are kept, the
    search that ran out starts over); returns the kernel's counts ``(passes,
    touched)``."""
    n = row_match.size
    pi = np.zeros(n + n_cols + xptr.size - 1, np.int32)
    pi[:n] = -(np.asarray(barred) != 0).astype(np.int32)
    # pi_s, depth-first passes, nodes touched
    state = np.zeros(3, np.int64)
    size = _HEAP_START if heap_start is None else heap_start
    while True:
        hkey = np.empty(size, np.int32)
        hnode = np.empty(size, tind.dtype)
        if _least_cost_extend(tptr, tind, n_cols, row_match, col_match, xptr, xind,
                              x_match, barred, full, live, pi, state, hkey, hnode) >= 0:
            return int(state[1]), int(state[2])
        size *= grow


@njit(cache=True, nogil=True)
def _heap_push(hkey, hnode, hsize, key, node):  # pragma: no cover - compiled
    """Push ``(key, node)`` on the binary min-heap ``hkey[:hsize]``/``hnode[:hsize]``
    (sift up); the caller has checked that ``hsize < hkey.size``."""
    i = hsize
    while i > 0:
        q = (i - 1) // 2
        if hkey[q] <= key:
            break
        hkey[i] = hkey[q]
        hnode[i] = hnode[q]
        i = q
    hkey[i] = key
    hnode[i] = node


@njit(cache=True, nogil=True)
def _least_cost_extend(tptr, tind, n_cols, row_match, col_match, xptr, xind, x_match,
                       barred, full, live, pi, state, hkey,
                       hnode):  # pragma: no cover - compiled
    """Successive shortest paths; see :func:`extend_matching_least_cost`.

    Nodes: rows ``0..n-1``, then column ``c`` (real, or extra ``n_cols + k``) as
    ``n + c``; a super-source ``s`` before every free extra column and a sink ``t``
    after every free row, kept as the two numbers ``pi_s`` and ``pi_t``. Arc costs are
    minus the reward: column ``c`` -> row ``v`` (``v`` takes ``c``) costs
    ``-reward(v, c)``, row ``v`` -> its column ``m`` (``v`` leaves ``m``) costs
    ``+reward(v, m)``. Reduced cost ``cost + pi[tail] - pi[head] >= 0``.

    ``pi`` (potentials of rows and columns) and ``state`` (``pi_s``, then the number of
    depth-first passes and of nodes the Dijkstra searches touched, for measurements)
    are kept across calls; a first call starts from ``pi`` = columns 0, rows
    ``-barred`` and ``state`` = 0 (with ``pi_t = -1`` every arc of the start, a maximum
    matching of the real graph with no extra column matched, has a non-negative reduced
    cost: col -> row ``-barred + barred``; row -> its real column ``barred - barred``;
    free row -> t ``-barred + 1``). ``hkey``/``hnode`` are the search's heap. Returns
    0 when done, or -1 when a search found the heap too short: that search is
    abandoned before it changed anything (the rounds before it are kept in the
    matching, ``pi`` and ``state``), and the caller calls again with a longer heap. No
    array is reallocated in here: a reassigned array in the search's loop made it
    slower throughout (``benchmarks/RESULTS.md``).
    """
    n = row_match.size
    n_x = xptr.size - 1
    n_nodes = n + n_cols + n_x
    big = 1 << 30
    cap = hkey.size
    pi_s = state[0]
    pi_t = -1
    dist = np.full(n_nodes, big, np.int32)
    touched = np.empty(n_nodes, tind.dtype)
    stamp = np.full(n, -1, np.int32)  # below every pass number still to come
    stack_col = np.empty(n + 1, tind.dtype)
    stack_pos = np.empty(n + 1, np.int64)
    stack_row = np.empty(n + 1, tind.dtype)
    rnd = state[1]
    work = state[2]
    while True:
        state[0] = pi_s  # what a call that finds the heap short leaves
        state[1] = rnd
        state[2] = work
        # --- Dijkstra from s, stopped when the cheapest free row is known
        hsize = 0
        ntouch = 0
        best = big
        for k in range(n_x):
            if x_match[k] != -1:
                continue
            u = n + n_cols + k
            d0 = pi_s - pi[u]
            dist[u] = d0
            touched[ntouch] = u
            ntouch += 1
            if hsize == cap:
                return -1
            _heap_push(hkey, hnode, hsize, d0, u)
            hsize += 1
        while hsize > 0:
            d = hkey[0]
            u = hnode[0]
            hsize -= 1  # pop: move the last item down from the root
            if hsize > 0:
                lk = hkey[hsize]
                ln = hnode[hsize]
                i = 0
                while True:
                    ch = 2 * i + 1
                    if ch >= hsize:
                        break
                    if ch + 1 < hsize and hkey[ch + 1] < hkey[ch]:
                        ch += 1
                    if hkey[ch] >= lk:
                        break
                    hkey[i] = hkey[ch]
                    hnode[i] = hnode[ch]
                    i = ch
                hkey[i] = lk
                hnode[i] = ln
            if d > dist[u]:
                continue  # stale
            if d >= best:
                break
            if u >= n:  # a column: rows that may take it
                c = u - n
                if c < n_cols:
                    lo = tptr[c]
                    hi = tptr[c + 1]
                else:
                    lo = xptr[c - n_cols]
                    hi = xptr[c - n_cols + 1]
                for p in range(lo, hi):
                    v = tind[p] if c < n_cols else xind[p]
                    if row_match[v] == c or not live[v]:
                        continue
                    rw = barred[v] if (c < n_cols or full[c - n_cols]) else 0
                    nd = d - rw + pi[u] - pi[v]
                    if nd < dist[v]:
                        if dist[v] == big:
                            touched[ntouch] = v
                            ntouch += 1
                        dist[v] = nd
                        if row_match[v] == -1:
                            # a free row: t's key known at once (the search stops when
                            # nothing cheaper is left), and nothing to scan from it
                            cand = nd + pi[v] - pi_t
                            if cand < best:
                                best = cand
                            continue
                        if hsize == cap:
                            return -1
                        _heap_push(hkey, hnode, hsize, nd, v)
                        hsize += 1
            else:  # a matched row: to the column it holds
                m = row_match[u]
                w = n + m
                rw = barred[u] if (m < n_cols or full[m - n_cols]) else 0
                nd = d + rw + pi[u] - pi[w]
                if nd < dist[w]:
                    if dist[w] == big:
                        touched[ntouch] = w
                        ntouch += 1
                    dist[w] = nd
                    # room: this row's own entry was popped just before
                    _heap_push(hkey, hnode, hsize, nd, w)
                    hsize += 1
        work += ntouch
        if best == big:
            for i in range(ntouch):
                dist[touched[i]] = big
            break  # no augmenting path: the extra part is as large as it can be
        # --- potentials: pi += min(dist, best) - best (s: -best, t: 0, others 0)
        for i in range(ntouch):
            u = touched[i]
            if dist[u] < best:
                pi[u] += dist[u] - best
            dist[u] = big
        pi_s -= best
        # --- augment along vertex-disjoint paths of zero reduced cost, pass after
        # pass while one finds any (new reverse arcs may open more at this cost)
        total = 0
        while True:
            augmented = 0
            for k in range(n_x):
                if x_match[k] != -1 or pi_s - pi[n + n_cols + k] != 0:
                    continue
                top = 0
                stack_col[0] = n_cols + k
                stack_pos[0] = xptr[k]
                found = -1
                while top >= 0:
                    c = stack_col[top]
                    if c < n_cols:
                        end = tptr[c + 1]
                    else:
                        end = xptr[c - n_cols + 1]
                    pos = stack_pos[top]
                    nxt = -1
                    while pos < end:
                        v = tind[pos] if c < n_cols else xind[pos]
                        pos += 1
                        if stamp[v] == rnd or row_match[v] == c or not live[v]:
                            continue
                        rw = barred[v] if (c < n_cols or full[c - n_cols]) else 0
                        if pi[n + c] - rw - pi[v] != 0:
                            continue
                        stamp[v] = rnd
                        m = row_match[v]
                        if m == -1:
                            if pi[v] - pi_t == 0:
                                nxt = v
                                break
                            continue
                        rw2 = barred[v] if (m < n_cols or full[m - n_cols]) else 0
                        if rw2 + pi[v] - pi[n + m] != 0:
                            continue
                        nxt = v
                        break
                    stack_pos[top] = pos
                    if nxt == -1:
                        top -= 1
                        continue
                    stack_row[top] = nxt
                    if row_match[nxt] == -1:
                        found = nxt
                        break
                    c2 = row_match[nxt]
                    top += 1
                    stack_col[top] = c2
                    stack_pos[top] = tptr[c2] if c2 < n_cols else xptr[c2 - n_cols]
                if found != -1:
                    _flip_path(stack_col, stack_row, top, row_match, col_match, x_match,
                               n_cols)
                    augmented += 1
            rnd += 1
            total += augmented
            if augmented == 0:
                break
        if total == 0:
            break  # cannot happen with exact potentials; a guard against a loop
    state[0] = pi_s
    state[1] = rnd
    state[2] = work
    return 0
