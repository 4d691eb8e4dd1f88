"""Linkings against networkx's min-cost max-flow (a general-purpose reference library)
on the node-split graph, and the separator against networkx's max-flow (Menger)."""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp

from netctl.graph.linking import extension, linking_graph, maximum_linking, minimum_separator


def _csr(mask):
    m = sp.csr_array(mask.astype(float))
    return m.indptr, m.indices


def _random(rng):
    n, k, r = (int(v) for v in (rng.integers(1, 8), rng.integers(1, 4), rng.integers(1, 4)))
    A = rng.random((n, n)) < 0.3
    S = rng.random((k, n)) < 0.3
    H = rng.random((r, n)) < 0.3
    return n, A, S, H


def _nx_split(A, S, H, src_cost, big=1):
    """Node-split network in networkx; ``big`` = capacity of the non-state arcs."""
    n = A.shape[0]
    G = nx.DiGraph()
    G.add_nodes_from(["S", "T"])
    for s in range(S.shape[0]):
        G.add_edge("S", ("s", s), capacity=big, weight=int(src_cost[s]))
        for x in np.flatnonzero(S[s]):
            G.add_edge(("s", s), ("i", x), capacity=big, weight=0)
    for x in range(n):
        G.add_edge(("i", x), ("o", x), capacity=1, weight=1)
    for i, j in zip(*np.nonzero(A)):
        if i != j:  # a self-loop is never on a path
            G.add_edge(("o", j), ("i", i), capacity=big, weight=0)
    for t in range(H.shape[0]):
        G.add_edge(("y", t), "T", capacity=big, weight=0)
        for x in np.flatnonzero(H[t]):
            G.add_edge(("o", x), ("y", t), capacity=big, weight=0)
    return G


def _reference(A, S, H, src_cost):
    G = _nx_split(A, S, H, src_cost)
    flow = nx.max_flow_min_cost(G, "S", "T")
    return sum(flow["S"].values()), nx.cost_of_flow(G, flow)


@pytest.mark.parametrize("seed", range(4))
def test_linking_size_length_and_paths_against_networkx(seed):
    rng = np.random.default_rng(seed)
    for _ in range(60):
        n, A, S, H = _random(rng)
        g = linking_graph(n, *_csr(S), *_csr(A.T), *_csr(H))
        L = maximum_linking(g)
        assert (L.size, L.length) == _reference(A, S, H, np.zeros(S.shape[0]))
        used: set = set()
        total = 0
        for p in range(L.size):
            states = L.path_states[L.path_ptr[p]:L.path_ptr[p + 1]]
            s, y = L.path_source[p], L.path_sink[p]
            assert S[s, states[0]] and H[y, states[-1]]
            for a, b in zip(states[:-1], states[1:]):
                assert A[b, a] and a != b
            for v in [("s", s), ("y", y)] + [("x", x) for x in states]:
                assert v not in used  # vertex-disjoint over sources, states and sinks
                used.add(v)
            total += len(states)
        assert total == L.length


@pytest.mark.parametrize("seed", range(4))
def test_extension_against_networkx(seed):
    """The one-Dijkstra comparison equals recomputing the flow over the union, with the
    extra sources' paths counted as is and one state shorter."""
    rng = np.random.default_rng(100 + seed)
    for _ in range(60):
        n, A, S, H = _random(rng)
        k = S.shape[0]
        ku = int(rng.integers(0, k + 1))
        g = linking_graph(n, *_csr(S), *_csr(A.T), *_csr(H))
        LU = maximum_linking(g, sources=np.arange(ku))
        grows, saving = extension(g, LU, np.arange(ku, k))
        size_all, len_all = _reference(A, S, H, np.zeros(k))
        assert grows == (size_all > LU.size)
        if not grows:
            assert (saving > 0) == (len_all < LU.length)
            shorter = np.where(np.arange(k) < ku, 0, -1)
            _, len_short = _reference(A, S, H, shorter)
            assert (saving >= 0) == (len_short < LU.length)


