"""Regression tests for the bugs the command-line fuzzing (test_cli_fuzz.py) and the hand
probes after it found, one a bug; each failed on the code before its fix."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

import netctl.io as nio
from tests.hostile.test_cli_fuzz import run_cli

ROOT = Path(__file__).resolve().parents[2]


def test_byte_order_mark_keeps_the_disturbance_line(tmp_path):
    """A byte-order mark before an edge list's first comment hid its '# disturbances:'
    line: the disturbances were read as states, silently."""
    good = (ROOT / "networks" / "heating_loop.csv").read_bytes()
    p = tmp_path / "loop.csv"
    p.write_bytes(b"\xef\xbb\xbf" + good)
    s = nio.read(p)
    assert s.disturbance_names == ("outdoor_temp", "solar_collector")
    assert s.n_states == 12
    p.write_bytes(b"\xef\xbb\xbf# disturbances: w\nsource,target\nw,a\na,b\n")
    assert nio.read(p).disturbance_names == ("w",)


def test_matrix_market_with_a_byte_order_mark_is_read(tmp_path):
    """A Matrix Market file saved as "UTF-8 with BOM" was refused (its banner not seen)."""
    p = tmp_path / "m.mtx"
    p.write_bytes(b"\xef\xbb\xbf%%MatrixMarket matrix coordinate real general\n"
                  b"3 3 2\n2 1 1.5\n3 2 -2\n")
    s = nio.read(p)
    assert s.n_states == 3 and s.n_links == 2
    assert sorted(s.A.data.tolist()) == [-2.0, 1.5]


def test_repeated_header_row_is_kept_with_a_warning(tmp_path):
    """The header row twice (two files pasted together) was read silently as a link
    between two new states 'source' and 'target'; it is kept (it may be meant) but said,
    with the line."""
    p = tmp_path / "pasted.csv"
    p.write_text("source,target\na,b\nSource,Target\nb,c\n")
    code, out, err = run_cli(["inspect", str(p), "--json"])
    assert code == 0
    assert f"{p}:3: the header row 'Source Target' appears again" in err, err
    p.write_text("source,target\na,b\nsource,x\n")  # a state named 'source' alone: quiet
    code, out, err = run_cli(["inspect", str(p), "--json"])
    assert code == 0 and "warning" not in err, err


def test_ties_file_with_no_tie_is_named(tmp_path):
    """A ties file holding only its header: the message did not name the file."""
    (tmp_path / "plant.csv").write_text("source,target\na,b\n")
    (tmp_path / "ctrl.csv").write_text("source,target\np,q\n")
    ties = tmp_path / "ties.csv"
    ties.write_text("from_system,from_state,to_system,to_state\n# none yet\n")
    code, _, err = run_cli(["join", str(tmp_path / "plant.csv"), str(tmp_path / "ctrl.csv"),
                            "--ties", str(ties)])
    assert code == 2
    assert err == f"netctl: error: {ties}: the file lists no tie; add one tie a line after " \
        "the header, e.g. 'plant,c,ctrl,p' (from_system,from_state,to_system,to_state).\n"


def test_unknown_name_in_a_name_list_file_names_file_and_line(tmp_path):
    """--inputs FILE with a name that is no state: the message named the option only."""
    names = tmp_path / "inputs.txt"
    names.write_text("# drives\nfuel_valve\nbypa, storage_tank\n")
    code, _, err = run_cli(["check", str(ROOT / "networks" / "heating_loop.csv"),
                            "--inputs", str(names)])
    assert code == 2
    assert err.startswith(f"netctl: error: {names}:3: --inputs: unknown state name 'bypa'")
    code, _, err = run_cli(["check", str(ROOT / "networks" / "heating_loop.csv"),
                            "--inputs", "fuel_valve,bypa"])  # typed: no file to name
    assert code == 2 and err.startswith("netctl: error: --inputs: unknown state name 'bypa'")


def test_bad_tie_names_the_ties_file_and_line(tmp_path):
    """A tie naming no subsystem or no state: the message named the tie but not the
    file and line it came from."""
    (tmp_path / "plant.csv").write_text("source,target\na,b\nb,c\n")
    (tmp_path / "ctrl.csv").write_text("source,target\np,q\n")
    ties = tmp_path / "ties.csv"
    for bad, what in [("pl]ant,c,ctrl,p", "no subsystem named 'pl]ant'"),
                      ("plant,zz,ctrl,p", "unknown state name 'zz'")]:
        ties.write_text(f"from_system,from_state,to_system,to_state\nplant,c,ctrl,p\n{bad}\n")
        code, _, err = run_cli(["join", str(tmp_path / "plant.csv"),
                                str(tmp_path / "ctrl.csv"), "--ties", str(ties)])
        assert code == 2 and err.startswith(f"netctl: error: {ties}:3: tie "), err
        assert what in err and err.count("\n") == 1


def test_name_list_file_with_no_name_is_named(tmp_path):
    """--inputs FILE whose lines are all comments: the message did not name the file."""
    names = tmp_path / "inputs.txt"
    names.write_text("# drives, none yet\n\n")
    code, _, err = run_cli(["check", str(ROOT / "networks" / "heating_loop.csv"),
                            "--inputs", str(names)])
    assert code == 2 and err.startswith(f"netctl: error: {names}: --inputs: the file names "
                                        "no state"), err
    (tmp_path / "p.csv").write_text("source,target\na,b\n")
    (tmp_path / "q.csv").write_text("source,target\nc,d\n")
    (tmp_path / "t.csv").write_text("from_system,from_state,to_system,to_state\np,b,q,c\n")
    code, _, err = run_cli(["join", str(tmp_path / "p.csv"), str(tmp_path / "q.csv"),
                            "--ties", str(tmp_path / "t.csv"), "--inputs", str(names)])
    assert code == 2 and err.startswith(f"netctl: error: {names}: --inputs names no state")


def test_state_named_twice_in_a_name_list(tmp_path):
    """The header line twice in an --inputs file: the message spoke of an input
    'u:fuel_valve' used twice, naming neither the file nor the line."""
    names = tmp_path / "inputs.txt"
    names.write_text("fuel_valve\nbypass_valve\nfuel_valve\n")
    net = str(ROOT / "networks" / "heating_loop.csv")
    code, _, err = run_cli(["check", net, "--inputs", str(names)])
    assert code == 2
    assert err == (f"netctl: error: {names}:3: --inputs: the state 'fuel_valve' is named "
                   "twice (first on line 1); name each state once.\n")
    code, _, err = run_cli(["check", net, "--inputs", "fuel_valve,fuel_valve"])
    assert code == 2 and err == ("netctl: error: --inputs: the state 'fuel_valve' is named "
                                 "twice; name each state once.\n")


def _huge_weights(tmp_path):
    """A small weighted chain whose weights reach 1e305 (a damaged binary file gave
    such numbers): finite, read, but beyond squaring."""
    import numpy as np

    A = np.zeros((4, 4))
    A[1, 0], A[2, 1], A[3, 2], A[0, 3] = 1.5, -3e305, 2e-322, 7e200
    A[2, 2] = -1e250
    p = tmp_path / "huge.npy"
    np.save(p, A)
    return p


def test_numeric_verbs_refuse_weights_too_large_to_square(tmp_path):
    """report crashed with a traceback (OverflowError in the modal analysis); modes and
    energy refuse before any work, naming the file."""
    p = _huge_weights(tmp_path)
    for verb in ("modes", "energy"):
        code, _, err = run_cli([verb, str(p), "--json"])
        assert code == 2 and err.startswith(f"netctl: error: {p}: a weight of magnitude "
                                            "3e+305 is beyond"), err
    code, _, err = run_cli(["report", str(p), "--out", str(tmp_path / "r.html")])
    assert "Traceback" not in err and code in (0, 1), err
    assert "a weight of magnitude 3e+305 is beyond" in (tmp_path / "r.html").read_text()


def test_modal_analysis_refuses_huge_weights(tmp_path):
    from netctl.errors import InvalidSystemError
    from netctl.numeric.modal import modal_controllability

    s = nio.read(_huge_weights(tmp_path)).with_inputs([0])
    with pytest.raises(InvalidSystemError, match="magnitude 3e\\+305"):
        modal_controllability(s)


def test_boolean_edge_weight_is_refused(tmp_path):
    """"weight": true in node-link JSON was read as the weight 1.0, silently."""
    p = tmp_path / "b.json"
    p.write_text('{"directed": true, "nodes": [{"id": "a"}, {"id": "b"}], "links": '
                 '[{"source": "a", "target": "b", "weight": true}]}')
    code, _, err = run_cli(["inspect", str(p), "--json"])
    assert code == 2
    assert err == (f"netctl: error: {p}:1: the weight True of the link 'a' -> 'b' is not a "
                   "number; give numeric weights (or none).\n")


def test_toml_input_listing_a_state_twice_is_refused(tmp_path):
    """An input acting on ["a", "a"] was read with the entry B = 2 (the repeat summed),
    silently; the line is named now."""
    p = tmp_path / "s.toml"
    p.write_text('[states]\na = {}\nb = {}\n[couplings]\nlinks = [["a", "b"]]\n'
                 '[inputs]\nu = ["a", "a"]\n')
    code, _, err = run_cli(["inspect", str(p), "--json"])
    assert code == 2
    assert err == (f"netctl: error: {p}:7: input 'u' lists the state 'a' twice; list each "
                   "state once.\n")


def test_matrix_market_entry_given_twice_is_said(tmp_path):
    """An entry line repeated (as the damaged files had it): the values were summed
    silently; edge lists warn about the same merge."""
    p = tmp_path / "d.mtx"
    p.write_text("%%MatrixMarket matrix coordinate real general\n2 2 2\n1 1 1.0\n1 1 2.0\n")
    code, out, err = run_cli(["inspect", str(p), "--json"])
    assert code == 0
    assert f"{p}:4: 1 entry given twice was merged (values summed): the entry (row 1, " \
        "column 1) here repeats the one on line 3. Give each entry once" in err, err
    with pytest.warns(UserWarning, match="given twice"):
        A = nio.read(p).A
    assert A.toarray().tolist() == [[3.0, 0.0], [0.0, 0.0]]  # summed, as scipy reads it


@pytest.mark.parametrize("fmt", ["csr", "coo"])
def test_npz_entry_stored_twice_is_said(tmp_path, fmt):
    """A sparse .npz storing one entry twice: summed silently before."""
    import numpy as np

    p = tmp_path / "d.npz"
    parts = (dict(indices=np.array([1, 1]), indptr=np.array([0, 2, 2])) if fmt == "csr"
             else dict(row=np.array([0, 0]), col=np.array([1, 1])))
    np.savez(p, format=np.array(fmt.encode()), shape=np.array([2, 2]),
             data=np.array([1.0, 2.0]), state_names=np.array(["a", "b"]),
             weighted=np.array(True), **parts)
    code, out, err = run_cli(["inspect", str(p), "--json"])
    assert code == 0 and f"{p}: 1 entry stored twice was merged (values summed)." in err


def test_edge_list_with_every_name_quoted_is_said(tmp_path):
    """A spreadsheet's "quote every field" export: its quoted header row was read as a
    link between two states '"source"' and '"target"', and the states were named '"a"'
    and so on, silently. The header is a header now; the names keep their quotes (an edge
    list's names may hold them), and that is said."""
    p = tmp_path / "q.csv"
    p.write_text('"source","target"\n"a","b"\n"b","c"\n')
    code, out, err = run_cli(["inspect", str(p), "--json"])
    assert code == 0 and f'{p}: every name is wrapped in double quotes (e.g. "a")' in err
    assert json.loads(out)["n_states"] == 3 and json.loads(out)["n_links"] == 2
    p.write_text('source,target\n"quoted",b\n')  # one such name: a name, quiet
    code, out, err = run_cli(["inspect", str(p), "--json"])
    assert code == 0 and "warning" not in err
