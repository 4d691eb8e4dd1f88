"""``compare`` on a small network takes lighter paths that must give the same bits.

Issue 15 (a verb on a 2-line file in < 0.25 s): the cavity prediction finds its roots
with a Python port of ``scipy.optimize.brentq`` (importing ``scipy.optimize`` cost more
than the rest of the run), the Erdős–Rényi note computes its Poisson probabilities
in Python (Cephes' ``lgam`` as SciPy has it) rather than with ``scipy.stats``, a small ensemble runs in the calling
process rather than on worker processes, and the link swaps of a small network run the
kernels' Python bodies. Each is checked here against the path it replaces: SciPy's own
``brentq`` and ``poisson.pmf`` (reference libraries), the compiled kernels, and worker
processes, on random inputs, for exact (bitwise) equality.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq
from scipy.stats import poisson

from netctl import _jit
from netctl.ensemble import cavity, compare
from netctl.ensemble.cavity import cavity_driver_fraction
from netctl.ensemble.compare import compare_to_null
from netctl.ensemble.null import degree_preserving_swaps
from netctl.system import StructuredSystem

def _recorded(f, calls):
    def g(x):
        calls.append(x)
        return f(x)
    return g


@settings(max_examples=300, deadline=None)
@given(st.floats(-1, 1), st.floats(-4, 4), st.floats(0, 3), st.integers(1, 3),
       st.floats(0.01, 2), st.floats(0.01, 2),
       st.sampled_from([1e-15, 1e-12, 1e-6, 1e-3, 1e-2]))
def test_brent_port_takes_scipys_steps_bit_for_bit(r, s, t, p, left, right, xtol):
    """A root of odd multiplicity at ``r`` with curvature (exp) and a cubic term: every
    point the port evaluates, and the root it returns, equal SciPy's ``brentq`` bit for
    bit (any change in the order of an operation shows up in the steps taken)."""
    def f(x):
        return (x - r) ** (2 * p - 1) * math.exp(s * x) + t * (x - r) ** 3

    a, b = r - left, r + right
    if f(a) * f(b) >= 0:  # rounding at the ends: no bracket
        return
    ref_calls: list[float] = []
    got_calls: list[float] = []
    ref = brentq(_recorded(f, ref_calls), a, b, xtol=xtol, rtol=1e-15, maxiter=200)
    got = cavity._brentq(_recorded(f, got_calls), a, b, xtol, 1e-15, 200)
    assert got == ref and got_calls == ref_calls


def test_brent_port_steps_on_a_fixed_table_of_brackets():
    """The same family, 1500 fixed random cases at five tolerances (loose ones make the
    step-acceptance test decide often; 10^4 runs, about a second)."""
    rng = np.random.default_rng(20260)
    runs = 0
    for _ in range(1500):
        r, s, t = rng.uniform(-1, 1), rng.uniform(-4, 4), rng.uniform(0, 3)
        p = int(rng.integers(1, 4))
        a, b = r - rng.uniform(0.01, 2), r + rng.uniform(0.01, 2)

        def f(x, r=r, s=s, t=t, p=p):
            return (x - r) ** (2 * p - 1) * math.exp(s * x) + t * (x - r) ** 3

        if f(a) * f(b) >= 0:
            continue
        for xtol in (1e-15, 1e-6, 1e-3, 1e-2, 0.1):
            ref_calls: list[float] = []
            got_calls: list[float] = []
            ref = brentq(_recorded(f, ref_calls), a, b, xtol=xtol, rtol=1e-15, maxiter=200)
            got = cavity._brentq(_recorded(f, got_calls), a, b, xtol, 1e-15, 200)
            assert got == ref and got_calls == ref_calls, (r, s, t, p, a, b, xtol)
            runs += 1
    assert runs > 7000


def test_brent_port_rejects_what_scipy_rejects():
    with pytest.raises(ValueError, match="same sign"):
        cavity._brentq(lambda x: x * x + 1.0, -1.0, 1.0, 1e-12, 1e-15, 100)
    def cubic(x):
        return x ** 3 - 0.3

    with pytest.raises(RuntimeError):
        brentq(cubic, 0.0, 1.0, xtol=1e-15, rtol=1e-15, maxiter=3)
    with pytest.raises(RuntimeError, match="did not converge"):
        cavity._brentq(cubic, 0.0, 1.0, 1e-15, 1e-15, 3)
    # endpoints that are roots come back as they are, as SciPy's do
    assert cavity._brentq(lambda x: x, 0.0, 1.0, 1e-12, 1e-15, 100) == 0.0
    assert cavity._brentq(lambda x: x - 1.0, 0.0, 1.0, 1e-12, 1e-15, 100) == 1.0


networks = st.integers(2, 30).flatmap(lambda n: st.lists(
    st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)), min_size=1, max_size=4 * n))


@settings(max_examples=150, deadline=None)
@given(edges=networks)
# found by this test: every link into one state, so no in-excess degree is 0 and w = 1
# solves the out-side equation exactly, but rounding left f(1) at 2e-16 with no sign
# change: no root was found (IndexError) before grid values within rounding of 0 counted
@example(edges=[(0, 0), (0, 0), (0, 0), (1, 0), (16, 0)])
def test_cavity_prediction_same_as_with_scipys_brent(edges, monkeypatch_module):
    """The whole prediction (roots, fractions, core sizes) of a random network's degree
    sequences, with the port and with ``scipy.optimize.brentq`` in its place."""
    src = np.array([e[0] for e in edges])
    dst = np.array([e[1] for e in edges])
    n = int(max(src.max(), dst.max())) + 1
    out_d, in_d = np.bincount(src, minlength=n), np.bincount(dst, minlength=n)
    ours = cavity_driver_fraction(out_d, in_d).to_dict()
    with monkeypatch_module.context() as m:
        m.setattr(cavity, "_brentq", lambda f, a, b, xtol, rtol, maxiter: float(
            brentq(f, a, b, xtol=xtol, rtol=rtol, maxiter=maxiter)))
        ref = cavity_driver_fraction(out_d, in_d).to_dict()
    assert ours == ref


@pytest.fixture(scope="module")
def monkeypatch_module():
    mp = pytest.MonkeyPatch()
    yield mp
    mp.undo()


def test_lgamma_port_equals_scipy_gammaln_at_whole_numbers():
    """Every whole number 1 .. 2*10^5 (all Poisson means up to about 10^5 states per
    link use no more) and 2*10^4 random ones up to 10^10: bit for bit."""
    from scipy.special import gammaln

    from netctl.ensemble._poisson import _lgam

    x = np.concatenate([np.arange(1, 200_001, dtype=np.float64), np.random.default_rng(3)
                        .integers(200_000, 10**10, 20_000).astype(np.float64)])
    got = np.array([_lgam(float(v)) for v in x])
    assert np.array_equal(got.view(np.int64), gammaln(x).view(np.int64))


@settings(max_examples=200, deadline=None)
@given(st.floats(1e-6, 400.0, allow_nan=False))
def test_poisson_probabilities_equal_scipy_stats(mean):
    k = np.arange(int(mean + 12 * np.sqrt(mean) + 30))
    p = poisson.pmf(k, mean)
    ref = np.asarray(p / p.sum(), np.float64)
    got = compare._poisson_pmf(mean)
    assert got.dtype == ref.dtype and np.array_equal(got.view(np.int64), ref.view(np.int64))


simple = st.integers(3, 25).flatmap(lambda n: st.tuples(st.just(n), st.sets(
    st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)).filter(lambda e: e[0] != e[1]),
    min_size=2, max_size=3 * n)))


@settings(max_examples=100, deadline=None)
@given(simple, st.integers(0, 2**32 - 1))
def test_swaps_python_body_equals_compiled(g, start):
    """Maslov-Sneppen swaps (Science 296:910, 2002) on a random simple network: the
    Python bodies (small inputs) and numba's compiled kernels take the same swaps from
    the same random stream, and neither warns (pytest turns warnings into errors)."""
    n, edges = g
    src = np.array(sorted(edges))[:, 0]
    dst = np.array(sorted(edges))[:, 1]
    with _jit.always_python():
        py = degree_preserving_swaps(src, dst, n, seed=start)
    with _jit.always_compiled():
        co = degree_preserving_swaps(src, dst, n, seed=start)
    assert np.array_equal(py[0], co[0]) and np.array_equal(py[1], co[1]) and py[2] == co[2]
    # and the swaps kept every degree (the model's definition)
    assert np.array_equal(np.bincount(py[1], minlength=n), np.bincount(dst, minlength=n))


@pytest.mark.parametrize("null", ["degree", "swap", "erdos-renyi"])
def test_small_ensemble_in_process_equals_worker_processes(null, monkeypatch):
    """A ring with a chord, 12 samples: run in this process (below IN_PROCESS_WORK) and,
    with the limit set to 0, on two worker processes; the samples are the same."""
    ring = StructuredSystem.from_edges([0, 1, 2, 3, 4, 0], [1, 2, 3, 4, 0, 2])
    here = compare_to_null(ring, null=null, samples=12, seed=7, executor="local", workers=2)
    monkeypatch.setattr(compare, "IN_PROCESS_WORK", 0)
    spawned = []
    real = compare.run_tasks

    def spy(*a, **k):
        spawned.append(k["executor"])
        return real(*a, **k)

    monkeypatch.setattr(compare, "run_tasks", spy)
    there = compare_to_null(ring, null=null, samples=12, seed=7, executor="local", workers=2)
    assert spawned == ["local"]
    assert here.to_dict() == there.to_dict()


def test_cavity_prediction_with_every_link_into_one_state_is_exact():
    """Every link into one state: any such network matches one link at most, so the
    driver fraction is exactly (n - 1) / n (Liu, Slotine & Barabasi 2011: N_D =
    n - |M*|). The out-side equation then has its root at w = 1 exactly, where rounding
    used to hide it (no root found before the rounding tolerance)."""
    rng = np.random.default_rng(12)
    for _ in range(40):
        n = int(rng.integers(3, 60))
        k = int(rng.integers(2, 4 * n))
        out_d = np.bincount(rng.integers(0, n, k), minlength=n)
        in_d = np.zeros(n, np.int64)
        in_d[int(rng.integers(0, n))] = k
        got = cavity_driver_fraction(out_d, in_d).driver_fraction
        assert got == pytest.approx((n - 1) / n, rel=1e-12, abs=1e-12)
