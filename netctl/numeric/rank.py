"""Reliable numeric rank tests for controllability, each with the margin of its decision.

Four tests, for different sizes and needs:

* :func:`staircase` -- orthogonal controllability staircase form (Van Dooren 1981),
  dense, ``O(n^3)``, up to a few thousand states;
* :func:`pbh` -- the Popov–Belevitch–Hautus test at every eigenvalue, with clusters of
  close eigenvalues handled together on their left invariant subspace (so repeated
  eigenvalues and Jordan blocks are covered); it also names the lost modes and the
  states that carry them;
* :func:`~netctl.numeric.prime_field.modular` (module :mod:`netctl.numeric.prime_field`)
  -- exact arithmetic: random weights over a prime field and the Krylov subspace rank
  modulo ``p`` (no rounding; Schwartz–Zippel bound reported);
* :func:`~netctl.numeric.certificate.sparse_certificate` (module
  :mod:`netctl.numeric.certificate`) -- for very large sparse networks: a nonsingular
  sparse LU of the matched columns of ``[A B]`` with random weights, plus graph
  accessibility.

This module holds the result type shared by all four and the two dense floating-point
tests.

The Kalman matrix ``[B, AB, ..., A^{n-1}B]`` is deliberately absent: its rank is
unreliable in floating point (see docs/NUMERIC.md).

Margins are reported in decades: ``log10(smallest singular value kept / largest
dropped)``, the tolerance standing in for a side that is empty. A margin below about 2
means the decision is close to the rounding level; treat the dimension as uncertain.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import to_dense
from netctl.errors import InvalidSystemError, OptionError
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["RankTest", "LostMode", "staircase", "pbh", "staircase_dimension", "DENSE_LIMIT",
           "SMALL_STATES"]

DENSE_LIMIT = 5000
_EPS = float(np.finfo(float).eps)
#: Largest weight magnitude a dense numeric analysis takes: norms, Gramians and products
#: square the weights, and a double overflows past about 1.8e308 (IEEE 754).
MAX_WEIGHT = 1e150
#: Up to this many states the staircase runs on NumPy's LAPACK alone (``geqrf`` for the
#: Householder steps, ``gesdd`` for a block's singular values, ``geev`` for the lost
#: modes), one Householder step a block, and does not import scipy.linalg, whose import
#: costs more than such a whole run (issue 15; benchmarks/RESULTS.md). Above it, a chain
#: of blocks of size one is one blocked Hessenberg reduction (scipy's ``gehrd``), and
#: blocks' SVDs use ``gesvd``. Both are orthogonal reductions of the same form, so they
#: agree to rounding (tests/numeric/test_rank_small.py); the bound is our choice
#: (common practice, no source: the per-step loop costs about as much as one blocked
#: call at this size).
SMALL_STATES = 64


@dataclass(frozen=True)
class LostMode:
    """An uncontrollable mode: eigenvalue, how many directions are lost, which states.

    ``states`` are the states on which the lost left eigenvectors are nonzero (relative
    size above 1e-6): an input on any of them would act on the mode; the support is
    sorted by state index.
    """

    eigenvalue: complex
    n_lost: int
    states: np.ndarray


@dataclass(frozen=True)
class RankTest(ResultTables):
    """Outcome of one numeric rank test.

    Attributes
    ----------
    method : str
        ``"staircase"``, ``"pbh"``, ``"modular"`` or ``"certificate"``.
    dimension : int or None
        Numeric controllable dimension (``None`` when a certificate is inconclusive).
    margin : float
        Decades between the smallest singular value (pivot) kept and the largest dropped
        (the tolerance stands in for an empty side); ``inf`` for exact tests.
    smallest_kept, largest_dropped, tolerance : float
        The two sides of the closest rank decision and the tolerance used.
    blocks : ndarray of int
        Staircase block sizes (``staircase``), cluster sizes (``pbh``), sizes of the
        strongly connected blocks of two or more states of the matched columns, largest
        first (``certificate``).
    lost_modes : tuple of LostMode
        Uncontrollable modes with the states that carry them (``pbh``).
    failure_bound : float or None
        ``modular``: bound on the probability that the dimension is too small
        (Schwartz–Zippel); ``None`` otherwise.
    """

    _frame_rows = "summary"

    method: str
    n_states: int
    dimension: int | None
    margin: float
    smallest_kept: float
    largest_dropped: float
    tolerance: float
    blocks: np.ndarray
    state_names: tuple[str, ...] = field(repr=False)
    lost_modes: tuple[LostMode, ...] = ()
    uncontrollable_eigenvalues: np.ndarray = field(
        default_factory=lambda: np.zeros(0, complex))
    failure_bound: float | None = None
    weights: str = "given"
    note: str = ""

    @property
    def controllable(self) -> bool | None:
        """Whether the numeric dimension is ``n`` (``None`` if inconclusive)."""
        return None if self.dimension is None else self.dimension == self.n_states

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        return {
            "method": self.method,
            "weights": self.weights,
            "n_states": self.n_states,
            "dimension": self.dimension,
            "controllable": self.controllable,
            "margin": _json_float(self.margin),
            "smallest_kept": _json_float(self.smallest_kept),
            "largest_dropped": _json_float(self.largest_dropped),
            "tolerance": _json_float(self.tolerance),
            "blocks": self.blocks.tolist(),
            "lost_modes": [{"eigenvalue": _complex(m.eigenvalue), "n_lost": m.n_lost,
                            "states": self.names(m.states)} for m in self.lost_modes],
            "uncontrollable_eigenvalues": [_complex(z) for z in self.uncontrollable_eigenvalues],
            "failure_bound": self.failure_bound,
            "note": self.note,
        }


def _json_float(x: float) -> float | str:
    return x if np.isfinite(x) else ("inf" if x > 0 else "-inf" if x < 0 else "nan")


def _complex(z: complex) -> list[float]:
    z = complex(z)
    return [round(z.real, 12), round(z.imag, 12)]


def _dense(system: StructuredSystem, limit: int = DENSE_LIMIT) -> tuple[np.ndarray, np.ndarray]:
    n = system.n_states
    if n > limit:
        raise OptionError(
            f"a dense test on {n} states would need {8 * n * n / 1e9:.1f} GB and O(n^3) "
            f"time; the limit is {limit} states. Use method 'certificate' (sparse) for "
            "large networks.")
    too_large = weight_overflow(system)
    if too_large:
        raise InvalidSystemError(too_large)
    return to_dense(system.pattern("A")), to_dense(system.pattern("B"))


def weight_overflow(system: StructuredSystem) -> str | None:
    """Why the weights of ``system`` are too large for a dense numeric analysis (a weight
    beyond :data:`MAX_WEIGHT`), or ``None``."""
    for M in (system.pattern("A"), system.pattern("B")):
        big = float(np.max(np.abs(M.data))) if M.nnz else 0.0
        if big > MAX_WEIGHT:
            return (f"a weight of magnitude {big:.3g} is beyond what the numeric analyses "
                    f"can square (about {MAX_WEIGHT:.0e}; a double overflows past 1.8e308), "
                    "so their results would be infinite or NaN. Rescale the weights (other "
                    "units), or use the structural analyses, which do not depend on them.")
    return None


def _default_tol(A: np.ndarray, B: np.ndarray) -> float:
    n = A.shape[0]
    nrm = float(np.sqrt(np.linalg.norm(A) ** 2 + np.linalg.norm(B) ** 2))
    return max(n, 1) * _EPS * max(nrm, 1.0)


def _margin(kept: float, dropped: float, tol: float) -> float:
    k = kept if np.isfinite(kept) else tol
    d = dropped if dropped > 0 else tol
    if k <= 0:
        return -np.inf if d > 0 else 0.0
    return float(np.log10(k / d)) if d > 0 else np.inf


class _Decisions:
    """Running record of the closest kept / dropped singular values."""

    def __init__(self) -> None:
        self.kept = np.inf
        self.dropped = 0.0

    def take(self, s: np.ndarray, tol: float) -> int:
        r = int(np.count_nonzero(s > tol))
        if r:
            self.kept = min(self.kept, float(s[r - 1]))
        if r < s.size:
            self.dropped = max(self.dropped, float(s[r]))
        return r


def _apply_q(qr: np.ndarray, tau: np.ndarray, A: np.ndarray, k0: int, c0: int = 0) -> None:
    """A <- Q^H A Q on the trailing index range ``k0:`` (Q from Householder ``qr``).

    ``Q = I - V T V^H`` in compact WY form (``T`` by the LAPACK ``larft`` recurrence),
    applied with matrix products (level-3 BLAS). Rows ``k0:`` are zero left of column
    ``c0`` (staircase structure), so the left product skips those columns."""
    r = tau.size
    V = np.tril(qr, -1)
    V[np.arange(r), np.arange(r)] = 1.0
    T = np.zeros((r, r), dtype=V.dtype)
    for j in range(r):
        T[j, j] = tau[j]
        if j:
            T[:j, j] = -tau[j] * (T[:j, :j] @ (V[:, :j].conj().T @ V[:, j]))
    Vh = V.conj().T
    rows = A[k0:, c0:]
    rows -= V @ (T.conj().T @ (Vh @ rows))      # views: updated in place
    cols = A[:, k0:]
    cols -= ((cols @ V) @ T) @ Vh


def staircase_dimension(A: np.ndarray, B: np.ndarray, tol: float
                        ) -> tuple[int, list[int], _Decisions, np.ndarray]:
    """Controllable dimension of dense ``(A, B)`` by the orthogonal staircase (kernel).

    Returns ``(dimension, block sizes, decisions, A_u)`` where ``A_u`` is the
    uncontrollable block of the staircase form (its eigenvalues are the lost modes).
    Works for real and complex input; ``A`` is copied.

    References
    ----------
    .. [1] P. Van Dooren, "The generalized eigenstructure problem in linear system
       theory", IEEE TAC 26(1):111-129, 1981. doi:10.1109/TAC.1981.1102559
       (details from memory)
    """
    dtype = np.result_type(A, B, float)
    A = np.array(A, dtype=dtype, order="F", copy=True)
    n = A.shape[0]
    dec = _Decisions()
    blocks: list[int] = []
    k0 = 0
    c0 = 0  # first column of the current block (0 while the block is B)
    X = np.asarray(B, dtype=dtype)
    small = n <= SMALL_STATES
    if not small:
        import scipy.linalg as la
    while k0 < n and X.shape[1] > 0:
        if X.shape[1] == 1:
            s = np.array([np.linalg.norm(X)])
        elif small:
            U, s, _ = np.linalg.svd(X, full_matrices=False)
        else:
            U, s, _ = la.svd(X, full_matrices=False, lapack_driver="gesvd")
        r = dec.take(s, tol)
        if r == 0:
            break
        basis = X / s[0] if X.shape[1] == 1 else U[:, :r]
        if small:  # NumPy's raw QR is LAPACK's geqrf output, transposed
            h, tau = np.linalg.qr(basis, mode="raw")
            qr = h.T
        else:
            (qr, tau), _ = la.qr(np.asarray(basis, order="F"), mode="raw")
        _apply_q(qr, tau, A, k0, c0)
        blocks.append(r)
        k0 += r
        if r == 1 and k0 < n and not small:
            # the rest of the chain has blocks of size <= 1: a Hessenberg reduction of
            # the trailing part (Q e1 = e1) gives them all at once (blocked LAPACK)
            T = A[k0 - 1:, k0 - 1:]
            H = la.hessenberg(T, calc_q=False, overwrite_a=False, check_finite=False)
            sub = np.abs(np.diagonal(H, -1))
            small = np.flatnonzero(sub <= tol)
            stop = int(small[0]) if small.size else sub.size
            if stop:
                dec.kept = min(dec.kept, float(sub[:stop].min()))
            if small.size:
                dec.dropped = max(dec.dropped, float(sub[stop]))
            blocks.extend([1] * stop)
            k0 += stop
            Au = H[1 + stop:, 1 + stop:] if k0 < n else np.zeros((0, 0), dtype)
            return k0, blocks, dec, Au
        c0 = k0 - r
        X = A[k0:, c0:k0]
    return k0, blocks, dec, A[k0:, k0:]


def staircase(system: StructuredSystem, *, tol: float | None = None) -> RankTest:
    r"""Numeric controllable dimension by the orthogonal staircase form (Van Dooren).

    Orthogonal similarity brings ``(A, B)`` to ``U^T A U = [[A_c, *], [0, A_u]]``,
    ``U^T B = [B_1; 0]`` with ``A_c`` block upper Hessenberg [1]_, [2]_. Each block's rank
    is decided by an SVD against ``tol``; the controllable dimension is the size of
    ``A_c`` and the eigenvalues of ``A_u`` are the uncontrollable modes.

    Parameters
    ----------
    system : StructuredSystem
        Numeric weights are taken as stored (use :func:`netctl.numeric.realize`).
    tol : float, optional
        Rank tolerance; default ``n * eps * ||[A B]||_F``.

    Returns
    -------
    RankTest
        ``dimension``, ``margin`` (decades between the smallest singular value kept and
        the largest dropped), block sizes and the eigenvalues of ``A_u``.

    Notes
    -----
    Only orthogonal transformations are used, so the computed form is exact for a
    nearby system (backward stable) [1]_, unlike the Kalman matrix, whose rank fails
    already for ``A = diag(1..12), b = 1`` [3]_. Above :data:`SMALL_STATES` states, once
    a block has size one, the rest of the chain is one Hessenberg reduction (blocked
    LAPACK); up to it, one Householder step a block with NumPy's LAPACK (same form, same
    decisions up to rounding, no scipy import). Dense, ``O(n^3)`` time,
    ``O(n^2)`` memory.

    References
    ----------
    .. [1] P. Van Dooren, "The generalized eigenstructure problem in linear system
       theory", IEEE TAC 26(1):111-129, 1981. doi:10.1109/TAC.1981.1102559
    .. [2] C. C. Paige, "Properties of numerical algorithms related to computing
       controllability", IEEE TAC 26(1):130-138, 1981. doi:10.1109/TAC.1981.1102560
    .. [3] see docs/NUMERIC.md (the scaled Vandermonde example).

    Examples
    --------
    >>> import numpy as np
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_matrices(np.diag([1.0, 2.0, 3.0]), np.array([[1.0], [1.0], [0.0]]))
    >>> r = staircase(s)
    >>> r.dimension, r.uncontrollable_eigenvalues.real.round(6).tolist()
    (2, [3.0])
    """
    A, B = _dense(system)
    t = _default_tol(A, B) if tol is None else float(tol)
    dim, blocks, dec, Au = staircase_dimension(A, B, t)
    ev = _eigvals(Au)
    return RankTest(method="staircase", n_states=system.n_states, dimension=dim,
                    margin=_margin(dec.kept, dec.dropped, t), smallest_kept=dec.kept,
                    largest_dropped=dec.dropped, tolerance=t,
                    blocks=np.asarray(blocks, np.int64), state_names=tuple(system.state_names),
                    uncontrollable_eigenvalues=np.sort_complex(ev),
                    weights=_weights_of(system))


def _eigvals(M: np.ndarray) -> np.ndarray:
    """Eigenvalues of a dense square matrix (LAPACK ``geev``): NumPy's up to
    :data:`SMALL_STATES` rows (no scipy import), scipy's above; the same routine."""
    if M.size == 0:
        return np.zeros(0, complex)
    if M.shape[0] <= SMALL_STATES:
        return np.linalg.eigvals(M)
    import scipy.linalg as la

    return la.eigvals(M)  # type: ignore[no-any-return]


