"""The cheapest design that survives failures: :func:`secure_placement`.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``; a dedicated actuator at state ``i``
adds the input column ``e_i``; sensors are placed on the dual system (see :mod:`netctl`).
"""

from __future__ import annotations

import itertools
import math
import time
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.sparse as sp

from netctl.errors import OptionError
from netctl.graph.dm import alternating_reach_rows
from netctl.graph.matching import maximum_matching
from netctl.structural._engine import completion, stack_AB
from netctl.structural.failures._core import (
    dedicated_B,
    design_facts,
    is_controlling,
    source_components,
)
from netctl.structural.failures.audit import _work_system
from netctl.structural.failures.links import _without, audit_links, line_elements
from netctl.structural.placement import Sites, place_inputs, sites_from_nodes
from netctl.system import StructuredSystem

__all__ = ["AGAINST", "SECURE_METHODS", "SecurePlacement", "secure_placement"]

#: What must be survived: any ``k`` of the placed elements, or any one line.
AGAINST: tuple[str, ...] = ("elements", "lines")
#: ``method`` choices.
SECURE_METHODS: tuple[str, ...] = ("auto", "exact", "two-step")
_MAX_SUBSETS = 20_000


@dataclass(frozen=True)
class SecurePlacement:
    """A design that survives failures, and how good it is (see :func:`secure_placement`).

    ``lower_bound`` is a proven lower bound on the cheapest secure design; ``gap`` is
    ``(cost - lower_bound) / cost`` (0 when proven optimal). ``uncovered`` names the
    losses no eligible site can cover when ``feasible`` is false.
    """

    kind: str
    against: str
    k: int
    feasible: bool
    sites: np.ndarray
    cost: float
    lower_bound: float
    optimal: bool
    gap: float
    method: str
    guarantee: str
    verified: bool | None
    uncovered: tuple[str, ...]
    reasons: tuple[str, ...]
    state_names: tuple[str, ...] = field(repr=False)
    model: str = "given"
    first_step: tuple[int, ...] = ()

    @property
    def site_names(self) -> list[str]:
        return [self.state_names[int(i)] for i in self.sites]

    def to_dict(self) -> dict[str, Any]:
        return {"analysis": "secure_placement", "kind": self.kind, "against": self.against,
                "k": self.k, "model": self.model, "feasible": self.feasible,
                "sites": self.site_names, "n_sites": int(self.sites.size),
                "cost": float(self.cost), "lower_bound": float(self.lower_bound),
                "optimal": self.optimal,
                "gap": float(self.gap) if math.isfinite(self.gap) else None,
                "method": self.method, "guarantee": self.guarantee,
                "verified": self.verified, "uncovered": list(self.uncovered),
                "reasons": list(self.reasons),
                "first_step": [self.state_names[int(i)] for i in self.first_step]}


def _free_rows(A: sp.csr_array, S: np.ndarray) -> np.ndarray:
    """Rows some maximum matching of ``[A e_S]`` leaves unmatched (bool mask)."""
    ptr, ind, nc = stack_AB(A, dedicated_B(A.shape[0], S))
    ptr = np.ascontiguousarray(ptr, np.int64)
    ind = np.ascontiguousarray(ind, np.int64)
    _, cm = maximum_matching(ptr, ind, nc)
    rows, _ = alternating_reach_rows(ptr, ind, nc, cm)
    return rows


def _validate(kind: str, against: str, k: int, method: str, time_limit: float) -> None:
    if against not in AGAINST:
        raise OptionError(f"against must be one of {', '.join(map(repr, AGAINST))}, found "
                          f"{against!r}.")
    if method not in SECURE_METHODS:
        raise OptionError(f"unknown method {method!r}; choose one of "
                          f"{', '.join(map(repr, SECURE_METHODS))}.")
    if isinstance(k, bool) or not isinstance(k, (int, np.integer)) or k < 1:
        raise OptionError(f"k must be an integer >= 1 (failures to survive), found {k!r}.")
    if against == "lines" and k != 1:
        raise OptionError(f"k={k} with against='lines' is not supported; lines are "
                          "checked one at a time (N-1). Use k=1.")
    if not isinstance(time_limit, (int, float)) or isinstance(time_limit, bool) or \
            not math.isfinite(time_limit) or time_limit <= 0:
        raise OptionError(f"time_limit must be a positive number of seconds, found "
                          f"{time_limit!r}.")


