"""Control capacity, control centrality and drivers by degree.

Outside references: exhaustive enumeration of all minimum driver sets (scipy's maximum
bipartite matching as the test, brute force) for control capacity, defined by Jia &
Barabasi, Sci. Rep. 3:2354 (2013); the rank of the Krylov matrix [b, Ab, ..., A^(n-1) b]
with random weights over the prime field p = 2^31 - 1 (exact arithmetic; Schwartz-Zippel,
REFERENCES.md §9) for control centrality, defined by Liu, Slotine & Barabasi, PLoS ONE
7(9):e44459 (2012); published values: the hub of a directed star has control centrality
2, and in a DAG it is the number of nodes on the longest path from the node (REFERENCES.md
§1, [S] and [C]).
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.structural.node_control import (
    control_capacity,
    control_centrality,
    drivers_by_degree,
    minimum_driver_sets,
)
from netctl.structural.roles import node_roles

P = 2**31 - 1


def _random(n, p, seed, loops=False):
    rng = np.random.default_rng(seed)
    a = rng.random((n, n)) < p
    if not loops:
        np.fill_diagonal(a, False)
    src, dst = np.nonzero(a)
    return StructuredSystem.from_edges(src, dst, n)


@pytest.mark.parametrize("seed", range(12))
def test_capacity_matches_exact_enumeration_of_minimum_driver_sets(seed):
    s = _random(9, 0.18, seed)
    sets = minimum_driver_sets(s)
    exact = np.zeros(s.n_states)
    for d in sets:
        exact[list(d)] += 1
    exact /= len(sets)
    est = control_capacity(s, sweeps=3000, seed=seed)
    # tolerance: 5 batch-means standard errors + 0.01 (SE of a short chain is itself
    # uncertain); a chain that is not uniform over MDSs misses by 0.1 or more here
    assert np.all(np.abs(est.capacity - exact) <= 5 * est.standard_error + 0.01), (
        sets, est.capacity, exact)
    # critical states have capacity 1, redundant 0 (Jia et al., Nat. Commun. 4:2002, 2013)
    roles = node_roles(s).role
    if est.n_drivers:
        assert np.all(est.capacity[roles == 0] == 1.0)
        assert np.all(est.capacity[roles == 2] == 0.0)


def test_capacity_of_the_published_five_node_example():
    # Jia et al. 2013 (Nat. Commun. 4:2002) Fig. 1: MDSs {1,3,4}, {1,3,5}, {1,4,5}
    s = StructuredSystem.from_edges([0, 1, 1, 1], [1, 2, 3, 4], 5)
    assert minimum_driver_sets(s) == [(0, 2, 3), (0, 2, 4), (0, 3, 4)]
    c = control_capacity(s, sweeps=4000, seed=3)
    assert c.capacity[:2].tolist() == [1.0, 0.0]
    assert np.allclose(c.capacity[2:], 2 / 3, atol=5 * c.standard_error[2:].max() + 0.01)
    t = drivers_by_degree(s, c)
    assert t.in_degree[0][:2] == (0, 1) and t.in_degree[0][2] == 1.0
    assert t.in_degree[1][:2] == (1, 4)


def _krylov_rank_mod_p(s, i, seed):
    rng = np.random.default_rng(seed)
    n = s.n_states
    A = np.zeros((n, n), dtype=object)
    r, c = s.A.nonzero()
    for a, b in zip(r.tolist(), c.tolist()):
        A[a, b] = int(rng.integers(1, P))
    v = [0] * n
    v[i] = 1
    cols = []
    for _ in range(n):
        cols.append(list(v))
        v = [sum(A[a, b] * v[b] for b in range(n)) % P for a in range(n)]
    M = [list(row) for row in zip(*cols)]  # n x n, rows = states
    rank = 0
    for col in range(n):
        piv = next((r for r in range(rank, n) if M[r][col] % P), None)
        if piv is None:
            continue
        M[rank], M[piv] = M[piv], M[rank]
        inv = pow(M[rank][col], P - 2, P)
        for r in range(n):
            if r != rank and M[r][col] % P:
                f = M[r][col] * inv % P
                M[r] = [(x - f * y) % P for x, y in zip(M[r], M[rank])]
        rank += 1
    return rank


@pytest.mark.parametrize("seed", range(10))
def test_centrality_matches_krylov_rank_over_a_prime_field(seed):
    s = _random(8, 0.2, seed, loops=seed % 2 == 0)
    cent = control_centrality(s).centrality
    for i in range(s.n_states):
        # generic rank = max over two random draws (one-sided error, REFERENCES §9)
        k = max(_krylov_rank_mod_p(s, i, 100 * seed + t) for t in range(2))
        assert cent[i] == k, (i, cent[i], k)


def _cyclic(n, seed, loops):
    """A random network rich in cycles of several lengths (a ring plus random chords)."""
    rng = np.random.default_rng(seed)
    src = list(range(n)) + rng.integers(0, n, n // 2).tolist()
    dst = [(k + 1) % n for k in range(n)] + rng.integers(0, n, n // 2).tolist()
    if not loops:
        src, dst = zip(*[(a, b) for a, b in zip(src, dst) if a != b])
    cut = int(rng.integers(0, n))  # break the ring once: stems and cycles both matter
    pairs = sorted({(a, b) for a, b in zip(src, dst) if (a, b) != (cut, (cut + 1) % n)})
    return StructuredSystem.from_edges([a for a, _ in pairs], [b for _, b in pairs], n)


@pytest.mark.parametrize("seed", range(8))
def test_centrality_with_many_cycles_matches_krylov_rank(seed):
    # the all-states method (one cycle-cover assignment with prices, then one search a
    # state) against the Krylov rank from each state over a prime field
    s = _cyclic(11 + seed % 3, seed, loops=seed % 2 == 1)
    cent = control_centrality(s).centrality
    for i in range(s.n_states):
        k = max(_krylov_rank_mod_p(s, i, 1000 * seed + t) for t in range(2))
        assert cent[i] == k, (i, cent[i], k)


def test_centrality_of_chosen_states_equals_all_states():
    s = _random(40, 0.06, 7, loops=True)
    full = control_centrality(s).centrality
    part = control_centrality(s, states=[3, 17, 17, 39]).centrality
    assert part[[3, 17, 39]].tolist() == full[[3, 17, 39]].tolist()
    assert np.count_nonzero(part >= 0) == 3


@pytest.mark.parametrize("n", [3, 5, 10])
def test_centrality_published_values(n):
    star = StructuredSystem.from_edges([0] * (n - 1), list(range(1, n)), n)
    assert control_centrality(star).centrality[0] == 2  # Liu et al. 2012 [S]
    dag = nx.gnp_random_graph(12, 0.25, seed=n, directed=True)
    dag = nx.DiGraph([(u, v) for u, v in dag.edges() if u < v])
    dag.add_nodes_from(range(12))
    s = StructuredSystem.from_edges(*np.array(list(dag.edges()) or [(0, 1)]).T, 12)
    cent = control_centrality(s).centrality
    g = nx.DiGraph(list(zip(*s.edges())))
    g.add_nodes_from(range(12))
    for i in range(12):
        longest = max(nx.dag_longest_path_length(g.subgraph(nx.descendants(g, i) | {i})),
                      0) + 1
        # longest path *starting at i*: restrict to paths from i
        dist = {i: 1}
        for v in nx.topological_sort(g.subgraph(nx.descendants(g, i) | {i})):
            for w in g.successors(v):
                if v in dist:
                    dist[w] = max(dist.get(w, 0), dist[v] + 1)
        assert cent[i] == max(dist.values()), (i, cent[i], dist, longest)


def test_node_control_command(tmp_path, capsys):
    # through the entry point: summary, JSON, and a bad option (exit 2, message)
    import json

    from netctl.cli import main

    p = tmp_path / "jia.csv"
    p.write_text("1,2\n2,3\n2,4\n2,5\n")  # Jia et al. 2013 Fig. 1 network
    assert main(["node-control", str(p), "--centrality", "--sweeps", "2000"]) == 0
    out = capsys.readouterr().out
    assert "1 always drivers, 1 never, 3 sometimes" in out
    assert main(["node-control", str(p), "--json", "--centrality"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["n_unmatched"] == 3 and d["driver_fraction"] == pytest.approx(0.6)
    assert d["centrality"]["centrality"] == {"1": 3, "2": 2, "3": 1, "4": 1, "5": 1}
    assert d["capacity"]["capacity"]["1"] == 1.0 and d["capacity"]["capacity"]["2"] == 0.0
    assert main(["node-control", str(p), "--sweeps", "0"]) == 2
    assert "--sweeps must be at least 1, found 0" in capsys.readouterr().err
