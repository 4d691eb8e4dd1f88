"""pandapower network objects (optional extra ``power``).

The IEEE cases come from pandapower.networks. Their published sizes (buses, branches =
lines + transformers) are those of the MATPOWER case files (R. D. Zimmerman,
C. E. Murillo-Sanchez, R. J. Thomas, "MATPOWER: steady-state operations, planning and
analysis tools for power systems research and education", IEEE Trans. Power Syst.
26(1):12-19, 2011), which transcribe the University of Washington Power Systems Test
Case Archive; the counts below are from memory of those files.
"""

from __future__ import annotations

import json
import warnings

import numpy as np
import pytest

import netctl
from netctl.models import apply_model

pd = pytest.importorskip("pandas", reason="pandas is needed to build pandapower-like tables")

from netctl.io.power_grid import from_pandapower  # noqa: E402

IEEE = [  # case, buses, branches (MATPOWER case files; from memory)
    pytest.param("case14", 14, 20, id="ieee14"),
    pytest.param("case30", 30, 41, id="ieee30"),
    pytest.param("case57", 57, 80, id="ieee57"),
    pytest.param("case118", 118, 186, id="ieee118"),
    pytest.param("case300", 300, 411, id="ieee300"),
]


class FakeNet:
    """The tables of a pandapower net that the reader looks at (built by hand)."""

    def __init__(self):
        self.bus = pd.DataFrame({"name": ["A", "B", "C", "D", "E"], "vn_kv": [110.0] * 5,
                                 "in_service": [True, True, True, True, False],
                                 "geo": [json.dumps({"type": "Point", "coordinates": [i, 2 * i]})
                                         for i in range(5)]}, index=[10, 11, 12, 13, 14])
        self.line = pd.DataFrame({"from_bus": [10, 11, 11, 12], "to_bus": [11, 12, 12, 14],
                                  "in_service": [True, True, True, True]})
        self.trafo = pd.DataFrame({"hv_bus": [12, 10], "lv_bus": [13, 13],
                                   "in_service": [True, False]})
        self.switch = pd.DataFrame({"bus": [10], "element": [12], "et": ["b"], "closed": [True]})
        self.gen = pd.DataFrame({"bus": [10]})


def test_fake_net_tables():
    with pytest.warns(UserWarning) as rec:
        s = from_pandapower(FakeNet())
    msg = " ".join(str(w.message) for w in rec)
    # out-of-service elements are left out and named: bus E, trafo 1, and line 3 (it
    # ends at bus E)
    assert "out-of-service elements left out: bus E, trafo 1, line 3" in msg
    assert s.state_names == ("A", "B", "C", "D")
    want = {("A", "B"), ("B", "C"), ("C", "D"), ("A", "C")}
    got = {(s.state_names[a], s.state_names[b]) for a, b in zip(*s.edges())}
    assert got == want | {(b, a) for a, b in want}
    assert s.nodes["x"].tolist() == [0, 1, 2, 3] and s.nodes["y"][3] == 6
    assert s.nodes["bus"].tolist() == [10, 11, 12, 13]
    assert s.nodes["generation"].tolist() == [True, False, False, False]
    # parallel circuits stay distinct elements; the transformer is labelled
    el = s.elements
    assert [el.element(k).to_dict() for k in range(5)] == [
        {"id": "line 0", "kind": "line", "buses": ["A", "B"]},
        {"id": "line 1", "kind": "line", "buses": ["B", "C"]},
        {"id": "line 2", "kind": "line", "buses": ["B", "C"]},
        {"id": "trafo 0", "kind": "transformer", "buses": ["C", "D"]},
        {"id": "switch 0", "kind": "switch", "buses": ["A", "C"]}]
    assert el.parallel_group()[:5].tolist() == [1, 2, 2, 1, 1]
    assert el.counts() == {"line": 3, "transformer": 1, "switch": 1, "bus": 4, "generator": 1}


def test_not_a_net():
    with pytest.raises(ValueError, match="expected a pandapower network object, found dict"):
        from_pandapower({})


@pytest.mark.parametrize("case, n_bus, n_branch", IEEE)
def test_ieee_cases(case, n_bus, n_branch):
    pn = pytest.importorskip("pandapower.networks",
                             reason="pandapower is not installed (pip install netctl[power])")
    import networkx as nx

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # pandapower's own deprecation chatter
        net = getattr(pn, case)()
    assert len(net.bus) == n_bus
    assert len(net.line) + len(net.trafo) == n_branch
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # parallel branches are announced
        s = from_pandapower(net)
    assert s.n_states == n_bus
    # independent count of distinct bus pairs from the tables
    g = nx.Graph()
    g.add_edges_from(zip(net.line.from_bus, net.line.to_bus))
    g.add_edges_from(zip(net.trafo.hv_bus, net.trafo.lv_bus))
    assert s.n_links == 2 * g.number_of_edges()
    # the analyses run: swing-type model, one input on a generator bus's frequency state
    so = apply_model(s, "second-order")
    design = netctl.minimum_inputs(so)
    assert design.n_inputs >= 1
    assert netctl.controllability(design.apply(so)).controllable


