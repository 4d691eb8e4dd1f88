"""Compare netctl's structural answers on one random case with the brute-force references.

Every check has a name (the keys of :data:`CHECKS`, with the published source of its
definition) and yields a message when netctl and the reference differ. A disagreement is
counted only if it persists on two further independent random draws of the reference
(the reference can only under-report a generic rank, with probability < 1.4e-8 a test,
see ``_field``), so a reported disagreement is a real one.

netctl's analyses are looked up on this module at call time (``_compare.controllability``
and so on), so a test can swap in deliberately broken versions to see each check fail.
"""

from __future__ import annotations

import collections
import sys

import numpy as np

# the analyses are looked up on this module at call time (see the module docstring)
from netctl import (  # noqa: F401
    StructuredSystem,
    controllability,
    link_roles,
    minimum_inputs,
    minimum_sensors,
    node_roles,
    observability,
    summarize,
)
from netctl.records import Candidates, Sites
from netctl.structural.placement import place_inputs, place_sensors  # noqa: F401
from tests.bruteforce._oracle import Oracle
from tests.bruteforce._systems import RANDOM_START, Case

__all__ = ["CHECKS", "CORNERS", "check_case", "confirmed", "corners", "netctl_answers", "system_of"]

# name -> published source of the definition the brute force applies
CHECKS: dict[str, str] = {
    "verdict": "Lin 1974 IEEE TAC 19(3):201-208; Kalman rank at generic weights",
    "dimension": "Hosoe 1980 IEEE TAC 25(6):1192-1196: generic rank of [B AB ...]",
    "inaccessible": "Lin 1974 (input accessibility); networkx reachability",
    "groups": "Lin 1974 (accessibility); source components by networkx condensation",
    "structural_rank": "Lin 1974 (no dilation iff generic rank [A B] = n)",
    "dilation": "Lin 1974 (dilation: |in-neighbours of S| < |S|)",
    "region": "Dulmage & Mendelsohn 1958 (from memory): rows free in some maximum matching",
    "fix": "Commault & Dion 2013 Automatica 49(11) (from memory): fewest added inputs",
    "observability": "Lin 1974 by duality (Kalman 1960): all of the above on (A^T, C^T)",
    "inputs.shared": "Liu, Slotine & Barabasi 2011 Nature 473:167-173: N_D = max(n-|M*|,1)",
    "inputs.dedicated": "Commault & Dion 2013; Pequito, Kar & Aguiar 2016 IEEE TAC 61(2)",
    "inputs.wiring": "Lin 1974: the returned design controls (Kalman rank)",
    "sensors": "duality (Kalman 1960; Liu, Slotine & Barabasi 2013 PNAS 110(7))",
    "summary": "Liu, Slotine & Barabasi 2011 (counts); Lin 1974",
    "node_roles": "Jia et al. 2013 Nat. Commun. 4:2002 (critical/intermittent/redundant)",
    "link_roles": "Liu, Slotine & Barabasi 2011 (critical/ordinary/redundant links)",
    "placement.sites": "Pequito, Kar & Aguiar 2016 Automatica 68:384-391 (min cost)",
    "placement.budget": "Hosoe 1980 dimension, best over affordable subsets (brute force)",
    "placement.candidates": "min cost over every subset of candidate columns (brute force)",
    "placement.sensors": "Pequito, Kar & Aguiar 2016 by duality (min-cost sensors)",
}


def system_of(c: Case) -> StructuredSystem:
    """The case as a netctl system; every other case also carries a node table saying
    where actuators and sensors may sit (netctl then prefers those states where a source
    component needs a representative: the counts must not change)."""
    u, v = c.edges()
    nodes = ({"actuator": c.act_eligible, "sensor": c.sen_eligible}
             if c.number % 2 == 0 and c.act_eligible.any() and c.sen_eligible.any()
             else None)
    s = StructuredSystem.from_edges(u, v, c.n, nodes=nodes)
    return s.with_inputs(c.B.astype(float)).with_outputs(c.C.astype(float))


