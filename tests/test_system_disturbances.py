"""Disturbances (E), regulated outputs (H) and control stations on StructuredSystem."""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp

from netctl import (InvalidSystemError, Station, StructuredSystem, UnknownNameError,
                    make_stations, minimum_inputs)
from netctl.models import apply_model


def _plant() -> StructuredSystem:
    # w -> a -> b -> c, w2 -> c; w and w2 are disturbances
    return StructuredSystem.from_named_edges(
        ["w", "a", "b", "w2", "c"], ["a", "b", "c", "c", "a"],
        weights=[2.0, 1.0, 1.0, 3.0, 0.5]).states_to_disturbances(["w", "w2"])


def test_states_to_disturbances_moves_outgoing_links_into_E():
    s = _plant()
    assert s.state_names == ("a", "b", "c")
    assert s.disturbance_names == ("w", "w2")
    assert s.n_disturbances == 2 and s.n_regulated == 0
    assert s.E.toarray().tolist() == [[2.0, 0.0], [0.0, 0.0], [0.0, 3.0]]
    assert s.n_links == 3
    assert s.disturbed_states().tolist() == [0, 2]
    assert s.disturbed_by("w2") == ["c"]


def test_defaults_are_empty_and_change_nothing():
    s = StructuredSystem.from_edges([0, 1], [1, 2], 3)
    assert s.E.shape == (3, 0) and s.H.shape == (0, 3)
    assert s.disturbance_names == () and s.regulated_names == ()
    assert "n_disturbances" not in repr(s)


def test_disturbance_with_incoming_link_is_an_error_naming_it():
    s = StructuredSystem.from_named_edges(["a", "w"], ["w", "b"])
    with pytest.raises(InvalidSystemError, match=r"'w' is marked as a disturbance but has 1 "
                                                 r"incoming link \(a link from 'a'\)"):
        s.states_to_disturbances(["w"])
    loop = StructuredSystem.from_named_edges(["w", "w"], ["w", "b"])
    with pytest.raises(InvalidSystemError, match=r"'w'.*a self-loop"):
        loop.states_to_disturbances(["w"])


def test_input_or_sensor_on_a_disturbance_is_refused():
    s = StructuredSystem.from_named_edges(["w", "a"], ["a", "b"])
    with pytest.raises(InvalidSystemError, match="'w' is marked as a disturbance, but an input"):
        s.with_inputs(["w"]).states_to_disturbances(["w"])
    with pytest.raises(InvalidSystemError, match="a sensor reads it"):
        s.with_outputs(["w"]).states_to_disturbances(["w"])
    d = s.states_to_disturbances(["w"])
    with pytest.raises(UnknownNameError, match="'w' is a disturbance, not a state.*'a'"):
        d.with_inputs(["w"])
    with pytest.raises(UnknownNameError, match="'w' is a disturbance, not a state"):
        d.with_outputs(["w"])


def test_a_name_cannot_be_both_state_and_disturbance():
    with pytest.raises(InvalidSystemError, match="'a' is both a state and a disturbance"):
        StructuredSystem.from_edges([0], [1], 2, state_names=["a", "b"]).with_disturbances(
            {"a": ["b"]})


def test_with_disturbances_and_with_regulated_forms():
    s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"])
    d = s.with_disturbances({"rain": ["a", "c"]}).with_regulated(["c"])
    assert d.disturbance_names == ("rain",) and d.E.toarray()[:, 0].tolist() == [1, 0, 1]
    assert d.regulated_names == ("z:c",) and d.H.toarray().tolist() == [[0, 0, 1]]
    d2 = s.with_disturbances(["b"]).with_regulated({"quality": ["a", "b"]})
    assert d2.disturbance_names == ("w:b",) and d2.regulated_names == ("quality",)
    d3 = s.with_regulated(np.array([[1, 0, 0]])).with_disturbances(sp.csr_array(np.eye(3)[:, :2]))
    assert d3.H.toarray().tolist() == [[1, 0, 0]] and d3.disturbance_names == ("w0", "w1")


def test_dual_swaps_disturbances_and_regulated_outputs_and_is_an_involution():
    s = _plant().with_regulated({"z": ["c"]}).with_inputs(["a"]).with_outputs(["b"])
    assert s.E.nnz == 2 and s.H.nnz == 1  # with_outputs (through the dual) keeps them
    d = s.dual()
    assert d.disturbance_names == ("z",) and d.regulated_names == ("w", "w2")
    assert (d.E.toarray() == s.H.toarray().T).all() and (d.H.toarray() == s.E.toarray().T).all()
    assert d.dual().same_as(s.with_disturbances(s.E, names=s.disturbance_names))


