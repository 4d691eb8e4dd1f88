"""The cheapest design that survives failures: :func:`secure_placement`.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``; a dedicated actuator at state ``i``
adds the input column ``e_i``; sensors are placed on the dual system (see :mod:`netctl`).
"""

from __future__ import annotations

import dataclasses
import itertools
import math
import time
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.sparse as sp

from netctl.errors import OptionError
from netctl.structural.failures.audit import _work_system
from netctl.structural.failures.hall import (
    CutPool,
    TooMany,
    _design_B,
    _reach_cuts,
    hall_violations,
    solve_cuts,
)
from netctl.structural.failures.links import line_elements
from netctl.structural.failures.recheck import Recheck, loss_cuts, recheck_design
from netctl.structural.placement import Sites, place_inputs, sites_from_nodes
from netctl.system import StructuredSystem

__all__ = ["AGAINST", "SECURE_METHODS", "SecurePlacement", "secure_placement"]

#: What must be survived: any ``k`` of the placed elements, or any one line.
AGAINST: tuple[str, ...] = ("elements", "lines")
#: ``method`` choices.
SECURE_METHODS: tuple[str, ...] = ("auto", "exact", "two-step")
_MAX_SUBSETS = 20_000
#: Sampled ``k``-line losses when every ``k``-subset of lines is more than
#: ``_MAX_SUBSETS`` (``against="lines"``, ``k > 1``).
LINE_SAMPLES: int = 2_000


