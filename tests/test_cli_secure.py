"""``netctl secure`` through its entry point: exit codes, messages, JSON.

Expected answers are worked by hand on Lin's conditions (C.-T. Lin, IEEE TAC 19(3),
1974): in ``a <-> b -> c <-> d`` only ``a`` or ``b`` reach the source component
``{a, b}``, so an N-1 secure design needs both.
"""

from __future__ import annotations

import json

import pytest

from netctl.cli import main


@pytest.fixture
def net(tmp_path):
    p = tmp_path / "net.txt"
    p.write_text("a b\nb a\nb c\nc d\nd c\n")
    return str(p)


def test_audit_secure_pair_exit_0_on_elements_but_lines_break(net, capsys):
    assert main(["secure", net, "--inputs", "a,b", "--json"]) == 1  # line b -> c breaks
    d = json.loads(capsys.readouterr().out)
    a = d["audits"][0]
    assert a["elements"]["counts"]["critical"] == 0
    assert a["fewest_failures"]["value"] == 2
    assert [x["line"] for x in a["lines"]["breaking"]] == ["b -> c", "c -- d"]


def test_single_point_of_failure_named_with_reason(net, capsys):
    assert main(["secure", net, "--inputs", "a"]) == 1
    out = capsys.readouterr().out
    assert "single point of failure u:a" in out and "reached by no other actuator" in out


def test_place_exit_0_and_sites(net, capsys):
    assert main(["secure", net, "--place", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["sites"] == ["a", "b"] and d["optimal"] and d["verified"]


def test_place_infeasible_names_the_losses(net, capsys):
    assert main(["secure", net, "--place", "--k", "2"]) == 1
    out = capsys.readouterr().out
    assert "infeasible: these losses cannot be covered: source component {a, b}" in out


@pytest.mark.parametrize("argv, msg", [
    (["--inputs", "a,zz"], "unknown state name 'zz'"),
    (["--inputs", "a", "--k", "2"], "--k 2 is larger than the design"),
    (["--k", "0", "--inputs", "a"], "--k must be an integer >= 1"),
    ([], "secure needs a design"),
    (["--place", "--inputs", "a"], "--place builds a design from scratch"),
])
def test_bad_usage_exit_2(net, capsys, argv, msg):
    assert main(["secure", net, *argv]) == 2
    assert msg in capsys.readouterr().err


def test_disturbance_is_never_a_site(tmp_path, capsys):
    # the bundled heating loop declares outdoor_temp a disturbance (DESIGN.md: a
    # disturbance is never a state, a driver site or a sensor site)
    from pathlib import Path

    net = str(Path(__file__).resolve().parents[1] / "networks" / "heating_loop.csv")
    assert main(["secure", net, "--inputs", "outdoor_temp"]) == 2
    assert "'outdoor_temp' is a disturbance" in capsys.readouterr().err
    sites = tmp_path / "s.csv"
    sites.write_text("state,cost\noutdoor_temp,1\n")
    assert main(["secure", net, "--place", "--sites", str(sites)]) == 2
    assert "'outdoor_temp' is a disturbance" in capsys.readouterr().err


def test_place_keep_adds_to_the_given_design(net, capsys):
    # worked by hand (Lin's conditions): A alone has a perfect matching (a<-b, b<-a,
    # c<-d, d<-c), so only the source component {a, b} matters: with the kept actuator
    # at a, one more site in {a, b} survives any single loss
    assert main(["secure", net, "--place", "--keep", "--inputs", "a", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["kept"] == ["u:a"] and len(d["sites"]) == 1 and d["sites"][0] in ("a", "b")
    assert d["optimal"] and d["verified"]
    assert main(["secure", net, "--place", "--keep", "--inputs", "a,b"]) == 0
    assert "nothing to add: the kept design is already secure" in capsys.readouterr().out


def test_place_two_lines(net, capsys):
    # any two lost lines, worked by hand (Lin's reach condition): losing a -- b and
    # b -> c leaves a and b each a source component of its own, losing c -- d and
    # b -> c does the same to c and d: every state needs an actuator
    assert main(["secure", net, "--place", "--against", "lines", "--k", "2", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["scenarios"] == "all" and d["optimal"] and d["verified"]
    assert d["sites"] == ["a", "b", "c", "d"]


def test_keep_needs_place(net, capsys):
    assert main(["secure", net, "--inputs", "a", "--keep"]) == 2
    assert "--keep go with --place" in capsys.readouterr().err


def test_outputs_option_names_sensors_y(net, capsys):
    # --outputs goes through the name parser (an index array): sensors are y:<state>
    main(["secure", net, "--outputs", "c,a", "--json"])
    d = json.loads(capsys.readouterr().out)
    names = [e["name"] for e in d["audits"][0]["elements"]["elements"]]
    assert names == ["y:c", "y:a"]