def netctl_answers(c: Case) -> dict:
    """Every netctl answer the checks read (computed once per case)."""
    me = sys.modules[__name__]  # the analyses as they are now (a test may swap them)
    s = system_of(c)
    names = s.state_names
    act = Sites.from_arrays("actuator", c.act_eligible, c.act_cost.astype(float), names,
                            "random case")
    sen = Sites.from_arrays("sensor", c.sen_eligible, c.sen_cost.astype(float), names,
                            "random case")
    out = {
        "system": s,
        "ctrl": me.controllability(s),
        "obs": me.observability(s),
        "mi": me.minimum_inputs(s),
        "mid": me.minimum_inputs(s, dedicated=True),
        "ms": me.minimum_sensors(s),
        "msd": me.minimum_sensors(s, dedicated=True),
        "summary": me.summarize(s),
        "nr": me.node_roles(s),
        "lr": me.link_roles(s),
        "place": me.place_inputs(s, sites=act),
    }
    # the three placement variants take turns (each on a third of the cases): placement
    # is netctl's costliest call on tiny systems and the volume test has a time limit
    turn = c.number % 3
    if turn == 0:
        out["place_budget"] = me.place_inputs(s, sites=act, budget=float(c.budget))
    elif turn == 1 and c.candidates:
        cands = Candidates.from_lists([f"k{j}" for j in range(len(c.candidates))],
                                      [list(x) for x in c.candidates],
                                      c.cand_cost.astype(float))
        out["place_cand"] = me.place_inputs(s, candidates=cands)
    elif turn == 2:
        out["place_sensors"] = me.place_sensors(s, sites=sen)
    return out


def _lin(msgs: dict, key: str, rep, o: Oracle) -> None:
    """Lin's test, its reasons and its fix against the references (one direction)."""
    def bad(name: str, text: str) -> None:
        msgs.setdefault(key if key == "observability" else name, []).append(
            (name + ": " if key == "observability" else "") + text)

    n = o.n
    if rep.controllable != o.controllable:
        bad("verdict", f"netctl {rep.controllable}, Kalman rank {o.dimension} of {n}")
    if rep.controllable_dimension != o.dimension:
        bad("dimension", f"netctl {rep.controllable_dimension}, generic rank {o.dimension}")
    if rep.inaccessible.tolist() != o.inaccessible:
        bad("inaccessible", f"netctl {rep.inaccessible.tolist()}, networkx {o.inaccessible}")
    # groups: a partition of the inaccessible states, one per unreached source component
    srcs = sorted(sorted(g.source.tolist()) for g in rep.groups)
    ref_srcs = sorted(sorted(m) for m in o.unreached_sources)
    flat = sorted(x for g in rep.groups for x in g.source.tolist() + g.downstream.tolist())
    down_ok = all(set(g.downstream.tolist()) <= set().union(
        *(o.graph_descendants(x) for x in g.source.tolist())) for g in rep.groups)
    if srcs != ref_srcs or flat != o.inaccessible or not down_ok:
        bad("groups", f"netctl sources {srcs} covering {flat}; networkx unreached source "
                      f"components {ref_srcs} covering {o.inaccessible}")
    if rep.structural_rank != o.structural_rank:
        bad("structural_rank", f"netctl {rep.structural_rank}, generic {o.structural_rank}")
    d = rep.dilation
    if (d is None) != (o.structural_rank == n):
        bad("dilation", f"netctl {'none' if d is None else d.states.tolist()}, generic "
                        f"rank of [A B] {o.structural_rank} of {n}")
    elif d is not None:
        nb = o.in_neighbours(d.states)
        if (d.states.size == 0 or d.fed_by.tolist() != nb or len(nb) >= d.states.size
                or d.deficiency != d.states.size - len(nb)):
            bad("dilation", f"states {d.states.tolist()} fed_by {d.fed_by.tolist()}, "
                            f"in-neighbours {nb}")
        if d.region.tolist() != o.region or not set(d.states.tolist()) <= set(o.region):
            bad("region", f"netctl {d.region.tolist()}, rows free in some maximum "
                          f"matching {o.region}")
    if rep.controllable:
        if rep.fix.size:
            bad("fix", f"controllable, yet fix {rep.fix.tolist()}")
    else:
        Bfix = np.zeros((n, rep.fix.size), bool)
        Bfix[rep.fix, np.arange(rep.fix.size)] = True
        works = o.ctrb_rank_of(np.hstack([o.B, Bfix])) == n
        if rep.fix.size != o.n_fix or not works:
            bad("fix", f"netctl adds {rep.fix.tolist()} (controls: {works}), fewest "
                       f"possible {o.n_fix}")
    if bool(rep.reasons()) == rep.controllable:
        bad("verdict", f"reasons {rep.reasons()} for controllable={rep.controllable}")


