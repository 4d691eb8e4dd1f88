"""Largest cycle cover with dual prices, and stem gains (netctl.graph.stem_cycle).

Outside references: scipy's ``min_weight_full_bipartite_matching`` (LAPJVsp) for the
optimum of the same assignment problem (real links cost 0, a state's dummy pair 1), and
linear-programming duality for the prices (every reduced cost >= 0, assigned pairs 0;
Jonker & Volgenant 1987, Computing 38:325-340).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import min_weight_full_bipartite_matching

from netctl.graph.matching import transpose_csr
from netctl.graph.stem_cycle import cycle_cover_prices, reach_sums, stem_gains


def _graph(n, p, seed, loops):
    rng = np.random.default_rng(seed)
    a = rng.random((n, n)) < p
    if not loops:
        np.fill_diagonal(a, False)
    A = sp.csr_array(a.astype(float))  # A[v, u] != 0: u -> v
    A.sort_indices()
    indptr, indices = A.indptr.astype(np.int64), A.indices.astype(np.int64)
    return A, indptr, indices, np.diag(a).copy()


def _scipy_optimum(A, has_loop):
    n = A.shape[0]
    # cost 1 for real links and 2 for dummies (scipy drops explicit zeros), minus n
    dummy = sp.csr_array((np.where(has_loop, 0.0, 2.0), (np.arange(n), np.arange(n))),
                         shape=(n, n))
    cost = (sp.csr_array((np.ones(A.nnz), A.indices, A.indptr), shape=(n, n)) + dummy)
    cost = sp.csr_matrix(cost)
    cost.eliminate_zeros()
    r, c = min_weight_full_bipartite_matching(cost)
    return int(np.asarray(cost[r, c]).sum()) - n


@pytest.mark.parametrize("seed", range(30))
def test_prices_are_optimal_and_dual_feasible(seed):
    n = 5 + seed
    A, indptr, indices, has_loop = _graph(n, 2.5 / n, seed, loops=seed % 3 == 0)
    pr = cycle_cover_prices(indptr, indices, n, has_loop)
    assert sorted(pr.row_match.tolist()) == list(range(n))
    assert int(pr.cost.sum()) == _scipy_optimum(A, has_loop)
    v = pr.price
    u = pr.cost - v[pr.row_match]
    for r in range(n):
        cols = indices[indptr[r]:indptr[r + 1]].tolist()
        for c in cols:
            assert 0 - u[r] - v[c] >= 0
        if not has_loop[r]:
            assert 1 - u[r] - v[r] >= 0
        c = pr.row_match[r]
        w = 1 if (c == r and not has_loop[r]) else 0
        assert w == pr.cost[r] and w - u[r] - v[c] == 0


def _best_with_input(A, has_loop, i):
    """Largest number of real links over assignments with one extra column at row i
    (scipy): rows n, columns n + 1."""
    n = A.shape[0]
    dummy = sp.csr_array((np.where(has_loop, 0.0, 2.0), (np.arange(n), np.arange(n))),
                         shape=(n, n + 1))
    real = sp.csr_array((np.ones(A.nnz), A.indices, A.indptr), shape=(n, n))
    extra = sp.csr_array((np.ones(1), (np.array([i]), np.array([0]))), shape=(n, 1))
    cost = sp.csr_matrix(sp.hstack([real, extra]) + dummy)
    cost.eliminate_zeros()
    r, c = min_weight_full_bipartite_matching(cost)
    return int(np.count_nonzero(np.asarray(cost[r, c]).ravel() == 1.0))


@pytest.mark.parametrize("seed", range(20))
def test_stem_gains_match_one_assignment_per_source(seed):
    n = 6 + seed
    A, indptr, indices, has_loop = _graph(n, 2.0 / n, 100 + seed, loops=seed % 2 == 0)
    pr = cycle_cover_prices(indptr, indices, n, has_loop)
    optr, oind = transpose_csr(indptr, indices, n)
    gains = stem_gains(optr, oind, has_loop, pr, np.arange(n))
    base = n - int(pr.cost.sum())
    for i in range(n):
        assert base + gains[i] == _best_with_input(A, has_loop, i), i


def test_reach_sums_on_a_chain_of_components():
    # 0 <-> 1 -> 2 -> 3 <-> 4: components {0,1}, {2}, {3,4}
    src = np.array([0, 1, 1, 2, 3, 4])
    dst = np.array([1, 0, 2, 3, 4, 3])
    A = sp.csr_array((np.ones(6), (dst, src)), shape=(5, 5))
    optr, oind = transpose_csr(A.indptr, A.indices, 5)
    labels = np.array([0, 0, 1, 2, 2])
    out = reach_sums(optr, oind, labels, 3, np.array([2, 0, 2]), np.array([0, 1, 2]))
    assert out.tolist() == [4, 2, 2]