def _weights_of(system: StructuredSystem) -> str:
    return system.model.rsplit("+", 1)[1] if "+" in system.model else (
        "given" if system.weighted else "pattern (all weights 1)")


def eigen_clusters(lam: np.ndarray, radius: float) -> list[np.ndarray]:
    """Groups of eigenvalue indices chained by distance ``<= radius`` (sorted)."""
    n = lam.size
    if n == 0:
        return []
    if n <= SMALL_STATES:  # the same labels without scipy (spectrum._component_labels)
        from netctl.numeric.spectrum import _component_labels

        r, c = np.nonzero(np.abs(lam[:, None] - lam[None, :]) <= radius)
        labels = _component_labels(r, c, n)
        k = int(labels.max()) + 1
    elif n <= 4000:
        import scipy.sparse as sp
        from scipy.sparse.csgraph import connected_components

        close = np.abs(lam[:, None] - lam[None, :]) <= radius
        k, labels = connected_components(sp.csr_array(close), directed=False)
    else:  # pragma: no cover - large spectra: sort by real part, compare neighbours
        order = np.argsort(lam.real, kind="stable")
        z = lam[order]
        link = np.abs(np.diff(z)) <= radius
        labels_sorted = np.concatenate([[0], np.cumsum(~link)])
        labels = np.empty(n, np.int64)
        labels[order] = labels_sorted
        k = int(labels_sorted[-1]) + 1
    groups = [np.flatnonzero(labels == c) for c in range(k)]
    groups.sort(key=lambda g: int(g[0]))
    return groups