@dataclass(frozen=True)
class SecurePlacement:
    """A design that survives failures, and how good it is (see :func:`secure_placement`).

    ``lower_bound`` is a proven lower bound on the cheapest secure design; ``gap`` is
    ``(cost - lower_bound) / cost`` (0 when proven optimal). ``uncovered`` names the
    losses no eligible site can cover when ``feasible`` is false. ``kept`` names the
    existing elements kept in the design (``keep=True``; they can fail too, and cost
    nothing). ``scenarios`` is ``"all"`` when every loss was checked, else
    ``"sampled N"`` (``k``-line losses, sampled: not proven for all). ``lp_bound`` is the
    linear relaxation's value over the cuts found (a proven lower bound).
    ``verified``: True when every loss was recomputed and none breaks the design, None
    when only a labelled sample was (all passed), False when the design failed its
    recheck -- then it is never called optimal, ``gap`` is infinite, and ``recheck``
    and ``reasons`` name the losses that break it; ``recheck`` says which in words.
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
    kept: tuple[str, ...] = ()
    scenarios: str = "all"
    lp_bound: float = 0.0
    recheck: str = ""

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
                "first_step": [self.state_names[int(i)] for i in self.first_step],
                "kept": list(self.kept), "scenarios": self.scenarios,
                "lp_bound": float(self.lp_bound) if math.isfinite(self.lp_bound) else None,
                "recheck": self.recheck}


def _validate(kind: str, against: str, k: int, method: str, time_limit: float) -> None:
    if against not in AGAINST:
        raise OptionError(f"against must be one of {', '.join(map(repr, AGAINST))}, found "
                          f"{against!r}.")
    if method not in SECURE_METHODS:
        raise OptionError(f"unknown method {method!r}; choose one of "
                          f"{', '.join(map(repr, SECURE_METHODS))}.")
    if isinstance(k, bool) or not isinstance(k, (int, np.integer)) or k < 1:
        raise OptionError(f"k must be an integer >= 1 (failures to survive), found {k!r}.")
    if not isinstance(time_limit, (int, float)) or isinstance(time_limit, bool) or \
            not math.isfinite(time_limit) or time_limit <= 0:
        raise OptionError(f"time_limit must be a positive number of seconds, found "
                          f"{time_limit!r}.")


def _line_scenarios(work: StructuredSystem, k: int,
                    seed: int = 0) -> tuple[list[np.ndarray], str]:
    """Link positions lost together: every ``k`` lines (fewer lines never hurt more:
    removing links only lowers the rank and the reach), else a seeded sample."""
    groups, _ = line_elements(work)
    g = len(groups)
    kk = min(k, g)
    if kk <= 1:
        return list(groups), "all"
    total = math.comb(g, kk)
    if total <= _MAX_SUBSETS:
        return [np.concatenate([groups[j] for j in F])
                for F in itertools.combinations(range(g), kk)], "all"
    rng = np.random.default_rng(seed)
    picks = {tuple(sorted(rng.choice(g, kk, replace=False).tolist()))
             for _ in range(LINE_SAMPLES)}
    return [np.concatenate([groups[j] for j in F]) for F in sorted(picks)], \
        f"sampled {len(picks)} of {total}"


def secure_placement(system: StructuredSystem, *, kind: str = "inputs",
                     against: str = "elements", k: int = 1, sites: Sites | None = None,
                     method: str = "auto", time_limit: float = 60.0,
                     keep: bool = False) -> SecurePlacement:
    r"""Cheapest dedicated actuators (sensors) that survive failures.

    Parameters
    ----------
    system : StructuredSystem
        Its inputs (outputs) are ignored unless ``keep``.
    kind : {"inputs", "sensors"}
    against : {"elements", "lines"}
        ``"elements"``: the design stays structurally controllable (observable) after
        the loss of any ``k`` of its elements. ``"lines"``: after the loss of any ``k``
        lines (:func:`~netctl.structural.failures.line_elements`; every ``k``-subset
        when there are at most 20,000 of them, else a seeded sample of
        :data:`LINE_SAMPLES`, labelled in ``scenarios``).
    k : int, default 1
    sites : Sites, optional
        Eligible states and costs (default: the node table, else every state at cost
        1). Each eligible state hosts at most one new element.
    method : {"auto", "exact", "two-step"}
    time_limit : float, default 60
        Seconds for the exact method (all its linear and integer programmes together).
    keep : bool, default False
        Keep the system's inputs (outputs) as part of the design -- they cost nothing and
        can fail like the new ones -- and add the cheapest dedicated sites to them.

    Returns
    -------
    SecurePlacement

    Notes
    -----
    NP-hard (Liu, Pequito, Kar, Sinopoli & Aguiar [1]_). By Lin's theorem [2]_ and
    Hall's theorem [4]_ (derivation in :mod:`netctl.structural.failures.hall`) a set
    ``S`` of new sites, with kept columns ``B0``, survives any ``k`` element losses iff
    ``e(C) + y(C) >= k + 1`` for every source component ``C`` of ``A`` and
    ``e(X) + y(X) >= |X| - |N_A(X)| + k`` for every set of states ``X`` with more
    states than feeders (``e``: kept columns touching the set). **Exact**: an integer
    programme over ``y`` with these cuts, added as the candidates violate them (for
    ``k = 1`` one matching and one alternating search per element finds them all;
    for ``k > 1`` every ``k``-subset, at most 20,000; beyond that the reach by counting
    the elements touching each source component and the rank by the integer programme
    of :func:`~netctl.structural.failures.fewest_failures`); first on the linear relaxation,
    its rounded points checked, then on the integer programme re-solved by HiGHS until
    its optimum violates no cut. Every cut is valid for all secure designs, so the
    relaxation's value and HiGHS's dual bound are proven lower bounds. Lines: the same
    with ``A`` minus the lost links and no element lost.
    **Two-step** [1]_: a minimum-cost design ``D``
    (:func:`~netctl.structural.placement.place_inputs`), then additions chosen as a
    greedy weighted set cover of the cuts ``D`` violates (a site covers a cut when it
    lies in its set ``X``; cost per newly covered cut, Chvátal [3]_), repeated until
    no loss breaks the design; any ``k``. The lower bound beside it is the largest
    of the relaxation's value and the minimum design cost plus the ``k`` cheapest
    other sites. ``"auto"`` tries the exact method within ``time_limit`` and falls back
    to the two-step method with that bound. **Recheck**: every design returned is
    recomputed loss by loss (Lin's test; beyond 80,000 losses a labelled sample of
    20,000 plus the exact reach count); the losses that break it become cuts and the
    search runs again until a design passes or the time is up. A design that still
    fails is returned labelled ``verified=False``, never optimal.

    References
    ----------
    .. [1] Y. Liu, S. Pequito, S. Kar, B. Sinopoli, A. P. Aguiar, "Minimum sensor
       placement for robust observability of structured complex networks", IEEE
       Trans. Control Netw. Syst. 4(4), 2017 (volume and issue from memory).
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    .. [3] V. Chvátal, "A greedy heuristic for the set-covering problem", Math. Oper.
       Res. 4(3):233-235, 1979.
    .. [4] P. Hall, "On representatives of subsets", J. London Math. Soc. 10:26-30,
       1935.

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
    k = int(k)
    work = _work_system(system, kind)
    n = work.n_states
    site_kind = "sensor" if kind == "sensors" else "actuator"
    if sites is None:
        sites = sites_from_nodes(system, kind=site_kind)
    elif sites.eligible.shape != (n,):
        raise OptionError(f"sites are for {sites.eligible.size} states, the system has {n}.")
    if keep:
        B0 = sp.csr_array(work.B, dtype=np.float64)
        kept = tuple(str(x) for x in work.input_names)
    else:
        B0 = sp.csr_array((n, 0))
        kept = ()
    B0.sort_indices()
    if not keep:
        work = work.with_inputs(sp.csr_array((n, 0)), names=[])
    elig = np.asarray(sites.eligible, bool)
    cost = np.where(elig, np.asarray(sites.cost, np.float64), np.inf)
    names = tuple(str(x) for x in system.state_names)
    base = dict(kind=kind, against=against, k=k, state_names=names, model=system.model,
                kept=kept)
    A = work.A
    lines: list[np.ndarray] | None = None
    scen = "all"
    if against == "lines":
        lines, scen = _line_scenarios(work, k)
    base["scenarios"] = scen
    kk = k if against == "elements" else 0

    t_end = time.monotonic() + float(time_limit)

    def oracle(S: np.ndarray) -> list[tuple[np.ndarray, int]]:
        left = min(60.0, max(t_end - time.monotonic(), 1.0))
        return _violations(A, B0, S, k, against, lines, time_limit=left)

    # feasibility: every eligible site installed must survive
    allS = np.flatnonzero(elig)
    pool = CutPool(elig)
    for C, rhs in _reach_cuts(A, B0, kk + 1):
        pool.add(C, rhs)
    bad = pool.infeasible
    if not bad:
        try:
            bad = [X for X, _ in oracle(allS)]
        except TooMany:
            bad = []
    if bad:
        return _infeasible(bad, A, B0, kk, names, base)
    # the minimum design on the working system: sensors are actuators of the dual
    p = place_inputs(work, sites=dataclasses.replace(sites, kind="actuator"), verify=False)
    D = np.asarray(p.sites, np.int64)
    try:
        for X, rhs in oracle(D):
            pool.add(X, rhs)
    except TooMany:
        pass
    def pool_first(S: np.ndarray) -> list[tuple[np.ndarray, int]]:
        """Cuts learned so far (rechecks included) that ``S`` violates, else the search."""
        y = np.zeros(n, np.int64)
        y[S] = 1
        hit = [(X, r) for X, r in pool.cuts if int(y[X].sum()) < r]
        return hit if hit else oracle(S)

    def recording(S: np.ndarray) -> list[tuple[np.ndarray, int]]:
        cuts = pool_first(S)
        for X, rhs in cuts:
            pool.add(X, rhs)
        return cuts

    def repair(S: np.ndarray) -> np.ndarray | None:
        return _two_step(A, B0, S, elig, cost, recording)[0]

    def attempt() -> SecurePlacement:
        """One design and its proven bound (``verified`` filled in by the recheck)."""
        lower = 0.0
        lp = 0.0
        if method in ("auto", "exact"):
            res = solve_cuts(n, elig, cost, pool, oracle, t_end, repair=repair)
            lower, lp = max(lower, res.proven), res.lp_bound
            if res.optimal and res.S is not None:
                S = res.S
                c = float(cost[S].sum())
                return SecurePlacement(feasible=True, sites=S, cost=c, lower_bound=lower,
                                       optimal=True, gap=0.0, method="milp",
                                       guarantee="exact minimum cost (integer programme over "
                                       f"Hall-set cuts, {res.n_cuts} cuts, {res.rounds} "
                                       "integer round(s), solved to optimality by HiGHS)"
                                       + _scen_note(scen),
                                       verified=None, uncovered=(), reasons=(), lp_bound=lp,
                                       **base)  # type: ignore[arg-type]
            if pool.infeasible:
                return _infeasible(pool.infeasible, A, B0, kk, names, base)
            inc = res.S
            if method == "auto" and inc is not None:
                S2, _ = _two_step(A, B0, D, elig, cost, pool_first)
                if S2 is not None and float(cost[S2].sum()) < float(cost[inc].sum()):
                    inc = S2
            if inc is not None:
                c = float(cost[inc].sum())
                gap = 0.0 if c <= 0 else max(c - lower, 0.0) / c
                return SecurePlacement(feasible=True, sites=inc, cost=c, lower_bound=lower,
                                       optimal=gap <= 1e-12, gap=gap,
                                       method="milp-incumbent",
                                       guarantee=f"best secure design found within "
                                       f"{time_limit:g} s (rounded linear relaxation or "
                                       "integer programme, repaired by greedy cover, or the "
                                       "two-step design); not proven optimal: lower bound "
                                       f"{lower:g} from the relaxation over {res.n_cuts} "
                                       "Hall-set cuts and HiGHS's dual bound"
                                       + _scen_note(scen),
                                       verified=None, uncovered=(), reasons=(), lp_bound=lp,
                                       **base)  # type: ignore[arg-type]
            if method == "exact":
                return SecurePlacement(feasible=True, sites=np.zeros(0, np.int64),
                                       cost=math.inf, lower_bound=lower, optimal=False,
                                       gap=math.inf, method="milp", guarantee=f"not finished "
                                       f"within {time_limit:g} s; only the lower bound "
                                       f"{lower:g} is proven", verified=None, uncovered=(),
                                       reasons=("time limit reached",), lp_bound=lp,
                                       **base)  # type: ignore[arg-type]
        if method == "two-step":  # its bound: the linear relaxation over the cuts (seconds)
            res = solve_cuts(n, elig, cost, pool, oracle,
                             max(t_end, time.monotonic() + 1.0), integer=False)
            lower, lp = max(lower, res.proven), res.lp_bound
        S2, guarantee = _two_step(A, B0, D, elig, cost, pool_first)
        if S2 is None:
            return SecurePlacement(feasible=True, sites=np.zeros(0, np.int64), cost=math.inf,
                                   lower_bound=lower, optimal=False, gap=math.inf,
                                   method="two-step", guarantee=guarantee, verified=None,
                                   uncovered=(), reasons=(guarantee,), lp_bound=lp,
                                   **base)  # type: ignore[arg-type]
        # any secure design minus its k dearest new sites still works, unless kept
        # elements can take the losses: then only the minimum design's cost is a bound
        D_cost = float(cost[D].sum())
        extra = float(np.sort(cost[elig])[:k].sum()) if against == "elements" and not \
            B0.shape[1] else 0.0
        lower = max(lower, D_cost + extra)
        c = float(cost[S2].sum())
        gap = 0.0 if c <= 0 else max(c - lower, 0.0) / c
        return SecurePlacement(feasible=True, sites=S2, cost=c, lower_bound=lower,
                               optimal=gap <= 1e-12, gap=gap, method="two-step",
                               guarantee=guarantee + _scen_note(scen), verified=None,
                               uncovered=(), reasons=(), first_step=tuple(D.tolist()),
                               lp_bound=lp, **base)  # type: ignore[arg-type]

    # every design is rechecked by recomputation; the losses that break one become cuts
    # and the search runs again, until a design passes or the time is up
    tries = 0
    while True:
        r = attempt()
        if not r.feasible or not math.isfinite(r.cost):
            return r
        tries += 1
        chk = recheck_design(A, B0, r.sites, against, k, lines)
        violated = [] if chk.ok is False else _violated_cuts(pool, r.sites, n)
        below = chk.ok is not False and r.lower_bound > r.cost + 1e-9
        if chk.ok is not False and not violated and not below:
            return _passed(r, chk)
        if chk.ok is False:
            cuts = (_safe(oracle, r.sites) if chk.intact_fails else
                    loss_cuts(A, B0, r.sites, against, k, lines, chk.failing))
            new = sum(pool.add(X, rhs) for X, rhs in cuts)
        else:
            new = 0
        if new == 0 or time.monotonic() >= t_end or pool.infeasible:
            return _failed(r, chk, violated, names, kept, tries)


