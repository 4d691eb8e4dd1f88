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
every shortest path at once, so that the next phase has a larger ``D``. The phases are
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
        # edges, started from the current one (augmenting paths keep matched vertices)
        aptr, aind = _admissible(fptr, find, fw, srow, scol, cm)
        rm, cm = maximum_matching(aptr, aind, n_cols, row_match=rm, col_match=cm)
    n_unc = int(np.count_nonzero((rm == np.arange(r)) & ~loops))
    return rm, n_unc
