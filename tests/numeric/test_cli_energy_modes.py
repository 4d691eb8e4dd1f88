"""``netctl energy`` and ``netctl modes`` through the entry point: exit codes, JSON, messages.

Values: A = diag(-1, -2) written as a weighted edge list (self-loops), b on both states;
infinite-horizon Gramian W_ij = 1 / (-l_i - l_j) (closed form, Kailath 1980); the uniform
star of Rahmani et al. (SIAM J. Control Optim. 48(1):162-186, 2009) for the unreached mode;
Yuan et al. (Nat. Commun. 4:2447, 2013) for the minimum input count of a star (N - 2).
"""

from __future__ import annotations

import json

import pytest

from netctl.cli import main


@pytest.fixture
def diag_file(tmp_path):
    p = tmp_path / "diag.txt"
    p.write_text("# two decaying states, no coupling (weights are self-dynamics)\n"
                 "a a -1\nb b -2\n")
    return p


@pytest.fixture
def star_file(tmp_path):
    p = tmp_path / "star.txt"
    p.write_text("\n".join(f"hub leaf{i}\nleaf{i} hub" for i in range(1, 4)) + "\n")
    return p


def test_energy_given_weights_closed_form(diag_file, capsys):
    assert main(["energy", str(diag_file), "--inputs", "a,b", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["weights"] == "given" and d["horizon"] is None
    assert d["gramian"][0] == pytest.approx([0.5, 0.0])
    assert d["gramian"][1] == pytest.approx([0.0, 0.25])
    assert d["average_controllability"] == pytest.approx({"a": 0.5, "b": 0.25})
    assert d["lambda_min"] == pytest.approx(0.25) and d["trace"] == pytest.approx(0.75)
    assert "licensed engineers" in d["caution"]


def test_energy_structural_verdict_exit_1(diag_file, capsys):
    # b is not reached from a: uncontrollable for every weight (Lin 1974)
    assert main(["energy", str(diag_file), "--inputs", "a", "--select", "0"]) == 1
    out = capsys.readouterr().out
    assert "verdict: uncontrollable for every weight (structural)" in out


def test_energy_selection_against_structural(star_file, capsys):
    assert main(["energy", str(star_file), "--inputs", "hub", "--weights", "laplacian",
                 "--horizon", "2", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    sel = d["selection"]
    assert sel["budget"] == len(sel["structural_minimum_set"]) >= 1
    assert sel["horizon"] == 2.0


def test_energy_needs_weights_or_option(star_file, capsys):
    assert main(["energy", str(star_file), "--inputs", "hub"]) == 2
    err = capsys.readouterr().err
    assert "carries no weights; choose which numbers to use with --weights" in err
    assert main(["energy", str(star_file), "--inputs", "hub", "--weights", "uniform",
                 "--horizon", "-1"]) == 2
    assert "--horizon must be a positive time, found -1.0" in capsys.readouterr().err


def test_modes_uniform_star_unreached_exit_1(star_file, capsys):
    assert main(["modes", str(star_file), "--inputs", "hub", "--weights", "uniform"]) == 1
    out = capsys.readouterr().out
    assert "!! mode -1 (multiplicity 2, 2 eigenvector(s)) is not reached; it lives on " \
           "{leaf1, leaf2, leaf3}" in out
    assert "minimum inputs for these weights: exactly 2" in out     # Yuan et al. 2013: star K_{1,3} needs N - 2


def test_modes_json_and_agreeing_case(star_file, tmp_path, capsys):
    out = tmp_path / "m.json"
    assert main(["modes", str(star_file), "--inputs", "hub", "--weights", "laplacian",
                 "--out", str(out)]) == 0
    d = json.loads(out.read_text())
    assert d["n_unreached"] == 0 and len(d["modes"]) == 4
    reach = [m["reach"] for m in d["modes"]]
    assert reach == sorted(reach)
    assert d["exact_controllability"]["verified"] is True


def test_modes_bad_option(star_file, capsys):
    assert main(["modes", str(star_file), "--weights", "uniform", "--weakest", "-2"]) == 2
    assert "--weakest must be >= 0, found -2" in capsys.readouterr().err


@pytest.mark.parametrize("verb, what", [("energy", "controllability Gramian"),
                                        ("modes", "modal analysis")])
def test_dense_verbs_refuse_large_networks_in_one_actionable_line(verb, what, tmp_path,
                                                                   capsys):
    # a directed ring of 5,001 states: one more than the dense limit (5,000 states); a
    # dense n x n array of doubles is 8 n^2 bytes = 0.2 GB here (arithmetic)
    n = 5001
    p = tmp_path / "ring.txt"
    p.write_text("".join(f"s{i} s{(i + 1) % n}\n" for i in range(n)))
    out = tmp_path / "never.json"
    code = main([verb, str(p), "--inputs", "s0", "--weights", "independent",
                 "--out", str(out)])
    err = capsys.readouterr().err
    assert code == 2 and not out.exists()
    lines = [line for line in err.splitlines() if line.startswith("netctl: error")]
    assert len(lines) == 1 and len(err.strip().splitlines()) == 1
    msg = lines[0]
    assert str(p) in msg and what in msg and "5001 states" in msg
    assert "0.2 GB" in msg and "limit is 5000 states" in msg
    assert "netctl verify" in msg and "at most 5000 states" in msg
