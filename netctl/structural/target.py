r"""Target controllability: steer only a chosen set of states.

A set of states ``T`` is *structurally target controllable* by dedicated inputs at the
driver states ``S`` when the generic rank of ``C_T [B, AB, ..., A^{n-1}B]`` is ``|T|``
(``C_T`` selects the rows ``T``; Gao, Liu, D'Souza & Barabási 2014). Convention: edge
``u -> v`` iff ``A[v, u] != 0``.

* :func:`target_rank` -- that generic rank, by exact arithmetic modulo the prime
  ``2^31 - 1`` on random weights (one-sided error, Schwartz--Zippel).
* :func:`place_target_inputs` -- fewest (cheapest) drivers for ``T``: exhaustive over
  the eligible sites on small cases (exact), the greedy of Gao et al. on large ones
  (an upper bound, with a proven lower bound and gap).

Results concern a linear(ized) structural model; they do not replace the operator's
procedures, applicable codes or licensed engineers (see ``netctl.cli.CAUTION``).
"""

from __future__ import annotations

import itertools
from collections.abc import Iterable

import numpy as np
import scipy.sparse as sp

from netctl.errors import OptionError
from netctl.graph.components import reachable_from
from netctl.graph.matching import maximum_matching
from netctl.structural.placement import (
    METHODS,
    Placement,
    Sites,
    candidates_from_sites,
    sites_from_nodes,
)
from netctl.system import StructuredSystem

__all__ = [
    "PRIME",
    "TARGET_EXHAUSTIVE_MAX_SITES",
    "TARGET_RANK_MAX_STATES",
    "gao_greedy_drivers",
    "is_target_controllable",
    "place_target_inputs",
    "target_rank",
]

#: The prime modulus of the exact rank computations (a Mersenne prime; products of two
#: residues fit in int64).
PRIME: int = 2**31 - 1

#: ``method="auto"`` tries every subset of eligible sites up to this many sites.
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
    T = _target_index(system, targets)
    if n > TARGET_RANK_MAX_STATES:
        raise OptionError(f"the target rank is computed densely up to "
                          f"{TARGET_RANK_MAX_STATES} states; this system has {n}.")
    if not isinstance(trials, int) or trials < 1:
        raise OptionError(f"trials must be an integer >= 1, found {trials!r}.")
    drv = np.unique(np.asarray([] if drivers is None else list(drivers), np.int64))
    B = system.B.tocoo()
    rows_b = np.concatenate([B.row.astype(np.int64), drv])
    cols_b = np.concatenate([B.col.astype(np.int64), system.n_inputs + np.arange(drv.size)])
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
    """True when ``targets`` are structurally target controllable (see :func:`target_rank`)."""
    T = _target_index(system, targets)
    return target_rank(system, T, drivers=drivers, seed=seed) == T.size


def _target_index(system: StructuredSystem, targets: Iterable[object]) -> np.ndarray:
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
    T = _target_index(system, targets)
    n = system.n_states
    A = system.A
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
        sub = A[C]  # rows C, columns: in-neighbours (all states)
        rm, _ = maximum_matching(sub.indptr.astype(np.int64), sub.indices.astype(np.int64), n)
        drivers[C[rm < 0]] = True
        C = np.unique(rm[rm >= 0])
        step += 1
    drivers[C] = True
    return np.flatnonzero(drivers).astype(np.int64)


def _lower_bound_count(system: StructuredSystem, T: np.ndarray) -> int:
    """Drivers needed inside ``T``: ``|T| - term rank A[T, :]`` (and at least one).

    ``rank C_T[B, AK] <= rank C_T B + rank C_T A``; with dedicated inputs ``rank C_T B``
    counts the drivers in ``T`` and ``rank C_T A`` is at most the term rank of the rows
    ``T`` of ``A``.
    """
    if T.size == 0:
        return 0
    sub = system.A[T]
    rm, _ = maximum_matching(sub.indptr.astype(np.int64), sub.indices.astype(np.int64),
                             system.n_states)
    return max(1, int(np.count_nonzero(rm < 0)))


