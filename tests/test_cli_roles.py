"""The verbs roles, sweep, whatif and join through the entry point: exit codes, JSON
keys, CSV files, messages, no tracebacks and no partial output files."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import pytest

from netctl.cli import main

ROOT = Path(__file__).resolve().parents[1]
HEATING = str(ROOT / "networks" / "heating_loop.csv")


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def heating_design(capsys) -> str:
    code, out, _ = run(capsys, "drivers", HEATING, "--dedicated", "--json")
    assert code == 0
    return ",".join(json.loads(out)["drivers"])


def test_roles_json_and_csv(capsys, tmp_path):
    out_csv = tmp_path / "roles.csv"
    code, out, err = run(capsys, "roles", HEATING, "--json", "--csv", str(out_csv))
    assert code == 0 and "Traceback" not in err
    d = json.loads(out)
    assert len(d["nodes"]) == 12  # outdoor_temp, solar_collector are disturbances
    assert set(d["nodes"].values()) <= {"critical", "intermittent", "redundant"}
    assert len(d["links"]) == 16
    assert all(set(x) == {"source", "target", "role"} for x in d["links"])
    assert {x["role"] for x in d["links"]} <= {"critical", "ordinary", "redundant"}
    # in-degree-0 states are critical (Jia et al. 2013): the two with no feeder here
    for s in ("fuel_valve", "bypass_valve"):
        assert d["nodes"][s] == "critical"
    rows = list(csv.DictReader(out_csv.read_text().splitlines()))
    assert rows[0].keys() == {"element", "source", "target", "role"}
    assert sum(r["element"] == "state" for r in rows) == 12
    assert sum(r["element"] == "link" for r in rows) == 16


def test_roles_text_mentions_caution(capsys):
    code, out, _ = run(capsys, "roles", HEATING)
    assert code == 0 and "critical states" in out and "Caution" in out


def test_roles_bad_file_exit_2_no_output(capsys, tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("a,b,c,d\n")
    target = tmp_path / "out.csv"
    code, out, err = run(capsys, "roles", str(bad), "--csv", str(target))
    assert code == 2 and "bad.csv:1" in err and "Traceback" not in err
    assert not target.exists()
    code, _, err = run(capsys, "roles", HEATING, "--csv", str(tmp_path / "no" / "x.csv"))
    assert code == 2 and "cannot write" in err


def test_sweep_single_losses_exit_codes(capsys, tmp_path):
    design = heating_design(capsys)
    out_csv = tmp_path / "sweep.csv"
    code, out, err = run(capsys, "sweep", HEATING, "--inputs", design, "--json",
                         "--csv", str(out_csv))
    d = json.loads(out)
    # the dedicated design has no spare: losing supply_header cuts pipe_north off (its
    # only feeder), so some single loss breaks it and the exit status is 1
    assert code == 1
    assert "supply_header" in d["nodes"]["breaking"]
    assert d["links"]["controllable_before"] is True
    rows = list(csv.DictReader(out_csv.read_text().splitlines()))
    assert len(rows) == 16 + 12  # 16 links, 12 states (2 disturbances are not states)
    code, out, _ = run(capsys, "sweep", HEATING)
    assert code == 0 and "single link losses (16)" in out


def test_sweep_sampled_and_attack(capsys, tmp_path):
    design = heating_design(capsys)
    acsv = tmp_path / "attack.csv"
    png = tmp_path / "attack.png"
    code, out, err = run(capsys, "sweep", HEATING, "--inputs", design, "--k", "2",
                         "--samples", "10", "--seed", "3", "--elements", "links",
                         "--attack", "random,degree", "--steps", "4",
                         "--attack-csv", str(acsv), "--plot", str(png), "--json")
    d = json.loads(out)
    assert d["links"]["k"] == 2 and d["links"]["n_samples"] == 10
    assert code in (0, 1) and code == (1 if d["links"]["fraction_breaking"] > 0 else 0)
    assert png.stat().st_size > 0
    lines = acsv.read_text().splitlines()
    assert lines[0].startswith("strategy,elements,n_removed")
    assert len(lines) == 1 + 2 * 5
    code, _, err = run(capsys, "sweep", HEATING, "--attack", "pagerank")
    assert code == 2 and "unknown strategy 'pagerank'" in err
    code, _, err = run(capsys, "sweep", HEATING, "--k", "99", "--elements", "links")
    assert code == 2 and "--k 99 exceeds the number of links (16)" in err


def test_whatif_breaks_and_keeps(capsys, tmp_path):
    design = heating_design(capsys)
    # removing supply_header leaves pipe_north without any feeder (Lin 1974: not
    # accessible) -> exit 1
    code, out, _ = run(capsys, "whatif", HEATING, "--inputs", design, "--remove-nodes",
                       "supply_header")
    assert code == 1 and "BREAKS" in out
    # adding links cannot break structural controllability -> exit 0
    links = tmp_path / "new.csv"
    links.write_text("source,target\nstorage_tank,pipe_north\nboiler_temp,pipe_south\n")
    code, out, _ = run(capsys, "whatif", HEATING, "--inputs", design, "--add-links",
                       str(links), "--json")
    d = json.loads(out)
    assert code == 0 and d["after"]["controllable"] is True
    assert d["change"]["added_links"] == [["storage_tank", "pipe_north"],
                                          ["boiler_temp", "pipe_south"]]


def test_whatif_usage_errors(capsys, tmp_path):
    code, _, err = run(capsys, "whatif", HEATING)
    assert code == 2 and "whatif needs a change" in err
    bad = tmp_path / "links.csv"
    bad.write_text("a,b,c\n")
    code, _, err = run(capsys, "whatif", HEATING, "--remove-links", str(bad))
    assert code == 2 and "links.csv:1: expected 'source,target'" in err
    code, _, err = run(capsys, "whatif", HEATING, "--remove-links", "pump")
    assert code == 2 and "neither a file nor a link 'a->b'" in err
    # without inputs: exit 1 when the minimum number of inputs rises
    code, out, _ = run(capsys, "whatif", HEATING, "--remove-nodes", "supply_header",
                       "--json")
    d = json.loads(out)
    assert code == (1 if d["after"]["n_inputs"] > d["before"]["n_inputs"] else 0)


@pytest.fixture
def two_plants(tmp_path):
    (tmp_path / "plant.csv").write_text("source,target\na,b\nb,c\n")
    (tmp_path / "ctrl.csv").write_text("source,target\np,q\np,r\n")
    ties = tmp_path / "ties.csv"
    ties.write_text("from_system,from_state,to_system,to_state\nplant,c,ctrl,p\n")
    return tmp_path


def test_join_reports_dilation_and_fix(capsys, two_plants):
    t = two_plants
    code, out, err = run(capsys, "join", str(t / "plant.csv"), str(t / "ctrl.csv"),
                         "--ties", str(t / "ties.csv"), "--inputs", "plant.a", "--json")
    d = json.loads(out)
    # ctrl.p feeds ctrl.q and ctrl.r alone: a dilation (Lin 1974) -> exit 1
    assert code == 1 and d["controllable"] is False
    by = {x["name"]: x for x in d["by_subsystem"]}
    assert set(by["ctrl"]["in_dilation"]) >= {"q", "r"}
    assert len(d["composite_report"]["fix"]["states"]) == 1
    code, out, _ = run(capsys, "join", str(t / "plant.csv"), str(t / "ctrl.csv"),
                       "--ties", str(t / "ties.csv"), "--inputs", "plant.a,ctrl.q")
    assert code == 0 and "controllable: yes" in out


def test_join_bad_ties_file(capsys, two_plants):
    t = two_plants
    bad = t / "bad.csv"
    bad.write_text("from_system,from_state,to_system,to_state\nplant,c,ctrl\n")
    code, _, err = run(capsys, "join", str(t / "plant.csv"), str(t / "ctrl.csv"),
                       "--ties", str(bad))
    assert code == 2 and "bad.csv:2: expected 4 comma-separated columns" in err
    bad.write_text("from_system,from_state,to_system,to_state\nplant,zz,ctrl,p\n")
    code, _, err = run(capsys, "join", str(t / "plant.csv"), str(t / "ctrl.csv"),
                       "--ties", str(bad))
    assert code == 2 and "unknown state name 'zz'" in err
    code, _, err = run(capsys, "join", str(t / "plant.csv"), str(t / "plant.csv"),
                       "--ties", str(t / "ties.csv"))
    assert code == 2 and "NAME=PATH" in err


SPEC = """
[couplings]
links = [["a1", "a2"], ["b1", "b2"], ["b1", "b3"]]

