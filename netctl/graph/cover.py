"""Largest stem-cycle cover of a directed graph with inputs, in phases of many paths.

Rows are the in-copies of the ``r`` states, columns their out-copies (``0..r-1``)
followed by the inputs; a real edge (row ``v``, column ``u``: ``u -> v``) costs 0 and
the dummy pair (row ``v``, column ``v``) costs 1 (no dummy where ``v`` has a self-loop:
its real edge does the job). A perfect assignment of the rows then uses real edges that
form vertex-disjoint stems (paths starting at an input column) and cycles: every state
on a real edge has one predecessor, and following predecessors never reaches a state on
its dummy (that state holds its own column). The cheapest assignment therefore leaves
the fewest states uncovered, which is Hosoe's generic dimension of the controllable
subspace when the graph is restricted to the input-accessible states [1]_.

The assignment is found by the primal-dual method for minimum-cost flow [2]_: start
from a maximum matching of the real edges (cost 0, all prices 0, dual feasible); then,
per phase, one multi-source Dijkstra search (Dial's buckets: reduced costs are small
integers) from every unmatched row gives the shortest augmenting distance ``D``, the
prices move by ``min(dist, D)``, and a maximum matching of the edges of zero reduced
cost (the fast matching kernel, started from the current assignment) augments along
every shortest path at once, so that the next phase has a larger ``D``. That matching
runs only on the rows and columns from which an alternating path of such edges reaches
a free column (one backward search): every augmenting path lies there, and the rest,
often more than half of a failing system, would only be searched in vain. The phases are
as many as the distinct distances (a handful on the networks netctl targets), each
O(E) plus one warm-started matching. Exact.

References
----------
.. [1] S. Hosoe, "Determination of generic dimensions of controllable subspaces and its
   application", IEEE Trans. Automatic Control 25(6):1116-1119, 1980 (from memory).
   doi:10.1109/TAC.1980.1102506
.. [2] R. K. Ahuja, T. L. Magnanti, J. B. Orlin, *Network Flows*, Prentice Hall 1993,
   section 9.8 (primal-dual algorithm; from memory).
"""

from __future__ import annotations

import numpy as np
from netctl._jit import njit

from netctl.graph.matching import maximum_matching

__all__ = ["stem_cycle_cover"]


@njit(cache=True, nogil=True)
def _with_dummies(ptr, ind, loop):  # pragma: no cover - compiled
    """CSR of the rows with each row's dummy column appended (weight 1), and weights."""
    r = ptr.size - 1
    fptr = np.zeros(r + 1, np.int64)
    extra = 0
    for i in range(r):
        if not loop[i]:
            extra += 1
    find = np.empty(ind.size + extra, np.int64)
    fw = np.zeros(ind.size + extra, np.int8)
    pos = 0
    for i in range(r):
        for k in range(ptr[i], ptr[i + 1]):
            find[pos] = ind[k]
            pos += 1
        if not loop[i]:
            find[pos] = i
            fw[pos] = 1
            pos += 1
        fptr[i + 1] = pos
    return fptr, find, fw


