"""Shared fixtures and small network builders for the tests.

Builders return StructuredSystem objects in the netctl orientation: edge u -> v means
"u influences v" (A[v, u] != 0).
"""

from __future__ import annotations

import os

import matplotlib
import numpy as np
import pytest

matplotlib.use("Agg")
os.environ.setdefault("MPLBACKEND", "Agg")

# Under CI the property tests draw the same examples every run (hypothesis's
# ``derandomize``), so a submission's verdict does not depend on the luck of the draw;
# run without CI=true to explore new examples (a falsifying one is then pinned with
# ``@example`` beside its test).
from hypothesis import settings  # noqa: E402

settings.register_profile("ci", derandomize=True, database=None)
if os.environ.get("CI") == "true":
    settings.load_profile("ci")

from netctl import StructuredSystem  # noqa: E402


def from_edges(edges, n=None, **kw):
    e = np.asarray(edges, dtype=np.int64).reshape(-1, 2)
    return StructuredSystem.from_edges(e[:, 0], e[:, 1], n, **kw)


def directed_path(n):
    return from_edges([(i, i + 1) for i in range(n - 1)], n)


def directed_cycle(n):
    return from_edges([(i, (i + 1) % n) for i in range(n)], n)


def out_star(k):
    return from_edges([(0, i) for i in range(1, k + 1)], k + 1)


def in_star(k):
    return from_edges([(i, 0) for i in range(1, k + 1)], k + 1)


def complete_digraph(n):
    return from_edges([(i, j) for i in range(n) for j in range(n) if i != j], n)


def random_pattern(rng, n, p, loops=False):
    """Directed G(n, p) pattern as an edge array (seeded by the caller's rng)."""
    mask = rng.random((n, n)) < p
    if not loops:
        np.fill_diagonal(mask, False)
    src, dst = np.nonzero(mask)
    return np.stack([src, dst], axis=1) if src.size else np.zeros((0, 2), np.int64)


@pytest.fixture
def rng():
    return np.random.default_rng(20261202)


@pytest.fixture
def full_disk(monkeypatch):
    """Every write through netctl's atomic writer fails with ENOSPC, as on a full disk
    (the files are opened, so the failure comes mid-write, not at open)."""
    import errno

    import netctl.io._common as common

    real = common.os.fdopen

    class Full:
        def __init__(self, fh):
            self.fh = fh

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            self.fh.close()

        def write(self, data):
            raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(common.os, "fdopen", lambda *a, **k: Full(real(*a, **k)))
