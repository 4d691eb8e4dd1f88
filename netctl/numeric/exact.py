"""Exact controllability for given weights (Yuan et al. 2013): eigenvalue multiplicities."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.linalg as la

from netctl.numeric.rank import _dense, _weights_of, eigen_clusters, staircase_dimension
from netctl.system import StructuredSystem

__all__ = ["ExactControllability", "Multiplicity", "exact_controllability"]

_EPS = float(np.finfo(float).eps)


@dataclass(frozen=True)
class Multiplicity:
    """An eigenvalue (cluster mean) with algebraic and geometric multiplicity."""

    eigenvalue: complex
    algebraic: int
    geometric: int


@dataclass(frozen=True)
class ExactControllability:
    """Outcome of :func:`exact_controllability`.

    Attributes
    ----------
    n_inputs : int
        Minimum number of inputs (independent columns of ``B``) for controllability
        with these weights: the largest geometric multiplicity, at least 1.
    eigenvalue : complex
        The eigenvalue attaining it (``lambda_M``).
    drivers : ndarray of int
        States where dedicated inputs make the system controllable: the rows of
        ``A - lambda_M I`` that depend on the others, plus any state another eigenvalue
        still needed (``n_drivers >= n_inputs``; equal in the usual case).
    verified : bool
        The staircase test confirms full dimension with dedicated inputs at ``drivers``.
    multiplicities : tuple of Multiplicity
        Every eigenvalue cluster with algebraic multiplicity above one.
    """

    n_states: int
    n_inputs: int
    eigenvalue: complex
    drivers: np.ndarray
    verified: bool
    verification_margin: float
    multiplicities: tuple[Multiplicity, ...]
    symmetric: bool
    state_names: tuple[str, ...] = field(repr=False)
    weights: str = "given"

    @property
    def n_drivers(self) -> int:
        """Number of dedicated driver states proposed."""
        return int(self.drivers.size)

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        z = complex(self.eigenvalue)
        return {
            "analysis": "exact controllability",
            "weights": self.weights,
            "n_states": self.n_states,
            "n_inputs": self.n_inputs,
            "eigenvalue": [round(z.real, 12), round(z.imag, 12)],
            "drivers": self.names(self.drivers),
            "n_drivers": self.n_drivers,
            "verified": self.verified,
            "verification_margin": self.verification_margin,
            "symmetric": self.symmetric,
            "multiplicities": [
                {"eigenvalue": [round(complex(m.eigenvalue).real, 12),
                                round(complex(m.eigenvalue).imag, 12)],
                 "algebraic": m.algebraic, "geometric": m.geometric}
                for m in self.multiplicities],
        }


def _dependent_rows(M: np.ndarray, rows: np.ndarray, count: int) -> np.ndarray:
    """The ``count`` rows among ``rows`` of ``M`` that pivoted QR leaves last."""
    if count <= 0 or rows.size == 0:
        return np.zeros(0, np.int64)
    _, _, piv = la.qr(M[rows].conj().T, mode="economic", pivoting=True)
    return np.sort(rows[piv[rows.size - count:]]).astype(np.int64)


def exact_controllability(system: StructuredSystem, *, tol: float | None = None,
                          cluster_tol: float | None = None) -> ExactControllability:
    r"""Minimum inputs and a driver set for the *given* weights (exact controllability).

    By the PBH test, ``(A, B)`` is controllable iff ``rank [A - lambda I, B] = n`` at
    every eigenvalue, so ``B`` needs at least ``mu(lambda) = n - rank(A - lambda I)``
    columns (the geometric multiplicity) at each eigenvalue; the minimum number of
    inputs is ``N_D = max_lambda mu(lambda)`` [1]_. For symmetric ``A`` the geometric
    and algebraic multiplicities coincide.

    Parameters
    ----------
    system : StructuredSystem
        Weighted (the stored values are used; see :func:`netctl.numeric.realize`).
    tol : float, optional
        Rank tolerance; default ``n * eps * max(1, ||A||_F)`` (and at least ten times
        the spread of the eigenvalue cluster).
    cluster_tol : float, optional
        Eigenvalues closer than this are one eigenvalue; default ``1e-6 max(1, ||A||_F)``.

    Returns
    -------
    ExactControllability

    Notes
    -----
    Drivers [1]_: the rows of ``A - lambda_M I`` that are linearly dependent on the others
    (here: the rows that QR with column pivoting of ``(A - lambda_M I)^H`` selects last,
    a numerically stable stand-in for the column echelon form). Dedicated inputs there
    give ``rank [A - lambda_M I, B] = n``; every other eigenvalue is then checked
    (left eigenvector on the drivers, or row rank outside the drivers for clusters) and
    a state is added where one still falls short; the staircase test confirms the
    final set (``verified``). One of many driver sets; deterministic (pivot order).
    Dense, ``O(n^3)`` plus one SVD per repeated eigenvalue.

    References
    ----------
    .. [1] Z. Yuan, C. Zhao, Z. Di, W.-X. Wang, Y.-C. Lai, "Exact controllability of
       complex networks", Nat. Commun. 4:2447, 2013. doi:10.1038/ncomms3447

    Examples
    --------
    >>> import networkx as nx
    >>> from netctl import StructuredSystem
    >>> k5 = StructuredSystem.from_networkx(nx.complete_graph(5))
    >>> r = exact_controllability(k5)
    >>> r.n_inputs, round(r.eigenvalue.real, 9), r.verified
    (4, -1.0, True)
    """
    A, _ = _dense(system)
    n = A.shape[0]
    nrm = max(1.0, float(np.linalg.norm(A)))
    base_tol = n * _EPS * nrm if tol is None else float(tol)
    radius = 1e-6 * nrm if cluster_tol is None else float(cluster_tol)
    symmetric = bool(np.array_equal(A, A.T))
    if n == 0:
        return ExactControllability(0, 0, 0j, np.zeros(0, np.int64), True, np.inf, (),
                                    symmetric, tuple(system.state_names), _weights_of(system))
    if symmetric:
        lam_r, V = la.eigh(A)
        lam = lam_r.astype(complex)
        VL = V.astype(complex)
    else:
        lam, VL = la.eig(A, left=True, right=False)
    clusters = eigen_clusters(lam, radius)
    info: list[tuple[complex, int, int, np.ndarray]] = []
    for idx in clusters:
        mu = complex(np.mean(lam[idx]))
        if idx.size == 1:
            info.append((mu, 1, 1, idx))
            continue
        if symmetric:
            geo = int(idx.size)
        else:
            spread = float(np.max(np.abs(lam[idx] - mu)))
            s = la.svd(A - mu * np.eye(n), compute_uv=False)
            geo = int(np.count_nonzero(s <= max(base_tol, 10 * spread)))
            geo = max(1, min(geo, int(idx.size)))
        info.append((mu, int(idx.size), geo, idx))
    # lambda_M: largest geometric multiplicity; ties by (real, imag) ascending
    order = sorted(range(len(info)), key=lambda i: (-info[i][2], info[i][0].real,
                                                    info[i][0].imag))
    lam_m, _, geo_m, _ = info[order[0]]
    n_inputs = max(1, geo_m)
    M = A - lam_m * np.eye(n)
    drivers = _dependent_rows(M, np.arange(n), geo_m)
    if drivers.size == 0:
        # all eigenvalues simple: one input; start from the state the first mode
        # reaches best and let the checks below add what is missing
        drivers = np.zeros(0, np.int64)
    chosen = set(drivers.tolist())
    for i in order:
        mu, alg, geo, idx = info[i]
        if alg == 1:
            w = VL[:, idx[0]]
            w = w / np.linalg.norm(w)
            if not chosen or np.max(np.abs(w[sorted(chosen)])) <= 1e-8:
                chosen.add(int(np.argmax(np.abs(w))))
            continue
        if symmetric:
            # orthonormal eigenvectors: the eigenvectors vanishing on the chosen states
            # span the null space of Y[chosen]; add the states where they are largest
            Y = VL[:, idx].real
            D = np.array(sorted(chosen), np.int64)
            if D.size:
                _, sv, Vh = la.svd(Y[D], full_matrices=True)
                rank = int(np.count_nonzero(sv > 1e-8))
                Z = Y @ Vh[rank:].T
            else:
                Z = Y
            if Z.shape[1]:
                _, _, piv = la.qr(Z.T, mode="economic", pivoting=True)
                chosen.update(int(i) for i in piv[:Z.shape[1]])
            continue
        rest = np.array(sorted(set(range(n)) - chosen), np.int64)
        Mi = A - mu * np.eye(n)
        if rest.size:
            s = la.svd(Mi[rest], compute_uv=False)
            spread = float(np.max(np.abs(lam[idx] - mu)))
            deficit = int(np.count_nonzero(s <= max(base_tol, 10 * spread)))
            deficit += max(0, rest.size - s.size)
            chosen.update(_dependent_rows(Mi, rest, deficit).tolist())
    drivers = np.array(sorted(chosen), np.int64)
    Bd = np.zeros((n, drivers.size))
    Bd[drivers, np.arange(drivers.size)] = 1.0
    nrm_ab = float(np.sqrt(np.linalg.norm(A) ** 2 + drivers.size))
    t = n * _EPS * max(nrm_ab, 1.0)
    dim, _, dec, _ = staircase_dimension(A, Bd, t)
    kept = dec.kept if np.isfinite(dec.kept) else t
    margin = float(np.log10(kept / max(dec.dropped, t))) if kept > 0 else -np.inf
    mults = tuple(Multiplicity(mu, alg, geo) for mu, alg, geo, _ in info if alg > 1)
    return ExactControllability(
        n_states=n, n_inputs=n_inputs, eigenvalue=complex(lam_m), drivers=drivers,
        verified=bool(dim == n), verification_margin=margin,
        multiplicities=tuple(sorted(mults, key=lambda m: (m.eigenvalue.real,
                                                          m.eigenvalue.imag))),
        symmetric=symmetric, state_names=tuple(system.state_names), weights=_weights_of(system))
