"""Minimum-cost maximum flow on a unit-capacity residual network in adjacency layout.

The network is the node-split one of :class:`netctl.graph.linking.LinkingGraph`: node 0
is the super-source and node 1 the super-sink; the arcs leaving node ``v`` are
``adj_ptr[v]:adj_ptr[v+1]``, ``head[q]`` is the node arc ``q`` enters, ``rev[q]`` the
position of its reverse and ``forward[q]`` whether it is an arc of the network (not a
residual reverse); ``cost`` holds small integer arc costs (a reverse arc costs minus its
forward arc) and ``cap`` the residual capacities. The kernels trust their input.

Method: the primal-dual method. :func:`sink_distance` gives the exact distances to the
sink (a 0-1 breadth-first search) as starting potentials, so the search is goal-directed
and nodes that cannot reach the sink are cut off. :func:`min_cost_flow` then repeats
Dijkstra on reduced costs with node potentials (stopped when the sink is settled), then
as many augmenting paths of zero reduced cost as a depth-first search finds in one sweep:
the successive-shortest-path algorithm with all paths of one length taken per phase
[1]_. Costs are small integers (bucket queue), so each phase is O(E) and the number of
phases is at most the number of distinct path costs plus the flow value. After an optimal
flow, :func:`residual_search` (residual reachability) and :func:`back_costs` (least costs
back to the source) tell what one more source could change (negative cycle optimality,
[1]_ thm. 9.1). Compiled with numba.

References
----------
.. [1] R. K. Ahuja, T. L. Magnanti, J. B. Orlin, *Network Flows*, Prentice Hall, 1993,
   sections 6.5 (unit-capacity augmenting paths) and 9.7 (successive shortest paths).
"""

from __future__ import annotations

import numpy as np

from netctl._jit import njit
from netctl.graph._levels import order_by_scan

__all__ = ["INF", "sink_distance", "min_cost_flow", "residual_search", "back_costs"]

#: "no path": the distance of a node out of reach
INF = np.int64(2**62)


@njit(cache=True, nogil=True)
def sink_distance(adj_ptr, head, rev, forward, cost, cap):  # pragma: no cover - compiled
    """Least cost from every node to the super-sink along arcs with capacity (0-1
    breadth-first search over the reversed arcs; every cost here is 0 or 1). 2**62
    where the sink is out of reach.

    One level (distance) at a time, in rounds: a round's nodes are put in increasing
    order (sorted, or for a large round found by a scan of a mark array) and scanned;
    the nodes a 0-arc brings to the same distance form the next round, those a 1-arc
    reaches wait in ``nxt``, and of these only the ones still at that distance open the
    next level (none is scanned twice). Nodes in index order read their arcs in memory
    order: measured 0.48 -> 0.22 s at 10^6 states against a double-ended queue in
    discovery order, which also scanned a node again when a 0-arc lowered it
    (``benchmarks/RESULTS.md``, 2026-12-05)."""
    n_nodes = adj_ptr.size - 1
    dist = np.full(n_nodes, INF, np.int64)
    cur = np.empty(n_nodes, np.int64)
    nxt = np.empty(n_nodes, np.int64)
    mark = np.zeros(n_nodes, np.bool_)
    big = n_nodes // 16  # a larger round is put in order by a scan instead of a sort
    dist[1] = 0
    cur[0] = 1
    nc = 1
    d = 0
    while nc > 0:
        nn = 0
        lo = 0
        while lo < nc:
            hi = nc
            if hi - lo > big:
                order_by_scan(cur, lo, hi, mark)
            else:
                cur[lo:hi].sort()
            for t in range(lo, hi):
                v = cur[t]
                for q in range(adj_ptr[v], adj_ptr[v + 1]):
                    if forward[q]:
                        continue
                    f = rev[q]  # the forward arc u -> v
                    if cap[f] <= 0:
                        continue
                    u = head[q]
                    if cost[f] == 0:
                        if d < dist[u]:
                            dist[u] = d
                            cur[nc] = u
                            nc += 1
                    elif d + 1 < dist[u]:
                        dist[u] = d + 1
                        nxt[nn] = u
                        nn += 1
            lo = hi
        d += 1
        nc = 0
        for k in range(nn):
            u = nxt[k]
            if dist[u] == d:
                cur[nc] = u
                nc += 1
    return dist


