"""from_wntr on the EPANET example networks that WNTR ships (wntr/library/networks:
Net1.inp, Net3.inp, Net6.inp), checked against WNTR's own element counts and its own
graph (WaterNetworkModel.to_graph, a networkx MultiDiGraph), and the minimum inputs
against networkx's maximum matching (Liu, Slotine, Barabasi 2011: N_D = max(n - |M*|, 1))."""

from __future__ import annotations

import os
import sys

import networkx as nx
import numpy as np
import pytest

import netctl
from netctl.errors import InvalidSystemError, MissingExtraError
from netctl.io.water import from_wntr

wntr = pytest.importorskip("wntr")


def _model(name: str):
    path = os.path.join(os.path.dirname(wntr.__file__), "library", "networks", name)
    return wntr.network.WaterNetworkModel(path)


@pytest.fixture(scope="module", params=["Net1.inp", "Net3.inp", "Net6.inp"])
def case(request):
    wn = _model(request.param)
    return wn, from_wntr(wn)


def _expected_pattern(wn):
    """From WNTR's own graph: links among junctions and tanks both ways (a pipe with a
    check valve one way), links out of reservoirs as disturbance entries."""
    res = set(wn.reservoir_name_list)
    a, e = set(), set()
    for u, v, lname in wn.to_graph().edges(keys=True):
        link = wn.get_link(lname)
        one_way = link.link_type == "Pipe" and link.check_valve
        for s, t in [(u, v)] + ([] if one_way else [(v, u)]):
            if s == t or t in res:
                continue
            (e if s in res else a).add((s, t))
    return a, e


def test_counts_match_wntr(case):
    wn, s = case
    assert s.n_states == wn.num_junctions + wn.num_tanks
    n_dem = sum(1 for _, j in wn.junctions()
                if any(d.base_value for d in j.demand_timeseries_list))
    assert s.n_disturbances == wn.num_reservoirs + n_dem
    assert list(s.disturbance_names[:wn.num_reservoirs]) == list(wn.reservoir_name_list)


def test_couplings_match_wntr_graph(case):
    wn, s = case
    a_ref, e_ref = _expected_pattern(wn)
    src, dst = s.edges()
    assert {(s.state_names[u], s.state_names[v]) for u, v in zip(src, dst)} == a_ref
    E = s.E.tocoo()
    got_e = {(s.disturbance_names[j], s.state_names[i]) for i, j in zip(E.row, E.col)
             if not s.disturbance_names[j].startswith("demand:")}
    assert got_e == e_ref


def test_minimum_inputs_match_networkx_matching(case):
    _, s = case
    src, dst = s.edges()
    g = nx.Graph()
    g.add_nodes_from((("out", i) for i in range(s.n_states)), bipartite=0)
    g.add_nodes_from((("in", i) for i in range(s.n_states)), bipartite=1)
    g.add_edges_from((("out", int(u)), ("in", int(v))) for u, v in zip(src, dst))
    top = [("out", i) for i in range(s.n_states)]
    m = nx.bipartite.hopcroft_karp_matching(g, top_nodes=top)
    size = sum(1 for k in m if k[0] == "out")
    assert netctl.minimum_inputs(s).n_inputs == max(s.n_states - size, 1)


def test_pumps_and_valves_are_the_candidate_actuator_sites(case):
    wn, s = case
    res = set(wn.reservoir_name_list)
    ends = {str(link.end_node_name) for _, link in list(wn.pumps()) + list(wn.valves())}
    sites = {s.state_names[i] for i in np.flatnonzero(s.nodes["actuator"])}
    assert sites == ends - res and sites


def test_net6_valves_and_check_valve():
    """Net6.inp has PRVs and one pipe with a check valve (counted by WNTR)."""
    wn = _model("Net6.inp")
    s = from_wntr(wn)
    cv = [link for _, link in wn.pipes() if link.check_valve]
    assert wn.num_valves >= 1 and len(cv) == 1
    u, v = str(cv[0].start_node_name), str(cv[0].end_node_name)
    iu, iv = s.index_of([u, v])
    twins = [n for n, link in wn.pipes() if not link.check_valve
             and {link.start_node_name, link.end_node_name} == {u, v}]
    assert s.A[iv, iu] != 0 and (s.A[iu, iv] != 0) == bool(twins)
    for n in twins:  # without its parallel ordinary pipe, the check valve acts one way
        wn.remove_link(n, force=True)
    one_way = from_wntr(wn)
    iu, iv = one_way.index_of([u, v])
    assert one_way.A[iv, iu] != 0 and one_way.A[iu, iv] == 0
    valve_ends = {str(link.end_node_name) for _, link in wn.valves()}
    assert valve_ends <= {s.state_names[i] for i in np.flatnonzero(s.nodes["actuator"])}


def test_demands_optional_and_coordinates_kept():
    wn = _model("Net1.inp")
    s = from_wntr(wn, demands=False)
    assert s.disturbance_names == tuple(wn.reservoir_name_list)
    j = wn.junction_name_list[0]
    i = s.index_of([j])[0]
    assert (s.nodes["x"][i], s.nodes["y"][i]) == tuple(map(float, wn.get_node(j).coordinates))


def test_sensor_placement_runs_on_net3():
    s = from_wntr(_model("Net3.inp"))
    p = netctl.place_sensors(s)
    assert p.goal_met and p.verified
    assert netctl.observability(s.with_outputs(p.site_names)).controllable


@pytest.mark.parametrize("bad", [object(), "Net1.inp", wntr.network.WaterNetworkModel],
                         ids=["object", "path", "class"])
def test_wrong_object(bad):
    with pytest.raises(InvalidSystemError, match="^from_wntr expected a wntr WaterNetworkModel"):
        from_wntr(bad)


def test_old_wntr_version(monkeypatch):
    monkeypatch.setattr(wntr, "__version__", "0.5.0")
    with pytest.raises(InvalidSystemError, match=r"needs WNTR >= 1\.0, found 0\.5\.0"):
        from_wntr(_model("Net1.inp"))


def test_missing_wntr_names_the_extra(monkeypatch):
    monkeypatch.setitem(sys.modules, "wntr", None)
    with pytest.raises(MissingExtraError, match=r'pip install "netctl\[water\]"'):
        from_wntr(object())
