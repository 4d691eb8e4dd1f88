"""Exact controllable dimension over a prime field: random weights modulo ``p`` and the
Krylov subspace rank by doubling (no rounding; Schwartz–Zippel bound reported).

One of the four rank tests of :mod:`netctl.numeric.rank` (which holds the shared
:class:`~netctl.numeric.rank.RankTest`).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from netctl.errors import OptionError
from netctl.numeric.rank import DENSE_LIMIT, RankTest, _dense
from netctl.system import StructuredSystem

__all__ = ["modular", "MODULAR_WEIGHTS", "MERSENNE_61"]

MERSENNE_61 = 2**61 - 1
MODULAR_WEIGHTS = ("independent", "symmetric", "laplacian", "uniform")


def _to_flint(M: np.ndarray, p: int) -> Any:
    import flint

    r, c = M.shape
    return flint.nmod_mat(r, c, np.ascontiguousarray(M, dtype=np.int64).ravel().tolist(), p)


def _from_flint(M: Any) -> np.ndarray:
    r, c = M.nrows(), M.ncols()
    return np.fromiter(map(int, M.entries()), dtype=np.int64, count=r * c).reshape(r, c)


def krylov_dimension_mod_p(A: np.ndarray, B: np.ndarray, p: int) -> int:
    """``dim span{B, AB, A^2 B, ...}`` over ``GF(p)`` (entries of A, B in ``[0, p)``).

    Doubling: with ``K`` spanning ``B, ..., A^{k-1}B`` and ``P = A^k``, the span of
    ``[K, PK]`` covers powers below ``2k``; it stops when the span stops growing (the
    Krylov sequence has stalled) or reaches ``n``. ``O(n^3 log n)`` field operations
    (python-flint ``nmod_mat``).
    """
    n, m = B.shape
    if n == 0 or m == 0:
        return 0
    E, r = _to_flint(B.T % p, p).rref()
    r = int(r)
    if r == 0:
        return 0
    K = _from_flint(E)[:r]
    P = _to_flint(A % p, p)
    power = 1
    while r < n and power < n:
        Y = P * _to_flint(np.ascontiguousarray(K.T), p)
        stacked = np.vstack([K, _from_flint(Y).T])
        E, r2 = _to_flint(stacked, p).rref()
        r2 = int(r2)
        if r2 == r:
            break
        K = _from_flint(E)[:r2]
        r = r2
        power *= 2
        if r < n and power < n:
            P = P * P
    return r


def _modular_matrices(system: StructuredSystem, weights: str, rng: np.random.Generator,
                      p: int) -> tuple[np.ndarray, np.ndarray]:
    """Dense integer matrices mod ``p`` of one random realization under ``weights``."""
    from netctl.numeric.realize import _coo

    n = system.n_states
    rows, cols = _coo(system.pattern("A"))  # the stored arrays: no scipy needed
    off = rows != cols
    A = np.zeros((n, n), np.int64)
    pb = system.pattern("B")
    b_rows, b_cols = _coo(pb)
    B = np.zeros(pb.shape, np.int64)

    def draw(k: int) -> np.ndarray:
        return rng.integers(1, p, size=k, dtype=np.int64)

    if weights == "independent":
        A[rows, cols] = draw(rows.size)
        B[b_rows, b_cols] = draw(b_rows.size)
        return A, B
    B[b_rows, b_cols] = np.round(pb.data).astype(np.int64) % p if np.allclose(
        pb.data, np.round(pb.data)) else draw(b_rows.size)
    r, c = rows[off], cols[off]
    key_n = max(n, 1)
    uniq, inv = np.unique(np.minimum(r, c) * key_n + np.maximum(r, c), return_inverse=True)
    inv = inv.ravel()
    if weights == "symmetric":
        A[r, c] = draw(uniq.size)[inv]
        A[rows[~off], cols[~off]] = draw(int(np.count_nonzero(~off)))
        return A, B
    w = draw(uniq.size)[inv] if weights == "laplacian" else np.ones(r.size, np.int64)
    A[r, c] = w
    looped = np.zeros(n, bool)
    looped[rows[~off]] = True
    damp = draw(n) if weights == "laplacian" else np.ones(n, np.int64)
    # diagonal = -(row sum) - damping, in exact integers (object) then reduced mod p
    sums = np.zeros(n, dtype=object)
    np.add.at(sums, r, w.astype(object))
    diag = -(sums + np.where(looped, damp, 0).astype(object))
    A[np.arange(n), np.arange(n)] = np.array([int(x) % p for x in diag], dtype=np.int64)
    return A, B


def modular(system: StructuredSystem, *, weights: str = "independent", seed: int = 0,
            prime: int = MERSENNE_61, trials: int = 1) -> RankTest:
    r"""Exact controllable dimension for random weights over the prime field ``GF(p)``.

    Draws the weights of the pattern uniformly from ``{1, ..., p-1}`` under the
    parameterization ``weights`` and computes the Krylov subspace dimension modulo
    ``p`` exactly (no rounding). The result never exceeds the generic dimension of
    the family over the rationals; it falls short only if the random point is a root
    of a nonzero polynomial of degree at most ``n^2`` (a minor of the controllability
    matrix), which by the Schwartz–Zippel lemma [1]_, [2]_ has probability at most
    ``n^2 / (p - 1)`` per trial. The best of ``trials`` is reported, with the bound
    ``(n^2/(p-1))^trials``.

    Parameters
    ----------
    system : StructuredSystem
        Only the pattern is used (and B's values when they are integers, except under
        ``independent``).
    weights : {"independent", "symmetric", "laplacian", "uniform"}
        ``uniform`` has no random weights: it is the rank mod ``p`` of the integer
        matrix itself (equal to the rational rank unless ``p`` divides the relevant
        minors); no probability bound applies.
    seed : int, default 0
    prime : int, default 2**61 - 1
        A prime below 2**63 (python-flint ``nmod_mat``).
    trials : int, default 1

    Returns
    -------
    RankTest
        ``margin`` is ``inf`` (exact arithmetic); ``failure_bound`` as above.

    Notes
    -----
    Dense: ``O(n^2)`` memory and ``O(n^3 log n)`` field operations (doubling
    ``K <- [K, A^k K]``). ``independent`` weights give the *generic* (structural)
    dimension of Hosoe with the stated probability.

    References
    ----------
    .. [1] J. T. Schwartz, "Fast probabilistic algorithms for verification of polynomial
       identities", J. ACM 27(4):701-717, 1980. doi:10.1145/322217.322225
    .. [2] R. Zippel, "Probabilistic algorithms for sparse polynomials", EUROSAM 1979,
       LNCS 72:216-226. doi:10.1007/3-540-09519-5_73

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> tree = StructuredSystem.from_edges([0, 0, 1, 2], [1, 2, 4, 3], 5, inputs=[0])
    >>> modular(tree).dimension     # generic dimension 3 (longest stem), not 4
    3
    """
    if weights not in MODULAR_WEIGHTS:
        raise OptionError(f"the modular test supports weights {', '.join(MODULAR_WEIGHTS)}; "
                          f"found {weights!r}. Use staircase or pbh for "
                          "'swing' and 'given' weights.")
    if trials < 1:
        raise OptionError(f"trials must be >= 1, found {trials!r}.")
    if not (2 < prime < 2**63):
        raise OptionError(f"prime must lie in (2, 2**63), found {prime!r}.")
    n = system.n_states
    if n > DENSE_LIMIT:
        _dense(system)
    rng = np.random.default_rng(seed)
    best = 0
    reps = 1 if weights == "uniform" else trials
    for _ in range(reps):
        A, B = _modular_matrices(system, weights, rng, prime)
        best = max(best, krylov_dimension_mod_p(A, B, prime))
        if best == n:
            break
    bound = None if weights == "uniform" else min(1.0, n * n / (prime - 1)) ** trials
    return RankTest(method="modular", n_states=n, dimension=best, margin=np.inf,
                    smallest_kept=np.inf, largest_dropped=0.0, tolerance=0.0,
                    blocks=np.zeros(0, np.int64), state_names=tuple(system.state_names),
                    failure_bound=bound, weights=weights,
                    note=f"exact rank over GF({prime}), {reps} trial(s)")