@njit(cache=True, nogil=True)
def min_cost_flow(adj_ptr, head, rev, cost, cap, pi):  # pragma: no cover - compiled
    """Min-cost max-flow from node 0 to node 1; ``cap`` is the residual array (modified).
    Returns (flow, total cost, potentials). ``pi`` (modified) are feasible starting
    potentials: every arc with capacity has reduced cost >= 0. At return the reduced
    costs of all residual arcs are >= 0."""
    n_nodes = adj_ptr.size - 1
    dist = np.empty(n_nodes, np.int64)
    done = np.zeros(n_nodes, np.bool_)
    seen = np.zeros(n_nodes, np.int32)  # phase stamp of the last DFS visit
    it = np.empty(n_nodes, np.int64)
    stack = np.empty(n_nodes, np.int64)
    via = np.empty(n_nodes, np.int64)  # arc used to enter stack level
    dcap = n_nodes + 2  # no real path costs more than the number of nodes
    bucket = np.full(dcap + 1, -1, np.int64)
    # one entry per successful relaxation: each arc is relaxed at most once a phase
    pool_node = np.empty(head.size + 1, np.int64)
    pool_next = np.empty(head.size + 1, np.int64)
    touched = np.empty(n_nodes, np.int64)
    flow = 0
    total = 0
    phase = 0
    dist[:] = INF
    while True:
        # Dijkstra on reduced costs (bucket queue: costs are small integers), stopped
        # when the super-sink is settled; labels above the cap can never lead to it
        n_touched = 0
        n_pool = 0
        dist[0] = 0
        touched[0] = 0
        n_touched = 1
        bucket[0] = 0
        pool_node[0] = 0
        pool_next[0] = -1
        n_pool = 1
        hi = 0
        dT = INF
        b = 0
        while b <= hi and dT == INF:
            while bucket[b] >= 0:
                e = bucket[b]
                bucket[b] = pool_next[e]
                v = pool_node[e]
                if done[v] or dist[v] != b:
                    continue
                done[v] = True
                if v == 1:
                    dT = b
                    break
                pv = pi[v]
                for a in range(adj_ptr[v], adj_ptr[v + 1]):
                    if cap[a] <= 0:
                        continue
                    w = head[a]
                    if done[w]:
                        continue
                    nd = b + cost[a] + pv - pi[w]
                    if nd < dist[w] and nd <= dcap:
                        if dist[w] == INF:
                            touched[n_touched] = w
                            n_touched += 1
                        dist[w] = nd
                        pool_node[n_pool] = w
                        pool_next[n_pool] = bucket[nd]
                        bucket[nd] = n_pool
                        n_pool += 1
                        if nd > hi:
                            hi = nd
            b += 1
        for j in range(hi + 1):
            bucket[j] = -1
        if dT == INF:
            for j in range(n_touched):
                dist[touched[j]] = INF
                done[touched[j]] = False
            break
        # potentials: pi += min(dist, dT); only differences matter, so the untouched
        # nodes' common + dT is left out and the settled ones get dist - dT
        for j in range(n_touched):
            v = touched[j]
            if done[v] and dist[v] < dT:
                pi[v] += dist[v] - dT
            dist[v] = INF
            done[v] = False
        # augment along zero-reduced-cost paths, one depth-first sweep
        phase += 1
        it[0] = adj_ptr[0]
        top = 0
        stack[0] = 0
        seen[0] = phase
        while top >= 0:
            v = stack[top]
            if v == 1:  # augment along the stack
                for lv in range(1, top + 1):
                    a = via[lv]
                    cap[a] -= 1
                    cap[rev[a]] += 1
                flow += 1
                total += pi[1] - pi[0]
                top = 0
                continue
            advanced = False
            while it[v] < adj_ptr[v + 1]:
                a = it[v]
                it[v] += 1
                if cap[a] <= 0:
                    continue
                w = head[a]
                if seen[w] == phase:
                    continue
                if cost[a] + pi[v] - pi[w] != 0:
                    continue
                seen[w] = phase if w != 1 else 0
                it[w] = adj_ptr[w]
                top += 1
                stack[top] = w
                via[top] = a
                advanced = True
                break
            if not advanced:
                top -= 1
    return flow, total, pi


