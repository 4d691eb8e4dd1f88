"""Independent references for the structural tests (no netctl code is used here).

The generic rank of a structured matrix is obtained from random weights over the prime
field F_p, p = 2^61 - 1: a nonzero polynomial of degree d vanishes at a uniformly random
point with probability at most d / p (Schwartz 1980, J. ACM 27(4):701-717; Zippel 1979),
so one draw under-reports a generic rank with probability < n^2 / p ~ 2e-17 here. The
rank modulo p never exceeds the rank over the rationals, so the error is one-sided.
"""

from __future__ import annotations

import itertools

import numpy as np

P = (1 << 61) - 1


def rank_mod_p(rows: list[list[int]]) -> int:
    """Rank of an integer matrix modulo P by Gaussian elimination (exact)."""
    m = [list(r) for r in rows]
    if not m:
        return 0
    n_cols = len(m[0])
    rank = 0
    for col in range(n_cols):
        piv = next((i for i in range(rank, len(m)) if m[i][col] % P), None)
        if piv is None:
            continue
        m[rank], m[piv] = m[piv], m[rank]
        inv = pow(m[rank][col], P - 2, P)
        prow = [(x * inv) % P for x in m[rank]]
        m[rank] = prow
        for i in range(len(m)):
            if i != rank and m[i][col] % P:
                f = m[i][col]
                m[i] = [(a - f * b) % P for a, b in zip(m[i], prow)]
        rank += 1
        if rank == len(m):
            break
    return rank


def random_weights(pattern: np.ndarray, rng: np.random.Generator) -> list[list[int]]:
    """Random elements of F_P on the nonzeros of a boolean pattern."""
    w = rng.integers(1, P, size=pattern.shape, dtype=np.int64)
    return [[int(w[i, j]) if pattern[i, j] else 0 for j in range(pattern.shape[1])]
            for i in range(pattern.shape[0])]


def _matmul(a: list[list[int]], b: list[list[int]]) -> list[list[int]]:
    bt = list(zip(*b))
    return [[sum(x * y for x, y in zip(row, col)) % P for col in bt] for row in a]


def generic_controllable_dimension(A: np.ndarray, B: np.ndarray, rng: np.random.Generator,
                                   trials: int = 2) -> int:
    """Generic rank of [B, AB, ..., A^{n-1}B] for boolean patterns A (n x n), B (n x m)."""
    n = A.shape[0]
    if n == 0 or B.shape[1] == 0:
        return 0
    best = 0
    for _ in range(trials):
        Aw = random_weights(A, rng)
        Bw = random_weights(B, rng)
        blocks = [Bw]
        for _ in range(n - 1):
            blocks.append(_matmul(Aw, blocks[-1]))
        K = [list(itertools.chain.from_iterable(b[i] for b in blocks)) for i in range(n)]
        best = max(best, rank_mod_p(K))
    return best


def generic_rank(M: np.ndarray, rng: np.random.Generator) -> int:
    """Generic (term) rank of a boolean pattern by one random draw over F_P."""
    return rank_mod_p(random_weights(M, rng))


def pattern_from_edges(edges: np.ndarray, n: int) -> np.ndarray:
    """Boolean A with A[v, u] = True for every edge (u, v)."""
    A = np.zeros((n, n), dtype=bool)
    for u, v in np.asarray(edges, dtype=np.int64).reshape(-1, 2):
        A[v, u] = True
    return A


def dedicated_B(n: int, states: tuple[int, ...] | list[int]) -> np.ndarray:
    B = np.zeros((n, len(states)), dtype=bool)
    for k, i in enumerate(states):
        B[i, k] = True
    return B


def brute_force_min_dedicated(A: np.ndarray, rng: np.random.Generator) -> int:
    """Fewest states to drive, one input each, for a full generic controllable dimension."""
    n = A.shape[0]
    for size in range(0, n + 1):
        for S in itertools.combinations(range(n), size):
            if generic_controllable_dimension(A, dedicated_B(n, S), rng, trials=1) == n:
                return size
    raise AssertionError("unreachable: driving every state always works")
