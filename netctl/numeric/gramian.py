"""Controllability Gramians as Cholesky factors, so they stay positive semidefinite.

A Gramian ``W = L L^T`` formed from its factor can never show a negative eigenvalue,
and its small eigenvalues come out as squares of the factor's singular values, which
keeps about twice the digits of forming ``W`` and then taking eigenvalues.

* Infinite horizon (Hurwitz ``A``): Hammarling's method [1]_ solves the Lyapunov
  equation for the triangular factor directly, on the complex Schur form.
* Finite horizon: composite Gauss-Legendre quadrature of
  ``int_0^T e^{At} B B^T e^{A^T t} dt``; the nodes have positive weights, so the
  quadrature sum is itself a factored (PSD) Gramian.
* :func:`gramian_mp`: the same Gramians in ``mpmath`` arithmetic with any number of
  digits (Taylor series and squaring), for the true smallest eigenvalue of small systems.

References
----------
.. [1] S. J. Hammarling, "Numerical solution of the stable, non-negative definite
   Lyapunov equation", IMA J. Numer. Anal. 2(3):303-323, 1982. doi:10.1093/imanum/2.3.303
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from netctl._jit import THRESHOLD, always_compiled, always_python, njit
from dataclasses import dataclass

from netctl.errors import OptionError
from netctl.numeric import _small_linalg as sl

__all__ = ["lyapunov_factor", "finite_horizon_factor", "gramian_factor", "gramian_mp",
           "factor_eigenvalues", "PRECISION_BUDGET", "max_precision", "SmallestEigenvalue",
           "smallest_eigenvalue_mp", "single_input_plan", "single_input_gramian"]

#: mpmath work allowed, in n^3 * digits: the --precision cost limit (about a minute on a
#: 2-core machine of 2026; our choice, no published source)
PRECISION_BUDGET = 8e8
_NODES = 32  # Gauss-Legendre nodes per panel


@njit(cache=True, nogil=True)
def _hammarling_kernel(S: np.ndarray, R: np.ndarray) -> np.ndarray:  # pragma: no cover
    """Upper triangular ``U`` with ``S^H (U^H U) + (U^H U) S = -R^H R`` (S upper
    triangular with eigenvalues in the open left half plane, R upper triangular)."""
    n = S.shape[0]
    U = np.zeros((n, n), dtype=np.complex128)
    R = R.copy()
    for j in range(n):
        s11 = S[j, j]
        nu = math.sqrt(-2.0 * s11.real)
        r11 = R[j, j]
        a = abs(r11)
        if a > 0.0:
            ph = np.conj(r11) / a
            for k in range(j, n):
                R[j, k] = R[j, k] * ph
        alpha = a / nu
        U[j, j] = alpha
        if j == n - 1:
            break
        m = n - j - 1
        # u (S2 + conj(s11) I) = -nu r - alpha s: forward substitution on columns
        rhs = np.empty(m, dtype=np.complex128)
        for k in range(m):
            rhs[k] = -nu * R[j, j + 1 + k] - alpha * S[j, j + 1 + k]
        u = np.empty(m, dtype=np.complex128)
        for k in range(m):
            acc = rhs[k]
            for i in range(k):
                acc -= u[i] * S[j + 1 + i, j + 1 + k]
            u[k] = acc / (S[j + 1 + k, j + 1 + k] + np.conj(s11))
        y = np.empty(m, dtype=np.complex128)
        for k in range(m):
            U[j, j + 1 + k] = u[k]
            y[k] = R[j, j + 1 + k] - nu * u[k]
        # R2^H R2 + y^H y = R2'^H R2' by Givens rotations (Cholesky update)
        for i in range(m):
            p = j + 1 + i
            a_ = R[p, p]
            b_ = y[i]
            r = math.sqrt(abs(a_) ** 2 + abs(b_) ** 2)
            if r == 0.0:
                continue
            ca = np.conj(a_) / r
            cb = np.conj(b_) / r
            for k in range(i, m):
                q = j + 1 + k
                x1 = R[p, q]
                x2 = y[k]
                R[p, q] = ca * x1 + cb * x2
                y[k] = (-b_ * x1 + a_ * x2) / r
            y[i] = 0.0
    return U


def _real_factor(L: np.ndarray) -> np.ndarray:
    """Real lower-triangular ``F`` (n x n) with ``F F^T = Re(L L^H)``."""
    n = L.shape[0]
    G = np.hstack([L.real, L.imag]) if np.iscomplexobj(L) else L
    if G.shape[1] == 0:
        return np.zeros((n, n))
    R = sl.qr_r(G.T)
    F = np.zeros((n, n))
    F[:, :min(n, R.shape[0])] = R[:n].T
    return F


def lyapunov_factor(A: np.ndarray, B: np.ndarray) -> np.ndarray:
    r"""Real lower-triangular ``L`` with ``W = L L^T`` solving ``A W + W A^T + B B^T = 0``.

    Hammarling's method [1]_: with the complex Schur form ``A^H = Q S Q^H`` and the QR
    factor ``R`` of ``B^H Q``, the equation becomes ``S^H Y + Y S = -R^H R`` for
    ``Y = Q^H W Q``, solved row by row for the triangular ``U`` in ``Y = U^H U``
    (``O(n^3)``, compiled). Needs Hurwitz ``A``.

    References
    ----------
    .. [1] S. J. Hammarling, IMA J. Numer. Anal. 2(3):303-323, 1982.

    Examples
    --------
    >>> import numpy as np
    >>> L = lyapunov_factor(np.diag([-1.0, -2.0]), np.ones((2, 1)))
    >>> (L @ L.T).round(6).tolist()
    [[0.5, 0.333333], [0.333333, 0.25]]
    """
    A = np.asarray(A, float)
    B = np.asarray(B, float)
    n = A.shape[0]
    if n == 0:
        return np.zeros((0, 0))
    S, Q = sl.schur_complex(A.conj().T)
    C = B.conj().T @ Q
    R = np.zeros((n, n), complex)
    if C.shape[0]:
        Rc = sl.qr_r(C)
        R[:min(n, Rc.shape[0])] = Rc[:n]
    # the kernel's path (its Python body or numba's) is chosen by size alone, never by
    # whether numba happens to be loaded in this process: the two round differently, and
    # the same input must give the same bytes everywhere (e.g. once the executor's
    # workers have been started, which loads numba in this process)
    path = always_python if S.size + R.size < THRESHOLD else always_compiled
    with path():
        U = _hammarling_kernel(np.ascontiguousarray(S), R)
    return _real_factor(Q @ U.conj().T)


def finite_horizon_factor(A: np.ndarray, B: np.ndarray, horizon: float) -> np.ndarray:
    r"""Real factor ``L`` (n x n) of ``W(T) = int_0^T e^{At} B B^T e^{A^T t} dt``.

    Composite Gauss-Legendre quadrature, 32 nodes per panel and panels of length at
    most ``1 / (2 ||A||_2)``: ``W ~ sum_k w_k (e^{A t_k} B)(e^{A t_k} B)^T`` with
    positive weights, so ``L`` is the triangular factor of the stacked columns
    ``sqrt(w_k) e^{A t_k} B``. The error is far below rounding for these panel sizes
    (the integrand is entire), and exactly zero when ``A`` is nilpotent of index below
    64 (the integrand is then a polynomial of degree below 64).

    References
    ----------
    .. [1] G. H. Golub, J. H. Welsch, "Calculation of Gauss quadrature rules", Math.
       Comp. 23(106):221-230, 1969. doi:10.1090/S0025-5718-69-99647-1
    """
    A = np.asarray(A, float)
    B = np.asarray(B, float)
    n = A.shape[0]
    if n == 0:
        return np.zeros((0, 0))
    T = float(horizon)
    panels = max(1, int(math.ceil(2.0 * sl.norm2(A) * T)))
    h = T / panels
    x, w = np.polynomial.legendre.leggauss(_NODES)
    t_local = (x + 1.0) * h / 2.0
    w_local = w * h / 2.0
    times = (np.arange(panels)[:, None] * h + t_local[None, :]).ravel()
    weights = np.tile(w_local, panels)
    cols = []
    X = B.copy()
    prev = 0.0
    step_cache: dict[float, np.ndarray] = {}
    for t, wk in zip(times.tolist(), weights.tolist()):
        dt = round(t - prev, 15)
        E = step_cache.get(dt)
        if E is None:
            E = sl.expm(A * (t - prev), n)
            step_cache[dt] = E
        X = E @ X
        prev = t
        cols.append(math.sqrt(wk) * X)
    return _real_factor(np.hstack(cols))


def gramian_factor(A: np.ndarray, B: np.ndarray, horizon: float | None) -> np.ndarray:
    """Factor ``L`` of the Gramian: :func:`lyapunov_factor` for ``horizon=None``, else
    :func:`finite_horizon_factor`.

    References
    ----------
    .. [1] S. J. Hammarling, IMA J. Numer. Anal. 2(3):303-323, 1982.
       doi:10.1093/imanum/2.3.303
    """
    if horizon is None:
        return lyapunov_factor(A, B)
    return finite_horizon_factor(A, B, horizon)


def factor_eigenvalues(L: np.ndarray) -> np.ndarray:
    """Eigenvalues of ``L L^T`` (ascending, never negative): squared singular values.

    References
    ----------
    .. [1] G. H. Golub, C. F. Van Loan, *Matrix Computations*, 4th ed., Johns Hopkins
       University Press, 2013, section 8.6 (singular values; from memory).
    """
    if L.size == 0:
        return np.zeros(L.shape[0])
    s = sl.svdvals(L)
    return np.sort(s ** 2)


def max_precision(n: int) -> int:
    """Most decimal digits :func:`gramian_mp` is allowed for ``n`` states.

    References
    ----------
    .. [1] F. Johansson et al., mpmath: a Python library for arbitrary-precision
       floating-point arithmetic, https://mpmath.org (cost grows like n^3 x digits;
       the budget itself is common practice, no source).
    """
    return int(min(1000, PRECISION_BUDGET / max(n, 1) ** 3))


def gramian_mp(A: np.ndarray, B: np.ndarray, horizon: float | None, digits: int) -> Any:
    r"""The Gramian in ``mpmath`` with ``digits`` decimal digits (an ``mp.matrix``).

    Finite horizon: ``W(T) = sum_{j,k} v_j v_k^T T / (j + k + 1)`` with
    ``v_j = (AT)^j B / j!`` (term-by-term integral of the exponential series, truncated
    when the terms fall below ``10^-digits`` of the first). Infinite horizon (Hurwitz
    ``A``): ``W(2t) = W(t) + e^{At} W(t) e^{A^T t}`` repeated until ``e^{At}`` is below
    ``10^-digits``. The stored double entries of ``A`` and ``B`` are taken as exact.

    References
    ----------
    .. [1] T. Kailath, *Linear Systems*, Prentice-Hall, 1980 (the Gramian's integral
       and its doubling identity; from memory).
    """
    import mpmath

    n = A.shape[0]
    norm_a = sl.norm2(A) if n else 0.0
    with mpmath.workdps(digits + 10 + int(math.ceil(norm_a * (horizon or 1.0) / 2.302))):
        Am = mpmath.matrix(A.tolist())
        Bm = mpmath.matrix(B.tolist()) if B.size else mpmath.matrix(n, 0)
        if horizon is None:
            t = 1.0 / max(norm_a, 1e-12)
            W = _series_gramian(Am, Bm, mpmath.mpf(t), digits)
            Phi = _series_expm(Am, mpmath.mpf(t), digits)
            for _ in range(200):
                W = W + Phi * W * Phi.T
                if mpmath.mnorm(Phi, 1) < mpmath.mpf(10) ** (-digits - 5):
                    break
                Phi = Phi * Phi
            out = W
        else:
            out = _series_gramian(Am, Bm, mpmath.mpf(horizon), digits)
    return out


def _series_gramian(Am: Any, Bm: Any, T: Any, digits: int) -> Any:
    import mpmath

    n = Am.rows
    m = Bm.cols
    if m == 0:
        return mpmath.zeros(n, n)
    vs = [Bm]
    tol = mpmath.mpf(10) ** (-digits - 5) * max(mpmath.mnorm(Bm, 1), mpmath.mpf(1e-300))
    j = 0
    while True:
        j += 1
        v = Am * vs[-1] * (T / j)
        vs.append(v)
        if mpmath.mnorm(v, 1) < tol and j > 2 or j > 10000:
            break
    J = len(vs)
    V = mpmath.matrix(n, J * m)
    for a, va in enumerate(vs):
        for i in range(n):
            for c in range(m):
                V[i, a * m + c] = va[i, c]
    H = mpmath.matrix(J * m, J * m)
    for a in range(J):
        for b in range(J):
            h = T / (a + b + 1)
            for c in range(m):
                H[a * m + c, b * m + c] = h
    return (V * H) * V.T


def _series_expm(Am: Any, t: Any, digits: int) -> Any:
    import mpmath

    n = Am.rows
    E = mpmath.eye(n)
    term = mpmath.eye(n)
    tol = mpmath.mpf(10) ** (-digits - 5)
    for j in range(1, 10000):
        term = term * Am * (t / j)
        E += term
        if mpmath.mnorm(term, 1) < tol:
            break
    return E


@dataclass(frozen=True)
class SmallestEigenvalue:
    """The Gramian's extreme eigenvalues in ``digits``-digit arithmetic.

    ``resolved``: ``smallest`` exceeds the error bound ``10^-(digits-5) * largest``
    (Weyl: every entry carries a relative error below ``10^-digits``), so it is the true
    value to the digits shown and certainly positive. Otherwise ``smallest`` is only
    known to lie below ``bound``; ``digits_needed`` suggests a rerun.
    """

    digits: int
    smallest: str
    largest: str
    bound: str
    resolved: bool
    digits_needed: int

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (decimal strings keep every digit)."""
        return {"digits": self.digits, "smallest": self.smallest, "largest": self.largest,
                "error_bound": self.bound, "resolved": self.resolved,
                "digits_needed": self.digits_needed}


