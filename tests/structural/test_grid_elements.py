"""Element-level N-1 of a grid against an independent recomputation (issue 25, item 5).

Reference pipeline, sharing no code with netctl's readers or analyses: the case file is
parsed by the PyPI package ``matpowercaseframes``; each element is removed from a
networkx multigraph of the buses; the swing-model state graph is rebuilt (``pos_i <-
vel_i``, ``vel_i <- vel_i, pos_i, pos_j`` for every neighbour ``j``; Kundur, "Power
System Stability and Control", 1994, from memory); the minimum number of inputs is
``max(n - |M*|, 1)`` with networkx's Hopcroft-Karp matching (Liu, Slotine & Barabási,
Nature 473:167, 2011) and the design is checked by Lin's conditions (C.-T. Lin, IEEE TAC
19(3), 1974): generic rank of ``[A B]`` by matching, accessibility by ``nx.descendants``.
"""

from __future__ import annotations

import networkx as nx

import pytest

from netctl.cli import main
from netctl.io import read
from netctl.models import resolve_model
from netctl.structural.robustness.elements import element_sweep

from ..io.test_grid_files import _mfile


def _reference(case):
    cf = pytest.importorskip("matpowercaseframes").CaseFrames(_mfile(case))
    bus = cf.bus
    live = {int(b) for b, t in zip(bus["BUS_I"], bus["BUS_TYPE"]) if t != 4}
    g = nx.MultiGraph()
    g.add_nodes_from(live)
    for k, (f, t, st) in enumerate(zip(cf.branch["F_BUS"], cf.branch["T_BUS"],
                                       cf.branch["BR_STATUS"])):
        if st > 0 and int(f) in live and int(t) in live:
            g.add_edge(int(f), int(t), key=f"branch {k + 1}")
    gens = {f"gen {k + 1}": int(b) for k, (b, st) in
            enumerate(zip(cf.gen["GEN_BUS"], cf.gen["GEN_STATUS"])) if st > 0 and int(b) in live}
    return g, gens


def _swing_answer(g, input_buses):
    """(minimum inputs, design controllable) of the swing model of bus graph ``g``."""
    d = nx.DiGraph()
    for i in g.nodes:
        d.add_edges_from([(("v", i), ("p", i)), (("v", i), ("v", i)), (("p", i), ("v", i))])
    for i, j in set((min(a, b), max(a, b)) for a, b in g.edges()):
        d.add_edges_from([(("p", j), ("v", i)), (("p", i), ("v", j))])
    n = d.number_of_nodes()

    def matching(extra):
        b = nx.Graph()
        top = [("o", u) for u in d.nodes] + [("o", ("u", k)) for k in range(len(extra))]
        b.add_nodes_from(top)
        b.add_nodes_from(("i", u) for u in d.nodes)
        b.add_edges_from((("o", u), ("i", v)) for u, v in d.edges())
        b.add_edges_from((("o", ("u", k)), ("i", ("v", bus))) for k, bus in enumerate(extra))
        return len(nx.bipartite.hopcroft_karp_matching(b, top_nodes=top)) // 2

    n_d = max(n - matching([]), 1) if n else 0
    if not input_buses:
        return n_d, False
    reach = set()
    for bus in input_buses:
        reach |= {("v", bus)} | nx.descendants(d, ("v", bus))
    return n_d, matching(input_buses) == n and len(reach) == n