def _safe(oracle: Any, S: np.ndarray) -> list[tuple[np.ndarray, int]]:
    try:
        return list(oracle(S))
    except TooMany:
        return []


def _violated_cuts(pool: CutPool, S: np.ndarray, n: int) -> list[tuple[np.ndarray, int]]:
    """Learned cuts (each valid for every secure design) that ``S`` violates: proof
    that ``S`` is not secure."""
    y = np.zeros(n, np.int64)
    y[np.asarray(S, np.int64)] = 1
    return [(X, r) for X, r in pool.cuts if int(y[X].sum()) < r]


def _passed(r: SecurePlacement, chk: Recheck) -> SecurePlacement:
    """A design the recheck passed (every loss, or a labelled sample): its cost is then
    an upper bound on the optimum, so the lower bound may not exceed it."""
    lower = min(r.lower_bound, r.cost) if chk.ok else r.lower_bound
    return dataclasses.replace(r, lower_bound=lower, verified=chk.ok,
                               recheck=chk.describe())


def _failed(r: SecurePlacement, chk: Recheck, violated: list[tuple[np.ndarray, int]],
            names: tuple[str, ...], kept: tuple[str, ...], tries: int) -> SecurePlacement:
    """A design that failed its recheck: never optimal, no gap, and the losses (or the
    violated cut) that break it named."""
    labels = list(kept) + [names[int(i)] for i in r.sites]
    if chk.ok is False:
        note = chk.describe(labels)
    elif not violated:
        note = (f"FAILED: its cost {r.cost:g} is below the proven lower bound "
                f"{r.lower_bound:g}, so it cannot be secure (or a bound is wrong): "
                "not claimed")
    else:
        X, rhs = violated[0]
        shown = ", ".join(names[int(i)] for i in X[:8]) + (", ..." if X.size > 8 else "")
        note = (f"FAILED: it has {int(np.isin(X, r.sites).sum())} site(s) among the states "
                f"{{{shown}}}, which need {rhs} (a Hall-set cut valid for every secure "
                "design): it is NOT secure")
    return dataclasses.replace(
        r, optimal=False, gap=math.inf, verified=False, recheck=note,
        reasons=(note,) + r.reasons,
        guarantee=(f"NOT SECURE (best effort): the design failed its recheck after {tries} "
                   f"attempt(s) within the time limit; only the lower bound "
                   f"{r.lower_bound:g} is proven. Was: " + r.guarantee))