LOAD_CASES = [  # pandapower.networks cases; the load counts are checked against net.load
    pytest.param("case14", id="ieee14"),        # IEEE 14-bus: 11 loads (MATPOWER case14, from memory)
    pytest.param("mv_oberrhein", id="mv-oberrhein"),  # pandapower's bundled MV grid, with geodata
]


@pytest.mark.parametrize("case", LOAD_CASES)
def test_loads_are_disturbances_on_their_buses(case):
    # issue 20 item 3: loads -> disturbances, as from_pypsa does; the reference is
    # pandapower's own load table (bus of each load, its p_mw) and bus names
    pn = pytest.importorskip("pandapower.networks",
                             reason="pandapower is not installed (pip install netctl[power])")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net = getattr(pn, case)()
        s = from_pandapower(net)
        bare = from_pandapower(net, loads=False)
    live = net.load[net.load.in_service.astype(bool)
                    & net.bus.in_service.reindex(net.load.bus).to_numpy().astype(bool)]
    if case == "case14":
        assert len(live) == 11  # IEEE 14-bus case (from memory)
    assert s.n_disturbances == len(live) and bare.n_disturbances == 0
    assert s.state_names == bare.state_names and s.n_links == bare.n_links
    named = net.bus["name"].notna().all() and net.bus["name"].is_unique
    for idx, row in live.iterrows():
        bus = int(row["bus"])
        want = str(net.bus.at[bus, "name"]) if named else str(bus)
        assert s.disturbed_by(f"load {idx}") == [want]
    np.testing.assert_array_equal(s.disturbance_nodes["p_mw"], live["p_mw"].to_numpy(float))
    np.testing.assert_array_equal(s.disturbance_nodes["bus"], live["bus"].to_numpy())
    assert s.disturbed_states().size == live["bus"].nunique()


def test_loads_out_of_service_are_left_out_with_a_warning():
    pn = pytest.importorskip("pandapower.networks",
                             reason="pandapower is not installed (pip install netctl[power])")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net = pn.case14()
    net.load.loc[net.load.index[3], "in_service"] = False
    with pytest.warns(UserWarning, match="1 load.s. out of service"):
        s = from_pandapower(net)
    assert s.n_disturbances == len(net.load) - 1
    assert f"load {net.load.index[3]}" not in s.disturbance_names


@pytest.mark.parametrize("case", LOAD_CASES)
def test_saved_grid_reads_its_loads_like_the_network_object(tmp_path, case):
    # A grid saved with pandapower's to_json and read by netctl's restricted decoder gets
    # the same load disturbances as the network object; the reference is pandapower's own
    # load table (bus, p_mw, q_mvar, in service), one load taken out of service.
    pp = pytest.importorskip("pandapower",
                             reason="pandapower is not installed (pip install netctl[power])")
    import pandapower.networks as pn

    from netctl.io.pandapower_json import read_pandapower_json

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net = getattr(pn, case)()
    net.load.loc[net.load.index[1], "in_service"] = False
    path = tmp_path / "grid.json"
    pp.to_json(net, str(path))
    live = net.load[net.load.in_service.astype(bool)
                    & net.bus.in_service.reindex(net.load.bus).to_numpy().astype(bool)]
    with pytest.warns(UserWarning, match="load.s. out of service"):
        s = read_pandapower_json(path)
    assert s.disturbance_names == tuple(f"load {i}" for i in live.index)
    named = net.bus["name"].notna().all() and net.bus["name"].is_unique
    for idx, row in live.iterrows():
        bus = int(row["bus"])
        assert s.disturbed_by(f"load {idx}") == [str(net.bus.at[bus, "name"]) if named
                                                 else str(bus)]
    np.testing.assert_allclose(s.disturbance_nodes["p_mw"], live["p_mw"].to_numpy(float))
    np.testing.assert_allclose(s.disturbance_nodes["q_mvar"], live["q_mvar"].to_numpy(float))
    assert read_pandapower_json(path, loads=False).n_disturbances == 0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        obj = from_pandapower(net)
    assert obj.disturbance_names == s.disturbance_names
    assert (obj.E != s.E).nnz == 0
