"""The core verbs through the entry point: exit codes, JSON keys, messages, no tracebacks."""

from __future__ import annotations

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


def test_drivers_json_keys(capsys):
    code, out, err = run(capsys, "drivers", HEATING, "--json")
    assert code == 0 and "Traceback" not in err
    d = json.loads(out)
    assert d["n_states"] == 12  # outdoor_temp, solar_collector are disturbances
    assert d["n_inputs"] == len(d["wiring"])
    assert set(d["drivers"]) >= set(d["unmatched"])


def test_inspect_json_keys(capsys):
    code, out, _ = run(capsys, "inspect", HEATING, "--json")
    d = json.loads(out)
    assert code == 0
    assert {"n_states", "n_links", "structural_rank", "n_inputs"} <= set(d)
    assert d["n_links"] == 16  # the 4 links out of the disturbances are E, not A


def test_check_exit_codes_and_reasons(capsys, tmp_path):
    code, out, _ = run(capsys, "drivers", HEATING, "--json", "--dedicated")
    drivers = json.loads(out)["drivers"]
    code, out, _ = run(capsys, "check", HEATING, "--inputs", ",".join(drivers))
    assert code == 0 and "structurally controllable: yes" in out
    code, out, _ = run(capsys, "check", HEATING, "--inputs", "fuel_valve")
    assert code == 1
    assert "1 source component no input reaches (bypass_valve)" in out
    assert "4 dilations (structural rank of [A B] 8 < 12;" in out  # every cause in text
    assert "smallest fix: add" in out
    assert "licensed engineers" in out  # the caution is shown
    # --inputs from a file, --json keys
    f = tmp_path / "inputs.txt"
    f.write_text("# our actuators\nfuel_valve\nsubstation_park\n")
    code, out, _ = run(capsys, "check", HEATING, "--inputs", str(f), "--json")
    d = json.loads(out)
    assert code == 1
    assert {"controllable", "controllable_dimension", "inaccessible", "dilation"} <= set(d)
    assert d["controllable"] is False and "bypass_valve" in d["inaccessible"]


def test_sensors_json(capsys):
    code, out, _ = run(capsys, "sensors", HEATING, "--json")
    d = json.loads(out)
    assert code == 0
    assert 1 <= d["n_sensors"] <= len(d["sensors"])  # shared sensors may read several states
    assert d["n_sensors"] == len(d["wiring"])


def test_check_observability(capsys):
    code, out, _ = run(capsys, "sensors", HEATING, "--json", "--dedicated")
    sensors = json.loads(out)["sensors"]
    code, out, _ = run(capsys, "check", HEATING, "--outputs", ",".join(sensors))
    assert code == 0 and "structurally observable: yes" in out
    code, out, _ = run(capsys, "check", HEATING, "--outputs", "boiler_temp")
    assert code == 1


def test_out_writes_json_atomically(capsys, tmp_path):
    target = tmp_path / "result.json"
    code, out, _ = run(capsys, "drivers", HEATING, "--out", str(target))
    assert code == 0 and json.loads(target.read_text())["n_inputs"] >= 1
    assert "minimum inputs" in out


def test_same_input_same_bytes(capsys):
    _, a, _ = run(capsys, "drivers", HEATING, "--json")
    _, b, _ = run(capsys, "drivers", HEATING, "--json")
    assert a == b


BAD = [
    pytest.param("a,b\nc,d,1.0,9\n", "2: expected 'source target [weight]', found 4 columns",
                 id="too-many-columns"),
    pytest.param("a,b,1.0\nc,d,heavy\n", "2: the weight 'heavy' is not a number", id="bad-weight"),
    pytest.param("a,b,1\nc,d\n", "2: this line has 2 columns: 'c,d', but earlier link lines have 3",
                 id="mixed-columns"),
    pytest.param("# only a comment\n\n", "the file holds no links and no states", id="empty"),
    pytest.param(b"a,b\n\xff\xfe,c\n", "2: the name", id="bad-encoding"),
]


