"""from_pypsa on a network built through PyPSA's own API.

PyPSA's wheel ships no example network (``pypsa.examples`` downloads them at run time,
which tests must not do), so the test builds a small invented two-area grid with PyPSA's
``Network.add`` and checks the system against PyPSA's own views of it: ``Network.graph()``
(a networkx MultiGraph of the branches) and its component tables, and the minimum inputs
against networkx's maximum matching (Liu, Slotine, Barabasi 2011: N_D = max(n - |M*|, 1))."""

from __future__ import annotations

import sys
import warnings

import networkx as nx
import pytest

import netctl
from netctl.errors import InvalidSystemError, MissingExtraError
from netctl.io.pypsa_grid import from_pypsa

pypsa = pytest.importorskip("pypsa")


def invented_grid(*, parallel: bool = False):
    """An invented two-area grid (not a real one): AC buses at two voltage levels, an HVDC
    link between converter buses, a heat pump into a heat bus, an inactive spare line."""
    n = pypsa.Network()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # PyPSA's own notices about missing snapshots etc.
        for name, x, y, v, carrier in [
                ("north_hv", 0.0, 10.0, 220.0, "AC"), ("north_mv", 1.0, 11.0, 20.0, "AC"),
                ("south_hv", 0.0, 0.0, 220.0, "AC"), ("south_mv", 1.0, -1.0, 20.0, "AC"),
                ("west_hv", -5.0, 5.0, 220.0, "AC"), ("dc_north", 0.5, 9.0, 320.0, "DC"),
                ("dc_south", 0.5, 1.0, 320.0, "DC"), ("heat_hub", 2.0, -2.0, math_nan(), "heat")]:
            n.add("Bus", name, x=x, y=y, v_nom=v, carrier=carrier)
        n.add("Line", "l_north_west", bus0="north_hv", bus1="west_hv", x=0.1, r=0.01)
        n.add("Line", "l_west_south", bus0="west_hv", bus1="south_hv", x=0.1, r=0.01)
        if parallel:
            n.add("Line", "l_west_south_2", bus0="west_hv", bus1="south_hv", x=0.1, r=0.01)
        n.add("Line", "l_spare", bus0="north_hv", bus1="south_hv", x=0.2, active=False)
        n.add("Transformer", "t_north", bus0="north_hv", bus1="north_mv", x=0.1, s_nom=100)
        n.add("Transformer", "t_south", bus0="south_hv", bus1="south_mv", x=0.1, s_nom=100)
        n.add("Link", "conv_north", bus0="north_hv", bus1="dc_north", p_min_pu=-1, p_nom=50)
        n.add("Link", "hvdc", bus0="dc_north", bus1="dc_south", p_min_pu=-1, p_nom=50)
        n.add("Link", "conv_south", bus0="dc_south", bus1="south_hv", p_min_pu=-1, p_nom=50)
        n.add("Link", "heat_pump", bus0="south_mv", bus1="heat_hub", efficiency=3.0, p_nom=5)
        n.add("Generator", "wind_north", bus="north_mv", p_nom=30)
        n.add("Generator", "gas_west", bus="west_hv", p_nom=80)
        n.add("StorageUnit", "battery_south", bus="south_mv", p_nom=10)
        n.add("Store", "heat_tank", bus="heat_hub", e_nom=20)
        n.add("Load", "city", bus="south_mv", p_set=40)
        n.add("Load", "north_town", bus="north_mv", p_set=10)
        n.add("Load", "district_heat", bus="heat_hub", p_set=4)
    return n


def math_nan():
    return float("nan")


@pytest.fixture(scope="module")
def grid():
    n = invented_grid()
    with pytest.warns(UserWarning, match="1 inactive lines left out"):
        s = from_pypsa(n)
    return n, s


def test_buses_are_states_and_loads_disturbances(grid):
    n, s = grid
    assert s.state_names == tuple(n.buses.index)
    assert s.disturbance_names == tuple(n.loads.index)
    for load, bus in n.loads["bus"].items():
        assert s.disturbed_by(load) == [bus]


def test_couplings_match_pypsa_graph(grid):
    """Every active branch of PyPSA's own graph couples its buses; lines, transformers and
    reversible links both ways, the one-way heat pump from bus0 to bus1 only."""
    n, s = grid
    ref = set()
    for u, v, key in n.graph(inf_weight=False).edges(keys=True):
        comp, name = key if isinstance(key, tuple) else (None, key)
        ref.add((str(u), str(v), str(comp), str(name)))
    active = {name for name, a in n.lines["active"].items() if a} | set(n.transformers.index) \
        | set(n.links.index)
    und = {frozenset((u, v)) for u, v, _, name in ref if name in active}
    src, dst = s.edges()
    got = {(s.state_names[a], s.state_names[b]) for a, b in zip(src, dst)}
    assert {frozenset(e) for e in got} == und
    assert ("south_mv", "heat_hub") in got and ("heat_hub", "south_mv") not in got
    assert ("dc_north", "dc_south") in got and ("dc_south", "dc_north") in got


def test_generators_and_storage_are_actuator_sites(grid):
    n, s = grid
    expected = set(n.generators["bus"]) | set(n.storage_units["bus"]) | set(n.stores["bus"])
    got = {name for name, a in zip(s.state_names, s.nodes["actuator"]) if a}
    assert got == expected
    assert s.nodes["x"][s.index_of(["west_hv"])[0]] == -5.0


def test_minimum_inputs_match_networkx_matching(grid):
    _, s = grid
    src, dst = s.edges()
    g = nx.Graph()
    top = [("out", i) for i in range(s.n_states)]
    g.add_nodes_from(top)
    g.add_nodes_from(("in", i) for i in range(s.n_states))
    g.add_edges_from((("out", int(u)), ("in", int(v))) for u, v in zip(src, dst))
    size = sum(1 for k in nx.bipartite.hopcroft_karp_matching(g, top_nodes=top) if k[0] == "out")
    assert netctl.minimum_inputs(s).n_inputs == max(s.n_states - size, 1)


def test_placement_uses_only_generator_and_storage_buses(grid):
    n, s = grid
    p = netctl.place_inputs(s)
    sites = set(s.nodes["actuator"].nonzero()[0].tolist())
    assert set(p.sites.tolist()) <= sites
    assert p.goal_met == netctl.controllability(p.apply(s)).controllable


def test_parallel_lines_merged_with_a_warning():
    with pytest.warns(UserWarning, match="parallel branch"):
        s = from_pypsa(invented_grid(parallel=True))
    assert s.n_states == 8


def test_load_named_like_a_bus_gets_a_prefix():
    n = invented_grid()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        n.add("Load", "west_hv", bus="west_hv", p_set=1.0)
        s = from_pypsa(n, include_inactive=True)
    assert "load:west_hv" in s.disturbance_names and "load:city" in s.disturbance_names


@pytest.mark.parametrize("bad", [object(), "grid.nc", pypsa.Network], ids=["object", "path", "class"])
def test_wrong_object(bad):
    with pytest.raises(InvalidSystemError, match="^from_pypsa expected a pypsa Network"):
        from_pypsa(bad)


def test_old_pypsa_version(monkeypatch):
    monkeypatch.setattr(pypsa, "__version__", "0.17.1")
    with pytest.raises(InvalidSystemError, match=r"needs PyPSA >= 0\.25, found 0\.17\.1"):
        from_pypsa(invented_grid())


def test_missing_pypsa_names_the_extra(monkeypatch):
    monkeypatch.setitem(sys.modules, "pypsa", None)
    with pytest.raises(MissingExtraError, match=r'pip install "netctl\[pypsa\]"'):
        from_pypsa(object())
