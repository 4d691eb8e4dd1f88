"""Target placement: the cheapest dedicated drivers that make a chosen set of states
structurally target controllable (Gao, Liu, D'Souza & Barabási 2014), through the same
loop as every placement.

The target rank and the greedy of Gao et al. live in :mod:`netctl.structural.target`;
this module chooses the drivers: exhaustive over the eligible sites on small cases
(exact), the greedy of Gao et al. on large ones (an upper bound, with a proven lower
bound and gap). Convention: edge ``u -> v`` iff ``A[v, u] != 0``.

Results concern a linear(ized) structural model; they do not replace the operator's
procedures, applicable codes or licensed engineers (see ``netctl.cli.CAUTION``).
"""

from __future__ import annotations

import itertools
from collections.abc import Iterable

import numpy as np

from netctl._csr import empty_pattern, take, transpose_pattern
from netctl.errors import OptionError
from netctl.graph.components import reachable_from
from netctl.graph.matching import maximum_matching
from netctl.records import Candidates, Sites
from netctl.structural.placement._loop import Check, check_method, run_placement
from netctl.structural.placement._reduced import Outcome
from netctl.structural.placement.result import Placement
from netctl.structural.target import (
    TARGET_EXHAUSTIVE_MAX_SITES,
    TARGET_RANK_MAX_STATES,
    target_index,
    gao_greedy_drivers,
    target_rank,
)
from netctl.system import StructuredSystem