# ====================================================================== placement
def place_target_inputs(
    system: StructuredSystem,
    targets: Iterable[object],
    *,
    sites: Sites | None = None,
    method: str = "auto",
    verify: bool = True,
    seed: int = 0,
) -> Placement:
    r"""Cheapest dedicated drivers that make ``targets`` structurally target controllable.

    Parameters
    ----------
    system : StructuredSystem
        Existing inputs are ignored (the design is built from scratch).
    targets : iterable of state names or indices
    sites : Sites, optional
        Eligible states and costs (default: the node table, else every state at unit
        cost).
    method : {"auto", "exact", "greedy"}
        ``"exact"``: every subset of eligible sites, cheapest first (up to
        :data:`TARGET_EXHAUSTIVE_MAX_SITES` sites with ``"auto"``). ``"greedy"``: the
        greedy of Gao et al. [1]_ when every state is an eligible site at equal cost;
        otherwise a cost-effectiveness greedy on the target rank, which is monotone
        submodular in the set of drivers (the dimension of a projection of a sum of
        Krylov subspaces), so it costs at most ``H(|T|)`` times the optimum
        (Wolsey 1982); that greedy needs the target rank and is limited to
        :data:`TARGET_RANK_MAX_STATES` states.
    verify : bool, default True
        Check the design with :func:`target_rank` (up to
        :data:`TARGET_RANK_MAX_STATES` states).
    seed : int
        Seed of the random weights of the rank computations.

    Returns
    -------
    Placement
        ``problem="target"``; ``dimension`` is the target rank of the design,
        ``goal_dimension`` the number of targets. ``lower_bound``: the cheapest way to
        place ``|T| - term rank A[T, :]`` drivers inside ``T`` (see Notes).

    Notes
    -----
    Lower bound: ``rank C_T[B, AB, ...] <= rank C_T B + rank C_T A``, so at least
    ``|T| - term rank(A[T, :])`` drivers lie in ``T`` (and at least one in all).

    References
    ----------
    .. [1] J. Gao, Y.-Y. Liu, R. M. D'Souza, A.-L. Barabási, "Target control of complex
       networks", Nat. Commun. 5:5415, 2014. doi:10.1038/ncomms6415

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.structural.target import place_target_inputs
    >>> s = StructuredSystem.from_edges([0, 1, 0], [1, 2, 3], 4)   # 0->1->2, 0->3
    >>> p = place_target_inputs(s, ["x2", "x3"])
    >>> p.site_names, p.optimal, p.verified
    (['x0'], True, True)
    """
    if method not in METHODS:
        raise OptionError(f"unknown method {method!r}; choose one of "
                          f"{', '.join(map(repr, METHODS))}.")
    T = _target_index(system, targets)
    if T.size == 0:
        raise OptionError("targets is empty; name at least one state to control.")
    n = system.n_states
    base = system._replace(B=sp.csr_array((n, 0)), input_names=())
    if sites is None:
        sites = sites_from_nodes(system, kind="actuator")
    if not isinstance(sites, Sites) or sites.kind != "actuator":
        raise OptionError("sites must be actuator Sites (see read_sites / sites_from_nodes).")
    cands = candidates_from_sites(sites)
    site_state = cands.indices
    cost = cands.cost
    # feasibility: every target must be reachable from some eligible site
    reach = reachable_from(*_out_adj(system), site_state)
    unreachable = T[~reach[T]]
    n_lb = _lower_bound_count(system, T)
    lb_cost = _cheapest_inside(T, site_state, cost, n_lb)
    reasons: list[str] = []
    if unreachable.size:
        reasons.append(f"no eligible site reaches the target state(s) "
                       f"{{{', '.join(system.state_names[int(i)] for i in unreachable[:20])}}}"
                       f"{' ...' if unreachable.size > 20 else ''}: make a state upstream of "
                       "them eligible.")
    uniform = bool(sites.eligible.all() and np.ptp(cost) == 0)
    exhaustive = method == "exact" or (method == "auto" and
                                       site_state.size <= TARGET_EXHAUSTIVE_MAX_SITES)
    chosen_states: np.ndarray
    dim: int | None = None
    if reasons:
        chosen_states = np.zeros(0, np.int64)
        method_used, optimal, lower = "none", False, None
        guarantee = "no design within the eligible sites controls the targets"
        feasible = False
    elif exhaustive:
        if n > TARGET_RANK_MAX_STATES:
            raise OptionError(f"the exact target method needs the target rank, limited to "
                              f"{TARGET_RANK_MAX_STATES} states; use method='greedy'.")
        best: tuple[float, tuple[int, ...]] | None = None
        idx = list(range(site_state.size))
        for r in range(1, len(idx) + 1):
            for S in itertools.combinations(idx, r):
                c = float(cost[list(S)].sum())
                if best is not None and c >= best[0] - 1e-12:
                    continue
                if target_rank(base, T, drivers=site_state[list(S)], seed=seed) == T.size:
                    best = (c, S)
        feasible = best is not None
        if best is None:
            chosen_states = np.zeros(0, np.int64)
            reasons.append("no subset of the eligible sites controls the targets (dilation "
                           "among the targets' upstream states that no eligible site fixes).")
            method_used, optimal, lower = "exhaustive", False, None
            guarantee = "exact: every subset of eligible sites tried; none works"
        else:
            chosen_states = np.sort(site_state[list(best[1])])
            method_used, optimal, lower = "exhaustive", True, best[0]
            guarantee = "exact: every subset of eligible sites tried"
            dim = T.size
    elif uniform:
        chosen_states = gao_greedy_drivers(base, T)
        feasible = True
        method_used, optimal = "target-greedy", False
        lower = lb_cost
        guarantee = ("greedy of Gao et al. (2014): an upper bound; lower bound |T| - term "
                     "rank A[T,:]")
    else:
        if n > TARGET_RANK_MAX_STATES:
            raise OptionError(
                f"target placement with restricted sites or unequal costs needs the target "
                f"rank, limited to {TARGET_RANK_MAX_STATES} states (this system has {n}); "
                "drop the site restrictions to use the greedy of Gao et al.")
        chosen_states, feasible = _rank_greedy(base, T, site_state, cost, seed)
        method_used, optimal = "greedy", False
        lower = lb_cost
        H = sum(1.0 / i for i in range(1, T.size + 1))
        guarantee = f"greedy on the submodular target rank: cost <= H({T.size}) = {H:.3f} x optimum"
        if not feasible:
            reasons.append("the eligible sites together do not control the targets (a "
                           "dilation among the targets' upstream states that no eligible "
                           "site fixes).")
    total = float(cost[np.searchsorted(site_state, chosen_states)].sum()) \
        if chosen_states.size else 0.0
    verified: bool | None = None
    if verify and n <= TARGET_RANK_MAX_STATES:
        dim = target_rank(base, T, drivers=chosen_states, seed=seed + 1)
        verified = dim == T.size if feasible else None
    if lower is not None and total > 0:
        lower = min(lower, total)
        gap = max(0.0, (total - lower) / total)
        if gap < 1e-12:
            gap = 0.0
    else:
        gap = 0.0 if (feasible and optimal) else float("inf") if not feasible else 0.0
    optimal = bool(feasible and gap == 0.0)
    goal = bool(feasible and verified is not False)
    chosen = np.searchsorted(site_state, chosen_states).astype(np.int64)
    return Placement(
        kind="inputs", problem="target", method=method_used, feasible=feasible,
        goal_met=goal, best_effort=False, sites=chosen_states, chosen=chosen, cost=total,
        lower_bound=lower, upper_bound=None, optimal=optimal, gap=float(gap),
        dimension=dim, goal_dimension=int(T.size), verified=verified,
        inaccessible=unreachable.astype(np.int64), reasons=tuple(reasons),
        guarantee=guarantee, budget=None, candidates=cands, state_names=tuple(system.state_names),
        targets=T, model=system.model)