def _scen_note(scen: str) -> str:
    return "" if scen == "all" else (f"; line losses {scen} (not every combination: "
                                     "proven only for those checked)")


def _violations(A: sp.csr_array, B0: sp.csr_array, S: np.ndarray, k: int, against: str,
                lines: list[np.ndarray] | None, time_limit: float = 60.0
                ) -> list[tuple[np.ndarray, int]]:
    """Exact separation. Beyond the subset limit (``k > 1``) both of Lin's conditions
    are still separated exactly: the reach by counting the elements touching each
    source component (losing them all cuts it off), the rank by the integer programme
    of :func:`fewest_failures` (one rank-breaking loss per call); :class:`TooMany` when
    that programme does not finish within ``time_limit``."""
    try:
        return hall_violations(A, B0, S, k, against, lines, limit=_MAX_SUBSETS)
    except TooMany:
        pass
    from netctl.structural.failures.hall import _free_rows_of, _hall_cut
    from netctl.structural.failures.withstand import _rank_milp

    out: list[tuple[np.ndarray, int]] = []
    y = np.zeros(A.shape[0], np.int64)
    y[np.asarray(S, np.int64)] = 1
    for C, rhs in _reach_cuts(A, B0, k + 1):  # rhs = k + 1 - e(C)
        if int(y[C].sum()) < rhs:
            out.append((C, rhs))
    B = _design_B(A.shape[0], B0, S)
    res = _rank_milp(A, B, tuple(range(k + 1)), max(float(time_limit), 1.0))
    if res is None or res[0] is None:
        if res is None or res[1]:
            return out  # proven: no k losses lower the rank
        raise TooMany(-1)
    F = np.asarray(res[0], np.int64)
    keep = np.setdiff1d(np.arange(B.shape[1]), F)
    Bk = sp.csr_array(B.tocsc()[:, keep])
    Bk.sort_indices()
    X, _ = _free_rows_of(A, Bk)
    out.append(_hall_cut(A, B0, X, k))
    return out


