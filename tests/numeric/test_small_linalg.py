"""Dense linear algebra on NumPy alone for small systems (issue 15: ``energy``/``modes``
on a 2-line file without importing scipy.linalg) against scipy.linalg, the reference
library it replaces, and its fallbacks.

Sources: the matrix exponential's closed forms (nilpotent and rotation generators:
e^N = I + N + N^2/2 for N^3 = 0; e^{t[[0,-1],[1,0]]} is the rotation by t -- textbook,
e.g. Higham, *Functions of Matrices*, SIAM 2008, ch. 10, from memory); the Pade degree
thresholds theta_m of N. J. Higham, SIAM J. Matrix Anal. Appl. 26(4):1179-1193, 2005
(doi:10.1137/04061101X) and A. H. Al-Mohy, N. J. Higham, SIAM J. Matrix Anal. Appl.
31(3):970-989, 2009 (doi:10.1137/09074721X); the Lyapunov closed forms of REFERENCES.md
§8 (A = diag(-1, -2), b = 1: W = [[1/2, 1/3], [1/3, 1/4]]; discrete scalar a = 0.5:
W = 4/3); everything else is compared with scipy.linalg on random and ill-conditioned
matrices (hypothesis), and each fallback is made to trigger.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.linalg as la
from hypothesis import example, given, settings
from hypothesis import strategies as st

from netctl.numeric import _small_linalg as sl

EPS = np.finfo(float).eps


def _matrix(seed: int, n: int, scale: float = 1.0, density: float = 0.6) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return scale * rng.standard_normal((n, n)) * (rng.random((n, n)) < density)


def _rotated_jordan(seed: int, k: int, value: float) -> np.ndarray:
    """A Jordan block of size ``k`` at ``value`` under a random orthogonal similarity
    (defective, so its eigenvectors are nearly parallel)."""
    J = value * np.eye(k) + np.diag(np.ones(k - 1), 1)
    U = np.linalg.qr(np.random.default_rng(seed).standard_normal((k, k)))[0]
    return U @ J @ U.T


# ----------------------------------------------------------------- matrix exponential
def test_expm_closed_forms():
    N = np.array([[0.0, 0.0, 0.0], [1.5, 0.0, 0.0], [0.0, -0.7, 0.0]])  # N^3 = 0
    np.testing.assert_allclose(sl.expm_pade(N), np.eye(3) + N + N @ N / 2, rtol=0,
                               atol=4 * EPS)
    t = 0.9
    R = sl.expm_pade(np.array([[0.0, -t], [t, 0.0]]))
    np.testing.assert_allclose(R, [[np.cos(t), -np.sin(t)], [np.sin(t), np.cos(t)]],
                               rtol=0, atol=4 * EPS)


@settings(max_examples=150, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 12),
       st.sampled_from([1e-3, 0.05, 0.3, 0.9, 2.0, 4.2]))
@example(420, 3, 4.2)  # where scipy's expm, the former reference, was the one off
def test_expm_agrees_with_the_exact_exponential_below_theta_13(seed, n, target):
    """Every Pade degree (the 1-norms cover each theta_m bracket) against the exact
    exponential (mpmath at 40 digits: scipy's scaling and squaring was itself 3.8e-11
    off, twice this bound, on a 3x3 of 1-norm 4.2 where this route was 3.9e-13 off)."""
    import mpmath

    X = _matrix(seed, n)
    norm1 = np.abs(X).sum(axis=0).max()
    if norm1 == 0:
        return
    X *= target / norm1
    E = sl.expm_pade(X)
    assert E is not None
    with mpmath.workdps(40):
        ref = np.array(mpmath.expm(mpmath.matrix(X.tolist())).tolist(), dtype=float)
    # e^(X + dX) with ||dX|| <= u ||X||; the exponential's absolute condition number is
    # at most e^||X|| (Higham, Functions of Matrices, 2008, ch. 10; from memory)
    assert np.linalg.norm(E - ref, 1) <= 100 * n * EPS * np.exp(target) * max(1.0, target)


def test_expm_refuses_a_norm_that_needs_squaring_and_the_dispatcher_falls_back():
    X = _matrix(3, 5)
    X *= 4.3 / np.abs(X).sum(axis=0).max()  # just above theta_13 = 4.25
    assert sl.expm_pade(X) is None
    np.testing.assert_allclose(sl.expm(X, 5), la.expm(X), rtol=1e-13)
    X *= 4.2 / 4.3
    assert sl.expm_pade(X) is not None
    assert sl.expm_pade(np.array([[np.nan]])) is None


# ----------------------------------------------------------------- Schur form
@settings(max_examples=150, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 20))
def test_schur_from_eigenvectors_is_a_backward_stable_schur_form(seed, n):
    M = _matrix(seed, n) + 1j * _matrix(seed + 1, n, density=0.3)
    got = sl.schur_from_eig(M)
    if got is None:  # allowed (then scipy decides); random matrices rarely need it
        return
    S, Q = got
    assert np.array_equal(S, np.triu(S))
    assert np.linalg.norm(Q.conj().T @ Q - np.eye(n)) <= 20 * n * EPS
    scale = max(np.linalg.norm(M), 1e-300)
    assert np.linalg.norm(Q @ S @ Q.conj().T - M) <= 40 * n * EPS * scale
    # the same spectrum as scipy's Schur form (a multiset; simple eigenvalues here)
    T = la.schur(M.astype(complex), output="complex")[0]
    far = np.abs(np.diag(S)[:, None] - np.diag(T)[None, :]).min(axis=1)
    assert far.max() <= 1e-8 * scale


@pytest.mark.parametrize("k", [4, 5, 6])
def test_schur_from_eigenvectors_refuses_a_large_jordan_block(k):
    M = _rotated_jordan(k, k, -1.0)
    assert sl.schur_from_eig(M) is None
    assert sl.continuous_lyapunov(M, -np.eye(k)) is None
    # the dispatchers fall back on scipy and still solve it
    S, Q = sl.schur_complex(M)
    assert np.linalg.norm(Q @ S @ Q.conj().T - M) <= 1e-13 * np.linalg.norm(M)
    X = sl.solve_continuous_lyapunov(M, -np.eye(k))
    assert np.linalg.norm(M @ X + X @ M.T + np.eye(k)) <= 1e-12 * np.linalg.norm(X)


# ----------------------------------------------------------------- Lyapunov, Sylvester
def test_lyapunov_closed_forms():
    X = sl.continuous_lyapunov(np.diag([-1.0, -2.0]), -np.ones((2, 2)))
    np.testing.assert_allclose(X, [[1 / 2, 1 / 3], [1 / 3, 1 / 4]], rtol=1e-14)
    X = sl.discrete_lyapunov(np.array([[0.5]]), np.array([[1.0]]))
    assert X[0, 0] == pytest.approx(4 / 3, rel=1e-15)


@settings(max_examples=120, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 16), st.floats(0.05, 3.0))
def test_continuous_lyapunov_agrees_with_scipy(seed, n, shift):
    A = _matrix(seed, n)
    A -= (np.max(np.linalg.eigvals(A).real) + shift) * np.eye(n)  # Hurwitz
    Q = -np.eye(n)
    X = sl.continuous_lyapunov(A, Q)
    ref = la.solve_continuous_lyapunov(A, Q)
    if np.linalg.cond(np.linalg.eig(A)[1]) < 1e4:  # well-conditioned eigenvectors: the
        assert X is not None                       # NumPy path must answer itself
    if X is None:  # not clean: the dispatcher gives scipy's answer itself
        np.testing.assert_array_equal(sl.solve_continuous_lyapunov(A, Q), ref)
        return
    assert X.dtype == float
    sep = 2 * shift  # smallest |lambda_i + lambda_j|: the equation's conditioning
    bound = 1e3 * n * EPS * np.linalg.norm(A) / sep
    assert np.linalg.norm(X - ref) <= bound * np.linalg.norm(ref)


@settings(max_examples=120, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 16), st.floats(0.0, 0.99))
def test_discrete_lyapunov_agrees_with_scipy(seed, n, radius):
    a = _matrix(seed, n)
    rho = np.max(np.abs(np.linalg.eigvals(a)))
    if rho == 0:
        return
    a *= radius / rho
    q = np.eye(n)
    X = sl.discrete_lyapunov(a, q)
    ref = la.solve_discrete_lyapunov(a, q)
    assert X is not None
    # both are sums of positive semidefinite terms; 1/(1 - rho^2) bounds their growth
    bound = 1e3 * n * EPS * (1 + np.linalg.norm(a) ** 2) / (1 - radius ** 2)
    assert np.linalg.norm(X - ref) <= bound * np.linalg.norm(ref)


def test_discrete_lyapunov_refuses_a_spectral_radius_of_one():
    assert sl.discrete_lyapunov(np.array([[1.0]]), np.eye(1)) is None
    assert sl.discrete_lyapunov(_rotated_jordan(1, 3, 1.0), np.eye(3)) is None
    a = np.array([[0.3, 2.0], [0.0, 0.4]])
    np.testing.assert_allclose(sl.solve_discrete_lyapunov(a, np.eye(2)),
                               la.solve_discrete_lyapunov(a, np.eye(2)), rtol=1e-13)


@settings(max_examples=80, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 12))
def test_triangular_sylvester_agrees_with_lapack_ztrsyl(seed, n):
    A = _matrix(seed, n) - 4 * np.eye(n)
    S = la.schur(A.astype(complex), output="complex")[0]
    c = np.random.default_rng(seed).standard_normal(n) + 0j
    C = -np.outer(c, c.conj())
    ref, scale, info = la.lapack.ztrsyl(S, S, C, trana="N", tranb="C")
    assert info >= 0
    for Y in (sl.trsyl(S, C), sl.sylvester_triangular(S, C)):  # unchecked, then checked
        np.testing.assert_allclose(Y, ref / scale, rtol=1e-10,
                                   atol=1e-12 * np.abs(ref).max())


# ----------------------------------------------------------------- left eigenvectors
@settings(max_examples=150, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 20))
@example(724, 4)  # a defective eigenvalue: w^H v = 0
def test_left_eigenvectors_agree_with_scipy(seed, n):
    A = _matrix(seed, n)
    lam = sl.eigvals(A)
    W, ok = sl.left_eigvecs(A, lam)
    ref_lam, ref, right = la.eig(A, left=True, right=True)
    np.testing.assert_array_equal(lam, ref_lam)  # the same geev, the same order
    gaps = np.where(np.eye(n, dtype=bool), np.inf, np.abs(lam[:, None] - lam[None, :]))
    # an isolated, well-conditioned eigenvalue (condition 1/|w^H v| below 100, Wilkinson)
    # must get its left eigenvector from NumPy, not from the fallback
    overlap = np.abs(np.sum(ref.conj() * right, axis=0)) / (
        np.linalg.norm(ref, axis=0) * np.linalg.norm(right, axis=0))
    cond = np.full(n, np.inf)
    np.divide(1.0, overlap, out=cond, where=overlap > 0)
    easy = (gaps.min(axis=1) > 1e-3 * max(np.linalg.norm(A), 1e-300)) & (cond < 100)
    assert ok[easy].all()
    for i in np.flatnonzero(ok):
        w = W[:, i]
        r = ref[:, i] / np.linalg.norm(ref[:, i])
        assert np.linalg.norm(w.conj() @ A - lam[i] * w.conj()) <= 20 * n * EPS * \
            np.linalg.norm(A)
        gap = gaps[i].min()
        if gap > 1e-3 * np.linalg.norm(A):  # isolated: the direction is determined
            assert abs(abs(np.vdot(w, r)) - 1) <= 1e-9


@pytest.mark.parametrize("c", [1e-5, 1e-6, 1e-7])
def test_left_eigenvectors_of_an_ill_conditioned_pair_fall_back(c):
    """Two eigenvalues c apart with eigenvector condition ~1/c^2, hidden by an orthogonal
    similarity: NumPy's two geev runs (on A and on A^H) disagree beyond rounding, so the
    columns are not clean and eig_left returns scipy's left eigenvectors."""
    U = np.linalg.qr(np.random.default_rng(5).standard_normal((3, 3)))[0]
    A = U @ np.array([[1.0, 1 / c, 0.3], [0.0, 1.0 + c, 0.2], [0.0, 0.0, -2.0]]) @ U.T
    lam = sl.eigvals(A)
    _, ok = sl.left_eigvecs(A, lam)
    close = np.flatnonzero(np.abs(lam - 1.0) < 0.5)
    assert close.size == 2 and not ok[close].any()
    got_lam, got = sl.eig_left(A)
    ref_lam, ref = la.eig(A, left=True, right=False)
    np.testing.assert_array_equal(got, ref)
    np.testing.assert_array_equal(got_lam, ref_lam)


