"""Driver-node fraction of large directed Erdős–Rényi networks against the cavity method.

Source: Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex networks",
Nature 473:167-173 (2011), Supplementary Information Sec. IV. For Poisson in- and
out-degrees with mean c = <k>/2 the self-consistent equation is w = exp(-c exp(-c w)) and
n_D = w + exp(-c w) - 1 + c w exp(-c w) (equations as restated in REFERENCES.md §2).
The root is unique for c <= e, which covers every <k> used here.

Tolerance: at N = 10^5 the sample-to-sample spread of n_D is about 0.001-0.002
(REFERENCES.md §2 reports +-0.001 at N = 2e4, shrinking like 1/sqrt(N)), and finite-size
corrections are O(1/N); 0.006 is >= 4 standard deviations, tight enough that a wrong
matching (even 1% of states mis-matched) fails.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.optimize import brentq

from netctl import StructuredSystem, minimum_inputs


def cavity_er(mean_degree: float) -> float:
    c = mean_degree / 2.0
    w = brentq(lambda w: w - math.exp(-c * math.exp(-c * w)), 0.0, 1.0)
    return w + math.exp(-c * w) - 1.0 + c * w * math.exp(-c * w)


def test_cavity_formula_reproduces_published_value():
    # <k> = 2: w = Omega (omega constant 0.567143...), n_D = Omega^2 + 2 Omega - 1
    omega = 0.5671432904097838
    assert cavity_er(2.0) == pytest.approx(omega**2 + 2 * omega - 1, abs=1e-12)
    assert cavity_er(2.0) == pytest.approx(0.455938, abs=1e-6)


@pytest.mark.parametrize("mean_degree", [1.0, 2.0, 4.0, 5.0])
def test_driver_fraction_matches_cavity_prediction(mean_degree):
    n = 100_000
    rng = np.random.default_rng(int(mean_degree * 1000))
    n_links = rng.poisson(n * mean_degree / 2)
    # random stub pairing: Poisson in/out degrees; self-loops and multi-links allowed
    src = rng.integers(0, n, n_links)
    dst = rng.integers(0, n, n_links)
    A = sp.csr_array((np.ones(n_links), (dst, src)), shape=(n, n))  # duplicates merged
    s = StructuredSystem.from_matrices(A, weighted=False)
    n_d = (n - minimum_inputs(s).matching_size) / n
    assert n_d == pytest.approx(cavity_er(mean_degree), abs=0.006)
