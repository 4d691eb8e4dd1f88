"""Linkings: vertex-disjoint path families from sources to sinks through a state digraph.

The digraph has three kinds of vertices: *sources* (inputs, disturbances), *states* and
*sinks* (outputs). ``src_ptr/src_idx`` list, for each source, the states it enters;
``out_ptr/out_idx`` list, for each state, the states it influences (the successors, i.e.
the CSR of the transpose of ``A``; a self-loop is never on a path and is skipped);
``snk_ptr/snk_idx`` list, for each sink, the states it reads. A *linking* is a set of paths
``source -> state -> ... -> state -> sink`` that share no vertex (no source, state or sink
twice). The *length* of a path is the number of states on it.

Method: the node-split flow network (each state becomes ``in -> out`` with capacity one
and cost one, every source and sink capacity one), built here, solved by min-cost
max-flow with the primal-dual method (:mod:`netctl.graph._costflow`: Dijkstra on reduced
costs from exact distances to the sink, all augmenting paths of one length per phase,
Ahuja, Magnanti & Orlin 1993, ch. 9); each phase is O(E) and the number of phases is at
most the number of distinct path costs plus the linking size. A minimum separator is a
maximum flow by Dinic's algorithm (:mod:`netctl.graph._dinic`). Compiled with numba; the
kernels trust their input.

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
from netctl.graph._costflow import INF, back_costs, min_cost_flow, residual_search, sink_distance
from netctl.graph._dinic import dinic

__all__ = ["Linking", "maximum_linking", "minimum_separator", "LinkingGraph",
           "linking_graph", "extension"]

_INF_CAP = np.int32(2**30)


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
    dsink = sink_distance(graph.adj_ptr, graph.head, graph.rev, graph.forward, graph.cost,
                           cap)
    dead = dsink >= INF
    cap[dead[graph.head] & graph.forward] = 0
    pi = np.where(dead, 0, -dsink)
    base = cap.copy()
    flow, total, pi = min_cost_flow(graph.adj_ptr, graph.head, graph.rev, graph.cost, cap, pi)
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
        return False, -int(INF)
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
        return False, -int(INF)
    labels = linking._labels  # made once per linking: then O(entries) per question
    dead = labels.get("dead")
    if dead is not None:
        # an entry that reaches no sink in the network reaches no flow path either (a
        # flow path reaches the sink), so no residual path or cycle starts there: such
        # sources are answered without the two passes below
        entries = entries[~dead[entries]]
        if entries.size == 0:
            return False, -int(INF)
    if "to_sink" not in labels:
        # which nodes reach the super-sink in the residual graph (never via the source)
        labels["to_sink"] = residual_search(graph.adj_ptr, graph.head, graph.rev,
                                             linking._residual, 1, 0, True)
    if labels["to_sink"][entries].any():
        return True, -int(INF)
    if "back" not in labels:
        labels["back"] = back_costs(graph.adj_ptr, graph.head, graph.rev, graph.cost,
                               linking._residual, linking._potential)
    best = int(labels["back"][entries].min())
    return False, -best if best < INF else -int(INF)


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