def secure_placement(system: StructuredSystem, *, kind: str = "inputs",
                     against: str = "elements", k: int = 1, sites: Sites | None = None,
                     method: str = "auto", time_limit: float = 60.0) -> SecurePlacement:
    r"""Cheapest dedicated actuators (sensors) that survive failures.

    Parameters
    ----------
    system : StructuredSystem
        Existing inputs (outputs) are ignored: the design is built from scratch.
    kind : {"inputs", "sensors"}
    against : {"elements", "lines"}
        ``"elements"``: the design stays structurally controllable (observable) after
        the loss of any ``k`` of its own actuators (sensors). ``"lines"``: after the
        loss of any one line (:func:`~netctl.structural.failures.line_elements`).
    k : int, default 1
    sites : Sites, optional
        Eligible states and costs (default: the node table, else every state at cost
        1). Each eligible state hosts at most one element.
    method : {"auto", "exact", "two-step"}
    time_limit : float, default 60
        Seconds for the exact method (all its integer programmes together).

    Returns
    -------
    SecurePlacement

    Notes
    -----
    NP-hard (Liu, Pequito, Kar, Sinopoli & Aguiar [1]_). A set ``S`` works iff it
    touches every source component and spans the matroid of dedicated columns over
    ``A`` (Lin [2]_). **Exact**: integer programme over ``y_i`` (site ``i`` chosen),
    minimizing cost, with constraints added lazily until the answer survives every
    loss: every source component holds ``k + 1`` chosen sites (``k = 1`` for lines: a
    line's loss is checked directly); ``sum y >= N + k`` with ``N`` the minimum number
    of dedicated inputs; and for every failing scenario (losses ``F``, or a line),
    ``sum_{i in Z} y_i >= k + 1`` over ``Z`` the rows a maximum matching of
    ``[A e_{S-F}]`` can leave unmatched (the complement of the closure of ``S - F``:
    any design with at most ``k`` sites there fails the same way), or over the
    unreached source component after a line's loss. Each cut is valid for every secure
    design, so the master's optimum (or HiGHS's dual bound) is a proven lower bound.
    **Two-step** (``k = 1``) [1]_: a minimum-cost design ``D``
    (:func:`~netctl.structural.placement.place_inputs`), then the fewest additions
    as a weighted set cover of the losses that break ``D``: site ``j`` covers a loss
    when ``D`` minus that loss plus ``j`` works; greedy by cost per newly covered loss,
    within ``H(max cover)`` <= ``1 + ln n`` of the cheapest cover (Chvátal [3]_). The
    lower bound printed beside it is the largest of: the exact attempt's bound, and
    the minimum design cost plus the ``k`` cheapest sites (any ``k`` failures leave a
    working design). ``"auto"`` tries the exact method within ``time_limit`` and falls
    back to the two-step method with that bound.

    References
    ----------
    .. [1] Y. Liu, S. Pequito, S. Kar, B. Sinopoli, A. P. Aguiar, "Minimum sensor
       placement for robust observability of structured complex networks", IEEE
       Trans. Control Netw. Syst. 4(4), 2017 (volume and issue from memory).
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    .. [3] V. Chvátal, "A greedy heuristic for the set-covering problem", Math. Oper.
       Res. 4(3):233-235, 1979.

    Examples
    --------
    ``a <-> b -> c``: ``b`` feeds both ``a`` and ``c`` (a dilation: one of them needs an
    actuator), and losing any one actuator must leave that true, so all three carry one.

    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 1], [1, 0, 2], 3, state_names="abc")
    >>> r = secure_placement(s)
    >>> r.site_names, r.optimal
    (['a', 'b', 'c'], True)
    """
    _validate(kind, against, k, method, time_limit)
    work = _work_system(system, kind)
    n = work.n_states
    site_kind = "sensor" if kind == "sensors" else "actuator"
    if sites is None:
        sites = sites_from_nodes(system, kind=site_kind)
    elif sites.eligible.shape != (n,):
        raise OptionError(f"sites are for {sites.eligible.size} states, the system has {n}.")
    work = work.with_inputs(sp.csr_array((n, 0)), names=[])
    elig = np.asarray(sites.eligible, bool)
    cost = np.where(elig, np.asarray(sites.cost, np.float64), np.inf)
    names = tuple(str(x) for x in system.state_names)
    base = dict(kind=kind, against=against, k=int(k), state_names=names, model=system.model)
    A = work.A
    # feasibility: every eligible site installed must survive
    allS = np.flatnonzero(elig)
    uncovered = _uncoverable(work, allS, against, int(k), names)
    if uncovered is not None:
        return SecurePlacement(feasible=False, sites=np.zeros(0, np.int64), cost=math.inf,
                               lower_bound=math.inf, optimal=False, gap=math.inf,
                               method="check", guarantee="infeasible: proven (all eligible "
                               "sites together do not survive)", verified=None,
                               uncovered=tuple(uncovered[0]), reasons=tuple(uncovered[1]),
                               **base)  # type: ignore[arg-type]
    cheapest = np.sort(cost[elig])
    n_min = completion(A, sp.csr_array((n, 0))).states.size
    lower = 0.0
    if method in ("auto", "exact"):
        t_end = time.monotonic() + float(time_limit)
        S, lb, done = _exact(work, elig, cost, against, int(k), n_min, t_end)
        lower = max(lower, lb)
        if done and S is not None:
            c = float(cost[S].sum())
            return SecurePlacement(feasible=True, sites=S, cost=c, lower_bound=c,
                                   optimal=True, gap=0.0, method="milp",
                                   guarantee="exact minimum cost (integer programme with "
                                   "lazily added cuts, solved to optimality by HiGHS)",
                                   verified=_verify(work, S, against, int(k)), uncovered=(),
                                   reasons=(), **base)  # type: ignore[arg-type]
        if method == "exact" or int(k) > 1:
            return SecurePlacement(feasible=True, sites=np.zeros(0, np.int64), cost=math.inf,
                                   lower_bound=lower, optimal=False, gap=math.inf,
                                   method="milp", guarantee=f"not finished within "
                                   f"{time_limit:g} s (k > 1 has no two-step method); only "
                                   f"the lower bound {lower:g} is proven", verified=None,
                                   uncovered=(), reasons=("time limit reached",),
                                   **base)  # type: ignore[arg-type]
    S, D, guarantee = _two_step(work, sites, elig, cost, against)
    D_cost = float(cost[D].sum())
    lower = max(lower, D_cost + float(cheapest[:int(k)].sum()) if against == "elements"
                else D_cost)
    c = float(cost[S].sum())
    lower = min(lower, c)
    gap = 0.0 if c <= 0 else (c - lower) / c
    return SecurePlacement(feasible=True, sites=S, cost=c, lower_bound=lower,
                           optimal=gap <= 1e-12, gap=gap, method="two-step",
                           guarantee=guarantee, verified=_verify(work, S, against, int(k)),
                           uncovered=(), reasons=(), first_step=tuple(D.tolist()),
                           **base)  # type: ignore[arg-type]


