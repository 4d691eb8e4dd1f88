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


def test_scale_free_degree_exponent():
    # static model (Goh, Kahng, Kim 2001): P(k) ~ k^-gamma; discrete power-law MLE of
    # Clauset, Shalizi & Newman (2009), SIAM Rev. 51:661, eq. 3.7, above k_min = 20
    gamma = 2.5
    g = scale_free(200000, mean_degree=8, exponent=gamma, seed=2)
    k = np.diff(g.A.indptr)
    kmin = 20
    tail = k[k >= kmin]
    est = 1 + tail.size / np.sum(np.log(tail / (kmin - 0.5)))
    assert abs(est - gamma) < 0.25, est
    assert k.max() > 20 * k.mean()  # hubs


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
