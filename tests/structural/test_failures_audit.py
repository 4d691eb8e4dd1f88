"""Audit of a design's actuators and sensors against brute force over every subset.

Reference definitions: Commault, Dion & Trinh, "Observability preservation under sensor
failure", IEEE TAC 53(6), 2008 (critical / useful / useless sensors; the actuator case by
duality); controllability by Lin's theorem recomputed with networkx in
``_failures_brute``.
"""

from __future__ import annotations

import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.structural.failures import ELEMENT_CLASSES, audit_design
from tests.structural import _failures_brute as brute


def _random_case(rng: np.random.Generator):
    n = int(rng.integers(2, 7))
    edges = brute.random_pattern(rng, n, float(rng.uniform(0.1, 0.45)))
    m = int(rng.integers(1, 5))
    cols = [sorted(set(rng.choice(n, size=int(rng.integers(1, 3)), replace=True).tolist()))
            for _ in range(m)]
    return n, edges, cols


def _system(n, edges, cols):
    s = StructuredSystem.from_edges([u for u, _ in edges], [v for _, v in edges], n)
    return s.with_inputs({f"u{k}": c for k, c in enumerate(cols)})


def _check(seed: int) -> None:
    rng = np.random.default_rng(seed)
    n, edges, cols = _random_case(rng)
    want = brute.classes(n, edges, cols)
    au = audit_design(_system(n, edges, cols), max_trials=10_000)
    got = [ELEMENT_CLASSES[c] for c in au.cls]
    if want is None:
        assert not au.works and set(got) == {"n/a"}, (seed, n, edges, cols)
    else:
        assert au.works and got == want, (seed, n, edges, cols, got, want)


@pytest.mark.parametrize("seed", range(60))
def test_audit_matches_brute_force(seed):
    _check(seed)


@pytest.mark.slow
def test_audit_matches_brute_force_many():
    for seed in range(60, 1100):
        _check(seed)


def test_sensors_are_the_dual():
    # sensors of (A, C) classified as the actuators of (A^T, C^T): brute force on the
    # reversed pattern (observability = controllability of the dual, Kalman duality)
    for seed in range(20):
        rng = np.random.default_rng(10_000 + seed)
        n, edges, cols = _random_case(rng)
        s = StructuredSystem.from_edges([u for u, _ in edges], [v for _, v in edges], n)
        s = s.with_outputs({f"y{k}": c for k, c in enumerate(cols)})
        want = brute.classes(n, [(v, u) for u, v in edges], cols)
        au = audit_design(s, kind="sensors", max_trials=10_000)
        got = [ELEMENT_CLASSES[c] for c in au.cls]
        assert (want is None and not au.works) or got == want, (seed, got, want)
