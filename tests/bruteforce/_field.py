"""Exact linear algebra over the prime field F_p, p = 2^31 - 1, compiled with numba.

Independent of netctl: no netctl module is imported here. The brute-force references use
these kernels to decide *generic* ranks of structured matrices by substituting uniformly
random field elements for the free (nonzero) entries.

Why this decides generic ranks (Schwartz 1980, J. ACM 27(4):701-717; Zippel 1979): the
generic rank is r iff some r x r minor is a nonzero polynomial in the free entries; a
nonzero polynomial of degree d vanishes at a uniformly random point of F_p^k with
probability at most d / p. The rank modulo p of an integer matrix never exceeds its rank
over the rationals, so a draw can only *under*-report a generic rank (one-sided error).
For the controllability matrix of a 7-state system a minor has degree <= 7 * 8 / 2 = 28,
so one test errs with probability <= 28 / p < 1.4e-8; the suite re-decides any
disagreement on fresh independent draws before counting it (see ``_compare``), which
makes a false alarm vanishingly unlikely and a real disagreement persistent.

Products of two residues are < 2^62 and fit int64; every product is reduced at once.
"""

from __future__ import annotations

import numba
import numpy as np

__all__ = ["P", "rank", "krylov", "masked_ranks", "random_weights", "unit_blocks"]

P = 2147483647  # 2^31 - 1, prime (a Mersenne prime; Euler 1772, from memory)


@numba.njit(cache=True, nogil=True)
def _inverse(a: int) -> int:  # pragma: no cover - compiled
    result = 1
    base = a % P
    e = P - 2  # Fermat's little theorem: a^(p-2) = a^-1 mod p
    while e > 0:
        if e & 1:
            result = result * base % P
        base = base * base % P
        e >>= 1
    return result


@numba.njit(cache=True, nogil=True)
def _rank_inplace(M: np.ndarray) -> int:  # pragma: no cover - compiled
    """Rank of M (entries in [0, P)) by Gaussian elimination; M is destroyed."""
    rows, cols = M.shape
    r = 0
    for c in range(cols):
        if r == rows:
            break
        piv = -1
        for i in range(r, rows):
            if M[i, c] != 0:
                piv = i
                break
        if piv < 0:
            continue
        if piv != r:
            for j in range(c, cols):
                t = M[r, j]
                M[r, j] = M[piv, j]
                M[piv, j] = t
        inv = _inverse(M[r, c])
        for i in range(r + 1, rows):
            if M[i, c] != 0:
                f = M[i, c] * inv % P
                for j in range(c, cols):
                    M[i, j] = (M[i, j] + P - f * M[r, j] % P) % P
        r += 1
    return r


@numba.njit(cache=True, nogil=True)
def rank(M: np.ndarray) -> int:  # pragma: no cover - compiled
    """Rank over F_P of an int64 matrix with entries in [0, P) (M is not changed)."""
    return _rank_inplace(M.copy())


@numba.njit(cache=True, nogil=True)
def krylov(A: np.ndarray, B: np.ndarray) -> np.ndarray:  # pragma: no cover - compiled
    """``[B, AB, ..., A^{n-1} B]`` over F_P (Kalman's controllability matrix)."""
    n = A.shape[0]
    m = B.shape[1]
    K = np.zeros((n, n * m), np.int64)
    for k in range(m):
        for i in range(n):
            K[i, k] = B[i, k]
    for step in range(1, n):
        for k in range(m):
            src = (step - 1) * m + k
            dst = step * m + k
            for i in range(n):
                acc = 0
                for j in range(n):
                    acc = (acc + A[i, j] * K[j, src] % P) % P
                K[i, dst] = acc
    return K


@numba.njit(cache=True, nogil=True)
def masked_ranks(base: np.ndarray, blocks: np.ndarray,
                 masks: np.ndarray) -> np.ndarray:  # pragma: no cover - compiled
    """Rank of ``[base, blocks[i] for i in mask]`` for every bit mask in ``masks``.

    ``base`` is n x w0; ``blocks`` is k x n x w (one column block per item).
    """
    n = base.shape[0]
    w0 = base.shape[1]
    k = blocks.shape[0]
    w = blocks.shape[2]
    out = np.zeros(masks.size, np.int64)
    M = np.zeros((n, w0 + k * w), np.int64)
    for q in range(masks.size):
        mask = masks[q]
        for i in range(n):
            for j in range(w0):
                M[i, j] = base[i, j]
        col = w0
        for b in range(k):
            if (mask >> b) & 1:
                for i in range(n):
                    for j in range(w):
                        M[i, col + j] = blocks[b, i, j]
                col += w
        out[q] = _rank_inplace(M[:, :col].copy())
    return out


def random_weights(pattern: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """Independent uniform nonzero elements of F_P on the True entries of ``pattern``."""
    w = rng.integers(1, P, size=pattern.shape, dtype=np.int64)
    return np.where(pattern, w, 0).astype(np.int64)


def unit_blocks(n: int) -> np.ndarray:
    """``n x n x 1``: block ``i`` is the unit column ``e_i`` (a dedicated input at i)."""
    return np.eye(n, dtype=np.int64).reshape(n, n, 1)