# ---------------------------------------------------------------------- checks
def _verify(work: StructuredSystem, S: np.ndarray, against: str, k: int) -> bool:
    """Independent check: every single (or k-fold) loss by recomputation."""
    return not _failing(work, S, against, k, limit=None, full=True)


def _failing(work: StructuredSystem, S: np.ndarray, against: str, k: int,
             limit: int | None, full: bool = False) -> list[tuple[str, Any]]:
    """Failing scenarios of design ``S``: ``("loss", F)`` or ``("line", positions)``."""
    A = work.A
    n = work.n_states
    out: list[tuple[str, Any]] = []
    if not is_controlling(A, dedicated_B(n, S)).ok:
        return [("loss", ())]
    if against == "lines":
        sysS = work.with_inputs(dedicated_B(n, S))
        ll = audit_links(sysS)
        groups, _ = line_elements(work)
        return [("line", groups[int(j)]) for j in np.flatnonzero(ll.breaking)]
    if k == 1 and not full:
        f = design_facts(A, dedicated_B(n, S))
        bad = np.flatnonzero(f.rank_lost | (f.cut_off > 0))
        return [("loss", (int(S[j]),)) for j in bad]
    total = math.comb(S.size, min(k, S.size))
    if limit is not None and total > limit:
        raise _TooMany()
    for F in itertools.combinations(S.tolist(), min(k, S.size)):
        rest = np.setdiff1d(S, F)
        if not is_controlling(A, dedicated_B(n, rest)).ok:
            out.append(("loss", F))
    return out