def smallest_eigenvalue_mp(A: np.ndarray, B: np.ndarray, horizon: float | None,
                           digits: int) -> SmallestEigenvalue:
    """Smallest and largest eigenvalue of the Gramian with ``digits`` decimal digits
    (:func:`gramian_mp`, then ``mpmath.eigsy``).

    References
    ----------
    .. [1] H. Weyl, "Das asymptotische Verteilungsgesetz der Eigenwerte linearer
       partieller Differentialgleichungen", Math. Ann. 71:441-479, 1912 (the
       perturbation bound used for ``resolved``).
    """
    import mpmath

    W = gramian_mp(np.asarray(A, float), np.asarray(B, float), horizon, digits)
    with mpmath.workdps(digits + 10):
        ev = sorted(mpmath.eigsy(W, eigvals_only=True)) if W.rows else [mpmath.mpf(0)]
        lo, hi = ev[0], ev[-1]
        bound = mpmath.mpf(10) ** (-(digits - 5)) * max(abs(hi), mpmath.mpf(1e-300))
        resolved = bool(lo > bound)
        if resolved:
            need = digits
        else:
            need = 2 * digits
        show = max(6, min(digits - 5, 20))
        return SmallestEigenvalue(digits, mpmath.nstr(lo if resolved else max(lo, 0), show),
                                  mpmath.nstr(hi, show), mpmath.nstr(bound, 3), resolved,
                                  int(need))


