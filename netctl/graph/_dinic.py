"""Maximum flow by Dinic's algorithm on a residual network in adjacency layout.

The network is the one of :class:`netctl.graph.linking.LinkingGraph`: the arcs leaving
node ``v`` are ``adj_ptr[v]:adj_ptr[v+1]``, ``head[q]`` is the node arc ``q`` enters and
``rev[q]`` the position of its reverse; ``cap`` holds the residual capacities (a reverse
arc starts at zero). Each phase finds the breadth-first levels from the source over arcs
with residual capacity, stopping at the level of the sink, then a blocking flow of the
level graph by depth-first search with a current-arc pointer per node (an arc is passed
over for the rest of the phase once it is saturated or leads to a dead end), and repeats
until the sink is out of reach [1]_. On a node-split network with unit state arcs (every
node but the source, the sink and the sources' and sinks' own nodes has one arc of
capacity one in or out) there are O(sqrt(V)) phases of O(E) each [2]_.

The last, failed, search has visited every node the source reaches in the final residual
network; its levels are returned, so that reachability (the source side of the minimum
cut nearest the source, the same for every maximum flow) needs no further pass.

References
----------
.. [1] E. A. Dinic, "Algorithm for solution of a problem of maximum flow in networks with
   power estimation", Soviet Math. Doklady 11:1277-1280, 1970 (from memory).
.. [2] S. Even, R. E. Tarjan, "Network flow and testing graph connectivity", SIAM J.
   Computing 4(4):507-518, 1975. doi:10.1137/0204043 (from memory)
"""

from __future__ import annotations

import numpy as np

from netctl._jit import njit

__all__ = ["dinic"]


@njit(cache=True, nogil=True)
def dinic(adj_ptr, head, rev, cap, source, sink, level):  # pragma: no cover - compiled
    """Maximum flow from ``source`` to ``sink``; ``cap`` (residual capacities) is updated
    in place and the flow value returned. ``level`` (int64, one per node) is overwritten:
    on return, the breadth-first level of each node from ``source`` in the final residual
    network, -1 where unreachable (``level >= 0`` is the residual reachability; the sink
    is never reached). All work arrays are allocated once, before the phases."""
    n_nodes = adj_ptr.size - 1
    queue = np.empty(n_nodes, np.int64)
    it = np.empty(n_nodes, np.int64)  # current arc of each node in this phase
    stack = np.empty(n_nodes, np.int64)
    via = np.empty(n_nodes, np.int64)  # arc into stack[t]
    flow = 0
    while True:
        # breadth-first levels from the source; nodes at the sink's level are not
        # expanded (no shortest augmenting path goes on from them)
        level[:] = -1
        level[source] = 0
        queue[0] = source
        qh = 0
        qt = 1
        dt = -1
        while qh < qt:
            v = queue[qh]
            qh += 1
            lv = level[v]
            if dt >= 0 and lv >= dt:
                break
            for a in range(adj_ptr[v], adj_ptr[v + 1]):
                if cap[a] > 0:
                    w = head[a]
                    if level[w] < 0:
                        level[w] = lv + 1
                        queue[qt] = w
                        qt += 1
                        if w == sink:
                            dt = lv + 1
        if dt < 0:
            break  # the search went everywhere the source reaches: level is final
        for t in range(qt):
            v = queue[t]
            it[v] = adj_ptr[v]
        # blocking flow: advance along arcs to the next level, retreat from dead ends
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
            lw = level[v] + 1
            end = adj_ptr[v + 1]
            a = it[v]
            while a < end:
                if cap[a] > 0:
                    w = head[a]
                    if level[w] == lw and (lw < dt or w == sink):
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
    return flow
