"""Designs for full structural control, shared by actuators and, on the dual system, by
sensors: pick the solver (exact assignment, MILP, greedy cover, best effort under a
budget) and check the design with Lin's test; :func:`run_placement` does the rest.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; the methods and their guarantees are in
the Notes of :func:`netctl.structural.placement.place_inputs`.
"""

from __future__ import annotations

import numpy as np

from netctl._csr import coo_pattern, hstack_patterns
from netctl.errors import OptionError
from netctl.graph.matching import maximum_matching
from netctl.records import Candidates, Sites
from netctl.structural._engine import accessible_states, stack_AB, structure_of
from netctl.structural.placement._assignment import dedicated_assignment
from netctl.structural.placement._budget import best_effort_design
from netctl.structural.placement._cover import greedy_cover
from netctl.structural.placement._loop import Check, check_method, run_placement
from netctl.structural.placement._milp import solve_milp
from netctl.structural.placement._reduced import Outcome, infeasibility, reduce_problem
from netctl.structural.placement.result import Placement
from netctl.system import StructuredSystem

__all__ = ["DIMENSION_MAX_STATES", "MILP_MAX_VARIABLES", "place_design"]

#: Largest mixed-integer programme ``method="auto"`` hands to HiGHS (continuous matching
#: variables plus binary actuator variables, after the reduction described in
#: :func:`~netctl.structural.placement.place_inputs`); larger problems use the greedy. See benchmarks/RESULTS.md.
MILP_MAX_VARIABLES: int = 200_000

#: Largest system for which a failing design's generic controllable dimension is
#: reported without being asked for (it costs one min-cost assignment).
DIMENSION_MAX_STATES: int = 20_000



def _validate(method: str, budget: float | None, time_limit: float) -> None:
    check_method(method)
    if budget is not None:
        if isinstance(budget, bool) or not isinstance(budget, (int, float, np.number)) or \
                not np.isfinite(budget) or budget < 0:
            raise OptionError(f"budget must be a finite number >= 0, found {budget!r}; omit it "
                              "for no budget.")
    if not isinstance(time_limit, (int, float)) or not time_limit > 0:
        raise OptionError(f"time_limit must be a number of seconds > 0, found {time_limit!r}.")


def place_design(system: StructuredSystem, kind: str, sites: Sites | None,
                 candidates: Candidates | None, budget: float | None, method: str,
                 time_limit: float, verify: bool) -> Placement:
    """:func:`~netctl.structural.placement.place_inputs` (``kind="inputs"``) or
    :func:`~netctl.structural.placement.place_sensors` (``kind="sensors"``, solved on
    ``system.dual()``), through the shared loop."""
    _validate(method, budget, time_limit)
    work = system if kind == "inputs" else system.dual()
    return run_placement(
        system, kind, sites, candidates,
        solve=lambda cands: _solve(work, cands, budget, method, float(time_limit)),
        check=lambda cands, out: _lin_check(work, cands, out, verify), budget=budget)


def _solve(work: StructuredSystem, cands: Candidates, budget: float | None, method: str,
           time_limit: float) -> Outcome:
    A, B = work.pattern("A"), work.pattern("B")
    n = work.n_states
    st = structure_of(A)
    prob = reduce_problem(A, B, st, cands)
    problem = "dedicated" if cands.dedicated else "candidates"
    reasons = infeasibility(work, prob, cands)
    if reasons:
        # best effort: the design of largest generic controllable dimension within the
        # budget (every eligible site when there is none); never claimed optimal
        be = best_effort_design(work, cands, prob, np.inf if budget is None else budget,
                                method)
        be.feasible = False
        be.reasons = reasons
        if budget is None:  # the greedy then reaches the dimension of every eligible site
            be.guarantee = ("the largest generic controllable dimension any design on these "
                            "sites reaches; " + ("the cheapest such design (every subset "
                                                 "tried)" if be.method == "exhaustive" else
                                                 "not proven the cheapest such design"))
        return be
    if cands.dedicated and method != "greedy":
        out = dedicated_assignment(prob, cands)
    elif method == "greedy" or (method == "auto" and prob.milp_size() > MILP_MAX_VARIABLES):
        out = greedy_cover(prob, cands)
    else:
        out = solve_milp(prob, cands, time_limit)
    out.problem = problem
    if budget is not None and out.cost > budget * (1 + 1e-12) + 1e-12:
        lb = out.lower_bound if out.lower_bound is not None else 0.0
        be = best_effort_design(work, cands, prob, budget, method)
        proven = lb > budget * (1 + 1e-12) + 1e-12
        be.reasons = [
            f"the budget {budget:g} is below the cheapest controlling design found "
            f"(cost {out.cost:g}"
            + (", proven minimal)" if proven and lb >= out.cost * (1 - 1e-9)
               else f"; proven lower bound {lb:g})" if proven
               else f"; a cheaper one may exist: proven lower bound {lb:g})")
            + f"; the design shown reaches generic dimension {be.dimension} of {n}."]
        if not proven:
            be.reasons.append("the budget may suffice for a design the heuristic did not find; "
                              "retry with method='exact'.")
        return be
    return out


# ====================================================================== the check
def _lin_check(work: StructuredSystem, cands: Candidates, out: Outcome, verify: bool) -> Check:
    """Lin's test on ``work`` with the design installed (a claimed design), or only
    accessibility and rank (no claim); the generic dimension when it fails."""
    from netctl.structural.controllability import controllability

    n = work.n_states
    chosen = np.asarray(out.chosen, np.int64)
    verified: bool | None = None
    dim = out.dimension
    # the chosen columns (cands.matrix without scipy), after the existing inputs
    cols = [cands.states_of(int(k)) for k in chosen]
    M = coo_pattern(np.concatenate(cols) if cols else np.zeros(0, np.int64),
                    np.repeat(np.arange(len(cols), dtype=np.int64), [c.size for c in cols]),
                    None, (n, len(cols)), count=False)[0]
    B = hstack_patterns(work.pattern("B"), M) if work.n_inputs else M
    design = work._replace(B=B, input_names=tuple(f"u{k}" for k in range(B.shape[1])))
    claimed = out.feasible and not out.best_effort
    if claimed:
        # the independent check of a claimed design: Lin's test on the design installed
        rep = controllability(design, dimension=False)
        verified = bool(rep.controllable) if verify else None
        inacc = rep.inaccessible
        ok = bool(rep.controllable)
    else:
        # no claim to check; accessibility and rank only (near-linear, any size)
        st = structure_of(work.pattern("A"))
        acc = accessible_states(st, B)
        inacc = np.flatnonzero(~acc).astype(np.int64)
        indptr, indices, n_cols = stack_AB(work.pattern("A"), B)
        rm, _ = maximum_matching(indptr, indices, n_cols)
        ok = bool(acc.all() and np.all(rm >= 0))
    if dim is None:
        if ok:
            dim = n
        elif n <= DIMENSION_MAX_STATES:
            dim = controllability(design).controllable_dimension
    return Check(verified, dim, np.asarray(inacc, np.int64))
