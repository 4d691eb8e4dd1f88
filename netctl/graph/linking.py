"""Linkings: vertex-disjoint path families from sources to sinks through a state digraph.

The digraph has three kinds of vertices: *sources* (inputs, disturbances), *states* and
*sinks* (outputs). ``src_ptr/src_idx`` list, for each source, the states it enters;
``out_ptr/out_idx`` list, for each state, the states it influences (the successors, i.e.
the CSR of the transpose of ``A``; a self-loop is never on a path and is skipped);
``snk_ptr/snk_idx`` list, for each sink, the states it reads. A *linking* is a set of paths
``source -> state -> ... -> state -> sink`` that share no vertex (no source, state or sink
twice). The *length* of a path is the number of states on it.

Method: the node-split flow network (each state becomes ``in -> out`` with capacity one
and cost one, every source and sink capacity one) solved by min-cost max-flow with the
primal-dual method: Dijkstra on reduced costs with node potentials (stopped when the sink
is settled), then as many augmenting paths of zero reduced cost as a depth-first search
finds in one sweep (the successive-shortest-path algorithm with all paths of one length
taken per phase, Ahuja, Magnanti & Orlin 1993, ch. 9). The starting potentials are the
exact distances to the sink (a 0-1 breadth-first search), so the search is goal-directed
and nodes that cannot reach the sink are cut off. Costs are small integers (bucket queue),
so each phase is O(E) and the number of phases is at most the number of distinct path
costs plus the linking size. Compiled with numba; the kernels trust their input.

References
----------
.. [1] R. K. Ahuja, T. L. Magnanti, J. B. Orlin, *Network Flows*, Prentice Hall, 1993,
   sections 6.5 (unit-capacity augmenting paths) and 9.7 (successive shortest paths).
.. [2] J. W. van der Woude, "A graph-theoretic characterization for the rank of the
   transfer matrix of a structured system", Math. Control Signals Systems 4:33-40, 1991.
   doi:10.1007/BF02551379
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from netctl._jit import njit
from netctl.graph._dinic import dinic
from netctl.graph._levels import order_by_scan

__all__ = ["Linking", "maximum_linking", "minimum_separator", "LinkingGraph",
           "linking_graph", "extension"]

_INF_CAP = np.int32(2**30)
_INF = np.int64(2**62)


@dataclass(frozen=True)
class LinkingGraph:
    """The node-split flow network (private layout, built once, solved many times).

    Nodes: 0 = super-source, 1 = super-sink, ``2 .. 2+k`` sources, then the ``n`` state
    in-copies, the ``n`` state out-copies and the ``r`` sinks. Arcs are stored in
    adjacency order (the arcs leaving node ``v`` are ``adj_ptr[v]:adj_ptr[v+1]``, so a
    scan reads memory in order); ``rev[q]`` is the position of the reverse of arc ``q``.
    """

    n_sources: int
    n_states: int
    n_sinks: int
    adj_ptr: np.ndarray
    head: np.ndarray
    rev: np.ndarray
    cost: np.ndarray
    cap: np.ndarray  # capacities before any flow
    forward: np.ndarray  # bool: an arc of the network (not a residual reverse)
    src_pos: np.ndarray  # position of the arc super-source -> source s
    snk_pos: np.ndarray  # position of the arc sink t -> super-sink


@njit(cache=True, nogil=True)
def _build(n, k, r, src_ptr, src_idx, out_ptr, out_idx, snk_ptr,
           snk_idx):  # pragma: no cover - compiled
    n_edges = 0
    for j in range(n):
        for e in range(out_ptr[j], out_ptr[j + 1]):
            if out_idx[e] != j:
                n_edges += 1
    n_fwd = k + src_idx.size + n + n_edges + snk_idx.size + r
    n_nodes = 2 + k + 2 * n + r
    tail = np.empty(n_fwd, np.int32)
    hd = np.empty(n_fwd, np.int32)
    s0 = 2
    in0 = 2 + k
    ou0 = 2 + k + n
    y0 = 2 + k + 2 * n
    a = 0
    for s in range(k):  # super-source -> source
        tail[a] = 0
        hd[a] = s0 + s
        a += 1
    for s in range(k):  # source -> state in-copy
        for e in range(src_ptr[s], src_ptr[s + 1]):
            tail[a] = s0 + s
            hd[a] = in0 + src_idx[e]
            a += 1
    for x in range(n):  # state split arc (cost 1, capacity 1)
        tail[a] = in0 + x
        hd[a] = ou0 + x
        a += 1
    for j in range(n):  # state out-copy -> state in-copy
        for e in range(out_ptr[j], out_ptr[j + 1]):
            i = out_idx[e]
            if i != j:
                tail[a] = ou0 + j
                hd[a] = in0 + i
                a += 1
    for t in range(r):  # state out-copy -> sink
        for e in range(snk_ptr[t], snk_ptr[t + 1]):
            tail[a] = ou0 + snk_idx[e]
            hd[a] = y0 + t
            a += 1
    for t in range(r):  # sink -> super-sink
        tail[a] = y0 + t
        hd[a] = 1
        a += 1
    split0 = k + src_idx.size
    snk0 = n_fwd - r
    adj_ptr = np.zeros(n_nodes + 1, np.int64)
    for a in range(n_fwd):
        adj_ptr[tail[a] + 1] += 1
        adj_ptr[hd[a] + 1] += 1
    for v in range(n_nodes):
        adj_ptr[v + 1] += adj_ptr[v]
    fill = adj_ptr[:-1].copy()
    m = 2 * n_fwd
    head = np.empty(m, np.int32)
    rev = np.empty(m, np.int64)
    cost = np.zeros(m, np.int64)
    cap = np.zeros(m, np.int32)
    forward = np.zeros(m, np.bool_)
    src_pos = np.empty(k, np.int64)
    snk_pos = np.empty(r, np.int64)
    for a in range(n_fwd):
        u = tail[a]
        v = hd[a]
        p = fill[u]
        fill[u] += 1
        q = fill[v]
        fill[v] += 1
        head[p] = v
        head[q] = u
        rev[p] = q
        rev[q] = p
        forward[p] = True
        if a < k:
            src_pos[a] = p
            cap[p] = 1
        elif a >= snk0:
            snk_pos[a - snk0] = p
            cap[p] = 1
        elif a >= split0 and a < split0 + n:
            cap[p] = 1
            cost[p] = 1
            cost[q] = -1
        else:
            cap[p] = _INF_CAP
    return adj_ptr, head, rev, cost, cap, forward, src_pos, snk_pos


def linking_graph(n_states: int, src_ptr: np.ndarray, src_idx: np.ndarray,
                  out_ptr: np.ndarray, out_idx: np.ndarray, snk_ptr: np.ndarray,
                  snk_idx: np.ndarray) -> LinkingGraph:
    """Build the node-split network. Index arrays as in the module docstring."""
    k = int(np.asarray(src_ptr).size - 1)
    r = int(np.asarray(snk_ptr).size - 1)
    as64 = [np.ascontiguousarray(a, np.int64) for a in
            (src_ptr, src_idx, out_ptr, out_idx, snk_ptr, snk_idx)]
    parts = _build(int(n_states), k, r, *as64)
    return LinkingGraph(k, int(n_states), r, *parts)


@njit(cache=True, nogil=True)
def _sink_distance(adj_ptr, head, rev, forward, cost, cap):  # pragma: no cover - compiled
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
    dist = np.full(n_nodes, _INF, np.int64)
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
def _solve(adj_ptr, head, rev, cost, cap, pi):  # pragma: no cover - compiled
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
    dist[:] = _INF
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
        dT = _INF
        b = 0
        while b <= hi and dT == _INF:
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
                        if dist[w] == _INF:
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
        if dT == _INF:
            for j in range(n_touched):
                dist[touched[j]] = _INF
                done[touched[j]] = False
            break
        # potentials: pi += min(dist, dT); only differences matter, so the untouched
        # nodes' common + dT is left out and the settled ones get dist - dT
        for j in range(n_touched):
            v = touched[j]
            if done[v] and dist[v] < dT:
                pi[v] += dist[v] - dT
            dist[v] = _INF
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
def _paths(adj_ptr, head, forward, cap0, cap, src_pos, k, n):  # pragma: no cover
    """Decompose the unit flow into paths: per path the source, the states, the sink."""
    in0 = 2 + k
    ou0 = 2 + k + n
    y0 = 2 + k + 2 * n
    ptr = [0]
    states = []
    ends_s = []
    ends_t = []
    for s in range(k):
        a0 = src_pos[s]
        if cap[a0] >= cap0[a0]:  # no flow on super-source -> s
            continue
        v = 2 + s
        ends_s.append(s)
        while True:
            nxt = -1
            for a in range(adj_ptr[v], adj_ptr[v + 1]):
                if forward[a] and cap[a] < cap0[a]:
                    nxt = head[a]
                    break
            v = nxt
            if v >= ou0 and v < y0:
                states.append(v - ou0)
            elif v >= y0:
                ends_t.append(v - y0)
                break
            elif v < in0:
                break
        ptr.append(len(states))
    return (np.array(ptr, np.int64), np.array(states, np.int64),
            np.array(ends_s, np.int64), np.array(ends_t, np.int64))


@njit(cache=True, nogil=True)
def _residual_search(adj_ptr, head, rev, cap, start, stop,
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
def _back(adj_ptr, head, rev, cost, cap, pi):  # pragma: no cover - compiled
    """For an optimal flow (``cap`` residual, ``pi`` potentials): the least real cost of a
    residual path from each node back to the super-source without passing through the
    super-sink (reverse Dijkstra on reduced costs, bucket queue). 2**62: no path."""
    n_nodes = adj_ptr.size - 1
    lo_pi = pi.min()
    hi_pi = pi.max()
    dcap = 2 * n_nodes + (hi_pi - lo_pi) + 2
    dist = np.full(n_nodes, _INF, np.int64)
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
    back = np.full(n_nodes, _INF, np.int64)
    for v in range(n_nodes):
        if done[v]:
            back[v] = dist[v] - pi[v] + pi[0]  # reduced -> real cost
    return back


@dataclass(frozen=True)
class Linking:
    """A maximum linking of least total length.

    ``size`` paths, ``length`` = total number of states on them (the least over all
    maximum linkings). Path ``p`` runs from source ``path_source[p]`` through states
    ``path_states[path_ptr[p]:path_ptr[p+1]]`` (in order) to sink ``path_sink[p]``. One of
    possibly many optimal linkings.
    """

    size: int
    length: int
    path_ptr: np.ndarray
    path_states: np.ndarray
    path_source: np.ndarray
    path_sink: np.ndarray
    _residual: np.ndarray = field(repr=False, compare=False)
    _potential: np.ndarray = field(repr=False, compare=False)
    _sources: np.ndarray = field(repr=False, compare=False)
    _labels: dict = field(default_factory=dict, repr=False, compare=False)


def maximum_linking(graph: LinkingGraph, *, sources: np.ndarray | None = None,
                    paths: bool = True) -> Linking:
    """Maximum linking of least total length from ``sources`` (default: all) to the sinks.

    O(phases * E) with a bucket queue; see the module docstring.
    """
    cap = graph.cap.copy()
    k = graph.n_sources
    if sources is None:
        srcs = np.arange(k, dtype=np.int64)
    else:
        srcs = np.unique(np.asarray(sources, np.int64))
        keep = np.zeros(k, bool)
        keep[srcs] = True
        cap[graph.src_pos[~keep]] = 0
    # exact distances to the sink as starting potentials (goal-directed search): nodes
    # that cannot reach the sink are cut off, the first shortest path is found at once
    dsink = _sink_distance(graph.adj_ptr, graph.head, graph.rev, graph.forward, graph.cost,
                           cap)
    dead = dsink >= _INF
    cap[dead[graph.head] & graph.forward] = 0
    pi = np.where(dead, 0, -dsink)
    base = cap.copy()
    flow, total, pi = _solve(graph.adj_ptr, graph.head, graph.rev, graph.cost, cap, pi)
    if paths:
        ptr, st, ps, pt = _paths(graph.adj_ptr, graph.head, graph.forward, base, cap,
                                 graph.src_pos, k, graph.n_states)
    else:
        e = np.zeros(0, np.int64)
        ptr, st, ps, pt = np.zeros(1, np.int64), e, e, e
    # "dead": nodes that reach no sink even in the network without flow; a source that
    # enters only such nodes can neither lengthen nor exchange a path (see extension)
    return Linking(int(flow), int(total), ptr, st, ps, pt, cap, pi, srcs, {"dead": dead})


def extension(graph: LinkingGraph, linking: Linking, extra: np.ndarray) -> tuple[bool, int]:
    """Would adding the sources ``extra`` to those of ``linking`` (an optimal one from
    :func:`maximum_linking`) give a larger linking, or one as large and shorter?

    Returns ``(grows, saving)``: ``grows`` when the maximum linking from the union is
    larger; otherwise ``saving`` = how much shorter (in states) a maximum linking of the
    same size using exactly one extra source can be at best (``<= 0``: no saving; a
    negative number -s means every such exchange costs at least s more states;
    ``-(2**62)`` when no exchange exists). The least total length over the union is smaller
    than ``linking.length`` iff ``saving > 0``. No new flow: the optimal flow stays optimal
    unless a residual path or cycle starts at an extra source (Ahuja, Magnanti & Orlin
    1993, thm. 9.1, negative cycle optimality). One reverse search from the sink and one
    reverse Dijkstra to the source, made once per linking, answer every later question
    in O(entries); sources whose states reach no sink at all need neither pass.
    """
    extra = np.setdiff1d(np.asarray(extra, np.int64), linking._sources)
    if extra.size == 0:
        return False, -int(_INF)
    k, n = graph.n_sources, graph.n_states
    in0 = 2 + k
    # in-copies the extra sources enter: the heads of their forward arcs
    starts = graph.adj_ptr[2 + extra]
    ends = graph.adj_ptr[3 + extra]
    pos = np.concatenate([np.arange(a, b) for a, b in zip(starts, ends)]) if extra.size \
        else np.zeros(0, np.int64)
    pos = pos[graph.forward[pos]] if pos.size else pos
    entries = np.unique(graph.head[pos].astype(np.int64))
    entries = entries[(entries >= in0) & (entries < in0 + n)]
    if entries.size == 0:
        return False, -int(_INF)
    labels = linking._labels  # made once per linking: then O(entries) per question
    dead = labels.get("dead")
    if dead is not None:
        # an entry that reaches no sink in the network reaches no flow path either (a
        # flow path reaches the sink), so no residual path or cycle starts there: such
        # sources are answered without the two passes below
        entries = entries[~dead[entries]]
        if entries.size == 0:
            return False, -int(_INF)
    if "to_sink" not in labels:
        # which nodes reach the super-sink in the residual graph (never via the source)
        labels["to_sink"] = _residual_search(graph.adj_ptr, graph.head, graph.rev,
                                             linking._residual, 1, 0, True)
    if labels["to_sink"][entries].any():
        return True, -int(_INF)
    if "back" not in labels:
        labels["back"] = _back(graph.adj_ptr, graph.head, graph.rev, graph.cost,
                               linking._residual, linking._potential)
    best = int(labels["back"][entries].min())
    return False, -best if best < _INF else -int(_INF)


def minimum_separator(graph: LinkingGraph, *, sources: np.ndarray | None = None
                      ) -> np.ndarray:
    """Fewest states whose removal cuts every path from ``sources`` to the sinks.

    Sources and sinks may carry any number of paths here (only states are cut), so the
    size can exceed the linking size. Sorted state indices; one of possibly many minimum
    separators (the one nearest the sources: the states whose in-copy the super-source
    reaches in the final residual network and whose out-copy it does not, the same for
    every maximum flow). Menger's theorem via max-flow, by Dinic's algorithm
    (:mod:`netctl.graph._dinic`; O(sqrt(V) E) on this unit-capacity network).
    """
    cap = graph.cap.copy()
    k, n = graph.n_sources, graph.n_states
    cap[graph.src_pos] = _INF_CAP
    cap[graph.snk_pos] = _INF_CAP
    if sources is not None:
        keep = np.zeros(k, bool)
        keep[np.asarray(sources, np.int64)] = True
        cap[graph.src_pos[~keep]] = 0
    level = np.empty(graph.adj_ptr.size - 1, np.int64)
    dinic(graph.adj_ptr, graph.head, graph.rev, cap, 0, 1, level)
    reach = level >= 0  # the residual reachability from the super-source (final search)
    in0 = 2 + k
    ins = reach[in0:in0 + n]
    outs = reach[in0 + n:in0 + 2 * n]
    return np.flatnonzero(ins & ~outs).astype(np.int64)