def _design(msgs: dict, key: str, des, o: Oracle, dedicated: bool) -> None:
    n = o.n
    ref = o.n_dedicated if dedicated else o.n_shared
    if des.n_inputs != ref:
        msgs.setdefault(key, []).append(f"netctl {des.n_inputs}, brute force {ref}")
    if not dedicated and des.n_inputs != max(n - o.rank_A, 1):
        msgs.setdefault(key, []).append(f"netctl {des.n_inputs}, max(n - rank A, 1) = "
                                        f"{max(n - o.rank_A, 1)}")
    # the unmatched states of the chosen maximum matching form a minimum driver set
    basis, sets = o.driver_sets
    um = frozenset(des.unmatched.tolist())
    if (um not in sets) if basis == "matching" else bool(um):
        msgs.setdefault(key, []).append(f"unmatched {sorted(um)} is not a minimum driver "
                                        f"set {sorted(sorted(S) for S in sets)}")
    p, w = des.wiring_indptr, des.wiring_states
    Bd = np.zeros((n, p.size - 1), bool)
    for k in range(p.size - 1):
        Bd[w[p[k]:p[k + 1]], k] = True
    wkey = "inputs.wiring" if key.startswith("inputs") else "sensors"
    if Bd.shape[1] != des.n_inputs or o.ctrb_rank_of(Bd) != n or (
            dedicated and not (Bd.sum(axis=0) == 1).all()) or (
            sorted(set(w.tolist())) != des.drivers.tolist()):
        msgs.setdefault(wkey, []).append(f"{key} wiring {[x.tolist() for x in des.wiring]} "
                                         f"does not control with {des.n_inputs} inputs")


def _placement(msgs: dict, key: str, pl, o: Oracle, eligible, cost,
               budget: float | None) -> None:
    items, masks, costs, ranks = o.site_costs(eligible, cost)
    n = o.n
    feasible = bool((ranks == n).any())
    chosen_cost = sum(int(cost[i]) for i in pl.sites.tolist())
    on_sites = all(bool(eligible[i]) for i in pl.sites.tolist())
    dim = o.ctrb_rank_of(np.hstack([o.B, np.eye(n, dtype=bool)[:, pl.sites]]))
    out = []
    if pl.feasible != feasible:
        out.append(f"feasible: netctl {pl.feasible}, brute force {feasible}")
    if not on_sites or abs(pl.cost - chosen_cost) > 1e-9:
        out.append(f"sites {pl.sites.tolist()} (eligible: {on_sites}) cost {pl.cost}, "
                   f"sum of their costs {chosen_cost}")
    best = int(costs[ranks == n].min()) if feasible else None
    if feasible and (budget is None or best <= budget):
        if not pl.goal_met or pl.best_effort or dim != n or abs(pl.cost - best) > 1e-9 \
                or not pl.optimal:
            out.append(f"netctl cost {pl.cost} (goal met {pl.goal_met}, controls "
                       f"{dim == n}, optimal {pl.optimal}), cheapest {best}")
    else:
        afford = ranks[costs <= (np.inf if budget is None else budget)]
        top = int(afford.max())
        if pl.goal_met or pl.dimension != dim or dim > top or (
                pl.optimal and dim != top) or (
                pl.upper_bound is not None and pl.upper_bound < top) or (
                budget is not None and pl.cost > budget + 1e-9):
            out.append(f"best effort: netctl dimension {pl.dimension} (its sites reach "
                       f"{dim}), largest affordable {top}, upper bound {pl.upper_bound}, "
                       f"cost {pl.cost} budget {budget}")
    if out:
        msgs.setdefault(key, []).extend(out)