# ---------------------------------------------------------------- dense Gramians, horizon
def _gramian_vanloan(A: np.ndarray, B: np.ndarray, horizon: float | None = None
                     ) -> np.ndarray:
    """Unfactored Gramian (Bartels-Stewart or Van Loan [1]_): fast, for greedy gains.

    On a small system (:func:`netctl.numeric._small_linalg.small`) whose Van Loan
    exponential would need squarings (``||M T||_1`` above ``theta_13``), the finite
    horizon Gramian is the quadrature of :func:`finite_horizon_factor` instead, whose
    steps never do (NumPy alone, issue 15).

    References
    ----------
    .. [1] C. F. Van Loan, IEEE TAC 23(3):395-404, 1978. doi:10.1109/TAC.1978.1101743
    """
    A = np.asarray(A, dtype=float)
    B = np.asarray(B, dtype=float)
    n = A.shape[0]
    Q = B @ B.T
    if horizon is None:
        W = sl.solve_continuous_lyapunov(A, -Q)
    else:
        M = np.zeros((2 * n, 2 * n))
        M[:n, :n] = -A
        M[:n, n:] = Q
        M[n:, n:] = A.T
        F = sl.expm_pade(M * float(horizon)) if sl.small(n) else None
        if F is None and sl.small(n) and n:
            L = finite_horizon_factor(A, B, float(horizon))
            W = L @ L.T
        else:
            if F is None:
                F = sl.expm(M * float(horizon), n)
            W = F[n:, n:].T @ F[:n, n:]
    return (W + W.T) / 2


