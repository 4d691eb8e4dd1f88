"""Dinic's maximum flow (``netctl.graph._dinic``) against NetworkX's maximum flow (a
general-purpose reference library), and the minimum separator built on it against NetworkX
on the node-split graph (Menger's theorem), on random networks drawn by hypothesis (invented
data) and on hand-made edge cases."""

from __future__ import annotations

import contextlib

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import given, settings
from hypothesis import strategies as st

from netctl import _jit
from netctl.graph._dinic import dinic
from netctl.graph.linking import linking_graph, minimum_separator

MODES = ["python", "compiled"]


def _mode(mode: str) -> contextlib.AbstractContextManager[None]:
    return _jit.always_python() if mode == "python" else _jit.always_compiled()


def _adjacency(n: int, arcs: list[tuple[int, int, int]]):
    """Residual network in the adjacency layout of ``LinkingGraph``: each arc (u, v, c)
    and its reverse (capacity 0), grouped by tail."""
    tail = [u for u, v, c in arcs] + [v for u, v, c in arcs]
    hd = [v for u, v, c in arcs] + [u for u, v, c in arcs]
    cp = [c for u, v, c in arcs] + [0] * len(arcs)
    m = len(arcs)
    order = np.argsort(np.array(tail, np.int64), kind="stable")
    pos = np.empty(2 * m, np.int64)
    pos[order] = np.arange(2 * m)
    partner = np.r_[np.arange(m, 2 * m), np.arange(m)]
    adj_ptr = np.zeros(n + 1, np.int64)
    np.add.at(adj_ptr, np.array(tail, np.int64) + 1, 1)
    adj_ptr = np.cumsum(adj_ptr)
    head = np.array(hd, np.int32)[order]
    rev = pos[partner][order]
    cap = np.array(cp, np.int32)[order]
    return adj_ptr, head, rev, cap, np.array(tail, np.int64)[order]


networks = st.integers(2, 9).flatmap(lambda n: st.tuples(
    st.just(n),
    st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1), st.integers(1, 4)),
             max_size=4 * n)))


@pytest.mark.parametrize("mode", MODES)
@settings(max_examples=300, deadline=None)
@given(net=networks)
def test_flow_value_and_cut_equal_networkx(mode, net):
    # parallel, antiparallel arcs and self-loops included; source 0, sink n - 1
    n, arcs = net
    adj_ptr, head, rev, cap, tail = _adjacency(n, arcs)
    cap0 = cap.copy()
    level = np.empty(n, np.int64)
    with _mode(mode):
        flow = dinic(adj_ptr, head, rev, cap, 0, n - 1, level)
    G = nx.DiGraph()
    G.add_nodes_from(range(n))
    for u, v, c in arcs:
        if u != v:
            G.add_edge(u, v, capacity=G.edges[u, v]["capacity"] + c if G.has_edge(u, v)
                       else c)
    assert flow == nx.maximum_flow_value(G, 0, n - 1)
    # a flow: capacities kept and conserved at every node but the ends
    assert (cap >= 0).all() and (cap + cap[rev] == cap0 + cap0[rev]).all()
    fl = np.where(cap0 > 0, cap0 - cap, 0)
    net_out = np.bincount(tail, fl, n) - np.bincount(head, fl, n)
    assert net_out[0] == flow and net_out[n - 1] == -flow
    assert (net_out[1:n - 1] == 0).all()
    # level >= 0 is what the source reaches over residual arcs (SciPy's search)
    on = cap > 0
    R = sp.csr_array((np.ones(int(on.sum())), (tail[on], head[on].astype(np.int64))),
                     shape=(n, n))
    want = np.zeros(n, bool)
    want[sp.csgraph.breadth_first_order(R, 0, return_predecessors=False)] = True
    assert ((level >= 0) == want).all() and not want[n - 1]
    assert (level[0] == 0) and (level[want] >= 0).all()


def _nx_split(A, S, H, big=10**6):
    """The node-split network in NetworkX: states cost one vertex, ends are unlimited."""
    G = nx.DiGraph()
    G.add_nodes_from(["S", "T"])
    for s in range(S.shape[0]):
        G.add_edge("S", ("s", s), capacity=big)
        for x in np.flatnonzero(S[s]):
            G.add_edge(("s", s), ("i", x), capacity=big)
    for x in range(A.shape[0]):
        G.add_edge(("i", x), ("o", x), capacity=1)
    for i, j in zip(*np.nonzero(A)):
        if i != j:
            G.add_edge(("o", j), ("i", i), capacity=big)
    for t in range(H.shape[0]):
        G.add_edge(("y", t), "T", capacity=big)
        for x in np.flatnonzero(H[t]):
            G.add_edge(("o", x), ("y", t), capacity=big)
    return G


def _nearest_separator(G, n):
    """Size of a maximum flow (NetworkX) and the minimum separator nearest the sources:
    states whose in-copy the super-source reaches in the residual network of that flow
    and whose out-copy it does not (the same set for every maximum flow)."""
    value, flow = nx.maximum_flow(G, "S", "T")
    R = nx.DiGraph()
    for u, v, d in G.edges(data=True):
        if flow[u][v] < d["capacity"]:
            R.add_edge(u, v)
        if flow[u][v] > 0:
            R.add_edge(v, u)
    R.add_node("S")
    seen = nx.descendants(R, "S") | {"S"}
    return value, [x for x in range(n) if ("i", x) in seen and ("o", x) not in seen]


