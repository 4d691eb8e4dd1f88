"""The bundled examples tell the truth: each of networks/heating_loop.toml and
networks/chemical_plant.toml shows a design that one central controller can steer and
observe, a proposed station arrangement (networks/stations/) with a structurally fixed
mode and the one change `netctl stations` finds for it, and a disturbance that cannot be
decoupled with the sensor or input that fixes it (networks/README.md, README.md).

Every claim netctl makes here is also checked numerically on random weights, independently
of netctl (tests/structural/_geometric.py): fixed modes by the test of Wang & Davison
(1973, IEEE TAC 18(5):473-478), decoupling by Wonham's geometric test (im E in V*, resp.
V* + im B; Linear Multivariable Control, 1985, ch. 4).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import scipy.sparse as sp

from netctl.io import read
from netctl.io.stations import read_stations
from netctl.structural import controllability, observability
from netctl.structural.decoupling import decoupling
from netctl.structural.fixed_modes import _apply, fixed_modes
from tests.structural import _geometric as geo

ROOT = Path(__file__).resolve().parents[1]
NET = ROOT / "networks"

# (system, stations file, the first change netctl proposes, the failing disturbance,
#  the states where one more input decouples it by state feedback (may be empty))
STORIES = {
    "heating": ("heating_loop.toml", "heating_loop_stations.toml",
                "move the sensor park_meter from station houses to station boiler_house",
                "outdoor_temp", ["return_header"]),
    "plant": ("chemical_plant.toml", "chemical_plant_stations.toml",
              "move the sensor product_tank_gauge from station tank_panel to station column",
              "steam_header_pressure", []),
}


def _weighted(system, rng):
    """Dense A, B, C, E, H with independent random weights on the patterns."""
    def w(M):
        M = M.toarray() != 0
        return M * rng.uniform(0.5, 2.0, M.shape) * rng.choice([-1.0, 1.0], M.shape)
    return (w(system.A), w(system.B), w(system.C), w(system.E), w(system.H))


def _blocks(stations):
    return [(list(s.inputs), list(s.outputs)) for s in stations]


@pytest.mark.parametrize("story", sorted(STORIES))
def test_design_is_centrally_controllable_and_observable(story):
    system = read(NET / STORIES[story][0])
    assert controllability(system).controllable and observability(system).controllable
    # numeric: one station holding every input and output has no fixed mode
    # (Wang & Davison 1973: centralized fixed modes = uncontrollable or unobservable modes)
    rng = np.random.default_rng(1)
    A, B, C, _, _ = _weighted(system, rng)
    everything = [(list(range(system.n_inputs)), list(range(system.n_outputs)))]
    assert not geo.has_fixed_mode(A, B, C, everything, rng)


@pytest.mark.parametrize("story", sorted(STORIES))
def test_arrangement_has_a_fixed_mode_and_one_change_removes_it(story):
    file, stations_file, change, _, _ = STORIES[story]
    system = read(NET / file)
    stations = read_stations(NET / "stations" / stations_file, system)
    rep = fixed_modes(system, stations)
    assert rep.has_fixed_modes
    rng = np.random.default_rng(2)
    A, B, C, _, _ = _weighted(system, rng)
    assert geo.has_fixed_mode(A, B, C, _blocks(stations), rng)  # Wang & Davison agree
    assert rep.fixes and rep.describe(rep.fixes[0]) == change
    C2, st2 = _apply(system, tuple(stations), rep.fixes[0])
    assert C2.shape == system.C.shape  # a move: no new sensor
    assert not fixed_modes(system, st2, fixes=False).has_fixed_modes
    assert not geo.has_fixed_mode(A, B, C, _blocks(st2), rng)


@pytest.mark.parametrize("story", sorted(STORIES))
def test_a_disturbance_cannot_be_decoupled_and_the_fix_works(story):
    file, _, _, disturbance, input_fixes = STORIES[story]
    system = read(NET / file)
    rep = decoupling(system)
    rng = np.random.default_rng(3)
    A, B, _, E, H = _weighted(system, rng)
    # netctl and Wonham's test agree: state feedback fails, the measured disturbance works
    assert (rep.state_feedback.solvable, rep.measured.solvable) == (False, True)
    assert geo.decouplable(A, B, E, H) == (False, True)
    assert [system.disturbance_names[int(j)] for j in rep.state_feedback.failing] == \
        [disturbance]
    assert rep.fixes[0].kind == "measure"
    found = [system.state_names[f.state] for f in rep.fixes if f.kind == "input"]
    assert found == input_fixes
    # one more dedicated input on each state in turn: netctl and Wonham agree on which
    # states decouple it, and the fix netctl names is among them
    works = []
    for i, state in enumerate(system.state_names):
        col = np.zeros((system.n_states, 1))
        col[i, 0] = rng.uniform(0.5, 2.0)
        truth = geo.decouplable(A, np.hstack([B, col]), E, H)[0]
        extra = sp.csr_array(([1.0], ([i], [0])), shape=(system.n_states, 1))
        mine = decoupling(system.with_inputs(sp.hstack([system.B, extra], format="csr")),
                          fixes=False)
        assert mine.state_feedback.solvable == truth, state
        if truth:
            works.append(state)
    eligible = system.nodes.get("actuator")
    if eligible is not None:
        works = [s for s in works if eligible[system.state_names.index(s)]]
    assert works == input_fixes