def test_same_as_sees_every_part():
    s = _plant()
    assert s.same_as(_plant())
    assert not s.same_as(s.with_regulated(["a"]))
    assert not s.same_as(s.with_disturbances({"other": ["b"]}))


def test_second_order_model_puts_disturbances_on_velocity_states():
    s = _plant().with_regulated(["b"])
    so = apply_model(s, "second-order")
    assert so.E.shape == (6, 2)
    assert [so.state_names[i] for i in so.disturbed_states()] == ["a:vel", "c:vel"]
    assert [so.state_names[i] for i in so.H.indices] == ["b:pos"]


def test_node_table_row_moves_to_the_disturbance_table():
    s = StructuredSystem.from_named_edges(
        ["w", "a"], ["a", "b"], nodes={"x": [0.0, 1.0, 2.0], "tag": ["p", "q", "r"]})
    d = s.states_to_disturbances(["w"])
    assert d.nodes["x"].tolist() == [1.0, 2.0]
    assert d.disturbance_nodes["x"].tolist() == [0.0]
    assert d.disturbance_nodes["tag"].tolist() == ["p"]


@pytest.mark.parametrize("seed", range(40))
def test_minimum_inputs_count_only_states_networkx_matching(seed):
    # Outside reference: networkx Hopcroft-Karp maximum matching on the state-only graph;
    # minimum inputs N_D = max(n - |M*|, 1) (Liu, Slotine & Barabasi 2011, Nature 473,
    # 167-173). Disturbances moved out of the state set must not count.
    rng = np.random.default_rng(seed)
    n, q = int(rng.integers(3, 25)), int(rng.integers(1, 4))
    g = nx.gnp_random_graph(n, float(rng.uniform(0.05, 0.3)), seed=seed, directed=True)
    names = [f"x{i}" for i in range(n)]
    src = [f"x{u}" for u, v in g.edges()]
    dst = [f"x{v}" for u, v in g.edges()]
    for j in range(q):  # each disturbance acts on one to three random states
        for t in rng.choice(n, size=int(rng.integers(1, 4)), replace=False):
            src.append(f"w{j}")
            dst.append(f"x{t}")
    full = StructuredSystem.from_named_edges(src, dst, states=names + [f"w{j}" for j in range(q)])
    system = full.states_to_disturbances([f"w{j}" for j in range(q)])
    bip = nx.Graph()
    bip.add_nodes_from((("out", i) for i in range(n)), bipartite=0)
    bip.add_nodes_from((("in", i) for i in range(n)), bipartite=1)
    bip.add_edges_from((("out", u), ("in", v)) for u, v in g.edges())
    top = [("out", i) for i in range(n)]
    matched = len(nx.bipartite.hopcroft_karp_matching(bip, top_nodes=top)) // 2
    design = minimum_inputs(system)
    assert design.n_states == n
    assert design.matching_size == matched
    assert design.n_inputs == max(n - matched, 1)
    assert design.driver_names and set(design.driver_names) <= set(names)


def test_stations_from_names_and_their_errors():
    s = _plant().with_inputs(["a", "b"]).with_outputs(["b", "c"])
    st = make_stations(s, {"left": {"inputs": ["u:a"], "outputs": ["y:b"]},
                           "right": {"inputs": ["u:b"], "outputs": ["y:c"]}})
    assert st == (Station("left", (0,), (0,)), Station("right", (1,), (1,)))
    assert st[0].to_dict(s) == {"name": "left", "inputs": [0], "outputs": [0],
                                "input_names": ["u:a"], "output_names": ["y:b"]}
    with pytest.raises(UnknownNameError, match="station 'left': unknown output name 'y:zz'"):
        make_stations(s, {"left": {"inputs": ["u:a"], "outputs": ["y:zz"]}})
    with pytest.raises(InvalidSystemError,
                       match="stations 'left' and 'right' overlap: both hold the input 'u:a'"):
        make_stations(s, {"left": {"inputs": ["u:a"]}, "right": {"inputs": ["u:a", "u:b"]}})
    with pytest.raises(UnknownNameError, match="station 'left'.*'w' is a disturbance|"
                                                "station 'left': unknown input name 'w'"):
        make_stations(s, {"left": {"inputs": ["w"]}})
