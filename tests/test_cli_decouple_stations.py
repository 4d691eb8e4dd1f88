"""``netctl decouple`` and ``netctl stations``: exit codes, JSON and messages, through the
entry point (the analyses themselves are checked against numeric truth in
tests/structural/test_decoupling.py and tests/structural/test_fixed_modes.py)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from netctl.cli import main

# u -> x0 -> x1 -> z with w -> x1: the disturbance arrives one state before the input
LATE = """
[states]
x0 = {}
x1 = {}
w = { disturbance = true }
[couplings]
links = [["x0", "x1"], ["w", "x1"]]
[inputs]
valve = ["x0"]
[outputs]
gauge = ["x1"]
[regulated]
quality = ["x1"]
"""


def _write(tmp_path: Path, text: str, name: str) -> str:
    p = tmp_path / name
    p.write_text(text)
    return str(p)


def test_decouple_late_input_exits_1_and_names_the_fix(tmp_path, capsys):
    f = _write(tmp_path, LATE, "late.toml")
    assert main(["decouple", f, "--json"]) == 1
    d = json.loads(capsys.readouterr().out)
    assert d["state_feedback"]["solvable"] is False
    assert d["measured_disturbance"]["solvable"] is False
    assert d["state_feedback"]["failing_disturbances"] == ["w"]
    assert [x["state"] for x in d["fixes"] if x["kind"] == "input"] == ["x1"]
    assert d["bottleneck_states"] == ["x1"]
    assert "licensed engineers" in d["caution"]


def test_decouple_input_ahead_of_the_disturbance_exits_0(tmp_path, capsys):
    # w -> x0 -> x1 -> z and the valve on x1: the input is one state nearer
    text = LATE.replace('["w", "x1"]', '["w", "x0"]').replace('valve = ["x0"]', 'valve = ["x1"]')
    f = _write(tmp_path, text, "ok.toml")
    assert main(["decouple", f]) == 0
    assert "state feedback u = F x (disturbance not measured): yes" in capsys.readouterr().out


def test_decouple_exit_on_measured(tmp_path, capsys):
    # input and disturbance enter the same state: only feedforward cancels it
    text = LATE.replace('valve = ["x0"]', 'valve = ["x1"]')
    f = _write(tmp_path, text, "ff.toml")
    assert main(["decouple", f]) == 1
    assert main(["decouple", f, "--exit-on", "measured"]) == 0
    assert "measure w and feed it forward" in capsys.readouterr().out


def test_decouple_without_disturbances_is_bad_usage(tmp_path, capsys):
    f = _write(tmp_path, "a b\nb c\n", "net.txt")
    assert main(["decouple", f]) == 2
    assert "no disturbances" in capsys.readouterr().err


STATIONS_SYS = """
[states]
x0 = {}
[inputs]
u = ["x0"]
[outputs]
y = ["x0"]
"""


def test_stations_split_loop_exits_1_with_a_move(tmp_path, capsys):
    f = _write(tmp_path, STATIONS_SYS + '[stations]\na = { inputs = ["u"] }\n'
               'b = { outputs = ["y"] }\n', "sys.toml")
    assert main(["stations", f, "--json"]) == 1
    d = json.loads(capsys.readouterr().out)
    assert d["has_fixed_modes"] is True
    assert d["condition_i"]["unclosed_groups"] == [["x0"]]
    assert d["fixes"][0]["kind"] == "move-output"


def test_stations_one_loop_exits_0(tmp_path, capsys):
    f = _write(tmp_path, STATIONS_SYS + '[stations]\na = { inputs = ["u"], outputs = ["y"] }\n',
               "sys.toml")
    assert main(["stations", f]) == 0
    assert "structurally fixed modes: none" in capsys.readouterr().out


@pytest.mark.parametrize("body, needle", [
    ('a = { inputs = ["nope"] }\n', "nope"),
    ('a = { inputs = ["u"] }\nb = { inputs = ["u"], outputs = ["y"] }\n', "overlap"),
])
def test_stations_bad_file_exits_2(tmp_path, capsys, body, needle):
    sys_f = _write(tmp_path, STATIONS_SYS, "sys.toml")
    st = _write(tmp_path, "[stations]\n" + body, "st.toml")
    assert main(["stations", sys_f, "--stations", st]) == 2
    err = capsys.readouterr().err
    assert needle in err and "Traceback" not in err


def test_stations_needs_a_stations_file_for_a_plain_network(tmp_path, capsys):
    f = _write(tmp_path, "a b\n", "net.txt")
    assert main(["stations", f]) == 2
    assert "--stations" in capsys.readouterr().err


@pytest.mark.parametrize("file, against, inputs", [
    ("chemical_plant.toml", "regulated", None),
    ("chemical_plant.toml", "measured", None),
    ("heating_loop.toml", "measured", "fuel_valve,boiler_temp"),  # both through boiler_temp
])
def test_decouple_reports_the_transfer_matrix_rank(capsys, file, against, inputs):
    """The verb's transfer rank is the numeric rank of H (sI - A)^{-1} B (resp. C ...) at a
    random complex s on random weights (van der Woude 1991, Math. Control Signals Systems
    4:33-40: generic rank = maximum linking size), on the invented bundled examples."""
    import numpy as np

    from netctl.io import read
    from tests.structural import _geometric as geo

    path = Path(__file__).resolve().parents[1] / "networks" / file
    extra = ["--inputs", inputs] if inputs else []
    main(["decouple", str(path), "--against", against, "--json", "--no-fix", *extra])
    d = json.loads(capsys.readouterr().out)["transfer_rank"]
    s = read(path)
    if inputs:
        s = s.with_inputs(inputs.split(","))
    rng = np.random.default_rng(5)

    def w(M):
        M = M.toarray() != 0
        return M * rng.uniform(0.5, 2.0, M.shape) * rng.choice([-1.0, 1.0], M.shape)
    Z = s.H if against == "regulated" else s.C
    assert d["rank"] == geo.transfer_rank(w(s.A), w(s.B), w(Z), rng)
    assert d["outputs"] == against and d["at_most"] == min(s.n_inputs, Z.shape[0])
