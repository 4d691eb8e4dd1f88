"""``energy`` and ``modes`` on small systems take NumPy-only linear algebra
(``netctl.numeric._small_linalg``, issue 15) and must answer as the scipy.linalg path
they replace: the same verdicts, dimensions, driver sets and greedy choices, the same
numbers to rounding.

The scipy path is the reference (scipy.linalg, a general-purpose reference library):
``rank.SMALL_STATES = 0`` sends every size through it, as before this change. Random
systems under every parameterization, and ill-conditioned ones (Jordan blocks and nearly
equal self-loops, where the NumPy checks must refuse and scipy decide), on both paths.
That the 2-line file's ``energy``/``modes`` with weights load no scipy at all, and still
give the known answers, is checked in a fresh interpreter by tests/test_startup.py.
"""

from __future__ import annotations

import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.numeric import rank as R
from netctl.numeric.energy import energy
from netctl.numeric.exact import exact_controllability
from netctl.numeric.modal import modal_controllability
from netctl.numeric.node_metrics import node_controllability
from netctl.numeric.realize import realize
from netctl.numeric.selection import select_actuators
from tests.conftest import from_edges, random_pattern


def _random_system(seed: int, n: int, weights: str, loops: bool) -> StructuredSystem:
    rng = np.random.default_rng(seed)
    e = random_pattern(rng, n, 2.5 / n)
    if weights in ("symmetric", "laplacian", "uniform"):
        e = np.unique(np.vstack([e, e[:, ::-1]]), axis=0) if e.size else e
    k = 1 + seed % 2
    s = from_edges(e, n, inputs=list(range(k)))
    if loops:
        s = s.with_self_loops()
    return realize(s, weights=weights, seed=seed)


def _jordan_system(k: int, value: float, gap: float) -> StructuredSystem:
    """A chain with self-loops ``value, value + gap, ...`` hidden by no permutation:
    a Jordan block of size ``k`` at ``gap = 0``, nearly one for a tiny gap."""
    A = np.diag(value + gap * np.arange(k)) + np.diag(np.ones(k - 1), -1)
    B = np.zeros((k, 1))
    B[0, 0] = 1.0
    return StructuredSystem.from_matrices(A, B)


CASES = [pytest.param(_random_system(1000 * n + 10 * i + loops, n, w, bool(loops)),
                      id=f"{w}-{n}-{'loops' if loops else 'plain'}-{i}")
         for n in (2, 3, 5, 8)
         for w in ("independent", "symmetric", "laplacian", "uniform")
         for loops in (0, 1) for i in range(2)]
HARD = [pytest.param(_jordan_system(k, v, g), id=f"jordan-{k}-{v}-{g}")
        for k, v, g in [(3, -1.0, 0.0), (5, -1.0, 0.0), (5, -0.5, 1e-7), (6, -2.0, 1e-4),
                        (4, 0.0, 0.0)]]


def _both(monkeypatch, fn):
    small = fn()
    with monkeypatch.context() as m:
        m.setattr(R, "SMALL_STATES", 0)  # every size takes scipy.linalg, as before
        ref = fn()
    return small, ref


@pytest.mark.parametrize("s", CASES + HARD)
def test_energy_small_path_answers_as_scipy(s, monkeypatch):
    got, ref = _both(monkeypatch, lambda: energy(s))
    assert got.verdict.key == ref.verdict.key
    assert got.horizon == ref.horizon
    assert got.numeric_dimension == ref.numeric_dimension
    top = max(ref.lambda_max, 1e-300)
    assert got.lambda_max == pytest.approx(ref.lambda_max, rel=1e-9)
    assert abs(got.lambda_min - ref.lambda_min) <= 1e-9 * top
    assert got.trace == pytest.approx(ref.trace, rel=1e-9)
    np.testing.assert_allclose(got.average_controllability, ref.average_controllability,
                               rtol=1e-8, atol=1e-12)
    np.testing.assert_allclose(got.gramian, ref.gramian, rtol=0, atol=1e-9 * top)


@pytest.mark.parametrize("s", CASES + HARD)
def test_modes_small_path_answers_as_scipy(s, monkeypatch):
    got, ref = _both(monkeypatch, lambda: modal_controllability(s))
    assert len(got.unreached) == len(ref.unreached)
    assert sorted((m.multiplicity, m.geometric) for m in got.modes) == \
        sorted((m.multiplicity, m.geometric) for m in ref.modes)
    np.testing.assert_allclose(sorted(m.reach for m in got.modes),
                               sorted(m.reach for m in ref.modes), rtol=1e-7, atol=1e-9)
    gx, rx = _both(monkeypatch, lambda: exact_controllability(s))
    assert (gx.n_inputs, gx.verified, gx.count_certain) == \
        (rx.n_inputs, rx.verified, rx.count_certain)
    assert gx.drivers.tolist() == rx.drivers.tolist()
    gn, rn = _both(monkeypatch, lambda: node_controllability(s))
    np.testing.assert_allclose(gn.average, rn.average, rtol=1e-9)
    np.testing.assert_allclose(gn.modal, rn.modal, rtol=1e-7, atol=1e-12)


@pytest.mark.parametrize("s", CASES[::3])
def test_greedy_choice_small_path_answers_as_scipy(s, monkeypatch):
    got, ref = _both(monkeypatch, lambda: select_actuators(s, budget=2))
    assert got.selected.tolist() == ref.selected.tolist()
    assert got.objective == pytest.approx(ref.objective, rel=1e-8, abs=1e-8)


def test_the_small_path_really_is_used(monkeypatch):
    """The comparisons above compare two paths only if the small one does not reach
    scipy.linalg: make it unusable and run a Hurwitz and a nilpotent case."""
    import scipy.linalg

    def refuse(*a, **k):
        raise AssertionError("scipy.linalg called on the small path")

    for name in ("expm", "schur", "eig", "eigvals", "svd", "qr", "orth", "norm", "eigh",
                 "solve_continuous_lyapunov", "solve_discrete_lyapunov", "svdvals"):
        monkeypatch.setattr(scipy.linalg, name, refuse)
    monkeypatch.setattr(scipy.linalg.lapack, "ztrsyl", refuse)
    for s in (_random_system(5, 3, "independent", True), directed_path_realized()):
        energy(s)
        select_actuators(s, budget=1)
        modal_controllability(s)
        exact_controllability(s)
        node_controllability(s)
    monkeypatch.setattr(R, "SMALL_STATES", 0)
    with pytest.raises(AssertionError, match="small path"):
        energy(_random_system(5, 3, "independent", True))


def directed_path_realized() -> StructuredSystem:
    return realize(from_edges([(0, 1), (1, 2)], 3, inputs=[0]), weights="independent")