@njit(cache=True, nogil=True)
def _prices(fptr, find, fw, rm, cm, srow, scol):  # pragma: no cover - compiled
    """One multi-source Dijkstra search (Dial's buckets) from every unmatched row on the
    reduced costs; moves the prices (stored relative to the sink's) in place and
    returns the shortest augmenting distance, or -1 when no row is unmatched."""
    r = rm.size
    n_cols = cm.size
    inf = np.int64(2) ** 62
    head = np.full(64, -1, np.int64)
    drow = np.full(r, inf, np.int64)
    dcol = np.full(n_cols, inf, np.int64)
    cap = r + n_cols + 16
    enode = np.empty(cap, np.int64)
    enext = np.empty(cap, np.int64)
    ne = 0
    top = 0
    for i in range(r):
        if rm[i] < 0:
            drow[i] = 0
            enode[ne] = i
            enext[ne] = head[0]
            head[0] = ne
            ne += 1
    if ne == 0:
        return np.int64(-1)
    best = inf
    d = np.int64(0)
    while d < best and d <= top:
        e = head[d]
        if e < 0:
            d += 1
            continue
        head[d] = enext[e]
        x = enode[e]
        if x < r:
            i = x
            if drow[i] != d:
                continue
            mi = rm[i]
            for k in range(fptr[i], fptr[i + 1]):
                j = find[k]
                if j == mi:
                    continue
                nd = d + fw[k] + srow[i] - scol[j]
                if nd < dcol[j] and nd < best:
                    dcol[j] = nd
                    if nd >= head.size:
                        h2 = np.full(max(2 * head.size, nd + 1), -1, np.int64)
                        h2[:head.size] = head
                        head = h2
                    if nd > top:
                        top = nd
                    if ne >= cap:
                        en2 = np.empty(2 * cap, np.int64)
                        ex2 = np.empty(2 * cap, np.int64)
                        en2[:cap] = enode
                        ex2[:cap] = enext
                        enode = en2
                        enext = ex2
                        cap = 2 * cap
                    enode[ne] = r + j
                    enext[ne] = head[nd]
                    head[nd] = ne
                    ne += 1
        else:
            j = x - r
            if dcol[j] != d:
                continue
            i2 = cm[j]
            if i2 < 0:
                if d + scol[j] < best:  # column -> sink, reduced cost scol[j] >= 0
                    best = d + scol[j]
                continue
            # the matched edge is tight: the row is at the column's distance
            if d < drow[i2]:
                drow[i2] = d
                if ne >= cap:
                    en2 = np.empty(2 * cap, np.int64)
                    ex2 = np.empty(2 * cap, np.int64)
                    en2[:cap] = enode
                    ex2[:cap] = enext
                    enode = en2
                    enext = ex2
                    cap = 2 * cap
                enode[ne] = i2
                enext[ne] = head[d]
                head[d] = ne
                ne += 1
    if best >= inf:
        raise ValueError("no perfect assignment: a row has no column")
    # true prices += min(dist, best); the sink's += best: stored s += dist - best
    for i in range(r):
        if drow[i] < best:
            srow[i] += drow[i] - best
    for j in range(n_cols):
        if dcol[j] < best:
            scol[j] += dcol[j] - best
    return best


@njit(cache=True, nogil=True)
def _admissible(fptr, find, fw, srow, scol, cm):  # pragma: no cover - compiled
    """CSR of the edges of zero reduced cost into a matched column or a free column of
    stored price 0 (an admissible end at the sink)."""
    r = fptr.size - 1
    aptr = np.zeros(r + 1, np.int64)
    aind = np.empty(find.size, np.int64)
    pos = 0
    for i in range(r):
        for k in range(fptr[i], fptr[i + 1]):
            j = find[k]
            if fw[k] + srow[i] - scol[j] == 0 and (cm[j] >= 0 or scol[j] == 0):
                aind[pos] = j
                pos += 1
        aptr[i + 1] = pos
    return aptr, aind[:pos].copy()


@njit(cache=True, nogil=True)
def _useful(aptr, aind, rm, cm, n_cols):  # pragma: no cover - compiled
    """The admissible subgraph that can hold an augmenting path: rows and columns from
    which an alternating path of admissible edges reaches a free column, found by one
    backward search from the free columns (a column is left by the matched edge to its
    row; a row is entered through a non-matching admissible edge). Returns the subgraph
    as CSR over the renumbered useful rows and columns, their original ids, and the
    current matching in the new numbering."""
    r = aptr.size - 1
    tptr = np.zeros(n_cols + 1, np.int64)
    for k in range(aind.size):
        tptr[aind[k] + 1] += 1
    for j in range(n_cols):
        tptr[j + 1] += tptr[j]
    tind = np.empty(aind.size, np.int64)
    fill = tptr[:-1].copy()
    for i in range(r):
        for k in range(aptr[i], aptr[i + 1]):
            j = aind[k]
            tind[fill[j]] = i
            fill[j] += 1
    urow = np.zeros(r, np.bool_)
    ucol = np.zeros(n_cols, np.bool_)
    queue = np.empty(n_cols, np.int64)
    head = 0
    tail = 0
    for j in range(n_cols):
        if cm[j] < 0 and tptr[j + 1] > tptr[j]:
            ucol[j] = True
            queue[tail] = j
            tail += 1
    while head < tail:
        j = queue[head]
        head += 1
        for k in range(tptr[j], tptr[j + 1]):
            i = tind[k]
            if i == cm[j] or urow[i]:
                continue
            urow[i] = True
            c = rm[i]
            if c >= 0 and not ucol[c]:
                ucol[c] = True
                queue[tail] = c
                tail += 1
    new_col = np.full(n_cols, -1, np.int64)
    cols = np.empty(tail, np.int64)
    nc = 0
    for j in range(n_cols):
        if ucol[j]:
            new_col[j] = nc
            cols[nc] = j
            nc += 1
    nr = 0
    for i in range(r):
        if urow[i]:
            nr += 1
    rows = np.empty(nr, np.int64)
    sptr = np.zeros(nr + 1, np.int64)
    srm = np.full(nr, -1, np.int64)
    q = 0
    for i in range(r):
        if urow[i]:
            rows[q] = i
            cnt = 0
            for k in range(aptr[i], aptr[i + 1]):
                if ucol[aind[k]]:
                    cnt += 1
            sptr[q + 1] = sptr[q] + cnt
            if rm[i] >= 0:
                srm[q] = new_col[rm[i]]
            q += 1
    sind = np.empty(sptr[nr], np.int64)
    pos = 0
    for q in range(nr):
        i = rows[q]
        for k in range(aptr[i], aptr[i + 1]):
            j = aind[k]
            if ucol[j]:
                sind[pos] = new_col[j]
                pos += 1
    return sptr, sind, rows, cols, srm


