"""Synthetic networks: sizes, determinism, and agreement with published results and
reference libraries (networkx)."""

from __future__ import annotations

import math

import networkx as nx
import numpy as np
import pytest
from scipy.optimize import brentq

from netctl import minimum_inputs
from netctl.cli import main
from netctl.errors import OptionError
from netctl.generate import GENERATORS, erdos_renyi, generate, grid, scale_free, small_world
from netctl.io import read


def edge_set(s):
    a, b = s.edges()
    return set(zip(a.tolist(), b.tolist()))


@pytest.mark.parametrize("kind", list(GENERATORS))
def test_deterministic_no_loops_no_duplicates(kind):
    a = generate(kind, 300, mean_degree=5, seed=11)
    b = generate(kind, 300, mean_degree=5, seed=11)
    c = generate(kind, 300, mean_degree=5, seed=12)
    assert a.n_states == 300
    assert edge_set(a) == edge_set(b)
    if kind != "grid":
        assert edge_set(a) != edge_set(c)
    assert a.n_self_loops == 0
    src, dst = a.edges()
    assert len(set(zip(src.tolist(), dst.tolist()))) == src.size


@pytest.mark.parametrize("kind", list(GENERATORS))
def test_ten_nodes(kind):
    g = generate(kind, 10, mean_degree=2, k=2, seed=0)
    assert g.n_states == 10 and g.n_links > 0


def test_erdos_renyi_driver_fraction_matches_cavity_prediction():
    # Liu, Slotine & Barabasi (2011), Nature 473:167, SI: for directed ER with mean total
    # degree <k> (c = <k>/2), n_D = w + exp(-c w) - 1 + c w exp(-c w) with
    # w = exp(-c exp(-c w)). Solved here independently; at <k> = 2, w is the omega constant.
    c = 1.0
    w = brentq(lambda x: x - math.exp(-c * math.exp(-c * x)), 0.0, 1.0)
    n_d = w + math.exp(-c * w) - 1 + c * w * math.exp(-c * w)
    assert abs(w - 0.5671432904) < 1e-9  # omega constant, W(1)
    fractions = [minimum_inputs(erdos_renyi(20000, mean_degree=2, seed=s)).n_inputs / 20000
                 for s in range(3)]
    assert abs(np.mean(fractions) - n_d) < 0.006, (fractions, n_d)


def test_erdos_renyi_link_count_and_uniformity():
    g = erdos_renyi(4000, mean_degree=6, seed=5)
    assert g.n_links == 12000
    indeg = np.diff(g.A.indptr)
    # Poisson in-degrees with mean 3: variance ~ mean (binomial, n large)
    assert abs(indeg.mean() - 3) < 1e-9 and abs(indeg.var() - 3) < 0.3


@pytest.mark.parametrize("gamma", [2.2, 2.5, 3.0])
def test_scale_free_degree_distribution_is_the_static_model(gamma):
    # Static model (Goh, Kahng & Kim 2001, PRL 87:278701; offset of Cho et al. 2009,
    # PRL 103:135702): a node's in-degree is Poisson(m w_i / W) in the limit, so the
    # fraction of nodes with in-degree >= x is mean_i P[Poisson(lambda_i) >= x]
    # (scipy.stats). Empirical tail fractions agree within 5 binomial standard errors.
    # (A plain power-law MLE is biased here: at N = 2e5 the apparent exponent between
    # k = 5 and 50 is gamma + 0.2, the model's own finite-size curvature and cut-off.)
    from scipy.stats import poisson

    from netctl.generate import static_fitness

    n = 200_000
    g = scale_free(n, mean_degree=8, exponent=gamma, seed=2)
    k = np.diff(g.A.indptr)
    w = static_fitness(n, gamma)
    lam = g.n_links * w / w.sum()
    for x in (1, 2, 5, 10, 20, 50, 100):
        expected = float(poisson.sf(x - 1, lam).mean())
        se = math.sqrt(expected * (1 - expected) / n)
        assert abs(np.mean(k >= x) - expected) < 5 * se + 1e-4, (x, np.mean(k >= x), expected)
    # the tail is heavy: the hubs reach far beyond the mean
    assert k.max() > 10 * k.mean()


@pytest.mark.parametrize("rows, cols", [(1, 5), (3, 4), (7, 7)])
def test_grid_matches_networkx(rows, cols):
    g = grid(rows, cols)
    ref = nx.grid_2d_graph(rows, cols)
    want = {(r1 * cols + c1, r2 * cols + c2) for (r1, c1), (r2, c2) in ref.edges()}
    want |= {(b, a) for a, b in want}
    assert edge_set(g) == want
    assert g.nodes["x"][cols - 1] == cols - 1 and g.nodes["y"][-1] == rows - 1


def test_periodic_grid_matches_networkx():
    g = grid(4, 5, periodic=True)
    ref = nx.grid_2d_graph(4, 5, periodic=True)
    assert g.n_links == 2 * ref.number_of_edges()


def test_small_world_without_rewiring_is_the_ring_lattice():
    g = small_world(30, k=4, rewire=0.0)
    ref = nx.watts_strogatz_graph(30, 4, 0.0)
    want = set(ref.edges()) | {(b, a) for a, b in ref.edges()}
    assert edge_set(g) == want


