"""Disturbances and regulated outputs survive every transformation that builds a new
system (issue 23, item 1: "nothing in a good file is dropped"), and the verbs that read
files on their own (batch, join) report them apart like every other verb.

The reference for "where a disturbance acts" is recomputed independently with networkx:
the disturbance is a node with links into the states it acts on, and the change (a state
removed, a link added, subsystems joined, second-order states) is applied to that graph.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import networkx as nx
import pytest

from netctl import StructuredSystem
from netctl.cli import main
from netctl.numeric.realize import realize
from netctl.structural.interconnect import compose
from netctl.structural.robustness.whatif import apply_change, what_if

ROOT = Path(__file__).resolve().parents[1]
HEATING = ROOT / "networks" / "heating_loop.csv"
PLANT = ROOT / "networks" / "chemical_plant.toml"


def plant_with_disturbances() -> StructuredSystem:
    # an invented five-state loop: a -> b -> c -> d -> e -> a, c -> e; weather acts on
    # b and d, a feed on e; the product quality z reads d and e
    s = StructuredSystem.from_named_edges(list("abcdec"), list("bcdeae"), inputs=["a"])
    s = s.with_disturbances({"weather": ["b", "d"], "feed": ["e"]})
    return s.with_regulated({"quality": ["d", "e"]})


def acts_on(system: StructuredSystem) -> dict[str, set[str]]:
    E = system.E.tocsc()
    return {w: {system.state_names[int(i)] for i in E.indices[E.indptr[j]:E.indptr[j + 1]]}
            for j, w in enumerate(system.disturbance_names)}


def reads(system: StructuredSystem) -> dict[str, set[str]]:
    H = system.H.tocsr()
    return {z: {system.state_names[int(i)] for i in H.indices[H.indptr[r]:H.indptr[r + 1]]}
            for r, z in enumerate(system.regulated_names)}


def reference_graph(system: StructuredSystem) -> nx.DiGraph:
    g = nx.DiGraph()
    g.add_nodes_from(system.state_names)
    for w, on in acts_on(system).items():
        g.add_edges_from((("w", w), x) for x in on)
    for z, on in reads(system).items():
        g.add_edges_from((x, ("z", z)) for x in on)
    return g


def from_reference(g: nx.DiGraph, system: StructuredSystem) -> tuple[dict, dict]:
    w = {d: {x for x in g.successors(("w", d))} for d in system.disturbance_names
         if ("w", d) in g}
    z = {r: {x for x in g.predecessors(("z", r))} for r in system.regulated_names
         if ("z", r) in g}
    return w, z


@pytest.mark.parametrize("change", [
    {"remove_nodes": ["d"]},
    {"add_links": [("c", "new1"), ("new1", "a")]},
    {"remove_links": [("c", "e")], "add_links": [("e", "c")]},
    {"remove_nodes": ["e", "b"], "add_links": [("a", "x9")]},
], ids=["remove-node", "add-new-states", "rewire", "remove-and-add"])
def test_what_if_keeps_disturbances_and_regulated_outputs(change):
    s = plant_with_disturbances()
    after, _, _ = apply_change(s, **change)
    g = reference_graph(s)
    g.remove_nodes_from(change.get("remove_nodes", []))
    want_w, want_z = from_reference(g, s)
    assert after.disturbance_names == s.disturbance_names
    assert after.regulated_names == s.regulated_names
    assert acts_on(after) == want_w
    assert reads(after) == want_z
    # and what_if's "after" system carries them too
    assert what_if(s, **change).after.n_disturbances == 2


@pytest.mark.parametrize("weights", ["independent", "symmetric", "laplacian", "uniform",
                                     "swing"])
def test_realize_keeps_disturbances_and_regulated_outputs(weights):
    s = plant_with_disturbances()
    r = realize(s, weights=weights, seed=1)
    assert r.disturbance_names == s.disturbance_names
    assert r.regulated_names == s.regulated_names
    if weights == "swing":
        # second-order states: a disturbance is a force on a node (enters its velocity,
        # as an input does); a regulated output reads the node's position (as a sensor)
        want_w = {w: {f"{x}:vel" for x in on} for w, on in acts_on(s).items()}
        want_z = {z: {f"{x}:pos" for x in on} for z, on in reads(s).items()}
    else:
        want_w, want_z = acts_on(s), reads(s)
    assert acts_on(r) == want_w
    assert reads(r) == want_z


def test_realize_swing_of_a_second_order_pattern_keeps_them():
    from netctl.models import apply_model

    s = apply_model(plant_with_disturbances(), "second-order")
    r = realize(s, weights="swing", seed=2)
    assert acts_on(r) == acts_on(s) and reads(r) == reads(s)
    assert acts_on(r)["feed"] == {"e:vel"}


def test_compose_keeps_each_subsystems_disturbances():
    a = plant_with_disturbances()
    b = StructuredSystem.from_named_edges(["p"], ["q"]).with_disturbances({"rain": ["q"]})
    c = compose({"one": a, "two": b}, [("one", "e", "two", "p")]).system
    # reference: the disjoint union of both graphs, every name prefixed by its subsystem
    g = nx.DiGraph()
    for sub, part in (("one", a), ("two", b)):
        g = nx.union(g, nx.relabel_nodes(reference_graph(part), lambda v, sub=sub: (
            (v[0], f"{sub}.{v[1]}") if isinstance(v, tuple) else f"{sub}.{v}")))
    want = {w: set(g.successors(("w", w))) for w in c.disturbance_names}
    assert acts_on(c) == want
    assert want == {"one.weather": {"one.b", "one.d"}, "one.feed": {"one.e"},
                    "two.rain": {"two.q"}}
    assert reads(c) == {"one.quality": {"one.d", "one.e"}}


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_join_reports_disturbances_like_every_verb(capsys):
    code, out, _ = run(capsys, "join", f"heat={HEATING}", "--inputs", "heat.fuel_valve")
    assert out.splitlines()[1].startswith("  disturbances (2; not states")
    code, out, _ = run(capsys, "join", f"heat={HEATING}", "--inputs", "heat.fuel_valve",
                       "--json")
    data = json.loads(out)
    assert sorted(data["disturbances"]["disturbances"]) == ["heat.outdoor_temp",
                                                            "heat.solar_collector"]


def test_join_of_a_described_plant_keeps_its_disturbances(capsys):
    # the plant file declares three disturbances; each subsystem keeps its share
    from netctl.io import read

    plant = read(str(PLANT))
    code, out, _ = run(capsys, "join", PLANT, "--json")
    data = json.loads(out)
    got = data["disturbances"]["disturbances"]
    names = {k.split(".", 1)[1] for k in got}
    assert names == set(plant.disturbance_names)
    hit = {x.split(".", 1)[1] for on in got.values() for x in on}
    assert hit == {plant.state_names[int(i)] for i in plant.disturbed_states()}


def test_batch_reports_disturbances_and_keeps_columns_without_them(tmp_path, capsys):
    folder = tmp_path / "nets"
    folder.mkdir()
    (folder / "heat.csv").write_text(HEATING.read_text())
    (folder / "plain.csv").write_text("source,target\na,b\nb,c\n")
    out_csv = tmp_path / "rows.csv"
    code, out, _ = run(capsys, "batch", folder, "--task", "drivers", "--out", out_csv,
                       "--executor", "serial")
    assert code == 0
    assert "disturbances (not states, never driven or sensed) in 1 file(s): heat.csv (2)" \
        in out
    with open(out_csv, newline="") as fh:
        rows = {Path(r["file"]).name: r for r in csv.DictReader(fh)}
    assert rows["heat.csv"]["disturbances"] == "outdoor_temp;solar_collector"
    assert rows["heat.csv"]["n_disturbances"] == "2"
    assert rows["plain.csv"]["n_disturbances"] == ""
    # a batch without disturbances writes exactly the columns it always did
    (folder / "heat.csv").unlink()
    run(capsys, "batch", folder, "--task", "drivers", "--out", out_csv,
        "--executor", "serial")
    header = out_csv.read_text().splitlines()[0].split(",")
    assert "n_disturbances" not in header and header[-2:] == ["warnings", "error"]