def _is_hurwitz(A: np.ndarray) -> bool:
    if A.shape[0] == 0:
        return True
    return bool(np.max(sl.eigvals(A).real) < -1e-9 * max(1.0, float(np.linalg.norm(A))))


def _choose_horizon(A: np.ndarray, horizon: float | None) -> tuple[float | None, str]:
    if horizon is not None and horizon == np.inf:
        if not _is_hurwitz(A):
            lam = sl.eigvals(A)
            worst = lam[int(np.argmax(lam.real))]
            what = ("singular (an eigenvalue is 0)" if np.min(np.abs(lam)) <=
                    1e-12 * max(1.0, float(np.linalg.norm(A))) else
                    f"not Hurwitz (eigenvalue {complex(worst):.4g})")
            raise OptionError(f"the infinite-horizon Gramian needs a stable A, but A is "
                              f"{what}; give a finite horizon (e.g. --horizon 1).")
        return None, "infinite horizon (A is Hurwitz: Lyapunov equation)"
    if horizon is not None:
        if not (np.isfinite(horizon) and horizon > 0):
            raise OptionError(f"horizon must be a positive number of time units, found "
                              f"{horizon!r}; omit it for the infinite-horizon Gramian of a "
                              "stable system.")
        return float(horizon), f"finite horizon T = {horizon:g}"
    if _is_hurwitz(A):
        return None, "infinite horizon (A is Hurwitz: Lyapunov equation)"
    return 1.0, "finite horizon T = 1 (A is not Hurwitz, so the infinite-horizon Gramian " \
                "does not exist)"