def _csr(mask):
    m = sp.csr_array(mask.astype(float))
    return m.indptr, m.indices


patterns = st.tuples(st.integers(1, 9), st.integers(1, 4), st.integers(1, 4),
                     st.integers(0, 2**32 - 1))


def _draw(n, k, r, start):
    rng = np.random.default_rng(start)
    density = rng.choice([0.1, 0.25, 0.5])
    A = rng.random((n, n)) < density  # self-loops included (never on a path)
    S = rng.random((k, n)) < 0.3
    H = rng.random((r, n)) < 0.3
    return A, S, H


def _check_separator(A, S, H, sources, mode):
    n = A.shape[0]
    g = linking_graph(n, *_csr(S), *_csr(A.T), *_csr(H))
    with _mode(mode):
        sep = minimum_separator(g, sources=sources)
    keep = np.arange(S.shape[0]) if sources is None else np.asarray(sources)
    Sk = np.zeros_like(S)
    Sk[keep] = S[keep]
    G = _nx_split(A, Sk, H)
    value, nearest = _nearest_separator(G, n)
    assert sep.size == value
    assert sep.tolist() == nearest
    G.remove_nodes_from([("i", x) for x in sep])
    assert not nx.has_path(G, "S", "T")


@pytest.mark.parametrize("mode", MODES)
@settings(max_examples=300, deadline=None)
@given(case=patterns, subset=st.booleans())
def test_separator_equals_networkx_nearest_the_sources(mode, case, subset):
    n, k, r, start = case
    A, S, H = _draw(n, k, r, start)
    sources = np.arange(0, k, 2) if subset else None
    _check_separator(A, S, H, sources, mode)


def _one(rows, n, pairs):
    M = np.zeros((rows, n), bool)
    for a, b in pairs:
        M[a, b] = True
    return M


EDGE = [  # (A, S, H, sources, separator size); sizes by hand, checked against NetworkX too
    pytest.param(np.zeros((2, 2), bool), _one(1, 2, [(0, 0)]), _one(1, 2, [(0, 0)]), None,
                 1, id="source-and-sink-on-one-state"),
    pytest.param(np.zeros((3, 3), bool), _one(1, 3, [(0, 0)]), _one(1, 3, [(0, 2)]), None,
                 0, id="no-path"),
    pytest.param(np.eye(2, dtype=bool), _one(1, 2, [(0, 0)]), _one(1, 2, [(0, 1)]), None,
                 0, id="self-loops-only"),
    pytest.param(_one(3, 3, [(1, 0), (2, 0)]), _one(3, 3, [(0, 0), (1, 0), (2, 0)]),
                 _one(2, 3, [(0, 1), (1, 2)]), None, 1, id="three-sources-on-one-state"),
    pytest.param(_one(3, 3, [(1, 0), (2, 0), (0, 0)]), _one(2, 3, [(0, 0), (1, 0)]),
                 _one(2, 3, [(0, 1), (1, 2)]), np.array([1]), 1,
                 id="one-of-two-sources-with-a-self-loop"),
    pytest.param(_one(4, 4, [(1, 0), (2, 0), (3, 1), (3, 2)]), _one(1, 4, [(0, 0)]),
                 _one(1, 4, [(0, 3)]), None, 1, id="diamond-cut-at-the-source-state"),
    pytest.param(np.zeros((2, 2), bool), _one(1, 2, [(0, 0), (0, 1)]),
                 _one(1, 2, [(0, 0), (0, 1)]), np.zeros(0, np.int64), 0,
                 id="no-source-kept"),
]


@pytest.mark.parametrize("mode", MODES)
@pytest.mark.parametrize("A, S, H, sources, size", EDGE)
def test_separator_edge_cases(mode, A, S, H, sources, size):
    n = A.shape[0]
    g = linking_graph(n, *_csr(S), *_csr(A.T), *_csr(H))
    with _mode(mode):
        assert minimum_separator(g, sources=sources).size == size
    _check_separator(A, S, H, sources, mode)


def test_no_search_past_the_sink_depth():
    # a network (found by the random test above) where the search from the source
    # reaches the sink alone (no backward level) and a node at the sink's depth has
    # further arcs: nothing may be taken beyond that depth, or the phase repeats forever;
    # the Python body runs under an alarm so that such a loop fails instead of hanging
    # (compiled code cannot be interrupted; it is the same source)
    import signal

    arcs = [(5, 5, 1), (0, 3, 2), (3, 4, 1), (1, 4, 2), (5, 0, 3), (4, 1, 1), (1, 2, 3),
            (5, 1, 2), (3, 5, 1), (4, 5, 3)]
    adj_ptr, head, rev, cap, tail = _adjacency(6, arcs)

    def stop(*_: object) -> None:
        raise TimeoutError("the flow did not finish: a phase made no progress")

    old = signal.signal(signal.SIGALRM, stop)
    signal.alarm(20)
    try:
        with _jit.always_python():
            flow = dinic(adj_ptr, head, rev, cap, 0, 5, np.empty(6, np.int64))
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)
    G = nx.DiGraph([(u, v, {"capacity": c}) for u, v, c in arcs if u != v])
    assert flow == nx.maximum_flow_value(G, 0, 5) == 2
