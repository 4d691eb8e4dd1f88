"""Dense linear algebra for small systems on NumPy alone, each result checked a posteriori.

Importing ``scipy.linalg`` costs about 0.16 s, more than the rest of an ``energy`` or
``modes`` run on a few states (issue 15; ``benchmarks/RESULTS.md``). Up to
:data:`~netctl.numeric.rank.SMALL_STATES` states the dense numeric analyses call the
functions here instead. Two kinds:

* the same LAPACK routine through NumPy (``geev`` for eigenvalues and right
  eigenvectors, ``gesdd`` for singular values, ``geqrf`` for the triangular factor of a
  QR decomposition, ``syevd`` for symmetric eigenvectors): the same algorithm, so no
  check is needed;
* a different algorithm for what NumPy lacks (the matrix exponential, a complex Schur
  form, Lyapunov and Sylvester equations, left eigenvectors, QR with column pivoting).
  Each of these returns ``None`` when its a-posteriori check is not clean (a Schur form
  whose computed lower triangle is above rounding, a Lyapunov residual above rounding,
  an ill-conditioned eigenvalue, a pivot choice decided by less than :data:`PIVOT_GAP`),
  and the caller then takes scipy.linalg's routine as before. So a verdict at the edge
  of precision is never decided by a weaker computation than scipy's.

The dispatchers (:func:`expm`, :func:`schur_complex`, ...) take the NumPy route for
matrices of at most :data:`~netctl.numeric.rank.SMALL_STATES` rows (read at call time)
and fall back on scipy.linalg above it or when a check fails.

References
----------
.. [1] N. J. Higham, "The scaling and squaring method for the matrix exponential
   revisited", SIAM J. Matrix Anal. Appl. 26(4):1179-1193, 2005. doi:10.1137/04061101X
.. [2] A. H. Al-Mohy, N. J. Higham, "A new scaling and squaring algorithm for the matrix
   exponential", SIAM J. Matrix Anal. Appl. 31(3):970-989, 2009.
   doi:10.1137/09074721X (DOI from memory)
.. [3] R. H. Bartels, G. W. Stewart, "Solution of the matrix equation AX + XB = C",
   Comm. ACM 15(9):820-826, 1972. doi:10.1145/361573.361582
.. [4] N. J. Higham, *Accuracy and Stability of Numerical Algorithms*, 2nd ed., SIAM,
   2002, ch. 16 (the residual of a Sylvester equation as its backward-error measure;
   from memory).
.. [5] P. Businger, G. H. Golub, "Linear least squares solutions by Householder
   transformations", Numer. Math. 7:269-276, 1965. doi:10.1007/BF01436084 (DOI from
   memory)
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

import numpy as np

__all__ = ["small", "expm_pade", "expm", "schur_from_eig", "schur_complex", "trsyl",
           "sylvester_triangular", "continuous_lyapunov", "solve_continuous_lyapunov",
           "discrete_lyapunov", "solve_discrete_lyapunov", "left_eigvecs", "eig_left",
           "orth", "pivot_order", "qr_pivots", "norm2", "svdvals", "svd", "eigvals",
           "eig", "eigvalsh", "eigh", "qr_r", "PIVOT_GAP", "RESIDUAL", "PADE_COND"]

_EPS = float(np.finfo(float).eps)
#: a-posteriori checks accept a residual (Schur form's lower triangle, Lyapunov and
#: Sylvester residuals, eigenvector residuals) up to RESIDUAL * n * eps times the scale
#: of the problem: the size of the rounding in forming the residual itself, about what
#: LAPACK's backward-stable routines leave (common practice, no source)
RESIDUAL = 10.0
#: the Pade denominator's 1-norm condition number may be at most PADE_COND * e^||X||_1:
#: q_m(X) ~ e^(-X/2), so it is about e^||X||_1 at most (at most 70 below theta_13) when
#: the approximant is what Higham's bound [1] assumes; a guard (common practice, no source)
PADE_COND = 2.0
#: QR with column pivoting: a pivot whose column norm is not ahead of the runner-up by
#: this relative gap is a tie that LAPACK's norm downdating (accurate to about
#: sqrt(eps)) might break the other way; scipy decides then (our choice, no source)
PIVOT_GAP = 1e-6

#: (degree m, theta_m): largest 1-norm for which the [m/m] Pade approximant has backward
#: error below the unit roundoff without scaling. m <= 9: Higham 2005 [1], Table 2.3;
#: m = 13: 4.25 from Al-Mohy & Higham 2009 [2] (smaller than 2005's 5.37, so the safer)
_THETA = ((3, 1.495585217958292e-2), (5, 2.539398330063230e-1),
          (7, 9.504178996162932e-1), (9, 2.097847961257068e0), (13, 4.25))


def small(n: int) -> bool:
    """Whether a problem with ``n`` states takes the NumPy route (``n`` at most
    :data:`~netctl.numeric.rank.SMALL_STATES`, read at call time)."""
    from netctl.numeric import rank

    return n <= rank.SMALL_STATES


def _scipy() -> Any:
    import scipy.linalg as la  # the fallback: loaded only when used

    return la


def _checked(n: int, route: Callable[..., np.ndarray | None], name: str,
             *args: Any) -> np.ndarray:
    """``route(*args)`` for a problem of ``n`` states when :func:`small` and its check is
    clean (not ``None``), else scipy.linalg's ``name`` on the same arguments."""
    if small(n):
        got = route(*args)
        if got is not None:
            return got
    return getattr(_scipy(), name)(*args)  # type: ignore[no-any-return]


