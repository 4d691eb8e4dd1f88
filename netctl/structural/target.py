r"""Target controllability: steer only a chosen set of states.

A set of states ``T`` is *structurally target controllable* by dedicated inputs at the
driver states ``S`` when the generic rank of ``C_T [B, AB, ..., A^{n-1}B]`` is ``|T|``
(``C_T`` selects the rows ``T``; Gao, Liu, D'Souza & Barabási 2014). Convention: edge
``u -> v`` iff ``A[v, u] != 0``.

* :func:`target_rank` -- that generic rank, by exact arithmetic modulo the prime
  ``2^31 - 1`` on random weights (one-sided error, Schwartz--Zippel).
* :func:`gao_greedy_drivers` -- drivers for ``T`` by the greedy of Gao et al. (an
  upper bound on the fewest).

Choosing the fewest (cheapest) drivers under eligible sites and costs is
:func:`netctl.structural.placement.place_target_inputs`.

Results concern a linear(ized) structural model; they do not replace the operator's
procedures, applicable codes or licensed engineers (see ``netctl.cli.CAUTION``).
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np

from netctl._csr import take
from netctl.errors import OptionError
from netctl.graph.matching import maximum_matching
from netctl.system import StructuredSystem

__all__ = [
    "PRIME",
    "TARGET_EXHAUSTIVE_MAX_SITES",
    "TARGET_RANK_MAX_STATES",
    "gao_greedy_drivers",
    "is_target_controllable",
    "target_index",
    "target_rank",
]

#: The prime modulus of the exact rank computations (a Mersenne prime; products of two
#: residues fit in int64).
PRIME: int = 2**31 - 1

#: With ``method="auto"``, target placement tries every subset of eligible sites up to
#: this many sites.
TARGET_EXHAUSTIVE_MAX_SITES: int = 14

#: Largest system whose target rank is computed (dense Krylov arithmetic, O(n^2 m |T|)
#: per trial); beyond it designs are not verified and constrained sites are refused.
TARGET_RANK_MAX_STATES: int = 600


# ====================================================================== exact arithmetic
def _rank_mod_p(M: np.ndarray) -> int:
    """Rank of an int64 matrix with entries in [0, PRIME) modulo PRIME (exact)."""
    M = M.copy() % PRIME
    rows, cols = M.shape
    r = 0
    for c in range(cols):
        if r == rows:
            break
        piv = np.flatnonzero(M[r:, c])
        if piv.size == 0:
            continue
        p = r + int(piv[0])
        if p != r:
            M[[r, p]] = M[[p, r]]
        inv = pow(int(M[r, c]), PRIME - 2, PRIME)
        M[r] = (M[r] * inv) % PRIME
        below = np.flatnonzero(M[r + 1:, c]) + r + 1
        if below.size:
            f = M[below, c][:, None]
            M[below] = (M[below] - (f * M[r][None, :]) % PRIME) % PRIME
        r += 1
    return r


def target_rank(system: StructuredSystem, targets: Iterable[object], *,
                drivers: Iterable[int] | None = None, trials: int = 2, seed: int = 0) -> int:
    r"""Generic rank of ``C_T [B, AB, ..., A^{n-1} B]``.

    Parameters
    ----------
    system : StructuredSystem
        Its inputs ``B`` are used, plus a dedicated input at each of ``drivers``.
    targets : iterable of state names or indices
    drivers : iterable of int, optional
        States to drive with added dedicated inputs.
    trials : int, default 2
        Independent random draws; the largest rank is returned.
    seed : int, default 0

    Returns
    -------
    int
        ``|T|`` iff the targets are structurally target controllable (with probability
        at least ``1 - (n^2 / p)^trials``).

    Notes
    -----
    Every nonzero of ``A`` and ``B`` gets an independent uniform weight in
    ``F_p``, ``p = 2^31 - 1``; the rank is computed exactly over ``F_p``. A minor of the
    matrix is a polynomial of degree at most ``n^2`` in the weights, so one draw
    under-reports the generic rank with probability at most ``n^2 / p`` (Schwartz [1]_,
    Zippel); the rank over ``F_p`` never exceeds the generic rank, so the error is
    one-sided. Cost ``O(n (nnz(A) + n) m)`` per trial for the Krylov blocks plus the
    elimination; refused above :data:`TARGET_RANK_MAX_STATES` states.

    References
    ----------
    .. [1] J. T. Schwartz, "Fast probabilistic algorithms for verification of
       polynomial identities", J. ACM 27(4):701-717, 1980.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.structural.target import target_rank
    >>> s = StructuredSystem.from_edges([0, 1, 0], [1, 2, 3], 4)   # 0->1->2, 0->3
    >>> target_rank(s, [2, 3], drivers=[0])      # distinct path lengths: one driver
    2
    >>> target_rank(s, [1, 3], drivers=[0])      # equal path lengths: not enough
    1
    """
    n = system.n_states
    T = target_index(system, targets)
    if n > TARGET_RANK_MAX_STATES:
        raise OptionError(f"the target rank is computed densely up to "
                          f"{TARGET_RANK_MAX_STATES} states; this system has {n}.")
    if not isinstance(trials, int) or trials < 1:
        raise OptionError(f"trials must be an integer >= 1, found {trials!r}.")
    drv = np.unique(np.asarray([] if drivers is None else list(drivers), np.int64))
    B = system.pattern("B")  # entries in CSR (row-major) order, as B.tocoo() lists them
    rows_b = np.concatenate([np.repeat(np.arange(n, dtype=np.int64), np.diff(B.indptr)), drv])
    cols_b = np.concatenate([B.indices.astype(np.int64), system.n_inputs + np.arange(drv.size)])
    m = system.n_inputs + drv.size
    if T.size == 0:
        return 0
    if m == 0 or n == 0:
        return 0
    src, dst = system.edges()
    rng = np.random.default_rng(seed)
    best = 0
    for _ in range(trials):
        wa = rng.integers(1, PRIME, src.size, dtype=np.int64)
        X = np.zeros((n, m), np.int64)
        X[rows_b, cols_b] = rng.integers(1, PRIME, rows_b.size, dtype=np.int64)
        blocks = [X[T]]
        for _k in range(n - 1):
            contrib = (wa[:, None] * X[src]) % PRIME
            Y = np.zeros((n, m), np.int64)
            np.add.at(Y, dst, contrib)
            X = Y % PRIME
            blocks.append(X[T])
        K = np.concatenate(blocks, axis=1)
        best = max(best, _rank_mod_p(K.T.copy()))
        if best == T.size:
            break
    return best


def is_target_controllable(system: StructuredSystem, targets: Iterable[object], *,
                           drivers: Iterable[int] | None = None, seed: int = 0) -> bool:
    """True when ``targets`` are structurally target controllable by dedicated inputs at
    ``drivers`` (plus the system's own inputs): the generic rank of
    ``C_T [B, AB, ..., A^{n-1} B]`` is ``|T|`` [1]_, decided by :func:`target_rank`
    (one-sided error: a ``False`` is wrong with probability at most ``(n^2 / p)^2``,
    ``p = 2^31 - 1``, by the Schwartz--Zippel bound [2]_).

    References
    ----------
    .. [1] J. Gao, Y.-Y. Liu, R. M. D'Souza, A.-L. Barabási, "Target control of complex
       networks", Nat. Commun. 5:5415, 2014. doi:10.1038/ncomms6415
    .. [2] J. T. Schwartz, "Fast probabilistic algorithms for verification of
       polynomial identities", J. ACM 27(4):701-717, 1980.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.structural.target import is_target_controllable
    >>> s = StructuredSystem.from_edges([0, 1, 0], [1, 2, 3], 4)   # 0->1->2, 0->3
    >>> is_target_controllable(s, ["x2", "x3"], drivers=[0])
    True
    """
    T = target_index(system, targets)
    return target_rank(system, T, drivers=drivers, seed=seed) == T.size


def target_index(system: StructuredSystem, targets: Iterable[object]) -> np.ndarray:
    """Sorted unique state indices of ``targets`` (names, or an integer index array)."""
    if isinstance(targets, np.ndarray) and np.issubdtype(targets.dtype, np.integer):
        T = targets.astype(np.int64)
        if T.size and (T.min() < 0 or T.max() >= system.n_states):
            raise OptionError(f"target index {int(T.max())} is outside 0..{system.n_states - 1}.")
    else:
        T = system.index_of(list(targets))
    return np.unique(T)


# ====================================================================== Gao et al. greedy
def gao_greedy_drivers(system: StructuredSystem, targets: Iterable[object]) -> np.ndarray:
    r"""Driver states for target control by the greedy of Gao et al. [1]_ (an upper bound).

    Notes
    -----
    From memory (the paper's abstract is checked; its Methods were not available):
    start with ``C_0 = T``; find a maximum matching of ``C_k`` (right side) into the
    in-neighbours of ``C_k`` (left side); the unmatched states of ``C_k`` become
    drivers; the matched in-neighbours form ``C_{k+1}``. Repeat for at most ``n - 1``
    steps; the states still in the set at the end become drivers too (nothing earlier
    can feed them). When the sets start to repeat, the rest of the sequence is
    periodic and is skipped to its last step.

    Why the result works: read backwards in time, the matchings give ``|T|``
    vertex-disjoint paths in the time-expanded graph, each starting at a driver's
    input at some step and ending at a target at step ``n``; such a linking makes
    ``C_T [B AB ...]`` generically of full row rank (Poljak 1990; from memory). The
    count is an upper bound on the minimum; the minimum is NP-hard in general
    (Czeizler et al. 2018; from memory). Each step is one maximum matching, so the
    cost is ``O(L E)`` for ``L`` distinct steps before the sets repeat.

    References
    ----------
    .. [1] J. Gao, Y.-Y. Liu, R. M. D'Souza, A.-L. Barabási, "Target control of complex
       networks", Nat. Commun. 5:5415, 2014. doi:10.1038/ncomms6415

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.structural.target import gao_greedy_drivers
    >>> s = StructuredSystem.from_edges([0, 1, 0], [1, 2, 3], 4)   # 0->1->2, 0->3
    >>> gao_greedy_drivers(s, [2, 3]).tolist()
    [0]
    """
    T = target_index(system, targets)
    n = system.n_states
    A = system.pattern("A")
    drivers = np.zeros(n, bool)
    C = T
    seen: dict[bytes, int] = {}
    history: list[np.ndarray] = []
    step = 0
    while C.size and step < n - 1:
        key = C.tobytes()
        if key in seen:  # periodic from here on: jump to the set at step n - 1
            start = seen[key]
            period = step - start
            C = history[start + (n - 1 - step) % period]
            break
        seen[key] = step
        history.append(C)
        sub = take(A, rows=C)  # rows C, columns: in-neighbours (all states)
        rm, _ = maximum_matching(sub.indptr.astype(np.int64), sub.indices.astype(np.int64), n)
        drivers[C[rm < 0]] = True
        C = np.unique(rm[rm >= 0])
        step += 1
    drivers[C] = True
    return np.flatnonzero(drivers).astype(np.int64)