class _TooMany(Exception):
    pass


def _uncoverable(work: StructuredSystem, allS: np.ndarray, against: str, k: int,
                 names: tuple[str, ...]) -> tuple[list[str], list[str]] | None:
    A = work.A
    n = work.n_states
    cptr, members = source_components(A)
    elig = np.zeros(n, bool)
    elig[allS] = True
    short, reasons = [], []
    need = k + 1 if against == "elements" else 1
    for c in range(cptr.size - 1):
        comp = members[cptr[c]:cptr[c + 1]]
        have = int(np.count_nonzero(elig[comp]))
        if have < need:
            label = "{" + ", ".join(names[int(i)] for i in comp[:8]) + \
                (", ..." if comp.size > 8 else "") + "}"
            short.append(f"source component {label}")
            reasons.append(f"source component {label} has {have} eligible site(s), "
                           f"{need} needed")
    if short:
        return short, reasons
    try:
        bad = _failing(work, allS, against, k, limit=_MAX_SUBSETS)
    except _TooMany:
        return None  # cannot tell cheaply; the exact method will find out
    if not bad:
        return None
    for what, F in bad[:50]:
        if what == "loss":
            label = "loss of " + (", ".join(names[int(i)] for i in F) if F else
                                  "nothing (even the intact design with every site fails)")
        else:
            _, labels = line_elements(work)
            groups, labels = line_elements(work)
            idx = next(j for j, g in enumerate(groups) if np.array_equal(g, F))
            label = f"loss of line {labels[idx]}"
        short.append(label)
    reasons.append("infeasible: these losses cannot be covered by any eligible site: "
                   + "; ".join(short[:8]) + (f" ... ({len(short) - 8} more)"
                                              if len(short) > 8 else ""))
    return short, reasons


# ---------------------------------------------------------------------- exact
def _exact(work: StructuredSystem, elig: np.ndarray, cost: np.ndarray, against: str, k: int,
           n_min: int, t_end: float) -> tuple[np.ndarray | None, float, bool]:
    """Lazy-cut integer programme. Returns (design, lower bound, proven optimal)."""
    from scipy.optimize import Bounds, LinearConstraint, milp

    A = work.A
    n = work.n_states
    var = np.flatnonzero(elig)
    pos = np.full(n, -1, np.int64)
    pos[var] = np.arange(var.size)
    need = k + 1 if against == "elements" else 1
    cuts: list[tuple[np.ndarray, int]] = []
    seen: set[tuple[bytes, int]] = set()

    def add(states: np.ndarray, rhs: int) -> None:
        p = np.unique(pos[states[elig[states]]])
        key = (p.tobytes(), int(rhs))
        if key not in seen:
            seen.add(key)
            cuts.append((p, rhs))

    cptr, members = source_components(A)
    for c in range(cptr.size - 1):
        add(members[cptr[c]:cptr[c + 1]], need)
    free0 = _free_rows(A, np.zeros(0, np.int64))
    if free0.any():  # A alone is rank deficient (else no rank cut holds)
        add(np.flatnonzero(free0), need)
    add(np.arange(n), n_min + (k if against == "elements" else 0))
    lower = 0.0
    c_vec = cost[var]
    while True:
        left = t_end - time.monotonic()
        if left <= 0:
            return None, lower, False
        rows = np.concatenate([np.full(p.size, j) for j, (p, _) in enumerate(cuts)])
        cols = np.concatenate([p for p, _ in cuts])
        M = sp.csr_array((np.ones(rows.size), (rows, cols)), shape=(len(cuts), var.size))
        res = milp(c_vec, integrality=np.ones(var.size), bounds=Bounds(0, 1),
                   constraints=LinearConstraint(M, np.array([r for _, r in cuts], float),
                                                np.inf),
                   options={"time_limit": float(left), "mip_rel_gap": 0.0})
        if res.status == 2:  # cannot happen after the feasibility check; be safe
            return None, math.inf, False
        dual = getattr(res, "mip_dual_bound", None)
        if res.x is None or res.status != 0:
            if dual is not None and np.isfinite(dual):
                lower = max(lower, float(dual))
            return None, lower, False
        lower = max(lower, float(res.fun))
        S = np.sort(var[res.x > 0.5])
        try:
            bad = _failing(work, S, against, k, limit=_MAX_SUBSETS)
        except _TooMany:
            return None, lower, False
        if not bad:
            return S, lower, True
        for what, F in bad:
            if what == "loss":
                rest = np.setdiff1d(S, np.asarray(F, np.int64))
                chk = is_controlling(A, dedicated_B(n, rest))
                if chk.rank < n:
                    add(np.flatnonzero(_free_rows(A, rest)), need)
            else:
                AL = _without(A, F)
                chk = is_controlling(AL, dedicated_B(n, S))
                if chk.rank < n:
                    add(np.flatnonzero(_free_rows(AL, S)), 1)
                if chk.unreached.size:
                    cp, mem = source_components(AL)
                    hit = np.zeros(n, bool)
                    hit[chk.unreached] = True
                    for c in range(cp.size - 1):
                        comp = mem[cp[c]:cp[c + 1]]
                        if hit[comp].all():
                            add(comp, 1)