# ---------------------------------------------------------------- same LAPACK routine
def norm2(A: np.ndarray) -> float:
    """Spectral norm (largest singular value, ``gesdd``)."""
    A = np.asarray(A)
    if A.size == 0:
        return 0.0
    return float(np.linalg.norm(A, 2)) if small(max(A.shape)) else float(
        _scipy().norm(A, 2))


def svdvals(A: np.ndarray) -> np.ndarray:
    """Singular values, descending (``gesdd``)."""
    A = np.asarray(A)
    if small(max(A.shape)):
        return np.linalg.svd(A, compute_uv=False)
    return _scipy().svd(A, compute_uv=False)  # type: ignore[no-any-return]


def svd(A: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Full SVD ``U, s, Vh`` (``gesdd``)."""
    A = np.asarray(A)
    if small(max(A.shape)):
        U, s, Vh = np.linalg.svd(A)
        return U, s, Vh
    return _scipy().svd(A)  # type: ignore[no-any-return]


def eigvals(A: np.ndarray) -> np.ndarray:
    """Eigenvalues (``geev``, no vectors)."""
    A = np.asarray(A)
    if A.size == 0:
        return np.zeros(0, complex)
    if small(A.shape[0]):
        return np.asarray(np.linalg.eigvals(A), complex)
    return _scipy().eigvals(A)  # type: ignore[no-any-return]


def eig(A: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Eigenvalues and right eigenvectors (``geev``)."""
    A = np.asarray(A)
    if small(A.shape[0]):
        lam, V = np.linalg.eig(A)
        return np.asarray(lam, complex), V
    return _scipy().eig(A)  # type: ignore[no-any-return]


def eigvalsh(A: np.ndarray) -> np.ndarray:
    """Symmetric eigenvalues, ascending."""
    A = np.asarray(A)
    if small(A.shape[0]):
        return np.linalg.eigvalsh(A)
    return _scipy().eigvalsh(A)  # type: ignore[no-any-return]


def eigh(A: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Symmetric eigenvalues (ascending) and orthonormal eigenvectors: NumPy's ``syevd``
    (scipy's default is ``syevr``; both backward stable, the vectors of a simple
    eigenvalue agree up to sign and rounding)."""
    A = np.asarray(A)
    if small(A.shape[0]):
        lam, V = np.linalg.eigh(A)
        return lam, V
    return _scipy().eigh(A)  # type: ignore[no-any-return]


def qr_r(G: np.ndarray) -> np.ndarray:
    """The triangular factor ``R`` of ``G = Q R`` (``geqrf``; ``min(m, n)`` rows)."""
    G = np.asarray(G)
    if small(min(G.shape)):
        return np.asarray(np.linalg.qr(G, mode="r"))
    return _scipy().qr(G, mode="r")[0][:min(G.shape)]  # type: ignore[no-any-return]


def orth(B: np.ndarray) -> np.ndarray:
    """Orthonormal basis of ``range(B)`` from the SVD, with scipy.linalg.orth's rank rule
    (singular values above ``max(s) * eps * max(shape)``)."""
    B = np.asarray(B)
    if not small(max(B.shape)):
        return _scipy().orth(B)  # type: ignore[no-any-return]
    U, s, Vh = np.linalg.svd(B, full_matrices=False)
    tol = np.amax(s, initial=0.0) * _EPS * max(U.shape[0], Vh.shape[1])
    return U[:, :int(np.sum(s > tol))]


# ---------------------------------------------------------------- matrix exponential
def _pade_coefficients(m: int) -> list[float]:
    """``c_j = (2m - j)! m! / ((2m)! j! (m - j)!)``: the [m/m] Pade approximant of
    ``e^x`` is ``p(x) / p(-x)`` with ``p(x) = sum_j c_j x^j`` [1]_."""
    f = math.factorial
    return [f(2 * m - j) * f(m) / (f(2 * m) * f(j) * f(m - j)) for j in range(m + 1)]


def expm_pade(X: np.ndarray) -> np.ndarray | None:
    r"""``e^X`` by one diagonal Pade approximant, no scaling (Higham 2005 [1]_), or
    ``None`` when ``||X||_1`` exceeds every ``theta_m`` (squarings would be needed,
    whose rounding can grow for a nonnormal ``X``: scipy's algorithm then) or the
    denominator is worse conditioned than ``PADE_COND * e^||X||_1``.

    The degree is the smallest ``m`` in 3, 5, 7, 9, 13 with ``||X||_1 <= theta_m``, for
    which the approximant is ``e^(X + dX)`` with ``||dX|| <= u ||X||`` (unit roundoff
    ``u``); ``U`` and ``V`` are evaluated as in [1]_, Algorithm 2.3, and
    ``e^X ~ (V - U)^{-1} (V + U)``.
    """
    X = np.asarray(X)
    n = X.shape[0]
    if n == 0:
        return np.zeros((0, 0), X.dtype if np.iscomplexobj(X) else float)
    if not np.all(np.isfinite(X)):
        return None
    norm1 = float(np.abs(X).sum(axis=0).max())
    for m, theta in _THETA:
        if norm1 <= theta:
            break
    else:
        return None
    b = _pade_coefficients(m)
    eye = np.eye(n)
    X2 = X @ X
    if m == 13:
        X4 = X2 @ X2
        X6 = X4 @ X2
        U = X @ (X6 @ (b[13] * X6 + b[11] * X4 + b[9] * X2)
                 + b[7] * X6 + b[5] * X4 + b[3] * X2 + b[1] * eye)
        V = (X6 @ (b[12] * X6 + b[10] * X4 + b[8] * X2)
             + b[6] * X6 + b[4] * X4 + b[2] * X2 + b[0] * eye)
    else:
        powers = [eye, X2]
        while len(powers) <= m // 2:
            powers.append(powers[-1] @ X2)
        U = X @ sum(b[2 * k + 1] * powers[k] for k in range((m + 1) // 2))
        V = sum(b[2 * k] * powers[k] for k in range(m // 2 + 1))
    Q = V - U
    if not np.linalg.cond(Q, 1) <= PADE_COND * math.exp(norm1):
        return None
    return np.linalg.solve(Q, V + U)


def expm(X: np.ndarray, n_states: int) -> np.ndarray:
    """``e^X``: :func:`expm_pade` for a problem of at most ``SMALL_STATES`` states when
    it is clean, else ``scipy.linalg.expm``."""
    return _checked(n_states, expm_pade, "expm", X)


# ---------------------------------------------------------------- Schur form
def schur_from_eig(M: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
    r"""Complex Schur form ``M = Q S Q^H`` (``S`` upper triangular, ``Q`` unitary) from
    the eigenvectors, or ``None`` when it is not clean.

    With ``M V = V Lambda`` and ``V = Q R`` (Householder QR: ``Q`` is unitary to
    rounding whatever ``V``'s condition), ``Q^H M Q = R Lambda R^{-1}`` is upper
    triangular in exact arithmetic. ``T = Q^H M Q`` is formed and its strictly lower
    triangle must be at most ``RESIDUAL * n * eps * ||M||_F``; then ``S = triu(T)`` is
    the Schur form of ``M + E`` with ``||E||`` of that order, the backward error of
    LAPACK's Schur routine. Close or defective eigenvalues make ``V`` ill-conditioned,
    the lower triangle large and the answer ``None``.
    """
    M = np.asarray(M, complex)
    n = M.shape[0]
    if n == 0:
        return np.zeros((0, 0), complex), np.zeros((0, 0), complex)
    if not np.all(np.isfinite(M)):
        return None
    _, V = np.linalg.eig(M)
    Q = np.linalg.qr(V)[0]
    T = Q.conj().T @ M @ Q
    scale = max(float(np.linalg.norm(M)), np.finfo(float).tiny)
    limit = RESIDUAL * n * _EPS
    if float(np.linalg.norm(np.tril(T, -1))) > limit * scale:
        return None
    if float(np.linalg.norm(Q.conj().T @ Q - np.eye(n))) > limit:
        return None
    return np.triu(T), Q


def schur_complex(M: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Complex Schur form ``(S, Q)`` with ``M = Q S Q^H``: :func:`schur_from_eig` when
    small and clean, else ``scipy.linalg.schur(..., output="complex")``."""
    M = np.asarray(M, complex)
    if small(M.shape[0]):
        got = schur_from_eig(M)
        if got is not None:
            return got
    S, Q = _scipy().schur(M, output="complex")
    return S, Q


# ---------------------------------------------------------------- Sylvester, Lyapunov
def trsyl(S: np.ndarray, C: np.ndarray) -> np.ndarray:
    r"""``Y`` with ``S Y + Y S^H = C`` for upper triangular ``S`` (Bartels & Stewart
    [3]_): column ``j`` solves ``(S + conj(s_jj) I) y_j = c_j - sum_{k>j} conj(s_jk)
    y_k``, from the last column to the first. No check here (see
    :func:`sylvester_triangular`)."""
    n = S.shape[0]
    Y = np.zeros((n, n), complex)
    eye = np.eye(n)
    for j in range(n - 1, -1, -1):
        rhs = C[:, j] - Y[:, j + 1:] @ np.conj(S[j, j + 1:])
        Y[:, j] = np.linalg.solve(S + np.conj(S[j, j]) * eye, rhs)
    return Y


def _residual_ok(R: np.ndarray, scale: float, n: int) -> bool:
    return bool(np.all(np.isfinite(R))) and \
        float(np.linalg.norm(R)) <= RESIDUAL * max(n, 1) * _EPS * scale


def sylvester_triangular(S: np.ndarray, C: np.ndarray) -> np.ndarray:
    """``Y`` with ``S Y + Y S^H = C`` (``S`` upper triangular): :func:`trsyl` when small
    and its residual is at rounding level (relative to ``2 ||S|| ||Y|| + ||C||``), else
    LAPACK's ``ztrsyl`` through scipy."""
    n = S.shape[0]
    if small(n):
        try:
            Y = trsyl(S, C)
        except np.linalg.LinAlgError:
            Y = None
        if Y is not None:
            R = S @ Y + Y @ S.conj().T - C
            scale = 2 * float(np.linalg.norm(S) * np.linalg.norm(Y)) + float(
                np.linalg.norm(C))
            if _residual_ok(R, scale, n):
                return Y
    la = _scipy()
    Y, sc, info = la.lapack.ztrsyl(S, S, C, trana="N", tranb="C")
    if info < 0:  # pragma: no cover - bad arguments: a programming error
        raise RuntimeError(f"ztrsyl failed (info {info})")
    return Y / sc  # type: ignore[no-any-return]


def continuous_lyapunov(A: np.ndarray, Q: np.ndarray) -> np.ndarray | None:
    r"""``X`` with ``A X + X A^H = Q`` (Bartels & Stewart [3]_ on
    :func:`schur_from_eig`), or ``None`` when the Schur form is not clean or the
    residual ``||A X + X A^H - Q||_F`` exceeds ``RESIDUAL * n * eps (2 ||A||_F ||X||_F
    + ||Q||_F)`` [4]_. Real ``A`` and ``Q`` give a real ``X``."""
    A = np.asarray(A)
    Q = np.asarray(Q)
    n = A.shape[0]
    if n == 0:
        return np.zeros((0, 0))
    got = schur_from_eig(A)
    if got is None:
        return None
    S, U = got
    try:
        Y = trsyl(S, U.conj().T @ Q @ U)
    except np.linalg.LinAlgError:
        return None
    X = U @ Y @ U.conj().T
    if not (np.iscomplexobj(A) or np.iscomplexobj(Q)):
        X = X.real
    R = A @ X + X @ A.conj().T - Q
    scale = 2 * float(np.linalg.norm(A) * np.linalg.norm(X)) + float(np.linalg.norm(Q))
    return X if _residual_ok(R, scale, n) else None


def solve_continuous_lyapunov(A: np.ndarray, Q: np.ndarray) -> np.ndarray:
    """``A X + X A^H = Q``: :func:`continuous_lyapunov` when small and clean, else
    ``scipy.linalg.solve_continuous_lyapunov``."""
    return _checked(np.asarray(A).shape[0], continuous_lyapunov,
                    "solve_continuous_lyapunov", A, Q)


def discrete_lyapunov(a: np.ndarray, q: np.ndarray, max_doublings: int = 64
                      ) -> np.ndarray | None:
    r"""``X`` with ``a X a^H - X + q = 0``, i.e. ``X = sum_k a^k q (a^H)^k``, by Smith's
    doubling (``X <- X + a_k X a_k^H``, ``a_k <- a_k^2``), or ``None`` when the series
    has not converged within ``max_doublings`` (spectral radius not clearly below 1)
    or the residual exceeds ``RESIDUAL * n * eps (||a||_F^2 ||X||_F + ||X||_F +
    ||q||_F)`` [4]_.

    References
    ----------
    .. [1] R. A. Smith, "Matrix equation XA + BX = C", SIAM J. Appl. Math.
       16(1):198-201, 1968. doi:10.1137/0116017 (DOI from memory)
    """
    a = np.asarray(a)
    q = np.asarray(q)
    n = a.shape[0]
    if n == 0:
        return np.zeros((0, 0))
    if not (np.all(np.isfinite(a)) and np.all(np.isfinite(q))):
        return None
    X = np.array(q, dtype=np.result_type(a, q, float))
    ak = np.array(a, dtype=X.dtype)
    with np.errstate(over="ignore", invalid="ignore"):
        for _ in range(max_doublings):
            X = X + ak @ X @ ak.conj().T
            ak = ak @ ak
            size = float(np.linalg.norm(ak))
            if not np.isfinite(size):
                return None
            if size * size <= _EPS / (4 * n):
                X = X + ak @ X @ ak.conj().T  # the last term, below rounding
                break
        else:
            return None
    R = a @ X @ a.conj().T - X + q
    scale = float(np.linalg.norm(a)) ** 2 * float(np.linalg.norm(X)) + float(
        np.linalg.norm(X)) + float(np.linalg.norm(q))
    return X if _residual_ok(R, scale, n) else None


def solve_discrete_lyapunov(a: np.ndarray, q: np.ndarray) -> np.ndarray:
    """``a X a^H - X + q = 0``: :func:`discrete_lyapunov` when small and clean, else
    ``scipy.linalg.solve_discrete_lyapunov``."""
    return _checked(np.asarray(a).shape[0], discrete_lyapunov, "solve_discrete_lyapunov",
                    a, q)


# ---------------------------------------------------------------- left eigenvectors
def left_eigvecs(A: np.ndarray, lam: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    r"""Unit left eigenvectors ``w_i`` (``w_i^H A = lam_i w_i^H``) for the eigenvalues
    ``lam`` of ``A`` (as :func:`eigvals` gives them), and which of them are clean.

    From the right eigenvectors of ``A^H`` (``geev``): each ``lam_i`` is paired with the
    nearest conjugated eigenvalue of ``A^H``. Column ``i`` is clean when no other
    ``lam_k`` takes the same partner and the residual ``||A^H w - conj(lam_i) w||`` is at
    most ``RESIDUAL * n * eps ||A||_F`` -- so an ill-conditioned eigenvalue (whose two
    computed values differ by more than rounding), a Jordan block or two eigenvalues too
    close to tell apart are not clean; the callers need clean columns only for simple,
    isolated eigenvalues and take scipy's ``eig(A, left=True)`` otherwise.
    """
    A = np.asarray(A)
    n = A.shape[0]
    out = np.full((n, n), np.nan, complex)
    ok = np.zeros(n, bool)
    if n == 0 or not np.all(np.isfinite(A)):
        return out, ok
    mu, V = np.linalg.eig(A.conj().T)
    partner = np.asarray(np.conj(mu), complex)
    scale = max(float(np.linalg.norm(A)), np.finfo(float).tiny)
    limit = RESIDUAL * n * _EPS * scale
    AH = A.conj().T
    pick = np.argmin(np.abs(np.asarray(lam, complex)[:, None] - partner[None, :]), axis=1)
    shared = np.bincount(pick, minlength=n) > 1
    for i in range(n):
        j = int(pick[i])
        w = V[:, j] / np.linalg.norm(V[:, j])
        out[:, i] = w
        ok[i] = (not shared[j]) and float(
            np.linalg.norm(AH @ w - np.conj(lam[i]) * w)) <= limit
    return out, ok


def eig_left(A: np.ndarray, cols: Any = None) -> tuple[np.ndarray, np.ndarray]:
    """Eigenvalues and left eigenvectors like ``scipy.linalg.eig(A, left=True,
    right=False)``. Small: the eigenvalues are ``geev``'s (:func:`eigvals`) and the
    left eigenvectors :func:`left_eigvecs`'s when the columns ``cols(lam)`` (default
    all) are clean; otherwise, or above the bound, scipy's call as before."""
    A = np.asarray(A)
    n = A.shape[0]
    if small(n) and n:
        lam = eigvals(A)
        VL, ok = left_eigvecs(A, lam)
        want = range(n) if cols is None else cols(lam)
        if all(ok[int(i)] for i in want):
            return lam, VL
    lam, VL = _scipy().eig(A, left=True, right=False)
    return lam, VL


# ---------------------------------------------------------------- pivoted QR
def pivot_order(M: np.ndarray, decided: int) -> np.ndarray | None:
    r"""Column order of QR with column pivoting (Businger & Golub [5]_): at each step
    the remaining column of largest norm (norms recomputed, not downdated), or ``None``
    when one of the first ``decided`` choices is not ahead of the runner-up by the
    relative gap :data:`PIVOT_GAP` (LAPACK's ``geqp3`` might then choose differently)."""
    R = np.array(M, dtype=np.result_type(M, float))
    m, k = R.shape
    piv = np.arange(k)
    for j in range(min(m, k)):
        norms = np.linalg.norm(R[j:, j:], axis=0)
        p = int(np.argmax(norms))
        if j < decided and norms.size > 1:
            second = float(np.partition(norms, -2)[-2])
            if norms[p] - second <= PIVOT_GAP * norms[p]:
                return None
        if p:
            R[:, [j, j + p]] = R[:, [j + p, j]]
            piv[[j, j + p]] = piv[[j + p, j]]
        x = R[j:, j]
        alpha = float(np.linalg.norm(x))
        if alpha == 0.0:
            continue
        v = x.copy()
        phase = x[0] / abs(x[0]) if x[0] != 0 else 1.0
        v[0] += phase * alpha
        v = v / np.linalg.norm(v)
        R[j:, j:] -= 2.0 * np.outer(v, v.conj() @ R[j:, j:])
    return piv


def qr_pivots(M: np.ndarray, decided: int) -> np.ndarray:
    """Column order of QR with column pivoting: :func:`pivot_order` when small and
    every choice that matters is clear, else ``scipy.linalg.qr(..., pivoting=True)``."""
    if small(max(np.asarray(M).shape)):
        piv = pivot_order(M, decided)
        if piv is not None:
            return piv
    return _scipy().qr(M, mode="economic", pivoting=True)[2]  # type: ignore[no-any-return]
