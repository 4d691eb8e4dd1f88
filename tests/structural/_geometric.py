"""Numeric references written independently of netctl (numpy only), used by the tests of
the disturbance and decentralized-control analyses.

* ``vstar``: Wonham's recursion for the largest (A, B)-invariant subspace in ker H,
  V_0 = ker H, V_{k+1} = V_k ∩ A^{-1}(V_k + im B) (W. M. Wonham, Linear Multivariable
  Control, 1985, ch. 4), on orthonormal bases with SVD ranks.
* ``decouplable``: state feedback solves disturbance decoupling iff im E ⊆ V*; with the
  disturbance measured (u = F x + G w) iff im E ⊆ V* + im B (Wonham 1985, ch. 4).
* ``transfer_rank``: numeric rank of C (sI - A)^{-1} B at one random complex s, the
  tolerance scaled by ||C|| ||(sI - A)^{-1}|| ||B||.
* ``fixed_modes``: Wang & Davison (1973): the fixed modes of (A, B, C) under block-diagonal
  feedback K are the eigenvalues of A that are eigenvalues of A + B K C for every such K;
  zero is tested by rank, others by the smallest singular value of A + BKC - λI.
"""

from __future__ import annotations

import numpy as np

TOL = 1e-9


def _orth(M: np.ndarray) -> np.ndarray:
    if M.shape[1] == 0:
        return np.zeros((M.shape[0], 0))
    U, s, _ = np.linalg.svd(M, full_matrices=False)
    if s.size == 0 or s[0] == 0:
        return np.zeros((M.shape[0], 0))
    return U[:, s > TOL * max(s[0], 1.0)]


def _null(M: np.ndarray, n: int) -> np.ndarray:
    if M.shape[0] == 0:
        return np.eye(n)
    _, s, Vt = np.linalg.svd(M)
    r = int(np.sum(s > TOL * max(s[0], 1.0))) if s.size else 0
    return Vt[r:].T


def vstar(A: np.ndarray, B: np.ndarray, H: np.ndarray) -> np.ndarray:
    n = A.shape[0]
    V = _null(H, n)
    for _ in range(n + 1):
        Q = _orth(np.hstack([V, B]))
        P = np.eye(n) - Q @ Q.T
        Vn = _null(np.vstack([np.eye(n) - V @ V.T, P @ A]), n)
        if Vn.shape[1] == V.shape[1]:
            return Vn
        V = Vn
    raise AssertionError("Wonham's recursion did not settle")


def _contains(V: np.ndarray, E: np.ndarray) -> bool:
    if E.shape[1] == 0:
        return True
    Q = _orth(V)
    R = E - Q @ (Q.T @ E)
    return bool(np.linalg.norm(R) <= 1e-7 * max(np.linalg.norm(E), 1e-300))


def decouplable(A, B, E, H) -> tuple[bool, bool]:
    """(state feedback solves it, measured disturbance solves it)."""
    V = vstar(A, B, H)
    return _contains(V, E), _contains(np.hstack([V, B]), E)


def transfer_rank(A, B, C, rng) -> int:
    n = A.shape[0]
    if B.shape[1] == 0 or C.shape[0] == 0:
        return 0
    s = complex(rng.normal(), rng.normal())
    R = np.linalg.inv(s * np.eye(n) - A)
    G = C @ R @ B
    sv = np.linalg.svd(G, compute_uv=False)
    scale = np.linalg.norm(C, 2) * np.linalg.norm(R, 2) * np.linalg.norm(B, 2)
    return int(np.sum(sv > 1e-9 * max(scale, 1e-300)))


def has_fixed_mode(A, B, C, stations, rng, trials: int = 3) -> bool:
    """Wang & Davison (1973) with ``trials`` random block-diagonal gains."""
    n = A.shape[0]
    Ks = []
    for _ in range(trials):
        K = np.zeros((B.shape[1], C.shape[0]))
        for ins, outs in stations:
            if len(ins) and len(outs):
                K[np.ix_(ins, outs)] = rng.normal(size=(len(ins), len(outs)))
        Ks.append(K)
    mats = [A + B @ K @ C for K in Ks]

    def singular(M):
        s = np.linalg.svd(M, compute_uv=False)
        return s[-1] <= 1e-9 * max(s[0], 1.0)
    if all(singular(M) for M in [A] + mats):
        return True  # zero stays put (tested by rank)
    for lam in np.linalg.eigvals(A):
        if abs(lam) < 1e-3:
            continue  # zero (and its floating-point cluster) was decided by rank
        if all(singular(M - lam * np.eye(n)) for M in mats):
            return True
    return False
