"""from_frame: systems from a pandas edge table (row source,target = source influences
target). Checked against networkx's own adjacency (reference library) and by rebuilding a
bundled network (networks/chemical_plant.toml, invented) from its tables."""

from __future__ import annotations

from pathlib import Path

import networkx as nx
import numpy as np
import pytest

import netctl
import netctl.io as nio
from netctl.errors import InvalidSystemError
from netctl.io.frames import from_frame

pd = pytest.importorskip("pandas")
ROOT = Path(__file__).resolve().parents[2]


@pytest.mark.parametrize("seed", range(5))
def test_orientation_matches_networkx_adjacency(seed):
    """networkx: to_scipy_sparse_array(G)[u, v] is the edge u -> v; netctl's A is its
    transpose (A[v, u] != 0 iff u influences v)."""
    g = nx.gnp_random_graph(15, 0.2, seed=seed, directed=True)
    g.add_edge(3, 3)  # a self-loop is self-dynamics, kept
    rng = np.random.default_rng(seed)
    edges = list(g.edges())
    frame = pd.DataFrame({"source": [f"n{u}" for u, _ in edges],
                          "target": [f"n{v}" for _, v in edges],
                          "weight": rng.uniform(0.5, 2.0, len(edges))})
    nodes = pd.DataFrame({"name": [f"n{i}" for i in g.nodes()]})
    for (u, v), w in zip(edges, frame["weight"]):
        g[u][v]["weight"] = w
    s = from_frame(frame, nodes)
    ref = nx.to_scipy_sparse_array(g, nodelist=sorted(g.nodes()), weight="weight")
    assert s.weighted and s.n_states == 15
    assert np.allclose(s.A.toarray(), ref.T.toarray())
    assert s.n_self_loops == 1


def _tables(system):
    """The bundled system as the tables a user would keep (links, nodes)."""
    rows = []
    src, dst = system.edges()
    for u, v in zip(src.tolist(), dst.tolist()):
        rows.append((system.state_names[u], system.state_names[v], "link"))
    for M, names, kind in ((system.B, system.input_names, "input"),
                           (system.E, system.disturbance_names, "disturbance")):
        M = M.tocsc().tocoo()  # column by column: the tables list the inputs in order
        for i, j in zip(M.row.tolist(), M.col.tolist()):
            rows.append((names[j], system.state_names[i], kind))
    C = system.C.tocoo()
    for r, i in zip(C.row.tolist(), C.col.tolist()):
        rows.append((system.state_names[i], system.output_names[r], "output"))
    links = pd.DataFrame(rows, columns=["source", "target", "kind"])
    nodes = pd.DataFrame({"name": list(system.state_names),
                          "x": system.nodes["x"], "y": system.nodes["y"],
                          "actuator": system.nodes["actuator"]})
    return links, nodes


def test_bundled_plant_rebuilt_from_its_tables():
    plant = nio.read(ROOT / "networks" / "chemical_plant.toml")
    links, nodes = _tables(plant)
    s = from_frame(links, nodes)
    assert s.state_names == plant.state_names
    assert set(s.disturbance_names) == set(plant.disturbance_names)
    for k in "ABC":
        assert (getattr(s, k) != getattr(plant, k)).nnz == 0, k
    perm = [s.disturbance_names.index(d) for d in plant.disturbance_names]
    assert (s.E[:, perm] != plant.E).nnz == 0
    assert s.input_names == plant.input_names and s.output_names == plant.output_names
    assert np.array_equal(s.nodes["x"], plant.nodes["x"], equal_nan=True)
    assert list(s.nodes["actuator"]) == list(plant.nodes["actuator"])
    assert (netctl.controllability(s).controllable
            == netctl.controllability(plant).controllable)


def test_edge_coordinates_fill_the_node_table():
    t = pd.DataFrame({"source": ["a", "b"], "target": ["b", "c"],
                      "source_x": [0.0, 1.0], "source_y": [0.0, 0.5],
                      "target_x": [1.0, 2.0], "target_y": [0.5, 0.0]})
    s = from_frame(t)
    assert s.nodes["x"].tolist() == [0.0, 1.0, 2.0] and s.nodes["y"].tolist() == [0.0, 0.5, 0.0]


def test_shared_input_keeps_weights_and_isolated_states():
    t = pd.DataFrame({"source": ["u", "u", "a"], "target": ["a", "b", "b"],
                      "kind": ["input", "input", None], "weight": [2.0, 3.0, 0.5]})
    s = from_frame(t, pd.DataFrame({"name": ["spare"]}))
    assert s.state_names == ("spare", "a", "b") and s.n_inputs == 1
    assert s.B.toarray().ravel().tolist() == [0.0, 2.0, 3.0]
    assert s.A[2, 1] == 0.5


def test_zero_weight_and_duplicates_warn():
    t = pd.DataFrame({"source": ["a", "a", "b"], "target": ["b", "b", "c"],
                      "weight": [1.0, 2.0, 0.0]})
    with pytest.warns(UserWarning) as rec:
        s = from_frame(t)
    text = " ".join(str(r.message) for r in rec)
    assert "1 link(s) of weight 0" in text and "duplicate" in text
    assert s.A[1, 0] == 3.0 and s.n_links == 1 and s.n_states == 3


BAD = [
    pytest.param({"source": ["a"], "target": ["b"], "kind": ["pipe"]}, "unknown kind 'pipe'",
                 id="unknown-kind"),
    pytest.param({"source": ["a", None], "target": ["b", "c"]}, "row 1: empty 'source'",
                 id="empty-name"),
    pytest.param({"source": ["a"], "target": ["b"], "weight": [float("nan")]},
                 "row 0: weight nan is not a finite", id="nan-weight"),
    pytest.param({"source": ["a", "c"], "target": ["b", "a"], "source_x": [0.0, 1.0],
                  "target_x": [1.0, 5.0]}, "row 1: target_x = 5.0 for 'a'", id="two-positions"),
    pytest.param({"source": ["w", "a"], "target": ["a", "w"],
                  "kind": ["disturbance", "link"]}, "'w' is marked as a disturbance",
                 id="disturbance-fed"),
    pytest.param({"from": ["a"], "to": ["b"]}, "no column 'source'", id="missing-column"),
]


@pytest.mark.parametrize("columns, message", BAD)
def test_bad_tables_name_the_row(columns, message):
    with pytest.raises(InvalidSystemError) as err:
        from_frame(pd.DataFrame(columns))
    assert message in str(err.value) and "\n" not in str(err.value)


def test_not_a_frame():
    with pytest.raises(InvalidSystemError, match="expected a pandas DataFrame of links, "
                       "found list"):
        from_frame([("a", "b")])