def test_separator_against_networkx_menger():
    rng = np.random.default_rng(7)
    for _ in range(150):
        n, A, S, H = _random(rng)
        g = linking_graph(n, *_csr(S), *_csr(A.T), *_csr(H))
        sep = minimum_separator(g)
        G = _nx_split(A, S, H, np.zeros(S.shape[0]), big=10**6)
        assert sep.size == nx.maximum_flow_value(G, "S", "T")
        G.remove_nodes_from([("i", x) for x in sep])
        assert not nx.has_path(G, "S", "T")


def test_path_of_two_states_and_a_shortcut():
    # u -> x0 -> x1 -> y and w -> x1: one path each, lengths 2 and 1 (issue 23, item 2)
    A = np.array([[0, 0], [1, 0]], bool)
    S = np.array([[1, 0], [0, 1]], bool)
    H = np.array([[0, 1]], bool)
    g = linking_graph(2, *_csr(S), *_csr(A.T), *_csr(H))
    LU = maximum_linking(g, sources=[0])
    assert (LU.size, LU.length) == (1, 2)
    assert maximum_linking(g).length == 1
    assert extension(g, LU, [1]) == (False, 1)


def test_source_entering_only_states_that_reach_no_sink_needs_no_pass():
    """u -> x0 -> x1 -> z, x1 -> x2, w -> x2 and w -> x3 (x2, x3 reach no sink): the
    answer for w equals a fresh flow over both sources (networkx), and it is found without
    the reverse search from the sink or the reverse Dijkstra (neither label is made)."""
    n = 4
    A = np.zeros((n, n), bool)
    A[1, 0] = A[2, 1] = True
    S = np.zeros((2, n), bool)
    S[0, 0] = True  # u
    S[1, 2] = S[1, 3] = True  # w
    H = np.zeros((1, n), bool)
    H[0, 1] = True
    g = linking_graph(n, *_csr(S), *_csr(A.T), *_csr(H))
    L = maximum_linking(g, sources=np.array([0]))
    grows, saving = extension(g, L, np.array([1]))
    size_all, len_all = _reference(A, S, H, np.zeros(2))
    assert (L.size, L.length) == (1, 2) == (size_all, len_all)
    assert not grows and saving < 0
    assert "to_sink" not in L._labels and "back" not in L._labels
    # a source that does reach the sink still gets both answers
    S2 = np.vstack([S, np.eye(n, dtype=bool)[[0]]])
    g2 = linking_graph(n, *_csr(S2), *_csr(A.T), *_csr(H))
    L2 = maximum_linking(g2, sources=np.array([0]))
    assert extension(g2, L2, np.array([2])) == (False, 0)  # same entry, same length
    assert "to_sink" in L2._labels and "back" in L2._labels


