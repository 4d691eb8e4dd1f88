"""Small maps are laid out and walked without igraph or scipy (issue 15, goal 1).

The NumPy Fruchterman-Reingold layout of small components is checked against
networkx's ``spring_layout`` (the same published method, Fruchterman & Reingold,
Software: Practice and Experience 21(11):1129-1164 (1991)) by a layout-quality measure,
the normalized stress between drawn distances and graph distances (Kamada & Kawai,
Inf. Process. Lett. 31(1):7-15 (1989); Gansner, Koren & North, Graph Drawing 2004,
LNCS 3383:239-250); the components and the nearest-driver walk are checked against
scipy's own routines, which they replace on small maps.
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from netctl import StructuredSystem
from netctl.viz import interactive
from netctl.viz.layout import SMALL_LAYOUT, _fr_small, node_positions, weak_labels


def _stress(xy: np.ndarray, g: nx.Graph) -> float:
    """Normalized stress at the best scale: sum (s*d_xy - d_g)^2 / d_g^2 over pairs,
    divided by the number of pairs (0: drawn distances proportional to hops)."""
    nodes = sorted(g)
    hops = dict(nx.all_pairs_shortest_path_length(g))
    i, j = np.triu_indices(len(nodes), 1)
    dg = np.array([hops[nodes[a]][nodes[b]] for a, b in zip(i, j)], float)
    dx = np.hypot(*(xy[i] - xy[j]).T)
    w = 1.0 / dg**2
    s = float((w * dx * dg).sum() / (w * dx * dx).sum())
    return float((w * (s * dx - dg) ** 2).sum() / dg.size)


SHAPES = [
    pytest.param(nx.cycle_graph(12), id="cycle-12"),
    pytest.param(nx.convert_node_labels_to_integers(nx.grid_2d_graph(4, 5)), id="grid-4x5"),
    pytest.param(nx.balanced_tree(2, 4), id="binary-tree-31"),
    pytest.param(nx.connected_watts_strogatz_graph(40, 4, 0.1, seed=2), id="small-world-40"),
    pytest.param(nx.convert_node_labels_to_integers(nx.grid_2d_graph(10, 10)), id="grid-10x10"),
]


@pytest.mark.parametrize("g", SHAPES)
def test_small_layout_is_as_good_as_networkx_spring_layout(g):
    n = g.number_of_nodes()
    assert n <= SMALL_LAYOUT
    e = np.array(g.edges())
    ours = _fr_small(n, e[:, 0], e[:, 1], 0, 500)
    theirs = [_stress(np.array([p[v] for v in range(n)]), g)
              for p in (nx.spring_layout(g, seed=k, iterations=500) for k in range(3))]
    mine = _stress(ours, g)
    # common practice, no source: at most a quarter worse than the reference's median
    assert mine <= 1.25 * float(np.median(theirs)), (mine, theirs)
    # no two states drawn on top of each other: the closest pair is at least a fifth
    # of the median link length apart
    i, j = np.triu_indices(n, 1)
    closest = np.hypot(*(ours[i] - ours[j]).T).min()
    links = np.hypot(*(ours[e[:, 0]] - ours[e[:, 1]]).T)
    assert closest >= 0.2 * np.median(links)


def test_small_layout_is_reproducible_and_follows_the_seed():
    s = StructuredSystem.from_edges([0, 1, 2, 3, 4, 5], [1, 2, 3, 4, 5, 0], 6)
    a, how = node_positions(s, seed=4)
    assert how == "fr" and np.array_equal(a, node_positions(s, seed=4)[0])
    assert not np.allclose(a, node_positions(s, seed=5)[0])


@pytest.mark.parametrize("n", [1, 7, 60, SMALL_LAYOUT, SMALL_LAYOUT + 50])
def test_weak_components_equal_scipy(n):
    rng = np.random.default_rng(n)
    for m in (0, n // 2, n, 2 * n):
        src, dst = rng.integers(0, n, m), rng.integers(0, n, m)
        k, lab = weak_labels(n, src, dst)
        A = sp.csr_array((np.ones(m, np.int8), (dst, src)), shape=(n, n))
        k2, lab2 = connected_components(A, directed=True, connection="weak")
        assert k == k2 and np.array_equal(lab, lab2)


def test_nearest_driver_walk_equals_scipy_breadth_first_order(monkeypatch):
    """The plain-Python walk of small maps gives the same predecessor of every state as
    scipy's compiled breadth-first order (same neighbour order), on random networks."""
    rng = np.random.default_rng(7)
    for trial in range(30):
        n = int(rng.integers(1, 60))
        m = int(rng.integers(0, 3 * n))
        key = np.unique(rng.integers(0, n * n, m))  # distinct links
        s = StructuredSystem.from_edges(key // n, key % n, n)
        drivers = np.unique(rng.integers(0, n, int(rng.integers(1, 4))))
        small = interactive._nearest_driver_tree(s, drivers)
        monkeypatch.setattr(interactive, "_SMALL_WALK", -1)
        big = interactive._nearest_driver_tree(s, drivers)
        monkeypatch.undo()
        assert np.array_equal(small, big), trial
