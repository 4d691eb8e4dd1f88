"""Null models, the cavity prediction, the executor and ``netctl compare``."""

from __future__ import annotations

import json
import math
import os
import warnings

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching
from scipy.special import lambertw
from scipy.stats import poisson

from netctl import StructuredSystem
from netctl.cli import main
from netctl.ensemble import (
    cavity_driver_fraction,
    compare_to_null,
    configuration_model,
    degree_preserving_swaps,
    degree_sequences,
    n_unmatched,
    run_tasks,
)
from netctl.errors import InvalidSystemError, OptionError

LIU = "Liu, Slotine & Barabasi, Nature 473:167-173 (2011), SI Sec. IV"


def _scipy_unmatched(src, dst, n):
    """Reference: n - |M*| by scipy's Hopcroft-Karp (rows = targets, columns = sources)."""
    A = sp.csr_matrix((np.ones(len(src)), (dst, src)), shape=(n, n))
    A.sum_duplicates()
    match = maximum_bipartite_matching(A, perm_type="column")
    return n - int(np.count_nonzero(match >= 0))


def _er_system(n, mean_degree, seed):
    """Directed Erdos-Renyi by independent uniform link ends (repeats merged)."""
    rng = np.random.default_rng(seed)
    links = rng.poisson(n * mean_degree / 2)
    src, dst = rng.integers(0, n, links), rng.integers(0, n, links)
    keep = src != dst
    key = np.unique(src[keep] * n + dst[keep])
    return StructuredSystem.from_edges(key // n, key % n, n)


# ---------------------------------------------------------------- configuration model
@pytest.mark.parametrize("seed", [0, 1, 2, 3])
def test_configuration_model_preserves_degree_sequences_exactly(seed):
    rng = np.random.default_rng(100 + seed)
    n = 500
    out_d = rng.poisson(3, n)
    in_d = np.bincount(rng.choice(n, out_d.sum(), p=rng.dirichlet(np.ones(n))), minlength=n)
    s, t = configuration_model(out_d, in_d, seed=seed)
    assert s.size == out_d.sum()
    np.testing.assert_array_equal(np.bincount(s, minlength=n), out_d)
    np.testing.assert_array_equal(np.bincount(t, minlength=n), in_d)


def test_configuration_model_is_seeded_and_random():
    d = np.full(200, 3)
    a = configuration_model(d, d, seed=5)
    b = configuration_model(d, d, seed=5)
    c = configuration_model(d, d, seed=6)
    np.testing.assert_array_equal(a[1], b[1])
    assert not np.array_equal(a[1], c[1])


def test_configuration_model_rejects_unequal_sums_with_the_fix():
    with pytest.raises(InvalidSystemError, match=r"add up to 3 links but the in-degrees to 2"):
        configuration_model([1, 2], [1, 1])
    with pytest.raises(InvalidSystemError, match="negative degree -1"):
        configuration_model([-1, 1], [0, 0])


# ---------------------------------------------------------------- edge swaps
@pytest.mark.parametrize("seed", [0, 1, 2])
def test_swaps_keep_degrees_and_simplicity(seed):
    sysm = _er_system(300, 4.0, seed)
    src, dst = sysm.edges()
    s, t, accepted = degree_preserving_swaps(src, dst, 300, seed=seed)
    assert accepted > src.size  # many swaps happened (10 attempts per link)
    np.testing.assert_array_equal(np.bincount(s, minlength=300), np.bincount(src, minlength=300))
    np.testing.assert_array_equal(np.bincount(t, minlength=300), np.bincount(dst, minlength=300))
    assert not np.any(s == t)  # no self-loop created
    assert np.unique(s * 300 + t).size == s.size  # no repeated link created
    assert np.count_nonzero(t != dst) > 0.9 * t.size  # the links really moved


def test_swaps_with_repeated_links_keep_degrees_and_add_no_repeats():
    # a stub-matched multigraph repeats some links: the round-based path runs instead
    rng = np.random.default_rng(3)
    d = rng.poisson(4, 60)
    src, dst = configuration_model(d, rng.permutation(d), seed=3)
    keep = src != dst
    src, dst = src[keep], dst[keep]
    repeats = src.size - np.unique(src * 60 + dst).size
    assert repeats > 0
    s, t, accepted = degree_preserving_swaps(src, dst, 60, seed=1)
    assert accepted > 0
    np.testing.assert_array_equal(np.bincount(t, minlength=60), np.bincount(dst, minlength=60))
    np.testing.assert_array_equal(np.bincount(s, minlength=60), np.bincount(src, minlength=60))
    assert s.size - np.unique(s * 60 + t).size <= repeats
    assert not np.any(s == t)


def test_swaps_are_seeded():
    sysm = _er_system(200, 3.0, 5)
    src, dst = sysm.edges()
    a = degree_preserving_swaps(src, dst, 200, seed=4)
    b = degree_preserving_swaps(src, dst, 200, seed=4)
    np.testing.assert_array_equal(a[1], b[1])
    np.testing.assert_array_equal(dst, sysm.edges()[1])  # the input is not modified


def test_swaps_option_errors():
    with pytest.raises(OptionError, match=r"n_swaps must be a whole number >= 0, found -1"):
        degree_preserving_swaps([0, 1], [1, 0], 2, n_swaps=-1)


# ---------------------------------------------------------------- matching count
def test_n_unmatched_matches_scipy_on_random_multigraphs():
    # reference library: scipy.sparse.csgraph.maximum_bipartite_matching (Hopcroft-Karp)
    rng = np.random.default_rng(7)
    for trial in range(40):
        n = int(rng.integers(1, 60))
        d = rng.poisson(rng.uniform(0.3, 3.0), n)
        s, t = configuration_model(d, rng.permutation(d), seed=trial)
        assert n_unmatched(s, t, n) == _scipy_unmatched(s, t, n)


# ---------------------------------------------------------------- cavity prediction
def _er_fraction_scalar(mean_degree, largest=False):
    """Independent ER closed form (REFERENCES §2): w = exp(-c exp(-c w)), c = <k>/2,
    n_D = w + exp(-c w) - 1 + c w exp(-c w); w by monotone fixed-point iteration from 0
    (smallest root) or 1 (largest root) -- the map is increasing, so it converges there."""
    c = mean_degree / 2
    w = 1.0 if largest else 0.0
    for _ in range(100000):
        w_new = math.exp(-c * math.exp(-c * w))
        if abs(w_new - w) < 1e-15:
            break
        w = w_new
    return w + math.exp(-c * w) - 1 + c * w * math.exp(-c * w)


def _poisson_pmf(mean):
    p = poisson.pmf(np.arange(250), mean)
    return p / p.sum()


def test_cavity_at_mean_degree_two_is_the_omega_constant():
    # <k> = 2: w = Omega (W(1), the omega constant), n_D = Omega^2 + 2 Omega - 1 [LIU; exact]
    omega = float(lambertw(1.0).real)
    pred = cavity_driver_fraction(_poisson_pmf(1.0), distribution=True)
    assert pred.driver_fraction == pytest.approx(omega**2 + 2 * omega - 1, abs=1e-10)
    assert pred.w1 == pytest.approx(omega, abs=1e-10)


@pytest.mark.parametrize("k", [1, 3, 5, 6, 8, 10, 14], ids=lambda k: f"ER-<k>={k}-{LIU}")
def test_cavity_matches_the_erdos_renyi_closed_form(k):
    pred = cavity_driver_fraction(_poisson_pmf(k / 2), distribution=True)
    assert pred.driver_fraction == pytest.approx(_er_fraction_scalar(k), abs=1e-9)
    largest = cavity_driver_fraction(_poisson_pmf(k / 2), distribution=True, root="largest")
    assert largest.driver_fraction == pytest.approx(_er_fraction_scalar(k, largest=True),
                                                    abs=1e-9)
    # smallest and largest roots give the same fraction (REFERENCES §2 root rule)
    assert largest.driver_fraction == pytest.approx(pred.driver_fraction, abs=1e-9)
    assert pred.n_roots == (1 if k / 2 <= math.e else 3)  # unique root iff c <= e


def test_cavity_large_degree_asymptote():
    # n_D -> exp(-<k>/2) for large <k> [LIU, main text; from memory]
    pred = cavity_driver_fraction(_poisson_pmf(12.0), distribution=True)
    assert pred.driver_fraction == pytest.approx(math.exp(-12.0), rel=0.02)


def test_cavity_asymmetric_degrees_agree_with_simulation():
    # Poisson out-degrees, heavy-tailed in-degrees: the cavity fraction against stub-matched
    # samples whose matchings come from scipy (reference library). Swapping G and its
    # in-degree twin in the formula gives 0.13 here instead of 0.31, so this test tells
    # the two apart. Tolerance: 4 standard errors of the sample mean plus 10/N for the
    # finite size (the prediction is the N -> infinity limit).
    rng = np.random.default_rng(1)
    n = 20000
    out_d = rng.poisson(3, n)
    w = rng.pareto(2.5, n) + 0.05
    in_d = rng.multinomial(out_d.sum(), w / w.sum())
    pred = cavity_driver_fraction(out_d, in_d).driver_fraction
    fr = [_scipy_unmatched(*configuration_model(out_d, in_d, seed=s), n) / n for s in range(6)]
    tol = 4 * np.std(fr, ddof=1) / math.sqrt(len(fr)) + 10 / n
    assert abs(np.mean(fr) - pred) < tol
    # and it is invariant under exchanging in and out (|M*(A)| = |M*(A^T)|)
    assert cavity_driver_fraction(in_d, out_d).driver_fraction == pytest.approx(pred, abs=1e-12)


def test_cavity_rejects_networks_without_links():
    with pytest.raises(InvalidSystemError, match="mean degree is 0"):
        cavity_driver_fraction([0, 0, 0])
    with pytest.raises(OptionError, match="root must be 'smallest' or 'largest', found 'mid'"):
        cavity_driver_fraction([1, 1], root="mid")


# ---------------------------------------------------------------- null ensemble vs cavity
@pytest.mark.parametrize("mean_degree", [2.0, 6.0], ids=lambda k: f"ER-<k>={k}-{LIU}")
def test_null_mean_for_erdos_renyi_agrees_with_cavity(mean_degree):
    # The configuration-model ensemble of a directed Erdos-Renyi network is the ensemble
    # the cavity method describes [LIU]. Tolerance from the ensemble's own spread: 4
    # standard errors of the mean (sigma / sqrt(K)), plus 5/N for finite size (the
    # prediction is the N -> infinity limit; at N = 2e4 the published-style simulations in
    # REFERENCES §2 sit within 1e-3 of it).
    n = 20000
    system = _er_system(n, mean_degree, seed=11)
    r = compare_to_null(system, null="degree", samples=24, seed=3, executor="serial")
    se = r.std / math.sqrt(r.n_samples) / n
    assert r.std > 0
    tol = 4 * se + 5 / n
    assert abs(r.mean / n - r.prediction.driver_fraction) < tol
    # the prediction from the observed degrees is close to the ideal Poisson closed form
    assert r.prediction.driver_fraction == pytest.approx(
        _er_fraction_scalar(system.n_links / n * 2), abs=0.01)


def test_swap_null_keeps_the_driver_level_of_an_erdos_renyi_network():
    # For ER input both null models sample (nearly) the same ensemble: the swap mean
    # agrees with the configuration-model mean within 4 combined standard errors + 5/N.
    n = 5000
    system = _er_system(n, 3.0, seed=4)
    a = compare_to_null(system, null="degree", samples=16, seed=1, executor="serial")
    b = compare_to_null(system, null="swap", samples=8, seed=1, executor="serial")
    se = math.hypot(a.std / math.sqrt(a.n_samples), b.std / math.sqrt(b.n_samples))
    assert abs(a.mean - b.mean) < 4 * se + 5


def test_compare_keeps_self_loops_and_says_so():
    system = StructuredSystem.from_edges([0, 1, 2, 2], [1, 2, 0, 2], 3)
    r = compare_to_null(system, samples=4, seed=0, executor="serial")
    assert r.n_self_loops == 1
    assert any("self-loop" in note for note in r.notes)
    assert r.to_dict()["n_self_loops"] == 1


def test_compare_edge_cases_empty_and_linkless():
    empty = compare_to_null(StructuredSystem.from_edges([], [], 0), samples=2, executor="serial")
    assert empty.observed_n_inputs == 0 and empty.to_dict()["observed_fraction"] is None
    json.dumps(empty.to_dict(), allow_nan=False)  # strict JSON: no NaN
    lonely = compare_to_null(StructuredSystem.from_edges([], [], 3), samples=2,
                             executor="serial")
    assert lonely.observed_n_inputs == 3 and lonely.samples.tolist() == [3, 3]
    assert lonely.prediction is None and "no links" in lonely.notes[0]
    assert lonely.z_score is None


def test_compare_option_errors():
    system = StructuredSystem.from_edges([0], [1], 2)
    with pytest.raises(OptionError, match=r"unknown null model 'rewire'; choose one of degree"):
        compare_to_null(system, null="rewire")
    with pytest.raises(OptionError, match=r"samples must be a whole number >= 1, found 0"):
        compare_to_null(system, samples=0)


# ---------------------------------------------------------------- executor
def _task_draws(item, seed, shared):
    rng = np.random.default_rng(seed)
    return (item, shared, rng.integers(0, 2**62, 3).tolist())


def test_executor_same_results_serial_and_two_processes():
    items = list(range(13))
    serial = run_tasks(_task_draws, items, seed=42, shared="s", executor="serial")
    local = run_tasks(_task_draws, items, seed=42, shared="s", executor="local", workers=2)
    assert serial == local
    assert [r[0] for r in serial] == items  # order kept
    assert len({tuple(r[2]) for r in serial}) == len(items)  # independent streams
    other = run_tasks(_task_draws, items, seed=43, shared="s", executor="serial")
    assert other != serial


def test_executor_forkserver_path_gives_the_same_results(monkeypatch):
    # the start method used on Python >= 3.12 or when the caller runs threads
    import multiprocessing as mp

    if "forkserver" not in mp.get_all_start_methods():
        pytest.skip("no forkserver start method on this platform")
    monkeypatch.setattr("netctl.ensemble.executor._context",
                        lambda: mp.get_context("forkserver"))
    items = list(range(7))
    serial = run_tasks(_task_draws, items, seed=1, shared=None, executor="serial")
    assert run_tasks(_task_draws, items, seed=1, shared=None, workers=2) == serial


def test_compare_same_samples_on_every_local_executor():
    system = _er_system(2000, 3.0, seed=2)
    a = compare_to_null(system, samples=6, seed=9, executor="serial")
    b = compare_to_null(system, samples=6, seed=9, executor="local", workers=2)
    np.testing.assert_array_equal(a.samples, b.samples)
    assert a.std > 0


def test_executor_option_errors():
    with pytest.raises(OptionError, match=r"unknown executor 'ray'; choose one of local, "
                                          r"serial, dask"):
        run_tasks(_task_draws, [1], executor="ray")
    with pytest.raises(OptionError, match=r"needs executor 'dask', found 'local'"):
        run_tasks(_task_draws, [1], scheduler="tcp://127.0.0.1:1")
    with pytest.raises(OptionError, match=r"workers must be a whole number >= 1, found 0"):
        run_tasks(_task_draws, [1], workers=0)


def test_dask_missing_gives_a_clear_error(monkeypatch):
    import builtins

    real_import = builtins.__import__

    def fake_import(name, *args, **kwargs):
        if name == "distributed" or name.startswith("distributed."):
            raise ImportError("no distributed here")
        return real_import(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", fake_import)
    with pytest.raises(OptionError, match=r"pip install 'netctl\[dask\]'"):
        run_tasks(_task_draws, [1], executor="dask")


@pytest.fixture(scope="module")
def dask_cluster():
    distributed = pytest.importorskip(
        "distributed", reason="Dask distributed is not installed (optional extra netctl[dask])")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the cluster's own start-up chatter is not ours
        cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                           dashboard_address=None)
    yield cluster
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cluster.close()


def test_executor_same_results_on_a_dask_local_cluster(dask_cluster):
    # the same null-model samples (same seed) from a Dask LocalCluster of two worker
    # processes as from the serial executor: seeds travel with the tasks, and the shared
    # arrays are scattered once to every worker
    system = _er_system(2000, 3.0, seed=2)
    a = compare_to_null(system, samples=6, seed=9, executor="serial")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ResourceWarning)
        b = compare_to_null(system, samples=6, seed=9, executor="dask",
                            scheduler=dask_cluster.scheduler_address)
    np.testing.assert_array_equal(a.samples, b.samples)
    assert a.std > 0  # the samples differ from each other, so equality is not trivial


