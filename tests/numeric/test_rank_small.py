"""The staircase on small systems runs on NumPy's LAPACK alone (no scipy.linalg import,
issue 15) and agrees with the blocked path it replaces there.

Both paths are orthogonal reductions to the same staircase form (Van Dooren, IEEE TAC
26(1):111-129, 1981, doi:10.1109/TAC.1981.1102559): the dimension and block sizes must be
equal, the closest decisions and the lost modes equal to rounding. The dimension is also
checked against the rank of the Kalman matrix ``[B, AB, ..., A^{n-1}B]`` in exact rational
arithmetic (sympy), the textbook definition (R. E. Kalman, Y. C. Ho, K. S. Narendra,
"Controllability of linear dynamical systems", Contrib. Diff. Eq. 1:189-213, 1963).
"""

from __future__ import annotations

import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.numeric import rank as R


def _random_case(rng: np.random.Generator, n: int, m: int, lost: int) -> StructuredSystem:
    """Small integer weights; ``lost`` trailing states are made unreachable (a block
    upper-triangular ``A`` with ``B`` zero there), then a random permutation hides it."""
    A = rng.integers(-3, 4, (n, n)).astype(float)
    B = rng.integers(-2, 3, (n, m)).astype(float)
    if lost:
        A[n - lost:, :n - lost] = 0.0
        B[n - lost:] = 0.0
    p = rng.permutation(n)
    return StructuredSystem.from_matrices(A[np.ix_(p, p)], B[p])


def _kalman_rank(system: StructuredSystem) -> int:
    import sympy

    A = sympy.Matrix(system.A.toarray().astype(int))
    B = sympy.Matrix(system.B.toarray().astype(int))
    blocks, X = [], B
    for _ in range(system.n_states):
        blocks.append(X)
        X = A * X
    return int(sympy.Matrix.hstack(*blocks).rank())


CASES = [(n, m, lost, k) for n, m, lost in [(3, 1, 0), (5, 1, 2), (6, 2, 1), (8, 3, 3),
                                              (10, 1, 0), (12, 2, 4)] for k in range(4)]


@pytest.mark.parametrize("n, m, lost, k", CASES)
def test_small_staircase_agrees_with_blocked_path_and_kalman(n, m, lost, k, monkeypatch):
    s = _random_case(np.random.default_rng(1000 * n + 10 * lost + k), n, m, lost)
    small = R.staircase(s)
    monkeypatch.setattr(R, "SMALL_STATES", 0)  # every size takes the blocked scipy path
    big = R.staircase(s)
    assert small.dimension == big.dimension == _kalman_rank(s)
    assert small.blocks.tolist() == big.blocks.tolist()
    assert small.smallest_kept == pytest.approx(big.smallest_kept, rel=1e-9)
    assert small.largest_dropped == pytest.approx(big.largest_dropped, rel=1e-6, abs=1e-12)
    # repeated lost modes move like eps^(1/k) under rounding: compare the characteristic
    # polynomial of the uncontrollable block, which both backward-stable paths keep
    np.testing.assert_allclose(np.poly(small.uncontrollable_eigenvalues),
                               np.poly(big.uncontrollable_eigenvalues), rtol=1e-8, atol=1e-8)


def test_the_small_path_really_is_used_below_the_bound(monkeypatch):
    """The check above compares two different paths only if the small one does not reach
    scipy: make scipy.linalg unusable and run it."""
    import scipy.linalg

    def refuse(*a, **k):
        raise AssertionError("scipy.linalg called on the small path")

    for name in ("svd", "qr", "hessenberg", "eigvals"):
        monkeypatch.setattr(scipy.linalg, name, refuse)
    s = _random_case(np.random.default_rng(7), 9, 2, 3)
    assert R.staircase(s).dimension == 6
    monkeypatch.setattr(R, "SMALL_STATES", 0)
    with pytest.raises(AssertionError, match="small path"):
        R.staircase(s)


@pytest.mark.parametrize("k", range(6))
def test_eigenvalue_cluster_labels_equal_scipy_connected_components(k):
    """The clusters of close eigenvalues (Jordan-structure search, PBH clusters) are the
    connected components of a small graph: on few states netctl's union-find numbers
    them as scipy.sparse.csgraph.connected_components does (by smallest vertex)."""
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    from netctl.numeric.spectrum import _component_labels

    rng = np.random.default_rng(k)
    n = int(rng.integers(1, 40))
    e = int(rng.integers(0, 2 * n))
    rows, cols = rng.integers(0, n, e), rng.integers(0, n, e)
    g = sp.coo_array((np.ones(e), (rows, cols)), shape=(n, n)).tocsr()
    want = connected_components(g + sp.eye_array(n, format="csr"), directed=False)[1]
    assert _component_labels(rows, cols, n).tolist() == want.tolist()