__all__ = ["place_target_inputs"]


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
        :data:`~netctl.structural.target.TARGET_EXHAUSTIVE_MAX_SITES` sites with
        ``"auto"``). ``"greedy"``: the
        greedy of Gao et al. [1]_ when every state is an eligible site at equal cost;
        otherwise a cost-effectiveness greedy on the target rank, which is monotone
        submodular in the set of drivers (the dimension of a projection of a sum of
        Krylov subspaces), so it costs at most ``H(|T|)`` times the optimum
        (Wolsey 1982); that greedy needs the target rank and is limited to
        :data:`~netctl.structural.target.TARGET_RANK_MAX_STATES` states.
    verify : bool, default True
        Check the design with :func:`~netctl.structural.target.target_rank` (up to
        :data:`~netctl.structural.target.TARGET_RANK_MAX_STATES` states).
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
    >>> from netctl.structural.placement import place_target_inputs
    >>> s = StructuredSystem.from_edges([0, 1, 0], [1, 2, 3], 4)   # 0->1->2, 0->3
    >>> p = place_target_inputs(s, ["x2", "x3"])
    >>> p.site_names, p.optimal, p.verified
    (['x0'], True, True)
    """
    check_method(method)
    T = target_index(system, targets)
    if T.size == 0:
        raise OptionError("targets is empty; name at least one state to control.")
    n = system.n_states
    base = system._replace(B=empty_pattern((n, 0)), input_names=())

    def check(cands: Candidates, out: Outcome) -> Check:
        verified: bool | None = None
        dim = out.dimension
        if verify and n <= TARGET_RANK_MAX_STATES:
            dim = target_rank(base, T, drivers=cands.indices[out.chosen], seed=seed + 1)
            verified = dim == T.size if out.feasible else None
        return Check(verified, dim, out.inaccessible)

    return run_placement(
        system, "inputs", sites, None,
        solve=lambda cands: _solve_target(system, base, T, cands, method, seed),
        check=check, targets=T)


def _solve_target(system: StructuredSystem, base: StructuredSystem, T: np.ndarray,
                  cands: Candidates, method: str, seed: int) -> Outcome:
    """The cheapest drivers for ``T`` among the dedicated candidates ``cands``."""
    n = system.n_states
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
    uniform = bool(site_state.size == n and np.ptp(cost) == 0)
    exhaustive = method == "exact" or (method == "auto" and
                                       site_state.size <= TARGET_EXHAUSTIVE_MAX_SITES)
    chosen_states: np.ndarray
    lower: float | None
    dim: int | None = None
    if reasons:
        chosen_states = np.zeros(0, np.int64)
        method_used, lower = "none", None
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
            method_used, lower = "exhaustive", None
            guarantee = "exact: every subset of eligible sites tried; none works"
        else:
            chosen_states = np.sort(site_state[list(best[1])])
            method_used, lower = "exhaustive", best[0]
            guarantee = "exact: every subset of eligible sites tried"
            dim = T.size
    elif uniform:
        chosen_states = gao_greedy_drivers(base, T)
        feasible = True
        method_used = "target-greedy"
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
        method_used = "greedy"
        lower = lb_cost
        H = sum(1.0 / i for i in range(1, T.size + 1))
        guarantee = f"greedy on the submodular target rank: cost <= H({T.size}) = {H:.3f} x optimum"
        if not feasible:
            reasons.append("the eligible sites together do not control the targets (a "
                           "dilation among the targets' upstream states that no eligible "
                           "site fixes).")
    best_effort = False
    upper: float | None = None
    if not feasible and site_state.size and n <= TARGET_RANK_MAX_STATES:
        # best effort: the design reaching the largest target rank the sites allow
        chosen_states, dim, upper, how = _best_effort(base, T, site_state, cost, seed,
                                                      exhaustive)
        best_effort, method_used, lower = True, how, None
        guarantee = (f"best effort, not optimal: the eligible sites cannot control every "
                     f"target; this design reaches target rank {dim} of {T.size} (at most "
                     f"{int(upper)} with every eligible site); "
                     + ("exact: every subset tried" if how == "exhaustive" else
                        "greedy on the submodular target rank"))
    total = float(cost[np.searchsorted(site_state, chosen_states)].sum()) \
        if chosen_states.size else 0.0
    if lower is not None and total > 0:
        lower = min(lower, total)
    chosen = np.searchsorted(site_state, chosen_states).astype(np.int64)
    return Outcome("target", method_used, feasible, best_effort, chosen, total, lower, upper,
                   dim, reasons, guarantee, inaccessible=unreachable.astype(np.int64))


def _best_effort(base: StructuredSystem, T: np.ndarray, site_state: np.ndarray,
                 cost: np.ndarray, seed: int, exhaustive: bool
                 ) -> tuple[np.ndarray, int, float, str]:
    """Drivers among the sites reaching the largest target rank, cheapest among those
    (exhaustive on few sites, else the cost-effectiveness greedy until no site adds
    rank); the target rank reached; the rank with every site (an upper bound)."""
    top = target_rank(base, T, drivers=site_state, seed=seed)
    if exhaustive:
        best: tuple[int, float, tuple[int, ...]] = (0, 0.0, ())
        idx = list(range(site_state.size))
        for r in range(1, len(idx) + 1):
            for S in itertools.combinations(idx, r):
                c = float(cost[list(S)].sum())
                if best[0] == top and c >= best[1] - 1e-12:
                    continue
                d = target_rank(base, T, drivers=site_state[list(S)], seed=seed)
                if d > best[0] or (d == best[0] and c < best[1] - 1e-12):
                    best = (d, c, S)
        return (np.sort(site_state[list(best[2])]).astype(np.int64), best[0], float(top),
                "exhaustive")
    chosen, _ = _rank_greedy(base, T, site_state, cost, seed)
    d = target_rank(base, T, drivers=chosen, seed=seed) if chosen.size else 0
    return chosen, int(d), float(top), "greedy"


def _lower_bound_count(system: StructuredSystem, T: np.ndarray) -> int:
    """Drivers needed inside ``T``: ``|T| - term rank A[T, :]`` (and at least one).

    ``rank C_T[B, AK] <= rank C_T B + rank C_T A``; with dedicated inputs ``rank C_T B``
    counts the drivers in ``T`` and ``rank C_T A`` is at most the term rank of the rows
    ``T`` of ``A``.
    """
    if T.size == 0:
        return 0
    sub = take(system.pattern("A"), rows=np.asarray(T, np.int64))
    rm, _ = maximum_matching(sub.indptr.astype(np.int64), sub.indices.astype(np.int64),
                             system.n_states)
    return max(1, int(np.count_nonzero(rm < 0)))


def _out_adj(system: StructuredSystem) -> tuple[np.ndarray, np.ndarray]:
    At = transpose_pattern(system.pattern("A"))
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
