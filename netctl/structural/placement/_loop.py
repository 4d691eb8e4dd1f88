"""The one outer loop of every placement: resolve the candidate columns, solve, check the
design independently, and report it with its bounds, gap and guarantee.

:func:`~netctl.structural.placement.place_inputs`, its dual
:func:`~netctl.structural.placement.place_sensors` and target placement
(:func:`~netctl.structural.placement.place_target_inputs`) differ only in how they solve
and how they check; they hand those two steps to :func:`run_placement`.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; an actuator is a column of ``B``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from netctl.errors import OptionError
from netctl.records import Candidates, Sites
from netctl.structural.placement._reduced import Outcome
from netctl.structural.placement.result import Placement
from netctl.structural.placement.sites import candidates_from_sites, sites_from_nodes
from netctl.system import StructuredSystem

__all__ = ["Check", "METHODS", "check_method", "resolve_candidates", "run_placement"]

#: ``method`` choices of every placement.
METHODS: tuple[str, ...] = ("auto", "exact", "greedy")


def check_method(method: str) -> None:
    """Raise :class:`~netctl.errors.OptionError` unless ``method`` is one of :data:`METHODS`."""
    if method not in METHODS:
        raise OptionError(f"unknown method {method!r}; choose one of "
                          f"{', '.join(map(repr, METHODS))}.")


@dataclass(frozen=True)
class Check:
    """The independent check of a design.

    ``verified`` is ``None`` when the check was skipped; ``dimension`` is the design's
    generic controllable dimension (target rank for target problems), ``None`` when not
    computed; ``inaccessible`` lists the states the design cannot reach.
    """

    verified: bool | None
    dimension: int | None
    inaccessible: np.ndarray


def run_placement(
    system: StructuredSystem,
    kind: str,
    sites: Sites | None,
    candidates: Candidates | None,
    *,
    solve: Callable[[Candidates], Outcome],
    check: Callable[[Candidates, Outcome], Check],
    budget: float | None = None,
    targets: np.ndarray | None = None,
) -> Placement:
    """Resolve the candidates (:func:`resolve_candidates`), ``solve``, ``check``, report.

    Parameters
    ----------
    system : StructuredSystem
        The system as given (its state names and model go into the result).
    kind : {"inputs", "sensors"}
    sites, candidates
        As taken by :func:`~netctl.structural.placement.place_inputs`.
    solve : callable
        ``solve(candidates) -> Outcome``: the design and what the solver proved.
    check : callable
        ``check(candidates, outcome) -> Check``: the independent check of that design.
    budget : float, optional
        The design meets the goal only within it.
    targets : ndarray of int, optional
        The target states (target problems); the goal dimension is then their number
        instead of ``n``.

    Returns
    -------
    Placement
        Gap: ``(cost - lower_bound) / cost`` for a cost problem (0 when the cost is 0 and
        the design works), ``(upper_bound - dimension) / upper_bound`` for best effort,
        ``inf`` when no design exists and nothing bounds the cost. A design the check
        rejects never meets the goal.
    """
    cands = resolve_candidates(system, kind, sites, candidates)
    out = solve(cands)
    chk = check(cands, out)
    n = system.n_states
    chosen = np.asarray(out.chosen, np.int64)
    chosen_sites = np.unique(np.concatenate([cands.states_of(int(k)) for k in chosen])
                             if chosen.size else np.zeros(0, np.int64)).astype(np.int64)
    dim = chk.dimension
    lower: float | None
    upper: float | None
    if out.best_effort:
        ub = out.upper_bound if out.upper_bound is not None else float(n)
        d0 = 0 if dim is None else dim
        gap = 0.0 if ub <= 0 else max(0.0, (ub - d0) / ub)
        if not out.feasible:  # no design meets the goal at any cost: no gap to close
            gap = float("inf")
        lower, upper = None, float(ub)
    elif not out.feasible and out.lower_bound is None:
        gap, lower, upper = float("inf"), None, None
    else:
        lower = out.lower_bound if out.lower_bound is not None else 0.0
        if out.cost > 0:
            gap = max(0.0, (out.cost - lower) / out.cost)
        else:
            gap = 0.0 if out.feasible else float("inf")
        if gap < 1e-12:
            gap = 0.0
        upper = None
    within = budget is None or out.cost <= budget * (1 + 1e-12) + 1e-12
    goal = bool(out.feasible and not out.best_effort and within)
    # a best effort on sites that cannot make the system controllable is never optimal
    optimal = bool(out.feasible) and gap == 0.0
    if goal and chk.verified is False:  # never claim a design the check rejects
        goal = False
    return Placement(
        kind=kind, problem=out.problem, method=out.method, feasible=out.feasible,
        goal_met=goal, best_effort=out.best_effort, sites=chosen_sites, chosen=chosen,
        cost=float(out.cost), lower_bound=lower, upper_bound=upper, optimal=optimal,
        gap=float(gap), dimension=None if dim is None else int(dim),
        goal_dimension=n if targets is None else int(targets.size), verified=chk.verified,
        inaccessible=np.asarray(chk.inaccessible, np.int64), reasons=tuple(out.reasons),
        guarantee=out.guarantee, budget=None if budget is None else float(budget),
        candidates=cands, state_names=tuple(system.state_names), targets=targets,
        model=system.model)


def resolve_candidates(system: StructuredSystem, kind: str, sites: Sites | None,
                       candidates: Candidates | None) -> Candidates:
    """The candidate columns to choose from: ``candidates`` when given (checked against
    ``system``), else one dedicated candidate per eligible site of ``sites`` (default:
    :func:`sites_from_nodes`). ``kind`` is ``"inputs"`` or ``"sensors"``.

    Raises
    ------
    OptionError
        Not a :class:`~netctl.records.Candidates` / :class:`~netctl.records.Sites`
        object, costs that are not finite and >= 0, data built for another system, or
        sites of the wrong kind.
    """
    site_kind = "actuator" if kind == "inputs" else "sensor"
    n = system.n_states
    if candidates is not None:
        if not isinstance(candidates, Candidates):
            raise OptionError(f"candidates must be a Candidates object (see read_candidates), "
                              f"found {type(candidates).__name__}.")
        c = np.asarray(candidates.cost, np.float64)
        if c.shape != (candidates.n_candidates,) or not np.all(np.isfinite(c)) or np.any(c < 0):
            raise OptionError(f"candidate costs must be one finite number >= 0 per candidate "
                              f"({candidates.n_candidates}), found {c.tolist()[:5]!r}.")
        if candidates.indices.size and int(candidates.indices.max()) >= n:
            raise OptionError(f"candidates refer to state index {int(candidates.indices.max())}"
                              f" but the system has {n} states; build them for this system.")
        return candidates
    if sites is None:
        sites = sites_from_nodes(system, kind=site_kind)
    if not isinstance(sites, Sites):
        raise OptionError(f"sites must be a Sites object (see read_sites / sites_from_nodes), "
                          f"found {type(sites).__name__}.")
    if sites.kind != site_kind:
        raise OptionError(f"these are {sites.kind} sites but {kind} are being placed; pass "
                          f"{site_kind} sites (kind={site_kind!r}).")
    if sites.eligible.shape != (n,):
        raise OptionError(f"sites cover {sites.eligible.size} states but the system has {n}; "
                          "build them for this system.")
    return candidates_from_sites(sites)
