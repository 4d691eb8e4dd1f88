"""``netctl strong``: exit codes, JSON keys and messages, through the entry point."""

from __future__ import annotations

import json
from pathlib import Path

import networkx as nx
import pytest

from netctl.cli import main


def _write(tmp_path: Path, text: str, name: str = "net.txt") -> str:
    p = tmp_path / name
    p.write_text(text)
    return str(p)


@pytest.fixture
def path_file(tmp_path):
    # a -> b -> c -> d, a directed path; an input at its head forces the rest
    return _write(tmp_path, "a b\nb c\nc d\n")


def test_given_design_strongly_controllable_exits_0(path_file, capsys):
    assert main(["strong", path_file, "--inputs", "a", "--diagonal", "free", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["strongly_controllable"] is True
    assert d["unforced"] == []
    assert d["diagonal"] == "free" and d["mode"] == "check"
    assert "licensed engineers" in d["caution"]


def test_given_design_not_strongly_controllable_exits_1_and_names_states(path_file, capsys):
    # an input at the tail d. No self-loops, a_ii = 0: row a of A is zero, so q = e_a is
    # a left eigenvector for 0 with q^T B = 0; nothing else is left (b, c and a force one
    # another for eigenvalue 0, each forces itself for nonzero eigenvalues)
    assert main(["strong", path_file, "--inputs", "d", "--json"]) == 1
    d = json.loads(capsys.readouterr().out)
    assert d["strongly_controllable"] is False
    assert d["unforced"] == ["a"]
    assert d["unforced_by_condition"] == {"eigenvalue 0": ["a"], "nonzero eigenvalues": []}
    # free diagonal: a_ii = lambda makes every column of a state upstream of d vanish
    assert main(["strong", path_file, "--inputs", "d", "--diagonal", "free", "--json"]) == 1
    assert json.loads(capsys.readouterr().out)["unforced"] == ["a", "b", "c"]


def test_text_output_lists_unforced_and_caution(path_file, capsys):
    assert main(["strong", path_file, "--inputs", "b,d", "--diagonal", "zero"]) == 1
    out = capsys.readouterr().out
    assert "strongly structurally controllable: NO" in out
    assert "unforced states: a" in out
    assert "diagonal: zero" in out and "Caution" in out


def test_search_without_inputs_reports_method_bound_and_gap(tmp_path, capsys):
    G = nx.petersen_graph()
    lines = [f"v{u} v{v}\nv{v} v{u}" for u, v in G.edges()]
    f = _write(tmp_path, "\n".join(lines) + "\n")
    # Z(Petersen) = 5 (AIM Minimum Rank - Special Graphs Work Group, LAA 428, 2008)
    assert main(["strong", f, "--diagonal", "free", "--method", "exact", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["n_inputs"] == 5 and len(d["drivers"]) == 5
    assert d["method"] == "exact" and d["optimal"] is True and d["gap"] == 0
    assert d["strongly_controllable"] is True and d["unforced"] == []
    assert main(["strong", f, "--diagonal", "free", "--method", "greedy", "--json"]) == 0
    g = json.loads(capsys.readouterr().out)
    assert g["method"] == "greedy" and g["gap"] == g["n_inputs"] - g["lower_bound"]
    assert g["n_inputs"] >= 5 and g["lower_bound"] <= 5


def test_out_file_written(path_file, tmp_path, capsys):
    out = tmp_path / "r.json"
    assert main(["strong", path_file, "--inputs", "a", "--out", str(out)]) == 0
    assert json.loads(out.read_text())["strongly_controllable"] is True
    assert "strongly structurally controllable: yes" in capsys.readouterr().out


def test_zero_diagonal_warning_printed_once(tmp_path, capsys):
    f = _write(tmp_path, "a b\nb b\n")
    assert main(["strong", f, "--diagonal", "zero"]) == 0
    err = capsys.readouterr().err
    assert err.count("self-loop(s) in the pattern (b)") == 1


def test_bad_inputs_and_options_exit_2(path_file, tmp_path, capsys):
    assert main(["strong", path_file, "--inputs", "zz"]) == 2
    assert "unknown state name 'zz'" in capsys.readouterr().err
    with pytest.raises(SystemExit) as exc:
        main(["strong", path_file, "--diagonal", "sometimes"])
    assert exc.value.code == 2
    assert "invalid choice: 'sometimes'" in capsys.readouterr().err
    out = tmp_path / "never.json"
    assert main(["strong", path_file, "--time-limit", "0", "--out", str(out)]) == 2
    assert "time_limit must be a positive number of seconds, found 0.0" in \
        capsys.readouterr().err
    assert not out.exists()


def test_missing_file_exit_2(tmp_path, capsys):
    assert main(["strong", str(tmp_path / "nope.txt")]) == 2
    assert "nope.txt" in capsys.readouterr().err


def test_weighted_file_note(tmp_path, capsys):
    f = _write(tmp_path, "a b 2.5\nb c 1.0\n")
    assert main(["strong", f, "--inputs", "a", "--diagonal", "free", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert any("weights are not used" in x for x in d["notes"])


def test_strong_checks_the_design_a_system_file_declares(capsys):
    # like `check`: a system description's own inputs are checked unless --search is given
    from pathlib import Path

    from netctl.cli import main
    plant = str(Path(__file__).resolve().parents[1] / "networks" / "chemical_plant.toml")
    code = main(["strong", plant, "--json"])
    d = json.loads(capsys.readouterr().out)
    assert d["mode"] == "check" and code == (0 if d["strongly_controllable"] else 1)
    code = main(["strong", plant, "--search", "--method", "greedy", "--json"])
    d = json.loads(capsys.readouterr().out)
    # the search keeps to the plant's actuator sites; exit 1 when no set on them exists
    assert d["mode"] == "minimum" and code == (0 if d["sites"]["feasible"] else 1)