def cluster_subspace(A: np.ndarray, lam: np.ndarray, idx: np.ndarray, radius: float
                     ) -> tuple[np.ndarray, np.ndarray]:
    """Orthonormal basis ``W`` (n x k) of the left invariant subspace of a cluster and
    ``S`` with ``W^H A = S W^H`` (ordered complex Schur form of ``A^H``). A cluster of
    every eigenvalue of a matrix of at most :data:`SMALL_STATES` rows has the whole
    space as its invariant subspace: ``W = I``, ``S = A`` exactly (no scipy import)."""
    n = A.shape[0]
    if idx.size == n and n <= SMALL_STATES:
        return np.eye(n, dtype=complex), np.array(A, dtype=complex)
    import scipy.linalg as la

    mu = lam[idx]

    def select(z: complex) -> bool:
        return bool(np.min(np.abs(np.conj(z) - mu)) <= radius)

    T, Z, sdim = la.schur(A.conj().T.astype(complex), output="complex", sort=select)
    k = int(sdim)
    W = Z[:, :k]
    S = T[:k, :k].conj().T
    return W, S


def _support(w: np.ndarray) -> np.ndarray:
    mag = np.abs(w) if w.ndim == 1 else np.linalg.norm(w, axis=1)
    top = mag.max(initial=0.0)
    return np.flatnonzero(mag > 1e-6 * top).astype(np.int64) if top > 0 else np.zeros(0, np.int64)