# ---------------------------------------------------------------- command line
@pytest.fixture
def ring_file(tmp_path):
    p = tmp_path / "ring.csv"
    rows = ["source,target"] + [f"s{i},s{(i + 1) % 30}" for i in range(30)] + ["s0,s15", "t,s3"]
    p.write_text("\n".join(rows) + "\n")
    return p


def test_cli_compare_text_and_json(ring_file, capsys, tmp_path):
    out = tmp_path / "cmp.json"
    code = main(["compare", str(ring_file), "--samples", "5", "--seed", "4", "--executor",
                 "serial", "--out", str(out)])
    text = capsys.readouterr().out
    assert code == 0
    expected = max(_scipy_unmatched(*_ring_edges(), 31), 1)  # reference: scipy's matching
    assert f"observed minimum inputs: {expected} " in text
    assert "null model 'degree' (5 samples, seed 4)" in text
    assert "cavity prediction" in text
    d = json.loads(out.read_text())
    assert d["observed_n_inputs"] == expected
    assert len(d["samples"]) == 5 and d["seed"] == 4
    for key in ("null_mean", "null_std", "z_score", "predicted_fraction", "observed_fraction"):
        assert key in d


def _ring_edges():
    src = list(range(30)) + [0, 30]
    dst = [(i + 1) % 30 for i in range(30)] + [15, 3]
    return src, dst