def _infeasible(bad: list[np.ndarray], A: sp.csr_array, B0: sp.csr_array, kk: int,
                names: tuple[str, ...], base: dict[str, Any]) -> SecurePlacement:
    from netctl.structural.failures._core import source_components

    cp, mem = source_components(A)
    comps = {mem[cp[c]:cp[c + 1]].tobytes() for c in range(cp.size - 1)}
    short, reasons = [], []
    for X in bad[:50]:
        X = np.unique(np.asarray(X, np.int64))
        label = "{" + ", ".join(names[int(i)] for i in X[:8]) + \
            (", ..." if X.size > 8 else "") + "}"
        what = "source component" if X.tobytes() in comps else "states"
        short.append(f"{what} {label}")
        reasons.append(f"{what} {label}: too few eligible sites to survive the losses "
                       f"({kk + 1 if what == 'source component' else 'more'} needed there)")
    return SecurePlacement(feasible=False, sites=np.zeros(0, np.int64), cost=math.inf,
                           lower_bound=math.inf, optimal=False, gap=math.inf,
                           method="check", guarantee="infeasible: proven (all eligible "
                           "sites together do not survive)", verified=None,
                           uncovered=tuple(short), reasons=tuple(reasons),
                           **base)  # type: ignore[arg-type]


# ---------------------------------------------------------------------- checks
# ---------------------------------------------------------------------- two-step
def _two_step(A: sp.csr_array, B0: sp.csr_array, D: np.ndarray, elig: np.ndarray,
              cost: np.ndarray, oracle: Any) -> tuple[np.ndarray | None, str]:
    """Minimum design ``D``, then greedy weighted set cover of the cuts it violates,
    repeated until none is left."""
    n = A.shape[0]
    y = np.zeros(n, np.int64)
    y[D] = 1
    passes = 0
    added = 0
    hmax = 1
    while True:
        try:
            cuts = oracle(np.flatnonzero(y))
        except TooMany:
            return None, ("two-step: too many loss scenarios to check exhaustively and "
                          "the integer programme finding them did not finish")
        if not cuts:
            break
        passes += 1
        # deficits: how many more sites each violated cut needs
        need = [(np.unique(X[elig[X]]), rhs - int(y[X].sum())) for X, rhs in cuts]
        need = [(X[y[X] == 0], d) for X, d in need if d > 0]
        cover: dict[int, list[int]] = {}
        for j, (X, _) in enumerate(need):
            for s_ in X.tolist():
                cover.setdefault(s_, []).append(j)
        hmax = max(hmax, max((len(v) for v in cover.values()), default=1))
        left = np.array([d for _, d in need], np.int64)
        while (left > 0).any():
            cand = [(cost[s_] / g, s_) for s_, js in cover.items() if y[s_] == 0
                    and (g := int(np.count_nonzero(left[js] > 0))) > 0]
            if not cand:
                return None, "two-step: a loss cannot be covered by the eligible sites"
            _, best = min(cand)
            y[best] = 1
            added += 1
            left[cover[best]] -= 1
    S = np.flatnonzero(y).astype(np.int64)
    H = sum(1.0 / i for i in range(1, hmax + 1))
    return S, (f"two-step (Liu et al. 2017): minimum-cost design of {D.size} site(s), then "
               f"{added} addition(s) by greedy weighted set cover of the losses it does "
               f"not survive ({passes} pass(es); each within H({hmax}) = {H:.2f} times "
               "the cheapest cover of that pass)")