@njit(cache=True, nogil=True)
def _write_back(rows, cols, srm, rm, cm):  # pragma: no cover - compiled
    """Copy the matching of the useful subgraph back into the whole one."""
    for q in range(rows.size):
        i = rows[q]
        if srm[q] >= 0:
            j = cols[srm[q]]
            rm[i] = j
            cm[j] = i


def stem_cycle_cover(indptr: np.ndarray, indices: np.ndarray, n_cols: int,
                     has_loop: np.ndarray) -> tuple[np.ndarray, int]:
    """Largest set of states covered by vertex-disjoint stems and cycles.

    Parameters
    ----------
    indptr, indices : ndarray of int
        CSR of ``[A B]`` restricted to ``r`` states: row ``v`` lists the columns ``u``
        with ``A[v, u] != 0`` (states ``0..r-1``) and ``r + k`` for input ``k`` acting
        on ``v``.
    n_cols : int
        ``r`` plus the number of inputs.
    has_loop : ndarray of bool, shape (r,)
        Whether each state has a self-loop (the real edge ``(v, v)``).

    Returns
    -------
    row_match : ndarray of int64, shape (r,)
        Column of each row in one optimal assignment; a row ``v`` with
        ``row_match[v] == v`` and no self-loop is uncovered.
    n_uncovered : int
        States left out of every stem and cycle; ``r - n_uncovered`` is the largest
        number covered (Hosoe's dimension when the rows are the accessible states).

    Notes
    -----
    Primal-dual minimum-cost assignment (module docstring), exact; one of possibly many
    optimal assignments. Each phase is O(E + V); the phases are few in practice.
    """
    ptr = np.ascontiguousarray(indptr, np.int64)
    ind = np.ascontiguousarray(indices, np.int64)
    r = ptr.size - 1
    n_cols = int(n_cols)
    rm, cm = maximum_matching(ptr, ind, n_cols)
    if r == 0:
        return rm, 0
    loops = np.ascontiguousarray(has_loop, np.bool_)
    fptr, find, fw = _with_dummies(ptr, ind, loops)
    srow = np.zeros(r, np.int64)
    scol = np.zeros(n_cols, np.int64)
    while True:
        if _prices(fptr, find, fw, rm, cm, srow, scol) < 0:
            break
        # every shortest augmenting path at once: a maximum matching of the admissible
        # edges, started from the current one (augmenting paths keep matched vertices),
        # on the part of them that can hold an augmenting path at all
        aptr, aind = _admissible(fptr, find, fw, srow, scol, cm)
        sptr, sind, rows, cols, srm = _useful(aptr, aind, rm, cm, n_cols)
        srm, _ = maximum_matching(sptr, sind, cols.size, row_match=srm)
        _write_back(rows, cols, srm, rm, cm)
    n_unc = int(np.count_nonzero((rm == np.arange(r)) & ~loops))
    return rm, n_unc