def test_small_world_rewiring_keeps_link_count_and_shortens_paths():
    n, k = 600, 6
    lattice = small_world(n, k=k, rewire=0.0)
    sw = small_world(n, k=k, rewire=0.1, seed=4)
    assert sw.n_links == lattice.n_links == n * k
    # Watts & Strogatz (1998), Fig. 2: at p = 0.1 the path length has dropped far below
    # the lattice's while clustering is still high
    def path_len(s):
        return nx.average_shortest_path_length(nx.Graph(s.to_networkx()))

    def clustering(s):
        return nx.average_clustering(nx.Graph(s.to_networkx()))

    assert path_len(sw) < 0.3 * path_len(lattice)
    assert clustering(sw) > 0.5 * clustering(lattice)


def test_bad_options():
    with pytest.raises(OptionError, match=r"unknown network kind 'random'; choose one of "
                       "erdos-renyi, scale-free, grid, small-world"):
        generate("random", 10)
    with pytest.raises(OptionError, match=r"k must be an even number in \[2, n - 1\], found 3"):
        small_world(10, k=3)
    with pytest.raises(OptionError, match=r"exponent must be >= 2"):
        scale_free(10, exponent=1.5)
    with pytest.raises(OptionError, match=r"rewire must be in \[0\.0, 1\.0\], found 2\.0"):
        small_world(10, rewire=2.0)


def test_cli_generate_is_deterministic(tmp_path, capsys):
    a, b = tmp_path / "a.csv", tmp_path / "b.csv"
    for p in (a, b):
        assert main(["generate", "scale-free", str(p), "--nodes", "500", "--seed", "9"]) == 0
    assert a.read_bytes() == b.read_bytes()
    assert read(a).n_links == 1000
    assert "scale-free network, 500 nodes, 1000 links (seed 9" in capsys.readouterr().out


def test_cli_generate_bad_option_exit_2_no_file(tmp_path, capsys):
    p = tmp_path / "x.csv"
    assert main(["generate", "small-world", str(p), "--nodes", "10", "--neighbours", "3"]) == 2
    assert "k must be an even number" in capsys.readouterr().err
    assert not p.exists()


# ------------------------------------------------ static model with finite-size correction
def test_static_model_hub_degree_matches_its_expected_maximum():
    # Static model (Goh, Kahng & Kim 2001, PRL 87:278701) with the offset of Cho et al.
    # 2009 (PRL 103:135702, exponent 1 - 1/(2 alpha)): each link end picks node i with
    # probability w_i / W, so degree_i ~ Poisson(m w_i / W) (independent in the limit).
    # The observed maximum in-degree must fall between the 0.1% and 99.9% quantiles of
    # the maximum of those independent Poissons (scipy.stats), and below the structural
    # cut-off sqrt(<k> N) (Boguna, Pastor-Satorras & Vespignani 2004, Eur. Phys. J. B
    # 38:205, from memory). Without the correction the hub reaches ~10x the cut-off.
    from scipy.stats import poisson

    from netctl.generate import static_fitness

    n, mean_degree = 100_000, 4.0
    g = scale_free(n, mean_degree=mean_degree, exponent_in=2.2, exponent_out=3.0, seed=1)
    k_in = np.diff(g.A.indptr)
    k_out = np.bincount(g.A.indices, minlength=n)
    for k, gamma in ((k_in, 2.2), (k_out, 3.0)):
        w = static_fitness(n, gamma)
        lam = g.n_links * w / w.sum()
        def quantile(q):  # smallest x with P(max <= x) >= q, by bisection
            a, b = 0, int(lam.max() * 3 + 100)
            while a < b:
                mid = (a + b) // 2
                a, b = (mid + 1, b) if poisson.logcdf(mid, lam).sum() < np.log(q) else (a, mid)
            return a
        lo, hi = quantile(0.001), quantile(0.999)
        assert lo <= k.max() <= hi, (gamma, k.max(), lo, hi)
    assert k_in.max() < np.sqrt(mean_degree * n)


def test_static_model_sits_inside_its_own_degree_preserving_null():
    # A network drawn from the corrected static model is (nearly) uncorrelated, so its
    # N_D lies within 3 null standard deviations of the configuration model of its own
    # degrees (|z| < 3; the ensemble Liu, Slotine & Barabasi 2011 describe). Without the
    # correction z = 4.0 here (hubs force merged repeated links and correlations).
    from netctl.ensemble import compare_to_null

    g = scale_free(20_000, mean_degree=4.0, exponent=2.2, seed=1)
    r = compare_to_null(g, samples=20, seed=2, executor="serial")
    assert abs(r.z_score) < 3


def test_scale_free_separate_exponents():
    # P(k_out) ~ k^-3.5 and P(k_in) ~ k^-2.3 from one network: discrete power-law MLE of
    # Clauset, Shalizi & Newman (2009), SIAM Rev. 51:661, eq. 3.7, above k_min = 10
    g = scale_free(200_000, mean_degree=8, exponent_in=2.3, exponent_out=3.5, seed=4)
    k_in = np.diff(g.A.indptr)
    k_out = np.bincount(g.A.indices, minlength=g.n_states)
    est = []
    for k in (k_in, k_out):
        tail = k[k >= 10]
        est.append(1 + tail.size / np.sum(np.log(tail / 9.5)))
    assert est[0] < est[1] - 0.5, est
    with pytest.raises(OptionError, match="exponent_in must be >= 2.000000001, found 1.5"):
        scale_free(10, exponent_in=1.5)