@pytest.mark.parametrize("content, message", BAD)
def test_bad_input_names_file_and_line_exit_2(capsys, tmp_path, content, message):
    f = tmp_path / "net.csv"
    if isinstance(content, bytes):
        f.write_bytes(content)
    else:
        f.write_text(content)
    out_file = tmp_path / "out.json"
    code, out, err = run(capsys, "drivers", str(f), "--out", str(out_file))
    assert code == 2
    assert err.startswith("netctl: error: ")
    assert str(f) in err and message in err
    if isinstance(content, bytes):
        assert "is not UTF-8 text" in err
    assert "Traceback" not in err
    assert not out_file.exists()  # no partial output
    assert list(tmp_path.iterdir()) == [f]  # no temporary file left behind either


def test_missing_file(capsys, tmp_path):
    code, _, err = run(capsys, "inspect", str(tmp_path / "nope.csv"))
    assert code == 2 and "nope.csv: no such file" in err


def test_unknown_name_in_inputs(capsys):
    code, _, err = run(capsys, "check", HEATING, "--inputs", "fuel_valv")
    assert code == 2
    assert "--inputs: unknown state name 'fuel_valv'" in err and "Did you mean 'fuel_valve'" in err


def test_check_without_inputs_is_usage_error(capsys):
    code, _, err = run(capsys, "check", HEATING)
    assert code == 2 and "check needs --inputs" in err


def test_bad_option_value_exit_2(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["drivers", HEATING, "--model", "quantum"])
    assert exc.value.code == 2
    assert "invalid choice: 'quantum'" in capsys.readouterr().err


def test_no_command_prints_help_and_exits_2(capsys):
    assert main([]) == 2


def test_model_self_loops_changes_answer(capsys):
    _, out, _ = run(capsys, "drivers", HEATING, "--json", "--model", "self-loops")
    d = json.loads(out)
    assert d["model"] == "self-loops"
    _, out2, _ = run(capsys, "drivers", HEATING, "--json")
    assert json.loads(out2)["model"] == "first-order"
    assert d["n_inputs"] <= json.loads(out2)["n_inputs"]


def test_warnings_are_reported_not_raised(capsys, tmp_path):
    f = tmp_path / "dup.csv"
    f.write_text("a b\na b\nb c\n")
    code, _, err = run(capsys, "drivers", str(f))
    assert code == 0 and "netctl: warning:" in err and "duplicate" in err


def test_console_script_entry_point():
    import subprocess
    import sys
    r = subprocess.run([sys.executable, "-m", "netctl.cli", "drivers", HEATING],
                       capture_output=True, text=True)
    assert r.returncode == 0 and "minimum inputs (shared)" in r.stdout


def test_check_uses_the_design_a_system_file_declares(capsys):
    plant = str(ROOT / "networks" / "chemical_plant.toml")
    code, out, _ = run(capsys, "check", plant, "--json")
    d = json.loads(out)
    # the file declares both inputs and outputs, so both properties are checked
    assert {"controllability", "observability"} <= set(d)
    assert code == (0 if d["controllable"] and d["observable"] else 1)


def test_out_file_gets_ordinary_permissions(capsys, tmp_path):
    import os
    target = tmp_path / "r.json"
    run(capsys, "drivers", HEATING, "--out", str(target))
    umask = os.umask(0)
    os.umask(umask)
    assert (target.stat().st_mode & 0o777) == (0o666 & ~umask)


def test_drivers_prints_the_driver_fraction(tmp_path, capsys):
    # out-star 0 -> 1, 2, 3: N_D = 3 of 4 states (Liu, Slotine & Barabasi 2011, Fig. 1)
    p = tmp_path / "star.csv"
    p.write_text("0,1\n0,2\n0,3\n")
    assert main(["drivers", str(p)]) == 0
    assert "minimum inputs (shared): 3 (fraction of the states 0.75)" in capsys.readouterr().out
