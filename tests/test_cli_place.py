"""``netctl place`` through the entry point: exit codes, JSON keys, message text.

The expected designs are small cases checked by hand and by brute force in
tests/structural/test_placement.py (dedicated minimum cost: Pequito, Kar & Aguiar,
Automatica 68:384-391, 2016; target control: Gao et al., Nat. Commun. 5:5415, 2014).
"""

from __future__ import annotations

import json

import pytest

from netctl.cli import main


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def files(tmp_path):
    # a -> b, a -> c, c -> d: a is a source; b and d are leaves fed by different states
    net = tmp_path / "net.csv"
    net.write_text("source,target\na,b\na,c\nc,d\n")
    sites = tmp_path / "sites.csv"
    sites.write_text("state,cost\na,5\nb,2\nc,1\nd,3\n")
    return tmp_path, net, sites


def test_place_optimal_json(capsys, files):
    tmp, net, sites = files
    code, out, err = run(capsys, "place", net, "--sites", sites, "--json")
    assert code == 0 and "Traceback" not in err
    d = json.loads(out)
    # by hand: a is a source (must be driven, 5); maximum matchings a->c, c->d leave b
    # unmatched ({a, b}: 7) and a->b, c->d leave c unmatched ({a, c}: 6), so 6 is minimal
    assert d["sites"] == ["a", "c"] and d["cost"] == 6.0
    assert d["optimal"] is True and d["gap"] == 0.0
    assert d["check"]["passed"] is True and d["method"] == "assignment"
    assert "licensed engineers" in d["caution"]


def test_place_text_and_out_file(capsys, files):
    tmp, net, sites = files
    out_file = tmp / "design.json"
    code, out, _ = run(capsys, "place", net, "--sites", sites, "--out", out_file)
    assert code == 0
    assert "sites (2): a, c" in out and "total cost: 6" in out
    assert "status: optimal (proven); method assignment" in out
    assert "check (structural controllability (Lin)): passed" in out
    assert json.loads(out_file.read_text())["cost"] == 6.0


def test_place_budget_too_small_exits_1_with_best_effort(capsys, files):
    tmp, net, sites = files
    code, out, _ = run(capsys, "place", net, "--sites", sites, "--budget", "3")
    assert code == 1
    assert "the budget 3 is below the cheapest controlling design found (cost 6, proven " \
           "minimal)" in out
    assert "best effort: generic controllable dimension 3 of 4" in out
    assert "stays uncontrollable, reached by no chosen actuator (1): a" in out
    code, out, _ = run(capsys, "place", net, "--sites", sites, "--budget", "3", "--json")
    d = json.loads(out)
    assert d["best_effort"] is True and d["goal_met"] is False and d["cost"] <= 3
    assert d["dimension"] == 3 and d["sites"] == ["b", "c"]


def test_place_budget_enough_exits_0(capsys, files):
    tmp, net, sites = files
    code, out, _ = run(capsys, "place", net, "--sites", sites, "--budget", "6", "--json")
    assert code == 0 and json.loads(out)["cost"] == 6.0


def test_place_infeasible_exits_1_naming_states(capsys, files):
    tmp, net, _ = files
    s2 = tmp / "few.csv"
    s2.write_text("state,cost\nb,1\nd,1\n")
    code, out, err = run(capsys, "place", net, "--sites", s2)
    assert code == 1 and "Traceback" not in err
    # a -> b, a -> c, c -> d: driving b and d reaches only themselves (dimension 2 of 4)
    assert ("status: best effort: 2 site(s) reach a generic controllable dimension of 2 of "
            "4; no design on these sites is controllable because") in out
    assert "no eligible site is in the source component {a}" in out
    assert "optimal" not in out.split("status:")[1].split("\n")[0]
    code, out, _ = run(capsys, "place", net, "--sites", s2, "--json")
    d = json.loads(out)
    assert d["feasible"] is False and d["best_effort"] is True and d["optimal"] is False
    assert d["gap"] is None  # no design meets the goal at any cost
    assert d["sites"] == ["b", "d"] and d["dimension"] == 2


def test_place_bad_sites_file_exit_2_no_output(capsys, files):
    tmp, net, _ = files
    bad = tmp / "bad.csv"
    bad.write_text("state,cost\na,1\nzz,2\n")
    out_file = tmp / "never.json"
    code, out, err = run(capsys, "place", net, "--sites", bad, "--out", out_file)
    assert code == 2 and out == ""
    assert f"{bad}:3:" in err and "unknown state name 'zz'" in err
    assert not out_file.exists()


def test_place_sensors(capsys, files):
    tmp, net, sites = files
    code, out, _ = run(capsys, "place", net, "--sensors", "--json")
    d = json.loads(out)
    # sinks b and d each need a sensor (unit costs)
    assert code == 0 and d["kind"] == "sensors" and d["sites"] == ["b", "d"]
    assert d["cost"] == 2.0 and d["check"]["passed"] is True


def test_place_candidates(capsys, files):
    tmp, net, _ = files
    cands = tmp / "cands.csv"
    cands.write_text("name,cost,states\nhub,4,a\nboth,1,b c\nleaf,1,d\nall,9,a b c d\n")
    code, out, _ = run(capsys, "place", net, "--candidates", cands, "--json")
    d = json.loads(out)
    assert code == 0 and d["method"] == "milp" and d["optimal"] is True
    assert sorted(a["name"] for a in d["actuators"]) == ["both", "hub"] and d["cost"] == 5.0
    code, out, _ = run(capsys, "place", net, "--candidates", cands, "--method", "greedy",
                       "--json")
    d = json.loads(out)
    assert d["method"] == "greedy" and d["lower_bound"] <= 5.0 <= d["cost"]
    assert d["check"]["passed"] is True


def test_place_targets(capsys, files):
    tmp, net, _ = files
    # targets b and d: path lengths 1 and 2 from a -> one driver at a (k-walk, Gao 2014)
    code, out, _ = run(capsys, "place", net, "--targets", "b,d", "--json")
    d = json.loads(out)
    assert code == 0 and d["sites"] == ["a"] and d["optimal"] is True
    assert d["targets"] == ["b", "d"] and d["problem"] == "target"


@pytest.mark.parametrize("extra, words", [
    (["--targets", "b", "--sensors"], "--targets works with actuators only"),
    (["--targets", "b", "--budget", "2"], "it does not take --candidates or --budget"),
    (["--budget", "-1"], "--budget must be a finite number >= 0"),
    (["--targets", "zz"], "--targets: unknown state name 'zz'"),
])
def test_place_usage_errors(capsys, files, extra, words):
    tmp, net, sites = files
    code, out, err = run(capsys, "place", net, *extra)
    assert code == 2 and words in err and out == ""