def _candidates(msgs: dict, pl, o: Oracle, c: Case) -> None:
    masks, costs, ranks = o.candidate_costs(c.candidates, c.cand_cost)
    n = o.n
    feasible = bool((ranks == n).any())
    chosen = pl.chosen.tolist()
    chosen_cost = sum(int(c.cand_cost[k]) for k in chosen)
    Bc = np.zeros((n, len(chosen)), bool)
    for j, k in enumerate(chosen):
        Bc[list(c.candidates[k]), j] = True
    works = o.ctrb_rank_of(np.hstack([o.B, Bc])) == n
    out = []
    if pl.feasible != feasible:
        out.append(f"feasible: netctl {pl.feasible}, brute force {feasible}")
    elif feasible:
        best = int(costs[ranks == n].min())
        lb = pl.lower_bound if pl.lower_bound is not None else -np.inf
        if not works or abs(pl.cost - chosen_cost) > 1e-9 or pl.cost < best - 1e-9 or (
                pl.optimal and abs(pl.cost - best) > 1e-9) or lb > best + 1e-9:
            out.append(f"netctl {chosen} cost {pl.cost} (controls {works}, optimal "
                       f"{pl.optimal}, lower bound {pl.lower_bound}), cheapest {best}")
    if out:
        msgs.setdefault("placement.candidates", []).extend(out)


def _roles(msgs: dict, nr, lr, o: Oracle) -> None:
    basis, sets = o.driver_sets
    if nr.role.tolist() != o.node_roles or nr.basis != basis:
        msgs.setdefault("node_roles", []).append(
            f"netctl {nr.role.tolist()} ({nr.basis}), brute force {o.node_roles} ({basis}) "
            f"from minimum driver sets {sorted(sorted(S) for S in sets)}")
    got = {(int(u), int(v)): (int(r), int(a)) for u, v, r, a in zip(
        lr.sources, lr.targets, lr.role, lr.n_inputs_after_loss)}
    if got != o.link_roles:
        diff = {k: (got.get(k), o.link_roles.get(k)) for k in set(got) | set(o.link_roles)
                if got.get(k) != o.link_roles.get(k)}
        msgs.setdefault("link_roles", []).append(
            f"(u, v): (netctl (role, N_D after loss), brute force): {diff}")


def corners(c: Case, o: Oracle, free: Oracle) -> list[str]:
    """The situations this case exercises (to show the random cases reach them all)."""
    from tests.bruteforce import _field as F

    n = c.n
    R = [i for i in range(n) if i not in set(o.inaccessible)]
    cols = R + list(range(n, n + c.B.shape[1]))
    term_rank_acc = int(F.rank(o.ABw[np.ix_(R, cols)].copy())) if R else 0
    out = {
        "controllable": o.controllable,
        "not controllable": not o.controllable,
        "inaccessible states": bool(o.inaccessible),
        "dilation": o.structural_rank < n,
        "dilation, every state accessible": o.structural_rank < n and not o.inaccessible,
        "Hosoe dimension below the accessible term rank": o.dimension < term_rank_acc,
        "perfect matching": free.rank_A == n,
        "perfect matching, several source components": (
            free.rank_A == n and len(free.unreached_sources) >= 2),
        "dedicated inputs > shared inputs": free.n_dedicated > free.n_shared,
        "intermittent states": 1 in free.node_roles,
        "ordinary links": any(r == 1 for r, _ in free.link_roles.values()),
        "critical links": any(r == 0 for r, _ in free.link_roles.values()),
        "self-loops": bool(np.diag(c.A).any()),
        "isolated states": bool((~c.A.any(axis=0) & ~c.A.any(axis=1)).any()),
        "existing inputs": c.B.shape[1] > 0,
        "shared existing input": bool((c.B.sum(axis=0) >= 2).any()),
        "candidates": bool(c.candidates) and c.number % 3 == 1,
    }
    _, _, costs, ranks = o.site_costs(c.act_eligible, c.act_cost)
    out["infeasible sites"] = not (ranks == n).any()
    budget = c.number % 3 == 0  # the turn of the budget (see netctl_answers)
    out["budget too small"] = budget and not (ranks[costs <= c.budget] == n).any()
    out["budget enough"] = budget and bool((ranks[costs <= c.budget] == n).any())
    assert tuple(out) == CORNERS
    return [k for k, v in out.items() if v]


