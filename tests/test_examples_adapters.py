"""The three worked examples (grid actuators, plant stations, water sensors) run, and what
they write agrees with an independent check of the same question."""

from __future__ import annotations

import csv
import subprocess
import sys
from pathlib import Path

import pytest

import netctl
import netctl.io as nio

ROOT = Path(__file__).resolve().parents[1]


def _run(name: str, out: Path) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, str(ROOT / "examples" / name), str(out)],
                          capture_output=True, text=True, cwd=ROOT,
                          env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"})


def _rows(path: Path) -> list[dict[str, str]]:
    with open(path, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def test_grid_actuators(tmp_path):
    r = _run("grid_actuators.py", tmp_path)
    assert r.returncode == 0, r.stderr
    chosen = [row["state"] for row in _rows(tmp_path / "grid_actuators.csv")
              if row["sites"] == "True"]
    grid = nio.read(ROOT / "networks" / "regional_grid.toml")
    idx = grid.index_of(chosen)
    assert grid.nodes["actuator"][idx].all()  # only candidate sites
    assert netctl.controllability(grid.with_inputs(chosen)).controllable


def test_plant_stations(tmp_path):
    r = _run("plant_stations.py", tmp_path)
    assert r.returncode == 0, r.stderr
    plant = nio.read(ROOT / "networks" / "chemical_plant.toml")
    for section in ("feed", "reaction", "separation"):
        rows = _rows(tmp_path / f"station_{section}.csv")
        states = [row["state"] for row in rows]
        assert set(states) == {s for s, g in zip(plant.state_names, plant.nodes["subsystem"])
                               if g == section}
        assert f"{section}:" in r.stdout


def test_water_sensors(tmp_path):
    wntr = pytest.importorskip("wntr")
    from netctl.io.water import from_wntr

    r = _run("water_sensors.py", tmp_path)
    assert r.returncode == 0, r.stderr
    sensors = [row["state"] for row in _rows(tmp_path / "water_sensors.csv")
               if row["sites"] == "True"]
    inp = Path(wntr.__file__).parent / "library" / "networks" / "Net3.inp"
    water = from_wntr(wntr.network.WaterNetworkModel(str(inp)))
    assert sensors and netctl.observability(water.with_outputs(sensors)).controllable
    assert len(sensors) == netctl.minimum_sensors(water, dedicated=True).n_inputs