# ---------------------------------------------------------------------- two-step
def _two_step(work: StructuredSystem, sites: Sites, elig: np.ndarray, cost: np.ndarray,
              against: str) -> tuple[np.ndarray, np.ndarray, str]:
    A = work.A
    n = work.n_states
    p = place_inputs(work, sites=sites, verify=False)
    D = np.asarray(p.sites, np.int64)
    inD = np.zeros(n, bool)
    inD[D] = True
    cand_ok = elig & ~inD
    fixers: list[np.ndarray] = []  # per breaking loss: sites that fix it alone
    forced: set[int] = set()
    for what, F in _failing(work, D, against, 1, limit=None):
        if what == "loss":
            rest = np.setdiff1d(D, np.asarray(F, np.int64))
            AL = A
        else:
            rest, AL = D, _without(A, F)
        chk = is_controlling(AL, dedicated_B(n, rest))
        ok = cand_ok.copy()
        if chk.rank < n:
            ok &= _free_rows(AL, rest)
        if chk.unreached.size:
            cp, mem = source_components(AL)
            hit = np.zeros(n, bool)
            hit[chk.unreached] = True
            comps = [mem[cp[c]:cp[c + 1]] for c in range(cp.size - 1)
                     if hit[mem[cp[c]:cp[c + 1]]].all()]
            if len(comps) == 1:
                m2 = np.zeros(n, bool)
                m2[comps[0]] = True
                ok &= m2
            else:
                ok[:] = False
        if n - chk.rank > 1:
            ok[:] = False
        if ok.any():
            fixers.append(np.flatnonzero(ok))
        else:  # no single site fixes it: add the cheapest completion for this loss
            sysL = work._replace(A=AL).with_inputs(dedicated_B(n, rest))
            e2 = sites.eligible.copy()
            e2[np.asarray(F, np.int64) if what == "loss" else np.zeros(0, np.int64)] = False
            sub = Sites(kind=sites.kind, eligible=e2, cost=np.where(e2, sites.cost, np.inf),
                        state_names=sites.state_names, source=sites.source)
            extra = place_inputs(sysL, sites=sub, verify=False)
            forced.update(int(i) for i in extra.sites)
    # greedy weighted set cover of the losses
    chosen = set(forced)
    todo = [j for j, fx in enumerate(fixers) if not chosen.intersection(fx.tolist())]
    cover: dict[int, set[int]] = {}
    for j in todo:
        for s in fixers[j].tolist():
            cover.setdefault(s, set()).add(j)
    left = set(todo)
    hmax = max((len(v) for v in cover.values()), default=1)
    while left:
        best = min(cover, key=lambda s: (cost[s] / max(len(cover[s] & left), 1e-300)
                                         if cover[s] & left else math.inf, s))
        chosen.add(best)
        left -= cover[best]
    S = np.union1d(D, np.array(sorted(chosen), np.int64)).astype(np.int64)
    H = sum(1.0 / i for i in range(1, hmax + 1))
    guarantee = (f"two-step (Liu et al. 2017): minimum-cost design of {D.size} site(s), then "
                 f"{len(chosen)} addition(s) by greedy weighted set cover, within "
                 f"H({hmax}) = {H:.2f} times the cheapest set of additions to that design")
    if forced:
        guarantee += f"; {len(forced)} addition(s) forced where no single site covers a loss"
    return S, D, guarantee