def _logdet(W: np.ndarray) -> float:
    sign, ld = np.linalg.slogdet(W)
    return float(ld) if sign > 0 else -np.inf


def _check_finite(A: np.ndarray, B: np.ndarray, names: tuple[str, ...]) -> None:
    for M, what in ((A, "A"), (B, "B")):
        if M.size and not np.all(np.isfinite(M)):
            i, j = np.argwhere(~np.isfinite(M))[0]
            where = (f"{names[i]} <- {names[j]}" if what == "A" else f"{names[i]}, input {j}")
            raise OptionError(f"{what}[{where}] is {M[i, j]!r}; Gramians need finite "
                              "weights. Fix that weight in the file, or choose sampled "
                              "--weights.")


# ---------------------------------------------------------------- many single-input Gramians
def single_input_plan(A: np.ndarray, horizon: float | None) -> tuple[Any, ...]:
    """What every single-input Gramian of ``A`` over ``horizon`` shares, computed once.

    Infinite horizon (Hurwitz ``A``): the complex Schur form ``A = Q S Q^H`` (Bartels &
    Stewart [1]_); each Gramian is then one triangular Sylvester solve. Finite horizon:
    the step matrices ``e^{A dt}`` of the Gauss-Legendre nodes of
    :func:`finite_horizon_factor` (a few dozen distinct steps); each Gramian is then a
    chain of matrix-vector products. Pass the plan to :func:`single_input_gramian`
    (it is what an executor sends to its workers once).

    References
    ----------
    .. [1] R. H. Bartels, G. W. Stewart, "Solution of the matrix equation AX + XB = C",
       Comm. ACM 15(9):820-826, 1972. doi:10.1145/361573.361582
    """
    A = np.asarray(A, float)
    if horizon is None:
        S, Q = sl.schur_complex(A)
        return ("lyapunov", S, Q)
    T = float(horizon)
    panels = max(1, int(math.ceil(2.0 * sl.norm2(A) * T))) if A.size else 1
    h = T / panels
    x, w = np.polynomial.legendre.leggauss(_NODES)
    times = (np.arange(panels)[:, None] * h + ((x + 1.0) * h / 2.0)[None, :]).ravel()
    weights = np.tile(w * h / 2.0, panels)
    steps: list[np.ndarray] = []
    index: dict[float, int] = {}
    order: list[int] = []
    prev = 0.0
    for t in times.tolist():
        dt = round(t - prev, 15)
        if dt not in index:
            index[dt] = len(steps)
            steps.append(sl.expm(A * (t - prev), A.shape[0]))
        order.append(index[dt])
        prev = t
    return ("quadrature", steps, np.asarray(order, np.int64), np.sqrt(weights))


def single_input_gramian(plan: tuple[Any, ...], i: int) -> np.ndarray:
    """The Gramian with one dedicated input at state ``i`` (dense, symmetric), from a
    :func:`single_input_plan`: ``O(n^3)`` without a new Schur form (infinite horizon),
    ``O(n^2)`` per quadrature node (finite horizon, the nodes of
    :func:`finite_horizon_factor`, so the same quadrature as the report's Gramian).

    References
    ----------
    .. [1] R. H. Bartels, G. W. Stewart, Comm. ACM 15(9):820-826, 1972.
       doi:10.1145/361573.361582
    """
    if plan[0] == "lyapunov":
        _, S, Q = plan
        c = np.conj(Q[int(i), :])[:, None]           # Q^H e_i
        Y = sl.sylvester_triangular(S, -(c @ c.conj().T))
        W = (Q @ Y @ Q.conj().T).real
    else:
        _, steps, order, sw = plan
        n = steps[0].shape[0] if steps else 0
        X = np.zeros(n)
        X[int(i)] = 1.0
        F = np.empty((n, order.size))
        for k, j in enumerate(order.tolist()):
            X = steps[j] @ X
            F[:, k] = sw[k] * X
        W = F @ F.T
    return (W + W.T) / 2