def _out_adj(system: StructuredSystem) -> tuple[np.ndarray, np.ndarray]:
    At = system.A.T.tocsr()
    At.sort_indices()
    return At.indptr.astype(np.int64), At.indices.astype(np.int64)


def _cheapest_inside(T: np.ndarray, site_state: np.ndarray, cost: np.ndarray, k: int) -> float:
    """Cost of the ``k`` cheapest eligible sites inside ``T`` (a lower bound)."""
    inside = np.isin(site_state, T)
    c = np.sort(cost[inside])
    if k <= c.size:
        return float(c[:k].sum())
    return float(c.sum())


def _rank_greedy(base: StructuredSystem, T: np.ndarray, site_state: np.ndarray,
                 cost: np.ndarray, seed: int) -> tuple[np.ndarray, bool]:
    chosen: list[int] = []
    current = 0
    while current < T.size:
        best_k, best_ratio, best_rank = -1, -1.0, current
        for k in range(site_state.size):
            if k in chosen:
                continue
            r = target_rank(base, T, drivers=site_state[chosen + [k]], seed=seed)
            gain = r - current
            if gain <= 0:
                continue
            ratio = float("inf") if cost[k] <= 0 else gain / cost[k]
            if ratio > best_ratio:
                best_k, best_ratio, best_rank = k, ratio, r
        if best_k < 0:
            return np.sort(site_state[chosen]).astype(np.int64), False
        chosen.append(best_k)
        current = best_rank
    return np.sort(site_state[chosen]).astype(np.int64), True