# ----------------------------------------------------------------- pivoted QR
@settings(max_examples=150, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 14), st.integers(1, 14),
       st.booleans())
def test_pivot_order_agrees_with_lapack_geqp3(seed, m, k, complex_):
    M = _matrix(seed, max(m, k))[:m, :k]
    if complex_:
        M = M + 1j * _matrix(seed + 7, max(m, k))[:m, :k]
    decided = min(m, k)
    piv = sl.pivot_order(M, decided)
    ref = la.qr(M, mode="economic", pivoting=True)[2]
    if piv is None:  # a near tie among the first choices: scipy decides
        np.testing.assert_array_equal(sl.qr_pivots(M, decided), ref)
        return
    r = min(m, k, np.linalg.matrix_rank(M))
    assert piv[:r].tolist() == ref[:r].tolist()


def test_pivot_order_refuses_a_tie_that_matters_only():
    M = np.array([[3.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])
    assert sl.pivot_order(M, 3) is None           # columns 1 and 2 tie at step 1
    assert sl.pivot_order(M, 1).tolist()[0] == 0  # only the first choice is needed
    np.testing.assert_array_equal(sl.qr_pivots(M, 3),
                                  la.qr(M, mode="economic", pivoting=True)[2])


def test_orth_matches_scipy():
    B = np.array([[1.0, 2.0, 3.0], [2.0, 4.0, 6.0], [0.0, 0.0, 1.0], [1.0, 2.0, 0.0]])
    np.testing.assert_array_equal(sl.orth(B), la.orth(B))
    assert sl.orth(np.zeros((3, 2))).shape == (3, 0)