def pbh(system: StructuredSystem, *, tol: float | None = None,
        cluster_tol: float | None = None) -> RankTest:
    r"""Popov–Belevitch–Hautus test at every eigenvalue, clusters handled together.

    ``(A, B)`` is controllable iff no left eigenvector ``w`` (``w^H A = lambda w^H``)
    has ``w^H B = 0`` [1]_. Simple eigenvalues are tested with their normalized left
    eigenvector: the decision value is ``||w^H B||``. Eigenvalues closer than
    ``cluster_tol`` are grouped; for a cluster of size ``k`` the left invariant subspace
    ``W`` (ordered Schur form) gives the ``k x k`` system ``(S, W^H B)`` with
    ``W^H A = S W^H``, and its staircase dimension tells how many of the ``k``
    directions are controllable -- so Jordan blocks and repeated eigenvalues are
    covered exactly, not skipped.

    Parameters
    ----------
    system : StructuredSystem
    tol : float, optional
        Rank tolerance; default ``n * eps * ||[A B]||_F``.
    cluster_tol : float, optional
        Eigenvalues closer than this form one cluster; default
        ``1e-6 * max(1, ||A||_F)`` (perturbed Jordan blocks spread like ``eps^(1/k)``).

    Returns
    -------
    RankTest
        ``dimension`` = ``n`` minus the lost directions; ``lost_modes`` lists each lost
        eigenvalue with the states carrying the lost left eigenvectors; ``blocks`` the
        cluster sizes.

    Notes
    -----
    One eigen-decomposition with left vectors (``O(n^3)``) and one ordered Schur form
    per cluster of size > 1. Grouping more eigenvalues than necessary is safe (the
    projected system is still exact); grouping fewer is what the default guards
    against.

    References
    ----------
    .. [1] C. C. Paige, "Properties of numerical algorithms related to computing
       controllability", IEEE TAC 26(1):130-138, 1981 (test R2).
       doi:10.1109/TAC.1981.1102560
    .. [2] M. L. J. Hautus, "Controllability and observability conditions of linear
       autonomous systems", Indag. Math. 72(5):443-448, 1969.

    Examples
    --------
    >>> import numpy as np
    >>> from netctl import StructuredSystem
    >>> J = np.array([[0.0, 1.0], [0.0, 0.0]])     # one Jordan block at 0
    >>> pbh(StructuredSystem.from_matrices(J, np.array([[0.0], [1.0]]))).dimension
    2
    >>> pbh(StructuredSystem.from_matrices(J, np.array([[1.0], [0.0]]))).dimension
    1
    """
    A, B = _dense(system)
    n = A.shape[0]
    t = _default_tol(A, B) if tol is None else float(tol)
    radius = 1e-6 * max(1.0, float(np.linalg.norm(A))) if cluster_tol is None else float(cluster_tol)
    if n == 0:
        return RankTest("pbh", 0, 0, np.inf, np.inf, 0.0, t, np.zeros(0, np.int64),
                        tuple(system.state_names), weights=_weights_of(system))
    import scipy.linalg as la

    lam, VL = la.eig(A, left=True, right=False)
    dec = _Decisions()
    lost: list[LostMode] = []
    sizes: list[int] = []
    n_lost = 0
    for idx in eigen_clusters(lam, radius):
        sizes.append(idx.size)
        mu = complex(np.mean(lam[idx]))
        if idx.size == 1:
            w = VL[:, idx[0]]
            w = w / np.linalg.norm(w)
            s = np.array([np.linalg.norm(w.conj() @ B)]) if B.shape[1] else np.zeros(1)
            if dec.take(s, t) == 0:
                n_lost += 1
                lost.append(LostMode(mu, 1, _support(w)))
            continue
        W, S = cluster_subspace(A, lam, idx, radius)
        Bc = W.conj().T @ B
        d, _, sub, _ = staircase_dimension(S, Bc, t)
        dec.kept = min(dec.kept, sub.kept)
        dec.dropped = max(dec.dropped, sub.dropped)
        k_lost = S.shape[0] - d
        if k_lost:
            n_lost += k_lost
            # lost left eigenvectors inside the cluster: y with y^H [S - mu I, Bc] ~ 0
            M = np.hstack([S - mu * np.eye(S.shape[0]), Bc])
            U, sv, _ = la.svd(M)
            sv_full = np.concatenate([sv, np.zeros(U.shape[1] - sv.size)])
            thresh = max(radius, t)
            Y = U[:, sv_full <= thresh]
            if Y.shape[1] == 0:
                Y = U[:, -1:]
            lost.append(LostMode(mu, int(k_lost), _support(W @ Y)))
    lost.sort(key=lambda m: (m.eigenvalue.real, m.eigenvalue.imag))
    ev = np.sort_complex(np.array([m.eigenvalue for m in lost for _ in range(m.n_lost)],
                                  dtype=complex))
    return RankTest(method="pbh", n_states=n, dimension=n - n_lost,
                    margin=_margin(dec.kept, dec.dropped, t), smallest_kept=dec.kept,
                    largest_dropped=dec.dropped, tolerance=t,
                    blocks=np.asarray(sizes, np.int64), state_names=tuple(system.state_names),
                    lost_modes=tuple(lost), uncontrollable_eigenvalues=ev,
                    weights=_weights_of(system))