[inputs]
ua = ["a1"]
ub = ["b3"]

[outputs]
ya = ["a2"]

[subsystems]
plant = ["a1", "a2"]
ctrl = ["b1", "b2", "b3"]

[[ties]]
from = ["plant", "a2"]
to = ["ctrl", "b1"]
"""


@pytest.mark.parametrize("signal", [False, True], ids=["state-tie", "signal-tie"])
def test_join_toml_system_description_matches_flat_check(capsys, tmp_path, signal):
    # The composite built from the subsystems and ties of a TOML description must get the
    # same verdict as the flat system read from the same file (Lin 1974 on both).
    text = SPEC if not signal else SPEC.replace(
        'from = ["plant", "a2"]\nto = ["ctrl", "b1"]',
        'from = ["plant", "ya"]\nto = ["ctrl", "ub"]\nkind = "signal"')
    spec = tmp_path / "plant.toml"
    spec.write_text(text)
    code, out, err = run(capsys, "join", str(spec), "--json")
    assert "Traceback" not in err
    d = json.loads(out)
    from netctl import controllability
    from netctl.io import read

    flat = controllability(read(spec))
    assert d["controllable"] == flat.controllable
    assert code == (0 if flat.controllable else 1)
    if not signal:
        # b1 feeds b2 and b3, one of which has an input: controllable
        assert d["controllable"] is True
    else:
        # the signal tie consumes ub (it becomes the link a2 -> b3): nothing feeds b1
        assert d["consumed_inputs"] == ["ctrl.ub"]
        assert d["controllable"] is False


BUNDLED = sorted(p for p in (ROOT / "networks").iterdir()
                 if p.suffix in (".csv", ".toml", ".graphml"))


@pytest.mark.parametrize("path", BUNDLED, ids=[p.name for p in BUNDLED])
def test_whatif_on_every_bundled_network(capsys, tmp_path, path):
    # A controllable design (netctl's dedicated minimum, confirmed by scipy/networkx
    # below); then a change that must break it and one that must not (Lin 1974):
    # removing the only other feeder of an undriven state v leaves v a source component
    # that no input reaches; adding links can only add paths and matchings.
    import networkx as nx
    import numpy as np

    from netctl.io import read

    code, out, _ = run(capsys, "drivers", str(path), "--dedicated", "--json")
    drivers = json.loads(out)["drivers"]
    system = read(path)
    names = system.state_names
    A = system.A.toarray() != 0
    n = system.n_states
    idx = [names.index(d) for d in drivers]
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    g.add_edges_from((int(u), int(v)) for v, u in zip(*np.nonzero(A)))
    reach = set(idx).union(*(nx.descendants(g, i) for i in idx))
    assert len(reach) == n
    pick = None
    for v in range(n):
        feeders = set(np.flatnonzero(A[v]).tolist()) - {v}
        if v not in idx and len(feeders) == 1:
            pick = (feeders.pop(), v)
            break
    design = ",".join(drivers)
    if pick is not None:
        change = ["--remove-nodes", names[pick[0]]]
        cut = pick[1]
    else:  # no such state: cut every link into an undriven state instead
        cut = next(v for v in range(n) if v not in idx)
        links = tmp_path / "cut.csv"
        links.write_text("".join(f"{names[u]},{names[cut]}\n"
                                 for u in np.flatnonzero(A[cut]) if u != cut))
        change = ["--remove-links", str(links)]
    code, out, _ = run(capsys, "whatif", str(path), "--inputs", design, *change, "--json")
    d = json.loads(out)
    assert code == 1 and d["after"]["controllable"] is False and d["breaks_design"]
    assert any(names[cut] in r for r in d["after"]["reasons"])
    u, v = next((a, b) for a in range(n) for b in range(n) if a != b and not A[b, a])
    code, out, _ = run(capsys, "whatif", str(path), "--inputs", design, "--add-links",
                       f"{names[u]}->{names[v]}")
    assert code == 0 and "BREAKS" not in out


def test_join_chemical_plant_matches_flat_check(capsys):
    # The composite of the bundled plant's subsystems and ties gets the same verdict as
    # the flat system read from the same description (same states, links and inputs).
    from netctl import controllability
    from netctl.io import read

    path = ROOT / "networks" / "chemical_plant.toml"
    code, out, _ = run(capsys, "join", str(path), "--json")
    d = json.loads(out)
    flat = controllability(read(path))
    assert d["controllable"] == flat.controllable
    assert code == (0 if flat.controllable else 1)
    assert len(d["composite_report"]["fix"]["states"]) == flat.n_missing_inputs


def test_whatif_names_checked_with_file_and_line(capsys, tmp_path):
    links = tmp_path / "rm.csv"
    links.write_text("source,target\nboiler_temp,supply_hdr\n")
    code, out, err = run(capsys, "whatif", HEATING, "--remove-links", str(links))
    assert code == 2 and out == ""
    assert "rm.csv:2: unknown state name 'supply_hdr'" in err
    assert "Did you mean 'supply_header'?" in err
    code, _, err = run(capsys, "whatif", HEATING, "--remove-links",
                       "boiler_tmp->supply_header")
    assert code == 2 and "--remove-links: unknown state name 'boiler_tmp'" in err
    # a new name in --add-links is a new unit, announced with a warning (never silent);
    # nothing feeds it, so it needs its own input: the minimum rises and the exit is 1
    code, out, err = run(capsys, "whatif", HEATING, "--add-links", "boiler_tmp->supply_header")
    assert code == 1 and "new states boiler_tmp" in out
    assert "warning: --add-links: 'boiler_tmp' is not one of the network's 12 states" in err