def _random_split_network(rng: np.random.Generator, ends: int, share: float):
    """A random node-split linking network (invented data): up to 39 states with about
    2.5 links each, and 1 .. ends - 1 sources and sinks, each on a ``share`` of the
    states. Returns ``(graph, n_states, n_sources)``."""
    n = int(rng.integers(2, 40))
    k, r = (int(v) for v in rng.integers(1, ends, 2))
    A = rng.random((n, n)) < 2.5 / n
    S = rng.random((k, n)) < share
    H = rng.random((r, n)) < share
    return linking_graph(n, *_csr(S), *_csr(A.T), *_csr(H)), n, k


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_sink_distances_equal_networkx_dijkstra(mode):
    # the starting potentials: least cost (0/1 arcs) from every node of the node-split
    # network to the super-sink over arcs with capacity; reference: NetworkX's Dijkstra
    # to node 1 on the same arcs, before and after a maximum linking uses some of them
    from netctl import _jit
    from netctl.graph._costflow import INF, sink_distance

    rng = np.random.default_rng(3)
    deep = 0
    for trial in range(80):
        g, n, k = _random_split_network(rng, 5, 0.1)
        tail = np.repeat(np.arange(g.adj_ptr.size - 1), np.diff(g.adj_ptr))
        for cap in (g.cap, maximum_linking(g, paths=False)._residual):
            G = nx.DiGraph()
            G.add_nodes_from(range(g.adj_ptr.size - 1))
            on = g.forward & (cap > 0)
            G.add_weighted_edges_from(zip(tail[on].tolist(), g.head[on].tolist(),
                                          g.cost[on].tolist()))
            want = nx.single_source_dijkstra_path_length(G.reverse(), 1)
            with (_jit.always_python() if mode == "python" else _jit.always_compiled()):
                got = sink_distance(g.adj_ptr, g.head, g.rev, g.forward, g.cost, cap)
            ref = np.array([want.get(v, int(INF)) for v in range(got.size)])
            assert (got == ref).all(), trial
            deep += int(ref[ref < INF].max()) >= 4
    assert deep > 40


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_back_costs_equal_networkx_bellman_ford(mode):
    # after a maximum linking of least length: the least real cost of a residual path
    # from each node to the super-source (node 0) that does not pass through the
    # super-sink (node 1); reference: NetworkX's Bellman-Ford from node 0 on the
    # reversed residual graph (reverse arcs cost minus their forward arc), without the
    # arcs into node 1 (it ends no path through it) and out of node 0
    from netctl import _jit
    from netctl.graph._costflow import INF, back_costs

    rng = np.random.default_rng(8)
    far = 0
    for trial in range(80):
        g, n, k = _random_split_network(rng, 6, 0.15)
        L = maximum_linking(g, paths=False)
        cap, pi = L._residual, L._potential
        with (_jit.always_python() if mode == "python" else _jit.always_compiled()):
            got = back_costs(g.adj_ptr, g.head, g.rev, g.cost, cap, pi)
        tail = np.repeat(np.arange(g.adj_ptr.size - 1), np.diff(g.adj_ptr))
        on = (cap > 0) & (g.head != 1) & (tail != 0)
        G = nx.DiGraph()
        G.add_nodes_from(range(got.size))
        G.add_weighted_edges_from(zip(g.head[on].tolist(), tail[on].tolist(),
                                      g.cost[on].tolist()))  # reversed arcs
        want = nx.single_source_bellman_ford_path_length(G, 0)
        ref = np.array([want.get(v, int(INF)) for v in range(got.size)])
        assert (got == ref).all(), trial
        far += int((ref[ref < INF] >= 2).sum()) > 3
    assert far > 20


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_residual_search_equals_scipy_breadth_first_order(mode):
    # the nodes a node reaches (or that reach it, backward) over arcs with residual
    # capacity, never passing through ``stop``; reference: SciPy's breadth_first_order
    # on the same arcs (those out of ``stop`` left out), before and after a linking;
    # ``stop`` also a state's copy, where it cuts paths
    from scipy.sparse.csgraph import breadth_first_order

    from netctl import _jit
    from netctl.graph._costflow import residual_search

    rng = np.random.default_rng(21)
    wide = 0
    for trial in range(60):
        g, n, k = _random_split_network(rng, 6, 0.15)
        n_nodes = g.adj_ptr.size - 1
        tail = np.repeat(np.arange(n_nodes), np.diff(g.adj_ptr))
        for cap in (g.cap, maximum_linking(g, paths=False)._residual):
            mid = 2 + k + int(rng.integers(0, 2 * n))  # a state's in- or out-copy
            for start, stop, backward in ((0, -1, False), (1, 0, True), (0, 1, False),
                                          (0, mid, False), (1, mid, True)):
                f = g.rev if backward else np.arange(g.head.size)
                on = (cap[f] > 0) & (tail != stop)
                G = sp.csr_array((np.ones(int(on.sum())), (tail[on], g.head[on])),
                                 shape=(n_nodes, n_nodes))
                want = np.zeros(n_nodes, bool)
                want[breadth_first_order(G, start, return_predecessors=False)] = True
                with (_jit.always_python() if mode == "python"
                      else _jit.always_compiled()):
                    got = residual_search(g.adj_ptr, g.head, g.rev, cap, start, stop,
                                           backward)
                assert (got == want).all(), (trial, start, backward)
                wide += int(want.sum()) > n_nodes // 4
    assert wide > 150