def test_cli_compare_bad_input(tmp_path, capsys):
    bad = tmp_path / "bad.csv"
    bad.write_text("a,b\nb,c,d,e\n")
    out = tmp_path / "o.json"
    assert main(["compare", str(bad), "--samples", "3", "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert f"{bad}:2:" in err and "expected 'source target [weight]'" in err
    assert not out.exists()
    good = tmp_path / "g.csv"
    good.write_text("a,b\n")
    assert main(["compare", str(good), "--samples", "0"]) == 2
    assert "--samples must be at least 1, found 0" in capsys.readouterr().err
    assert main(["compare", str(good), "--scheduler", "tcp://127.0.0.1:1"]) == 2
    assert "needs --executor dask" in capsys.readouterr().err


def test_cli_compare_unreachable_scheduler(tmp_path, capsys, monkeypatch):
    pytest.importorskip("distributed", reason="Dask distributed is not installed")
    monkeypatch.setattr("netctl.ensemble.executor._CONNECT_TIMEOUT", "1s")
    good = tmp_path / "g.csv"
    good.write_text("a,b\nb,c\n")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        code = main(["compare", str(good), "--samples", "2", "--executor", "dask",
                     "--scheduler", "tcp://127.0.0.1:9"])
    assert code == 2
    assert "cannot reach the Dask scheduler at 'tcp://127.0.0.1:9'" in capsys.readouterr().err


if os.name != "posix":  # pragma: no cover
    pytestmark = pytest.mark.skip(reason="process-start tests assume POSIX")


# ---------------------------------------------------------------- Erdős–Rényi null
def test_erdos_renyi_null_matches_the_poisson_cavity_value():
    # The Erdős–Rényi null keeps only N and L, so its ensemble mean is the directed ER
    # value: the closed form of Liu, Slotine & Barabasi 2011 (SI Sec. IV) at
    # <k> = 2L/N [LIU]. Tolerance: 4 standard errors of the mean + 5/N (finite size).
    from netctl.generate import scale_free

    n = 20000
    g = scale_free(n, mean_degree=4.0, exponent=2.2, seed=3)
    r = compare_to_null(g, null="erdos-renyi", samples=16, seed=5, executor="serial")
    se = r.std / math.sqrt(r.n_samples) / n
    assert abs(r.mean / n - _er_fraction_scalar(2 * g.n_links / n)) < 4 * se + 5 / n
    assert any("Erdős–Rényi ensemble" in note for note in r.notes)
    # heavy tails make the network much harder to control than its ER null [LIU, Fig. 3]
    assert r.z_score > 10
    assert r.to_dict()["null"] == "erdos-renyi"


def test_random_links_has_no_self_loops_and_uniform_ends():
    from netctl.ensemble import random_links

    s, t = random_links(50, 200_000, seed=1)
    assert (s != t).all()
    # every ordered pair of distinct states equally likely: chi-square on sources and
    # targets (scipy.stats), common practice, no source
    from scipy.stats import chisquare
    assert chisquare(np.bincount(s, minlength=50)).pvalue > 1e-4
    assert chisquare(np.bincount(t, minlength=50)).pvalue > 1e-4


# ---------------------------------------------------------------- undirected nulls
@pytest.mark.parametrize("null", ["degree", "swap", "erdos-renyi"])
def test_undirected_network_is_randomized_as_undirected(null):
    # Every sample of a network whose links all go both ways stays symmetric, and the
    # degree nulls keep every undirected degree (networkx as the reference for degrees).
    import networkx as nx

    from netctl.ensemble import undirected_null

    g = nx.gnm_random_graph(300, 700, seed=2)
    a, b = np.array(g.edges()).T
    s, t = undirected_null(null, a, b, 300, seed=4)
    fwd = set(zip(s.tolist(), t.tolist()))
    assert fwd == {(v, u) for u, v in fwd}
    if null != "erdos-renyi":
        deg = np.array([g.degree(v) for v in range(300)])
        loops = np.bincount(s[s == t], minlength=300)
        assert np.array_equal(np.bincount(s, minlength=300) + loops, deg)
    if null == "swap":  # simple: no self-loops, no repeated links
        assert (s != t).all() and len(fwd) == s.size
    assert len(fwd) != 0 and fwd != set(g.to_directed().edges())


def test_compare_detects_undirected_networks_and_matches_the_cavity_value():
    # An undirected random graph with Poisson degrees of mean c: its bipartite double
    # cover is locally the bipartite configuration model with P_in = P_out = Poisson(c),
    # so the undirected configuration-model mean agrees with the cavity value [LIU] (4 SE
    # + 5/N). Randomizing its links as directed (the old behaviour) breaks reciprocity.
    import networkx as nx

    n = 20000
    g = nx.gnm_random_graph(n, 3 * n // 2, seed=5)  # mean degree 3 (each way)
    a, b = np.array(g.edges()).T
    system = StructuredSystem.from_edges(np.concatenate([a, b]), np.concatenate([b, a]), n)
    r = compare_to_null(system, samples=12, seed=1, executor="serial")
    assert r.undirected and r.to_dict()["undirected"] is True
    se = r.std / math.sqrt(r.n_samples) / n
    assert abs(r.mean / n - r.prediction.driver_fraction) < 4 * se + 5 / n
    with pytest.raises(InvalidSystemError, match="needs every link between distinct states"):
        compare_to_null(StructuredSystem.from_edges([0], [1], 2), undirected=True)


def test_compare_summary_labels_spread_and_keeps_small_values(tmp_path, capsys):
    # A dense random network has a tiny driver fraction: it must print with significant
    # digits (not "0.0000"), the spread must say which it is, and no "-0" may appear.
    # (Printing rule: common practice, no source.)
    rng = np.random.default_rng(3)
    n = 2000
    src, dst = rng.integers(0, n, 12 * n), rng.integers(0, n, 12 * n)
    p = tmp_path / "dense.csv"
    p.write_text("".join(f"{a},{b}\n" for a, b in zip(src, dst) if a != b))
    assert main(["compare", str(p), "--samples", "6", "--seed", "1",
                 "--executor", "serial"]) == 0
    out = capsys.readouterr().out
    assert "standard deviation" in out and "standard error of the mean" in out
    assert "+/-" not in out and "-0 " not in out and "-0." not in out.replace("z-score", "")
    assert "0.0000" not in out
    observed = int(out.split("observed minimum inputs: ")[1].split()[0])
    frac = out.split("(fraction ")[1].split(")")[0]
    assert float(frac) == pytest.approx(observed / n, rel=0.01)
    mean_frac = out.split("as fractions of the states: mean ")[1].split(",")[0]
    mean = float(out.split("): mean ")[1].split(",")[0])
    assert float(mean_frac) == pytest.approx(mean / n, rel=0.01)
