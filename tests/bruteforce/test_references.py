"""The brute-force references themselves, checked before they judge netctl.

* ``_field.rank`` against numpy's SVD rank on small integer matrices (entries 0..2, at
  most 7 x 14): every minor is then below Hadamard's bound (2 sqrt 7)^7 < 1.2e5 < p, so
  the rank modulo p equals the rank over the rationals exactly, and numpy's floating
  rank of such matrices is exact too (tiny integers, well separated singular values);
* ``_field.krylov`` against matrix powers in exact Python integers;
* the references on analytic values: a directed path, a directed cycle and an out-star
  (Liu, Slotine & Barabasi 2011, Nature 473:167-173: N_D = 1, 1 and the number of
  leaves), Lin's two obstructions (Lin 1974, IEEE TAC 19(3):201-208: an unreached state;
  a dilation, two states fed by one), and the roles of ``1 -> 2 -> {3, 4, 5}`` worked by
  hand from the definitions of Jia et al. 2013 (Nat. Commun. 4:2002): the minimum driver
  sets are {1, 3, 4}, {1, 3, 5}, {1, 4, 5}.
"""

from __future__ import annotations

import numpy as np
import pytest

from tests.bruteforce import _field as F
from tests.bruteforce._oracle import Oracle


def test_rank_mod_p_equals_numpy_rank_on_small_integer_matrices():
    rng = np.random.default_rng(7)
    for _ in range(400):
        r, c = int(rng.integers(1, 8)), int(rng.integers(1, 15))
        M = rng.integers(0, 3, size=(r, c)) * (rng.random((r, c)) < 0.6)
        assert F.rank(M.astype(np.int64)) == np.linalg.matrix_rank(M.astype(float))


def test_krylov_equals_exact_integer_matrix_powers():
    rng = np.random.default_rng(8)
    for _ in range(50):
        n, m = int(rng.integers(1, 8)), int(rng.integers(1, 4))
        A = rng.integers(0, F.P, size=(n, n), dtype=np.int64)
        B = rng.integers(0, F.P, size=(n, m), dtype=np.int64)
        K = F.krylov(A, B)
        Ai = [[int(x) for x in row] for row in A]
        cols = [[int(x) for x in B[:, k]] for k in range(m)]
        for step in range(n):
            for k in range(m):
                assert K[:, step * m + k].tolist() == cols[k]
            cols = [[sum(a * b for a, b in zip(row, col)) % F.P for row in Ai] for col in cols]


def _pattern(edges, n, inputs=()):
    A = np.zeros((n, n), bool)
    for u, v in edges:
        A[v, u] = True
    B = np.zeros((n, len(inputs)), bool)
    for k, i in enumerate(inputs):
        B[i, k] = True
    return A, B


KNOWN_N_D = [  # Liu, Slotine & Barabasi 2011 (analytic: path and cycle 1, out-star k)
    pytest.param([(0, 1), (1, 2), (2, 3), (3, 4)], 5, 1, id="directed-path"),
    pytest.param([(0, 1), (1, 2), (2, 3), (3, 0)], 4, 1, id="directed-cycle"),
    pytest.param([(0, 1), (0, 2), (0, 3)], 4, 3, id="out-star-3-leaves"),
    pytest.param([], 3, 3, id="no-links"),
]


@pytest.mark.parametrize("edges, n, n_d", KNOWN_N_D)
def test_minimum_inputs_reference_on_analytic_values(edges, n, n_d):
    A, _ = _pattern(edges, n)
    o = Oracle(A, np.zeros((n, 0), bool), np.random.default_rng(1))
    assert o.n_shared == n_d == max(n - o.rank_A, 1)


def test_lin_obstructions_reference():
    # Lin 1974: input on 0, links 0 -> 1, 0 -> 2: accessible, but {1, 2} is fed by {0}
    A, B = _pattern([(0, 1), (0, 2)], 3, inputs=[0])
    o = Oracle(A, B, np.random.default_rng(2))
    assert not o.controllable and o.inaccessible == [] and o.structural_rank == 2
    assert o.region == [1, 2] and o.in_neighbours(np.array([1, 2])) == [0]
    assert o.dimension == 2 and o.n_fix == 1
    # input on 1 of the path 0 -> 1 -> 2: state 0 is unreached (and, fed by nothing, a
    # dilation by itself)
    A, B = _pattern([(0, 1), (1, 2)], 3, inputs=[1])
    o = Oracle(A, B, np.random.default_rng(3))
    assert o.inaccessible == [0] and o.structural_rank == 2 and o.dimension == 2
    assert o.region == [0] and o.n_fix == 1
    assert [sorted(s) for s in o.unreached_sources] == [[0]]


def test_driver_sets_reference_by_hand():
    A, _ = _pattern([(0, 1), (1, 2), (1, 3), (1, 4)], 5)
    o = Oracle(A, np.zeros((5, 0), bool), np.random.default_rng(4))
    basis, sets = o.driver_sets
    assert basis == "matching"
    assert sorted(sorted(S) for S in sets) == [[0, 2, 3], [0, 2, 4], [0, 3, 4]]
    assert o.node_roles == [0, 2, 1, 1, 1]
    # links: 0 -> 1 in every maximum matching, 1 -> 2/3/4 in some (Liu et al. 2011)
    assert o.link_roles == {(0, 1): (0, 4), (1, 2): (1, 3), (1, 3): (1, 3), (1, 4): (1, 3)}


def test_perfect_matching_driver_sets_reference():
    # two disjoint 2-cycles: a perfect matching; one input must touch both source
    # components, so the minimum driver sets hold one state of each
    A, _ = _pattern([(0, 1), (1, 0), (2, 3), (3, 2)], 4)
    o = Oracle(A, np.zeros((4, 0), bool), np.random.default_rng(5))
    basis, sets = o.driver_sets
    assert basis == "source-components" and o.n_shared == 1
    assert sorted(sorted(S) for S in sets) == [[0, 2], [0, 3], [1, 2], [1, 3]]
    assert o.node_roles == [1, 1, 1, 1]
