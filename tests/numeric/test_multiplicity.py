"""Multiplicities that survive defective matrices (issue 22, item 6).

Ground truth: sympy's exact Jordan form (``sympy.Matrix.jordan_form``; a general-purpose
reference library): the geometric multiplicity of an eigenvalue is its number of Jordan
blocks, and the minimum number of inputs for the given weights is the largest of them
(Yuan, Zhao, Di, Wang & Lai, Nat. Commun. 4:2447, 2013, doi:10.1038/ncomms3447; PBH test,
Hautus 1969). The driver sets are checked by an exact Kalman rank in sympy.
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy

from netctl import StructuredSystem
from netctl.numeric.exact import exact_controllability
from netctl.numeric.spectrum import jordan_clusters


def _random_jordan_integer(rng: np.random.Generator, n: int) -> np.ndarray:
    """``P J P^-1`` with ``J`` a Jordan matrix (blocks of size 1-4, small integer
    eigenvalues, some repeated) and ``P`` unimodular (product of elementary integer
    operations), so the result is an integer matrix with known Jordan structure."""
    sizes: list[int] = []
    while sum(sizes) < n:
        sizes.append(int(min(rng.integers(1, 5), n - sum(sizes))))
    pool = rng.integers(-2, 3, size=2)  # few distinct values: repeated eigenvalues
    J = np.zeros((n, n), np.int64)
    k = 0
    for s in sizes:
        lam = int(rng.choice(pool))
        for i in range(s):
            J[k + i, k + i] = lam
            if i:
                J[k + i - 1, k + i] = 1
        k += s
    P = np.eye(n, dtype=np.int64)
    for _ in range(2 * n):
        i, j = rng.choice(n, size=2, replace=False)
        E = np.eye(n, dtype=np.int64)
        E[i, j] = int(rng.choice([-1, 1]))
        P = P @ E
    Pinv = np.array(sympy.Matrix(P.tolist()).inv().tolist(), dtype=np.int64)
    return P @ J @ Pinv


def _sympy_max_geometric(A: np.ndarray) -> int:
    _, J = sympy.Matrix(A.tolist()).jordan_form()
    n = J.shape[0]
    # number of Jordan blocks per eigenvalue: diagonal entries not continued by a 1 above
    blocks: dict[object, int] = {}
    for i in range(n):
        if i == n - 1 or J[i, i + 1] == 0:
            blocks[J[i, i]] = blocks.get(J[i, i], 0) + 1
    return max(blocks.values())


def _sympy_kalman_rank(A: np.ndarray, drivers: np.ndarray) -> int:
    n = A.shape[0]
    M = sympy.Matrix(A.tolist())
    B = sympy.zeros(n, len(drivers))
    for k, i in enumerate(drivers):
        B[int(i), k] = 1
    cols, X = [], B
    for _ in range(n):
        cols.append(X)
        X = M * X
    return sympy.Matrix.hstack(*cols).rank()


ISSUE_4X4 = np.array([[1, 0, 0, 0], [0, 1, 1, 0], [0, -1, 1, 1], [0, 0, 1, 1]])


@pytest.mark.parametrize("arithmetic", ["auto", "float"])
def test_issue_example_needs_two_inputs(arithmetic):
    # by hand: rank(A - I) = 2, so the eigenvalue 1 has geometric multiplicity 2 and two
    # inputs are needed (Yuan et al. 2013); sympy's Jordan form agrees
    assert _sympy_max_geometric(ISSUE_4X4) == 2
    s = StructuredSystem.from_matrices(ISSUE_4X4.astype(float), np.zeros((4, 0)))
    r = exact_controllability(s, arithmetic=arithmetic)
    assert r.n_inputs == 2
    assert r.n_drivers >= r.n_inputs
    assert r.verified
    assert _sympy_kalman_rank(ISSUE_4X4, r.drivers) == 4


def test_float_clusters_join_a_split_jordan_block():
    # the defective eigenvalue splits into three values ~1e-5 apart under rounding;
    # the Jordan-aware clusters keep them together with geometric multiplicity 2
    cl = jordan_clusters(ISSUE_4X4.astype(float))
    assert [(c.algebraic, c.geometric) for c in cl] == [(4, 2)]
    assert cl[0].margin > 2


CASES = [pytest.param(seed, n, id=f"seed{seed}-n{n}") for seed, n in
         [(s, 4 + s % 5) for s in range(24)]]


@pytest.mark.parametrize("seed, n", CASES)
def test_random_jordan_matrices_against_sympy(seed, n):
    A = _random_jordan_integer(np.random.default_rng(seed), n)
    expected = _sympy_max_geometric(A)
    s = StructuredSystem.from_matrices(A.astype(float), np.zeros((n, 0)))
    exact = exact_controllability(s)
    assert exact.arithmetic == "exact"
    assert exact.n_inputs == expected
    assert exact.verified and exact.n_drivers >= exact.n_inputs
    assert _sympy_kalman_rank(A, exact.drivers) == n
    # floating point: right, or it says the count is uncertain / the set uncertified
    flt = exact_controllability(s, arithmetic="float")
    assert flt.n_drivers >= flt.n_inputs
    if flt.count_certain:
        assert flt.n_inputs == expected
    if flt.verified:
        assert _sympy_kalman_rank(A, flt.drivers) == n


def test_float_path_mostly_right_on_jordan_matrices():
    # the float path must be right (and say so) on most of these well-scaled cases
    ok = 0
    for seed in range(24):
        n = 4 + seed % 5
        A = _random_jordan_integer(np.random.default_rng(seed), n)
        s = StructuredSystem.from_matrices(A.astype(float), np.zeros((n, 0)))
        r = exact_controllability(s, arithmetic="float")
        ok += bool(r.count_certain and r.n_inputs == _sympy_max_geometric(A))
    assert ok >= 18


def test_shared_inputs_attain_the_count():
    # dedicated drivers may exceed the count; the mixing matrix shows n_inputs shared
    # columns suffice (exact Kalman rank in sympy)
    A = np.diag([1, 2, 3, 4])  # simple spectrum: one shared input, Yuan et al. 2013
    s = StructuredSystem.from_matrices(A.astype(float), np.zeros((4, 0)))
    r = exact_controllability(s)
    assert r.n_inputs == 1
    assert r.mixing is not None and r.mixing.shape == (r.n_drivers, 1)
    n = 4
    B = sympy.zeros(n, 1)
    for k, d in enumerate(r.drivers):
        B[int(d), 0] = int(r.mixing[k, 0])
    M = sympy.Matrix(A.tolist())
    K = sympy.Matrix.hstack(*[M ** j * B for j in range(n)])
    assert K.rank() == n
