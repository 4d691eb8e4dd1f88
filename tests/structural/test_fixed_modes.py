"""Structurally fixed modes of station arrangements against numeric truth.

Rules under test: Sezer & Šiljak (1981, Systems & Control Letters 1(1)) and Pichai, Sezer &
Šiljak (1984, Automatica 20(2)). Reference: the numeric test of Wang & Davison (1973, IEEE
TAC 18(5)) — eigenvalues of A that stay eigenvalues of A + B K C for several random
block-diagonal K, zero tested by rank — in tests/structural/_geometric.py (numpy only).
"""

from __future__ import annotations

import numpy as np
import pytest

from netctl.structural.controllability import (
    is_structurally_controllable,
    is_structurally_observable,
)
from netctl.structural.fixed_modes import fixed_modes
from netctl.stations import Station
from netctl.system import StructuredSystem
from tests.structural import _geometric as geo


def _weights(rng, M):
    return M * rng.uniform(0.5, 2.0, M.shape) * rng.choice([-1.0, 1.0], M.shape)


def _random(rng, n_max=7, max_stations=3):
    n = int(rng.integers(1, n_max))
    m, p = int(rng.integers(1, 4)), int(rng.integers(1, 4))
    dens = rng.uniform(0.15, 0.5)
    A = rng.random((n, n)) < dens
    if rng.random() < 0.5:
        A[np.diag_indices(n)] = rng.random(n) < 0.5  # self-loops on some states
    B, C = rng.random((n, m)) < dens, rng.random((p, n)) < dens
    N = int(rng.integers(1, max_stations + 1))
    su, sy = rng.integers(0, N + 1, m), rng.integers(0, N + 1, p)  # N = in no station
    stations = [Station(f"s{k}", tuple(np.flatnonzero(su == k)), tuple(np.flatnonzero(sy == k)))
                for k in range(N)]
    return A, B, C, stations


def _system(A, B, C):
    return StructuredSystem.from_matrices(A.astype(float), B.astype(float), C.astype(float),
                                          weighted=False)


def _check(seed, count, n_max=7):
    rng = np.random.default_rng(seed)
    outcomes = set()
    for _ in range(count):
        A, B, C, stations = _random(rng, n_max)
        rep = fixed_modes(_system(A, B, C), stations, fixes=False)
        wA, wB, wC = (_weights(rng, M.astype(float)) for M in (A, B, C))
        truth = geo.has_fixed_mode(wA, wB, wC, [(list(s.inputs), list(s.outputs))
                                                for s in stations], rng)
        assert rep.has_fixed_modes == truth, (A.astype(int), B.astype(int), C.astype(int),
                                              stations, rep.reasons())
        outcomes.add((bool(rep.unclosed), rep.rank_ok))
    # the test saw arrangements without fixed modes and failures of each condition
    assert (False, True) in outcomes
    assert any(o[0] for o in outcomes) and any(not o[1] for o in outcomes)


@pytest.mark.parametrize("seed", range(3))
def test_fixed_modes_against_wang_davison_fast(seed):
    _check(seed, 150)


@pytest.mark.slow
def test_fixed_modes_against_wang_davison_2000():
    _check(4321, 2000, n_max=8)


def test_one_station_is_controllability_and_observability():
    """Centralized control: no fixed modes iff structurally controllable and observable
    (Lin 1974 and its dual, via netctl's own test) — and the numeric test agrees."""
    rng = np.random.default_rng(5)
    for _ in range(300):
        A, B, C, _ = _random(rng)
        s = _system(A, B, C)
        one = [Station("all", tuple(range(B.shape[1])), tuple(range(C.shape[0])))]
        rep = fixed_modes(s, one, fixes=False)
        expect = is_structurally_controllable(s) and is_structurally_observable(s)
        assert (not rep.has_fixed_modes) == expect
        wA, wB, wC = (_weights(rng, M.astype(float)) for M in (A, B, C))
        assert geo.has_fixed_mode(wA, wB, wC, [(list(range(B.shape[1])),
                                                list(range(C.shape[0])))], rng) == \
            rep.has_fixed_modes


def test_input_and_output_at_different_stations_close_no_loop():
    # u -> x0 -> y: reached and seen, but station a only drives, station b only reads
    s = StructuredSystem.from_edges([], [], n_states=1, inputs=[0], outputs=[0])
    rep = fixed_modes(s, [Station("a", (0,), ()), Station("b", (), (0,))])
    assert [g.tolist() for g in rep.unclosed] == [[0]]
    assert rep.fixes and rep.fixes[0].kind == "move-output"
    assert not fixed_modes(s, [Station("a", (0,), (0,))]).has_fixed_modes


def test_rank_condition_on_a_cross_coupled_pair():
    # x0 -> x1 only; u0 -> x0, y0 reads x1 at station 1; u1 -> x1, y1 reads x0 at station 2
    # (no self-loops). Every state lies on a station loop through the other station's
    # states? Condition (i) and (ii) are computed; the numeric test decides.
    rng = np.random.default_rng(0)
    A = np.array([[0, 0], [1, 0]], bool)
    B = np.eye(2, dtype=bool)
    C = np.array([[0, 1], [1, 0]], bool)
    st = [Station("one", (0,), (0,)), Station("two", (1,), (1,))]
    rep = fixed_modes(_system(A, B, C), st)
    truth = geo.has_fixed_mode(_weights(rng, A * 1.0), B * 1.0, C * 1.0,
                               [([0], [0]), ([1], [1])], rng)
    assert rep.has_fixed_modes == truth


def test_too_many_loop_stations_is_refused():
    n = 3
    s = StructuredSystem.from_edges([0, 1], [1, 2], n_states=n, inputs=[0, 1, 2],
                                    outputs=[0, 1, 2])
    st = [Station(f"s{k}", (k,), (k,)) for k in range(3)]
    with pytest.raises(ValueError, match="2\\*\\*3 subsets"):
        fixed_modes(s, st, max_loop_stations=2)