#: every situation :func:`corners` tells apart, in its order
CORNERS: tuple[str, ...] = (
    "controllable", "not controllable", "inaccessible states", "dilation",
    "dilation, every state accessible", "Hosoe dimension below the accessible term rank",
    "perfect matching", "perfect matching, several source components",
    "dedicated inputs > shared inputs", "intermittent states", "ordinary links",
    "critical links", "self-loops", "isolated states", "existing inputs",
    "shared existing input", "candidates", "infeasible sites", "budget too small",
    "budget enough")


def check_case(c: Case, ans: dict, draw: int = 0,
               seen: collections.Counter | None = None) -> dict[str, list[str]]:
    """Disagreements of netctl's answers ``ans`` with the references at one random draw;
    the situations the case exercises are counted into ``seen`` when given."""
    rng = np.random.default_rng([RANDOM_START, c.number, 1_000_003 + draw])
    o = Oracle(c.A, c.B, rng)
    od = Oracle(c.A.T.copy(), c.C.T.copy(), rng)        # the dual: sensors
    free = Oracle(c.A, np.zeros((c.n, 0), bool), rng)    # no inputs: minimum designs
    free_d = Oracle(c.A.T.copy(), np.zeros((c.n, 0), bool), rng)
    msgs: dict[str, list[str]] = {}
    _lin(msgs, "controllability", ans["ctrl"], o)
    _lin(msgs, "observability", ans["obs"], od)
    _design(msgs, "inputs.shared", ans["mi"], free, dedicated=False)
    _design(msgs, "inputs.dedicated", ans["mid"], free, dedicated=True)
    _design(msgs, "sensors", ans["ms"], free_d, dedicated=False)
    _design(msgs, "sensors", ans["msd"], free_d, dedicated=True)
    sm = ans["summary"]
    got = (sm.structural_rank, sm.n_inputs, sm.n_dedicated_inputs, sm.n_sensors,
           sm.n_dedicated_sensors)
    want = (free.rank_A, free.n_shared, free.n_dedicated, free_d.n_shared, free_d.n_dedicated)
    if got != want:
        msgs.setdefault("summary", []).append(f"netctl {got}, brute force {want}")
    _roles(msgs, ans["nr"], ans["lr"], free)
    _placement(msgs, "placement.sites", ans["place"], o, c.act_eligible, c.act_cost, None)
    if "place_budget" in ans:
        _placement(msgs, "placement.budget", ans["place_budget"], o, c.act_eligible,
                   c.act_cost, float(c.budget))
    if "place_sensors" in ans:
        _placement(msgs, "placement.sensors", ans["place_sensors"], od, c.sen_eligible,
                   c.sen_cost, None)
    if "place_cand" in ans:
        _candidates(msgs, ans["place_cand"], o, c)
    if seen is not None:
        seen.update(corners(c, o, free))
    return msgs


def confirmed(c: Case, ans: dict,
              seen: collections.Counter | None = None) -> dict[str, list[str]]:
    """Disagreements that persist on three independent draws of the references."""
    msgs = check_case(c, ans, 0, seen)
    for draw in (1, 2):
        if not msgs:
            break
        again = check_case(c, ans, draw)
        msgs = {k: v for k, v in msgs.items() if k in again}
    return msgs
