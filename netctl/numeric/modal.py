"""Modal controllability: how strongly the inputs reach each mode (given weights)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.numeric._tasks import Progress, announce
from netctl.numeric.rank import _dense, _weights_of, cluster_subspace, eigen_clusters
from netctl.numeric.spectrum import jordan_clusters
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["ModeReach", "ModalReport", "modal_controllability", "REACH_TOL"]

#: reach (cosine) at or below which a mode counts as not reached: about 10^6 times the
#: rounding of a normalized left eigenvector (our choice, no published source)
REACH_TOL = 1e-10


@dataclass(frozen=True)
class ModeReach:
    """One mode (or cluster of close eigenvalues) and how well the inputs reach it.

    ``reach`` in [0, 1]: the cosine of the angle between the mode's left eigenvector
    and the input subspace (for a cluster: the worst such cosine over its left
    eigenspace). ``per_input``: ``|w^H b_k| / (||w|| ||b_k||)`` for each input column
    (for a cluster, the largest over the eigenspace's basis); ``carriers``: the states
    the left eigenvector(s) live on (relative size above 1e-6).
    """

    eigenvalue: complex
    multiplicity: int
    geometric: int
    reach: float
    per_input: np.ndarray
    carriers: np.ndarray


@dataclass(frozen=True)
class ModalReport(ResultTables):
    """Outcome of :func:`modal_controllability`; ``modes`` sorted weakest first."""

    _frame_rows = "summary"

    n_states: int
    n_inputs: int
    modes: tuple[ModeReach, ...]
    tolerance: float
    state_names: tuple[str, ...] = field(repr=False)
    input_names: tuple[str, ...] = field(repr=False)
    weights: str = "given"

    @property
    def unreached(self) -> tuple[ModeReach, ...]:
        """Modes whose reach is at or below the tolerance (uncontrollable)."""
        return tuple(m for m in self.modes if m.reach <= self.tolerance)

    def weakest(self, k: int = 5) -> tuple[ModeReach, ...]:
        """The ``k`` modes with the smallest reach."""
        return self.modes[:k]

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        return {
            "analysis": "modal controllability",
            "weights": self.weights,
            "n_states": self.n_states,
            "n_inputs": self.n_inputs,
            "inputs": list(self.input_names),
            "tolerance": self.tolerance,
            "n_unreached": len(self.unreached),
            "modes": [{
                "eigenvalue": [round(complex(m.eigenvalue).real, 12),
                               round(complex(m.eigenvalue).imag, 12)],
                "multiplicity": m.multiplicity,
                "geometric": m.geometric,
                "reach": m.reach,
                "per_input": dict(zip(self.input_names, m.per_input.tolist())),
                "carriers": self.names(m.carriers),
            } for m in self.modes],
        }


def _support(Y: np.ndarray) -> np.ndarray:
    mag = np.linalg.norm(Y.reshape(Y.shape[0], -1), axis=1)
    top = mag.max(initial=0.0)
    return np.flatnonzero(mag > 1e-6 * top).astype(np.int64) if top > 0 else np.zeros(0, np.int64)


#: reaches closer than this count as equal when ordering the modes (rounding: the same
#: reach computed along two routes differs in the last bits; our choice, no source)
REACH_TIE = 1e-12


def _weakest_first(modes: list[ModeReach]) -> list[ModeReach]:
    """The modes by reach, weakest first; reaches within :data:`REACH_TIE` of the first
    of their run are a tie, ordered by eigenvalue (real, then imaginary part), so that
    modes of equal reach (a spectrum symmetric about 0, say) come in the same order
    whichever route computed them."""
    modes = sorted(modes, key=lambda md: (md.reach, md.eigenvalue.real, md.eigenvalue.imag))
    out: list[ModeReach] = []
    start = 0
    for k in range(1, len(modes) + 1):
        if k == len(modes) or modes[k].reach - modes[start].reach > REACH_TIE:
            out.extend(sorted(modes[start:k],
                              key=lambda md: (md.eigenvalue.real, md.eigenvalue.imag)))
            start = k
    return out


def modal_controllability(system: StructuredSystem, *, cluster_tol: float | None = None,
                          tol: float = REACH_TOL, progress: Progress | None = None
                          ) -> ModalReport:
    r"""How strongly the inputs reach each mode, weakest first.

    For a simple eigenvalue with left eigenvector ``w`` (``w^H A = lambda w^H``) and
    input columns ``b_k``, the modal controllability of input ``k`` is the cosine
    ``|w^H b_k| / (||w|| ||b_k||)`` [1]_; the mode's ``reach`` is the cosine of the
    angle between ``w`` and the whole input subspace (``||Q^H w|| / ||w||`` with ``Q``
    an orthonormal basis of ``range B``). A mode with reach 0 is uncontrollable (PBH).
    For a cluster of close eigenvalues the left eigenspace ``Y`` (from the left
    invariant subspace, ordered Schur form) replaces ``w`` and ``reach`` is the
    smallest singular value of ``Q^H Y`` -- the worst-reached direction; it is 0 when
    the cluster has more independent left eigenvectors than there are inputs.

    Parameters
    ----------
    system : StructuredSystem
        Weighted (stored values used).
    cluster_tol : float, optional
        Eigenvalues closer than this form one cluster. Default: clusters sized for
        Jordan blocks (:func:`netctl.numeric.spectrum.jordan_clusters`), so a defective
        eigenvalue split by rounding stays one mode.
    tol : float, default 1e-10
        Reach at or below this counts as not reached (:data:`REACH_TOL`: our choice,
        no published source; the report states it).
    progress : callable(stage, done, total), optional
        Told of the eigen-decomposition (before and after) and of each mode cluster
        (:data:`netctl.numeric._tasks.Progress`).

    Returns
    -------
    ModalReport

    Notes
    -----
    The cosine ignores how fast a mode decays and how large the inputs may be; the
    Gramian (:func:`netctl.numeric.energy`) measures energy. Dense, ``O(n^3)``.

    References
    ----------
    .. [1] A. M. A. Hamdan, A. H. Nayfeh, "Measures of modal controllability and
       observability for first- and second-order linear systems", J. Guid. Control
       Dyn. 12(3):421-428, 1989. doi:10.2514/3.20424

    Examples
    --------
    >>> import numpy as np
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_matrices(np.diag([-1.0, -2.0]), np.array([[1.0], [1.0]]))
    >>> [round(m.reach, 6) for m in modal_controllability(s).modes]
    [0.707107, 0.707107]
    """
    from netctl.numeric import _small_linalg as sl  # NumPy alone on small matrices

    A, B = _dense(system)
    n, m = B.shape
    nrm = max(1.0, float(np.linalg.norm(A)))
    radius = 1e-6 * nrm if cluster_tol is None else float(cluster_tol)
    if n == 0:
        return ModalReport(0, m, (), tol, tuple(system.state_names), tuple(system.input_names),
                           _weights_of(system))
    col_norm = np.linalg.norm(B, axis=0)
    Bn = B / np.where(col_norm > 0, col_norm, 1.0)
    Q = sl.orth(B) if m else np.zeros((n, 0))

    def grouped(lam: np.ndarray) -> list[np.ndarray]:
        return (eigen_clusters(lam, radius) if cluster_tol is not None
                else [c.indices for c in jordan_clusters(A, lam, progress=progress)])

    announce(progress, "eigen-decomposition", 0, 1)
    ok: np.ndarray | None = None
    if sl.small(n):  # left eigenvectors from NumPy, each checked (issue 15)
        lam = sl.eigvals(A)
        VL, ok = sl.left_eigvecs(A, lam)
    else:
        import scipy.linalg as la  # left eigenvectors (LAPACK geev)

        lam, VL = la.eig(A, left=True, right=False)
    announce(progress, "eigen-decomposition", 1, 1)
    groups = grouped(lam)
    if ok is not None and not all(ok[int(g[0])] for g in groups if g.size == 1):
        import scipy.linalg as la  # a single mode's left eigenvector is not clean

        lam2, VL = la.eig(A, left=True, right=False)
        if not np.array_equal(lam2, lam):  # the same geev: equal unless builds differ
            lam = lam2
            groups = grouped(lam)
    modes: list[ModeReach] = []
    for done, idx in enumerate(groups):
        announce(progress, "mode reach", done, len(groups))
        mu = complex(np.mean(lam[idx]))
        if idx.size == 1:
            w = VL[:, idx[0]]
            w = w / np.linalg.norm(w)
            per = np.abs(w.conj() @ Bn) if m else np.zeros(0)
            reach = float(np.linalg.norm(Q.conj().T @ w)) if Q.shape[1] else 0.0
            modes.append(ModeReach(mu, 1, 1, min(reach, 1.0), per, _support(w)))
            continue
        spread = float(np.max(np.abs(lam[idx] - mu)))
        W, S = cluster_subspace(A, lam, idx, max(radius, 2 * spread))
        k = S.shape[0]
        U, sv, _ = sl.svd(S - mu * np.eye(k))
        null = sv <= max(1e3 * n * np.finfo(float).eps * nrm, 10 * spread ** idx.size)
        if not null.any():
            null[-1] = True
        Y = W @ U[:, null]              # orthonormal basis of the left eigenspace
        g = int(Y.shape[1])
        M = Q.conj().T @ Y if Q.shape[1] else np.zeros((0, g))
        s = sl.svdvals(M) if M.size else np.zeros(0)
        reach = float(s.min()) if s.size == g else 0.0
        per = np.abs(Y.conj().T @ Bn).max(axis=0) if m else np.zeros(0)
        modes.append(ModeReach(mu, int(idx.size), g, min(reach, 1.0), per, _support(Y)))
    announce(progress, "mode reach", len(groups), len(groups))
    modes = _weakest_first(modes)
    return ModalReport(n_states=n, n_inputs=m, modes=tuple(modes), tolerance=tol,
                       state_names=tuple(system.state_names), input_names=tuple(system.input_names),
                       weights=_weights_of(system))
