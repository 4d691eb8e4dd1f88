"""Maximum flow by Dinic's algorithm on a residual network in adjacency layout.

The network is the one of :class:`netctl.graph.linking.LinkingGraph`: the arcs leaving
node ``v`` are ``adj_ptr[v]:adj_ptr[v+1]``, ``head[q]`` is the node arc ``q`` enters and
``rev[q]`` the position of its reverse; ``cap`` holds the residual capacities (a reverse
arc starts at zero). Each phase finds the arcs of the shortest augmenting paths, then a
blocking flow on them by depth-first search with a current-arc pointer per node (an arc
is passed over for the rest of the phase once it is saturated or leads to a dead end),
and repeats until the sink is out of reach [1]_. On a node-split network with unit state
arcs (every node but the ends and the sources' and sinks' own nodes has one arc of
capacity one in or out) there are O(sqrt(V)) phases of O(E) each [2]_.

The shortest paths are found by two breadth-first searches, one from the source and one
backwards from the sink, each advancing by a whole level and the one with the smaller
frontier first, until some node has both levels: a shortest path then has ``la + lb``
arcs, and its node at depth ``p`` is at level ``p`` from the source (``p <= la``) or
``la + lb - p`` from the sink. Dinic's level graph is the special case of a search from
the source alone; on a large random network the two searches meet after some ten
thousand nodes where one search from the source sweeps most of the graph
(``benchmarks/RESULTS.md``, 2026-12-05). When the sink is out of reach the search from
the source is finished, so that its levels give every node the source reaches in the
final residual network (the source side of the minimum cut nearest the source, the same
for every maximum flow [3]_) without a further pass.

References
----------
.. [1] E. A. Dinic, "Algorithm for solution of a problem of maximum flow in networks with
   power estimation", Soviet Math. Doklady 11:1277-1280, 1970 (from memory).
.. [2] S. Even, R. E. Tarjan, "Network flow and testing graph connectivity", SIAM J.
   Computing 4(4):507-518, 1975. doi:10.1137/0204043 (from memory)
.. [3] L. R. Ford, D. R. Fulkerson, *Flows in Networks*, Princeton University Press,
   1962, ch. I (the minimal minimum cut; from memory).
"""

from __future__ import annotations

import numpy as np

from netctl._jit import njit

__all__ = ["dinic"]


@njit(cache=True, nogil=True)
def _grow(adj_ptr, head, cap, level, fq, fh, ft, la, other):  # pragma: no cover
    """One level of the search from the source: the nodes one arc with capacity left
    beyond ``fq[fh:ft]`` (level ``la``) and not labelled yet get level ``la + 1`` and join
    the queue; returns its new end and whether one of them already has a distance to
    the sink (``other >= 0``: the two searches met)."""
    met = False
    end = ft
    for t in range(fh, ft):
        v = fq[t]
        for a in range(adj_ptr[v], adj_ptr[v + 1]):
            if cap[a] > 0:
                w = head[a]
                if level[w] < 0:
                    level[w] = la + 1
                    fq[end] = w
                    end += 1
                    if other[w] >= 0:
                        met = True
    return end, met


@njit(cache=True, nogil=True)
def dinic(adj_ptr, head, rev, cap, source, sink, level):  # pragma: no cover - compiled
    """Maximum flow from ``source`` to ``sink`` (distinct nodes); ``cap`` (residual
    capacities) is updated in place and the flow value returned. ``level`` (int64, one
    per node) is overwritten: on return, the breadth-first level of each node from
    ``source`` in the final residual network, -1 where unreachable (``level >= 0`` is the
    residual reachability; the sink is never reached). All work arrays are allocated
    once, before the phases."""
    n_nodes = adj_ptr.size - 1
    dt = np.full(n_nodes, -1, np.int64)  # levels towards the sink (backward search)
    fq = np.empty(n_nodes, np.int64)  # forward search queue, one level after another
    bq = np.empty(n_nodes, np.int64)  # backward search queue
    it = np.empty(n_nodes, np.int64)  # current arc of each node in this phase
    stack = np.empty(n_nodes, np.int64)
    via = np.empty(n_nodes, np.int64)  # arc into stack[t]
    level[:] = -1
    flow = 0
    while True:
        # levels from the source (``level``) and towards the sink (``dt``), a whole level
        # of the side with the smaller frontier at a time, until a node has both: the
        # shortest augmenting path then has ``la + lb`` arcs
        level[source] = 0
        fq[0] = source
        fh = 0
        ft = 1
        la = 0
        dt[sink] = 0
        bq[0] = sink
        bh = 0
        bt = 1
        lb = 0
        met = False
        while fh < ft and bh < bt and not met:
            if ft - fh <= bt - bh:
                end, met = _grow(adj_ptr, head, cap, level, fq, fh, ft, la, dt)
                fh = ft
                ft = end
                la += 1
            else:
                end = bt
                for t in range(bh, end):
                    v = bq[t]
                    for q in range(adj_ptr[v], adj_ptr[v + 1]):
                        if cap[rev[q]] > 0:  # the arc u -> v
                            u = head[q]
                            if dt[u] < 0:
                                dt[u] = lb + 1
                                bq[bt] = u
                                bt += 1
                                if level[u] >= 0:
                                    met = True
                bh = end
                lb += 1
        if not met:
            for t in range(bt):
                dt[bq[t]] = -1
            # no augmenting path: finish the forward search, so that ``level`` holds
            # every node the source reaches
            while fh < ft:
                end, _ = _grow(adj_ptr, head, cap, level, fq, fh, ft, la, dt)
                fh = ft
                ft = end
                la += 1
            break
        d = la + lb  # arcs on a shortest augmenting path
        for t in range(ft):
            it[fq[t]] = adj_ptr[fq[t]]
        for t in range(bt):
            it[bq[t]] = adj_ptr[bq[t]]
        # blocking flow on the arcs of the shortest paths: the node at depth p of the
        # search is at level p from the source (p <= la) or d - p from the sink (p > la);
        # an arc is passed over for the rest of the phase once saturated or leading to a
        # dead end
        before = flow
        top = 0
        stack[0] = source
        while top >= 0:
            v = stack[top]
            if v == sink:
                push = cap[via[1]]
                for t in range(2, top + 1):
                    c = cap[via[t]]
                    if c < push:
                        push = c
                back = top
                for t in range(1, top + 1):
                    a = via[t]
                    cap[a] -= push
                    cap[rev[a]] += push
                    if cap[a] == 0 and t <= back:
                        back = t
                flow += push
                top = back - 1  # resume below the first saturated arc
                continue
            p = top + 1
            fwd = p <= la
            want = p if fwd else d - p
            end = adj_ptr[v + 1]
            a = it[v] if p <= d else end  # nothing lies beyond the sink's depth
            while a < end:
                if cap[a] > 0:
                    w = head[a]
                    if (level[w] if fwd else dt[w]) == want:
                        break
                a += 1
            it[v] = a
            if a < end:
                top += 1
                stack[top] = head[a]
                via[top] = a
            else:  # dead end: the arc into it is passed over for this phase
                top -= 1
                if top >= 0:
                    it[stack[top]] += 1
        if flow == before:  # a shortest path was found, so one must carry flow
            raise RuntimeError("dinic: a phase found no augmenting path (internal error)")
        for t in range(ft):
            level[fq[t]] = -1
        for t in range(bt):
            dt[bq[t]] = -1
    return flow