@pytest.mark.parametrize("case, every_bus", [("case118", 1), ("case300", 7)])
def test_element_n1_against_networkx(case, every_bus):
    g, gens = _reference(case)
    s = resolve_model(read(_mfile(case)), None)
    design_bus = next(iter(gens.values()))
    s = s.with_inputs([f"{design_bus}:vel"])
    sw = element_sweep(s)
    checked = mismatches = 0
    buses_seen = 0
    for k, eid in enumerate(sw.ids):
        kind = sw.kinds[k]
        h = g.copy()
        inputs = [design_bus]
        if kind in ("line", "transformer"):
            u, v = (int(x) for x in sw.buses[k])
            h.remove_edge(u, v, key=eid)
        elif kind == "bus":
            buses_seen += 1
            if buses_seen % every_bus:
                continue
            h.remove_node(int(eid.split()[1]))
            inputs = [b for b in inputs if b in h]
        else:
            others = [x for x, b in gens.items() if b == gens[eid] and x != eid]
            if not others:
                inputs = [b for b in inputs if b != gens[eid]]
        n_d, ok = _swing_answer(h, inputs)
        checked += 1
        mismatches += (n_d != sw.n_inputs_after[k]) + (ok != sw.controllable_after[k])
    assert checked > 150 and mismatches == 0


def test_parallel_circuit_loss_changes_nothing():
    s = resolve_model(read(_mfile("case118")), None)
    sw = element_sweep(s)
    par = s.elements.parallel_group()
    for k, eid in enumerate(sw.ids):
        pos = s.elements.position(eid)
        if s.elements.kinds[pos] in ("line", "transformer"):
            assert sw.no_change[k] == (par[pos] > 1)


def test_model_internal_links_are_never_elements():
    s = resolve_model(read(_mfile("case118")), None)
    assert not any(":" in eid for eid in s.elements.ids)
    assert set(s.elements.kinds) <= {"line", "transformer", "bus", "generator"}


def test_sweep_and_whatif_agree(capsys, tmp_path):
    """Every breaking element and a sample of others: whatif recomputes from scratch."""
    import json

    f = _mfile("case118")
    assert main(["sweep", f, "--inputs", "10", "--json"]) == 1
    sweep = json.loads(capsys.readouterr().out)["elements"]["losses"]
    rows = [r for r in sweep if r["controllable_after"] is False]
    rows += sweep[::25]
    assert len(rows) > 20
    for r in rows:
        code = main(["whatif", f, "--inputs", "10", "--remove-elements", r["element"],
                     "--json"])
        w = json.loads(capsys.readouterr().out)
        assert w["after"]["n_inputs"] == r["n_inputs_after"], r["element"]
        assert w["after"]["controllable"] == r["controllable_after"], r["element"]
        assert code == (0 if r["controllable_after"] else 1)


def test_half_a_bus_cannot_be_removed(capsys):
    f = _mfile("case118")
    assert main(["whatif", f, "--remove-nodes", "5:pos"]) == 2
    assert "half of bus '5'" in capsys.readouterr().err
    assert main(["whatif", f, "--inputs", "10", "--remove-nodes", "5", "--json"]) in (0, 1)
    import json

    w = json.loads(capsys.readouterr().out)
    assert w["change"]["removed_nodes"] == ["5:pos", "5:vel"]


def test_inputs_never_on_angles(capsys):
    f = _mfile("case118")
    assert main(["check", f, "--inputs", "10:pos"]) == 2
    assert "never its angle" in capsys.readouterr().err
    assert main(["check", f, "--inputs", "10", "--json"]) == 0
    import json

    assert json.loads(capsys.readouterr().out)["controllable"] is True



@pytest.mark.parametrize("case", ["case300", "case1354pegase"])
@pytest.mark.parametrize("model", [None, "first-order"])
def test_island_shortcut_equals_one_search_per_loss(case, model):
    """The bus-island method (Tarjan's bridges and cut vertices) against one reachability
    search per loss, with a design on three generator buses."""
    import warnings

    import numpy as np

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        s = resolve_model(read(_mfile(case)), model)
    act = np.flatnonzero(s.nodes["actuator"])[:3]
    s = s.with_inputs(act)
    a = element_sweep(s)
    b = element_sweep(s, accessibility="search")
    assert np.array_equal(a.unreached, b.unreached)
    assert np.array_equal(a.controllable_after, b.controllable_after)
    assert a.unreached.any()  # the check is not vacuous
