"""Disturbance decoupling and the transfer-matrix rank against numeric truth.

Sources: Commault, Dion & Perez (1991, IEEE TAC 36(7)) for the graph rules under test;
the references they are checked against are Wonham's geometric test (Wonham 1985, ch. 4:
state feedback iff im E ⊆ V*, measured disturbance iff im E ⊆ V* + im B) and the numeric
rank of C(sI-A)^{-1}B (van der Woude 1991 states the equality), both computed with numpy
in tests/structural/_geometric.py, independently of netctl.
"""

from __future__ import annotations

import numpy as np
import pytest

from netctl.structural.decoupling import decoupling, transfer_rank
from netctl.system import StructuredSystem
from tests.structural import _geometric as geo


def _random_case(rng, n_max=7):
    n = int(rng.integers(1, n_max))
    m, q, r = int(rng.integers(0, 3)), int(rng.integers(1, 3)), int(rng.integers(1, 4))
    p = rng.uniform(0.15, 0.5)
    A, B = rng.random((n, n)) < p, rng.random((n, m)) < p
    E, H = rng.random((n, q)) < p, rng.random((r, n)) < p
    return A, B, E, H


def _weights(rng, M):
    return M * rng.uniform(0.5, 2.0, M.shape) * rng.choice([-1.0, 1.0], M.shape)


def _system(A, B, E, H):
    n = A.shape[0]
    s = StructuredSystem.from_matrices(A.astype(float), B.astype(float).reshape(n, -1),
                                       np.zeros((0, n)), weighted=False)
    return s.with_disturbances(E.astype(float)).with_regulated(H.astype(float))


def _check(seed, count, n_max=7):
    rng = np.random.default_rng(seed)
    seen = {(a, b) for a in (True, False) for b in (True, False)}
    got = set()
    for _ in range(count):
        A, B, E, H = _random_case(rng, n_max)
        rep = decoupling(_system(A, B, E, H), explain=False, fixes=False)
        wA, wB, wE, wH = (_weights(rng, M.astype(float)) for M in (A, B, E, H))
        truth = geo.decouplable(wA, wB, wE, wH)
        assert (rep.state_feedback.solvable, rep.measured.solvable) == truth, (A, B, E, H)
        got.add(truth)
        assert geo.transfer_rank(wA, wB, wH, rng) == rep.input_rank
    assert got >= seen - {(True, False)}  # every possible outcome occurred


@pytest.mark.parametrize("seed", range(3))
def test_decoupling_and_rank_against_wonham_fast(seed):
    _check(seed, 150)


@pytest.mark.slow
def test_decoupling_and_rank_against_wonham_2000():
    _check(1234, 2200, n_max=9)


def test_transfer_rank_against_numeric_measured_outputs():
    rng = np.random.default_rng(11)
    for _ in range(300):
        n = int(rng.integers(1, 8))
        m, p = int(rng.integers(1, 4)), int(rng.integers(1, 4))
        dens = rng.uniform(0.1, 0.5)
        A, B, C = (rng.random(s) < dens for s in ((n, n), (n, m), (p, n)))
        s = StructuredSystem.from_matrices(A.astype(float), B.astype(float), C.astype(float),
                                           weighted=False)
        num = geo.transfer_rank(*(_weights(rng, M.astype(float)) for M in (A, B, C)), rng)
        assert transfer_rank(s).rank == num


# Small cases worked by hand (issue 23, item 2; the rules of Commault, Dion & Perez 1991)
def test_disturbance_arriving_first_cannot_be_cancelled():
    # u -> x0 -> x1 -> z, w -> x1: equal linking sizes, but w arrives one state sooner
    s = StructuredSystem.from_edges([0], [1], n_states=2, inputs=[0])
    s = s.with_disturbances({"w": [1]}).with_regulated({"z": [1]})
    r = decoupling(s)
    assert (r.input_rank, r.combined_rank) == (1, 1)
    assert not r.state_feedback.solvable and not r.measured.solvable
    assert any("sooner" in line for line in r.reasons())
    assert [f.state for f in r.fixes if f.kind == "input"] == [1]  # input on x1
    assert r.bottleneck.tolist() == [1]


def test_same_entry_needs_the_disturbance_measured():
    # u -> x0 <- w, z reads x0: cancel w by feedforward only
    s = StructuredSystem.from_edges([], [], n_states=1, inputs=[0])
    s = s.with_disturbances({"w": [0]}).with_regulated({"z": [0]})
    r = decoupling(s)
    assert not r.state_feedback.solvable and r.measured.solvable
    assert r.fixes[0].kind == "measure"


def test_input_ahead_of_the_disturbance_decouples():
    # w -> x0 -> x1 -> z, u -> x1: the input is one state nearer than w
    s = StructuredSystem.from_edges([0], [1], n_states=2, inputs=[1])
    s = s.with_disturbances({"w": [0]}).with_regulated({"z": [1]})
    r = decoupling(s)
    assert r.state_feedback.solvable and r.measured.solvable and not r.fixes
