"""Systems straight from networkx, igraph, scipy.sparse and numpy agree with each other and
with the reference libraries' own adjacency matrices (networkx.to_scipy_sparse_array,
igraph.Graph.get_adjacency: M[u, v] for the edge u -> v, so netctl's A is M transposed)."""

from __future__ import annotations

import igraph as ig
import networkx as nx
import numpy as np
import pytest

from netctl import StructuredSystem, minimum_inputs
from netctl.errors import InvalidSystemError


def _graph(seed: int, directed: bool = True) -> nx.Graph:
    g = nx.gnp_random_graph(20, 0.12, seed=seed, directed=directed)
    return nx.relabel_nodes(g, {i: f"bus{i}" for i in g.nodes()})


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("directed", [True, False], ids=["directed", "undirected"])
def test_four_sources_give_one_system(seed, directed):
    g = _graph(seed, directed)
    order = list(g.nodes())
    adj = nx.to_scipy_sparse_array(g, nodelist=order, weight=None)  # adj[u, v]: u -> v
    a = StructuredSystem.from_networkx(g)
    b = StructuredSystem.from_matrices(adj.T, state_names=order, weighted=False)
    c = StructuredSystem.from_matrices(adj.toarray().T, state_names=order, weighted=False)
    h = ig.Graph.from_networkx(g)
    d = StructuredSystem.from_igraph(h)
    ref = np.asarray(h.get_adjacency().data).T
    assert d.state_names == a.state_names == tuple(order)
    for s in (b, c, d):
        assert (s.A != a.A).nnz == 0
    assert np.array_equal(a.A.toarray() != 0, ref != 0)
    assert len({minimum_inputs(s).n_inputs for s in (a, b, c, d)}) == 1


def test_edge_direction_is_influence():
    """Edge u -> v: u influences v, so on a directed path the first node is the driver
    (Liu, Slotine, Barabasi 2011: a directed path needs one input, at its root)."""
    g = nx.DiGraph([("a", "b"), ("b", "c")])
    s = StructuredSystem.from_networkx(g)
    assert s.A[s.index_of(["b"])[0], s.index_of(["a"])[0]] != 0
    assert minimum_inputs(s).driver_names == ["a"]
    h = ig.Graph(edges=[(0, 1), (1, 2)], directed=True)
    h.vs["name"] = ["a", "b", "c"]
    assert minimum_inputs(StructuredSystem.from_igraph(h)).driver_names == ["a"]


def test_weights_travel_from_every_source():
    g = nx.DiGraph()
    g.add_edge("p", "q", weight=2.5)
    g.add_edge("q", "p", weight=-1.0)
    s = StructuredSystem.from_networkx(g, weight="weight")
    assert s.weighted and s.A[1, 0] == 2.5 and s.A[0, 1] == -1.0
    h = ig.Graph.from_networkx(g)
    t = StructuredSystem.from_igraph(h, weight="weight")
    assert (t.A != s.A).nnz == 0


@pytest.mark.parametrize("bad", [[("a", "b")], "a->b", np.eye(2), nx.DiGraph],
                         ids=["list", "str", "ndarray", "class"])
@pytest.mark.parametrize("builder", ["from_networkx", "from_igraph"])
def test_wrong_object_is_one_line_naming_the_right_builder(bad, builder):
    with pytest.raises(InvalidSystemError) as err:
        getattr(StructuredSystem, builder)(bad)
    msg = str(err.value)
    assert msg.startswith(f"{builder} expected") and "\n" not in msg
    assert "from_matrices" in msg