@njit(cache=True, nogil=True)
def residual_search(adj_ptr, head, rev, cap, start, stop,
                     backward):  # pragma: no cover - compiled
    """Nodes joined to ``start`` by arcs with residual capacity in ``cap``: the nodes it
    reaches, or with ``backward`` the nodes that reach it (each arc ``q`` read as the
    reverse of arc ``rev[q]``). ``stop`` is marked but never passed through (-1: none)."""
    n_nodes = adj_ptr.size - 1
    seen = np.zeros(n_nodes, np.bool_)
    stack = np.empty(n_nodes, np.int64)
    seen[start] = True
    stack[0] = start
    top = 1
    while top:
        top -= 1
        v = stack[top]
        if v == stop:
            continue
        for q in range(adj_ptr[v], adj_ptr[v + 1]):
            f = rev[q] if backward else q  # backward: the arc head[q] -> v
            u = head[q]
            if cap[f] > 0 and not seen[u]:
                seen[u] = True
                stack[top] = u
                top += 1
    return seen


@njit(cache=True, nogil=True)
def back_costs(adj_ptr, head, rev, cost, cap, pi):  # pragma: no cover - compiled
    """For an optimal flow (``cap`` residual, ``pi`` potentials): the least real cost of a
    residual path from each node back to the super-source without passing through the
    super-sink (reverse Dijkstra on reduced costs, bucket queue). 2**62: no path."""
    n_nodes = adj_ptr.size - 1
    lo_pi = pi.min()
    hi_pi = pi.max()
    dcap = 2 * n_nodes + (hi_pi - lo_pi) + 2
    dist = np.full(n_nodes, INF, np.int64)
    done = np.zeros(n_nodes, np.bool_)
    bucket = np.full(dcap + 1, -1, np.int64)
    pool_node = np.empty(cost.size + 1, np.int64)
    pool_next = np.empty(cost.size + 1, np.int64)
    dist[0] = 0
    pool_node[0] = 0
    pool_next[0] = -1
    bucket[0] = 0
    n_pool = 1
    hi = 0
    b = 0
    while b <= hi:
        while bucket[b] >= 0:
            e = bucket[b]
            bucket[b] = pool_next[e]
            v = pool_node[e]
            if done[v] or dist[v] != b:
                continue
            done[v] = True
            if v == 1:
                continue  # never through the super-sink
            for q in range(adj_ptr[v], adj_ptr[v + 1]):
                f = rev[q]  # arc u -> v with residual capacity
                if cap[f] <= 0:
                    continue
                u = head[q]
                if done[u] or u == 0:
                    continue
                nd = b + cost[f] + pi[u] - pi[v]
                if nd < dist[u] and nd <= dcap:
                    dist[u] = nd
                    pool_node[n_pool] = u
                    pool_next[n_pool] = bucket[nd]
                    bucket[nd] = n_pool
                    n_pool += 1
                    if nd > hi:
                        hi = nd
        b += 1
    back = np.full(n_nodes, INF, np.int64)
    for v in range(n_nodes):
        if done[v]:
            back[v] = dist[v] - pi[v] + pi[0]  # reduced -> real cost
    return back
