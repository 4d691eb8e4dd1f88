"""The cavity prediction of n_D against the configuration-model ensemble, for in- and
out-degree distributions that differ (where the cavity equations have one or three roots).

Outside reference: configuration-model simulations (random stub matching with the same
degree sequences), maximum matchings by scipy's Hopcroft-Karp (reference library). The
cavity equations are those of Liu, Slotine & Barabasi, Nature 473:167-173 (2011), SI
Sec. IV; the driver fraction is the larger side's unmatched fraction (derivation in
docs/SCALE.md, building on Karp & Sipser 1981). The N = 10^5 check on twelve families is
``benchmarks/bench_cavity.py`` (results in benchmarks/RESULTS.md).

Tolerance (fast version, N = 2*10^4, 8 samples): 4 standard errors of the ensemble mean
(sample standard deviation / sqrt(8)) plus 3/N for finite size (the prediction is the
N -> infinity limit; the light-tailed families used here have O(1/N) corrections). The
families were chosen light-tailed on purpose: heavy tails (in-exponent 2.5) show a
finite-size bias of ~3 standard errors at this N from the merged repeated links of hubs.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching

from netctl.ensemble import cavity_driver_fraction, configuration_model

SIM = "configuration-model simulation, scipy Hopcroft-Karp"
N = 20_000


def _unmatched(src, dst, n):
    a = sp.csr_matrix((np.ones(len(src)), (dst, src)), shape=(n, n))
    a.sum_duplicates()
    return n - int(np.count_nonzero(maximum_bipartite_matching(a, perm_type="column") >= 0))


def _silent(n, links, silent_out, silent_in, seed):
    rng = np.random.default_rng(seed)
    src = rng.choice(np.flatnonzero(rng.random(n) >= silent_out), links)
    dst = rng.choice(np.flatnonzero(rng.random(n) >= silent_in), links)
    return np.bincount(src, minlength=n), np.bincount(dst, minlength=n)


def _regular_poisson(n, k, seed):
    rng = np.random.default_rng(seed)
    in_d = rng.multinomial(n * k, np.full(n, 1.0 / n))  # Poisson(k) given the total
    return np.full(n, k), in_d


def _poisson(n, mean_degree, seed):
    rng = np.random.default_rng(seed)
    links = int(n * mean_degree / 2)
    return (np.bincount(rng.integers(0, n, links), minlength=n),
            np.bincount(rng.integers(0, n, links), minlength=n))


FAMILIES = [
    pytest.param(lambda: _silent(N, 4 * N, 0.3, 0.0, 1), id="30pct-never-send-4-links-each"),
    pytest.param(lambda: _silent(N, 5 * N, 0.1, 0.2, 2), id="10pct-never-send-20pct-never-receive"),
    pytest.param(lambda: _regular_poisson(N, 3, 3), id="out-regular-3-in-poisson-3"),
    pytest.param(lambda: _poisson(N, 8.0, 4), id="erdos-renyi-k8-three-roots"),
]


@pytest.mark.parametrize("make", FAMILIES)
def test_prediction_agrees_with_configuration_model_ensemble(make):
    out_d, in_d = make()
    pred = cavity_driver_fraction(out_d, in_d)
    fr = np.array([_unmatched(*configuration_model(out_d, in_d, seed=s), N) / N
                   for s in range(8)])
    se = fr.std(ddof=1) / math.sqrt(fr.size)
    assert abs(fr.mean() - pred.driver_fraction) < 4 * se + 3 / N, (SIM, fr.mean(), pred)
    assert pred.driver_fraction >= pred.lower_bound


def test_thirty_percent_silent_example_is_not_below_the_trivial_bound():
    # 30% of the states never send a link: each leaves an unmatched out-copy, so
    # n_D >= 0.3 (trivial bound, Liu et al. 2011 main text). The mean of the two sides
    # (the formula as used before) gave ~0.16 here; the ensemble gives 0.306 [SIM].
    out_d, in_d = _silent(N, 4 * N, 0.3, 0.0, 1)
    pred = cavity_driver_fraction(out_d, in_d)
    assert pred.n_roots == 3
    assert pred.lower_bound == pytest.approx(np.mean(out_d == 0))
    assert pred.driver_fraction >= pred.lower_bound
    assert pred.driver_fraction == pytest.approx(max(pred.unmatched_out, pred.unmatched_in))
    assert 0.5 * (pred.unmatched_out + pred.unmatched_in) < 0.2


@pytest.mark.parametrize("seed", range(12))
def test_sides_balance_and_bound_on_random_distributions(seed):
    # Leaf removal matches states in pairs, so the unmatched plus core fractions of the
    # two sides are equal (u_out + c_out = u_in + c_in, derivation in docs/SCALE.md); and
    # n_D is never below max(P_out(0), P_in(0)). Random mixtures of Poisson and
    # geometric laws with unequal in/out shapes (common practice, no source).
    rng = np.random.default_rng(seed)
    k = np.arange(80)
    def law():
        lam = rng.uniform(0.5, 6.0)
        pois = np.exp(k * math.log(lam) - lam - np.array([math.lgamma(x + 1) for x in k]))
        geo = (1 - 1 / (1 + lam)) ** k
        zero = np.zeros_like(pois)
        zero[0] = 1.0
        mix = rng.dirichlet([1, 1, 0.3])
        p = mix[0] * pois / pois.sum() + mix[1] * geo / geo.sum() + mix[2] * zero
        return p / p.sum()
    p_out = law()
    p_in = law()
    # equal means: rescale the in-law by moving mass to/from k = 0 and one degree
    target = float(k @ p_out)
    mean_in = float(k @ p_in)
    if mean_in > target:
        p_in = p_in * (target / mean_in)
        p_in[0] += 1 - p_in.sum()
    else:
        p_out = p_out * (mean_in / target)
        p_out[0] += 1 - p_out.sum()
    pred = cavity_driver_fraction(p_out, p_in, distribution=True)
    assert pred.unmatched_out + pred.core_out == pytest.approx(
        pred.unmatched_in + pred.core_in, abs=1e-9)
    assert min(pred.unmatched_out, pred.unmatched_in) >= 0
    assert pred.unmatched_out >= p_out[0] - 1e-9
    assert pred.unmatched_in >= p_in[0] - 1e-9
    # exchanging in and out exchanges the sides and keeps n_D (|M*(A)| = |M*(A^T)|)
    swapped = cavity_driver_fraction(p_in, p_out, distribution=True)
    assert swapped.driver_fraction == pytest.approx(pred.driver_fraction, abs=1e-9)
    assert swapped.unmatched_out == pytest.approx(pred.unmatched_in, abs=1e-9)
