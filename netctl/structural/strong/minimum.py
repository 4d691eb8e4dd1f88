"""Fewest dedicated inputs for strong structural controllability: bounds and search.

:func:`minimum_strong_inputs` runs a greedy forcing heuristic with proven lower bounds,
or a branch and bound over forts (with a fort-cover integer program bound when its time
runs out). The minimum is NP-hard in general (Aazami 2008).
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import empty_pattern, with_full_diagonal, without_diagonal
from netctl.errors import OptionError
from netctl.structural.strong.forcing import (
    DIAGONALS,
    _closure,
    _Graph,
    _graph,
    _greedy,
    _loops,
    _minimal_fort,
    _packing,
    _prepare,
    _Rule,
    _rules,
)
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["EXACT_AUTO_LIMIT", "METHODS", "StrongInputDesign", "minimum_strong_inputs"]

METHODS: dict[str, str] = {
    "auto": "exact when the network is small enough, greedy with a lower bound otherwise",
    "exact": "branch and bound over minimal forts; fort-cover integer program bound "
             "(HiGHS via scipy) when the time limit runs out",
    "greedy": "greedy forcing with a matching-based lower bound",
}

#: states up to which method="auto" runs the exact search
EXACT_AUTO_LIMIT = 100


# ---------------------------------------------------------------------- minimum
@dataclass(frozen=True)
class StrongInputDesign(ResultTables):
    """A smallest (or best-found) set of dedicated inputs for strong structural
    controllability.

    Attributes
    ----------
    n_inputs : int
        Size of the set found.
    drivers : ndarray of int
        The states that get a dedicated input, sorted.
    method : str
        ``"exact"`` (branch and bound over forts) or ``"greedy"``.
    optimal : bool
        Whether ``n_inputs`` is proven minimum (``lower_bound == n_inputs``).
    lower_bound : int
        A proven lower bound on the minimum.
    lower_bound_source : str
        Where the bound comes from.
    gap : int
        ``n_inputs - lower_bound`` (0 when optimal).
    sites : str
        Which states the search drew drivers from ("" when every state was allowed).
    n_eligible : int
        How many states that is (-1 when every state was allowed).
    feasible : bool
        False when no set of allowed states forces every state; then ``drivers`` is
        empty and ``unreachable`` lists the states every allowed set leaves unforced.
    """

    _frame_rows = "states"
    _frame_sets = ("drivers",)

    n_states: int
    n_inputs: int
    drivers: np.ndarray
    diagonal: str
    method: str
    optimal: bool
    lower_bound: int
    lower_bound_source: str
    iterations: int
    seconds: float
    state_names: Sequence[str] = field(repr=False)
    model: str = "given"
    sites: str = ""
    n_eligible: int = -1
    feasible: bool = True
    unreachable: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64), repr=False)

    @property
    def gap(self) -> int:
        return self.n_inputs - self.lower_bound

    def names(self, indices: Any) -> list[str]:
        return [self.state_names[int(i)] for i in indices]

    @property
    def driver_names(self) -> list[str]:
        return self.names(self.drivers)

    def apply(self, system: StructuredSystem) -> StructuredSystem:
        """``system`` with one dedicated input on each driver (replacing its inputs)."""
        # by name: a state's name may be another state's row number ('3' in row 1)
        return system.with_inputs(self.names(self.drivers))

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "minimum_strong_inputs",
            "n_states": self.n_states,
            "n_inputs": self.n_inputs,
            "drivers": self.driver_names,
            "diagonal": self.diagonal,
            "diagonal_meaning": DIAGONALS[self.diagonal],
            "model": self.model,
            "method": self.method,
            "method_meaning": METHODS[self.method],
            "optimal": self.optimal,
            "lower_bound": self.lower_bound,
            "lower_bound_source": self.lower_bound_source,
            "gap": self.gap,
            "iterations": self.iterations,
            **({} if not self.sites else {
                "sites": {"rule": self.sites, "n_eligible": self.n_eligible,
                          "feasible": self.feasible,
                          "unreachable": self.names(self.unreachable)}}),
        }


def _all_forced(g: _Graph, rules: list[_Rule], S: np.ndarray) -> list[np.ndarray]:
    """White sets (forts) left by each rule from the black set ``S`` (only failures)."""
    b0 = np.zeros(g.n + g.m, bool)
    b0[S] = True
    b0[g.n:] = True
    forts = []
    for rule in rules:
        black = _closure(g, rule, b0)[0]
        if not black[:g.n].all():
            forts.append(np.flatnonzero(~black[:g.n]))
    return forts


def _greedy_set(g: _Graph, rules: list[_Rule], prune: bool,
                allowed: np.ndarray | None = None) -> np.ndarray:
    """Greedy set forcing under every rule: rules in each order, keep the smaller, then
    (when ``prune``) drop members whose removal keeps every rule forcing. Members come
    from ``allowed`` (every state when None; the caller has checked that the allowed
    states together force everything)."""
    n = g.n
    best: np.ndarray | None = None
    orders = [rules] if len(rules) == 1 else [rules, rules[::-1]]
    for order in orders:
        b0 = np.zeros(n + g.m, bool)
        b0[n:] = True
        chosen: list[np.ndarray] = []
        for rule in order:
            add = _greedy(g, rule, b0, allowed)
            b0[add] = True
            chosen.append(add)
        S = np.concatenate(chosen)
        if best is None or S.size < best.size:
            best = S
    assert best is not None
    if prune:
        keep = list(best)
        for s in best[::-1]:
            trial = [v for v in keep if v != s]
            if not _all_forced(g, rules, np.asarray(trial, np.int64)):
                keep = trial
        best = np.asarray(keep, np.int64)
    return np.sort(best).astype(np.int64)


def _generic_bound(system: StructuredSystem, diagonal: str) -> int:
    """Fewest dedicated inputs for (weak) structural controllability of the pattern
    every realization class contains: strong implies weak."""
    from netctl.structural._engine import completion, structure_of

    n = system.n_states
    A = system.pattern("A")
    if diagonal in ("zero", "free"):
        A = without_diagonal(A)
    elif diagonal == "nonzero":
        A = with_full_diagonal(A)  # the pattern of system.with_self_loops()
    comp = completion(A, empty_pattern((n, 0)), structure_of(A))
    return int(comp.states.size)


def _degree_bound(g: _Graph, rules: list[_Rule]) -> int:
    """Under a rule where every state forces only when black and counts only its
    out-neighbours, the first force needs a black state with all but one of its d >= 1
    out-neighbours black: at least min d states (or all of them if none can force)."""
    n = g.n
    for rule in rules:
        if not rule.white_ok[:n].any() and not rule.closed[:n].any():
            d = np.diff(g.out_ptr)[:n]
            d = d[d >= 1]
            return int(min(n, d.min())) if d.size else n
    return 0


def _lower_bound(system: StructuredSystem, g: _Graph, rules: list[_Rule],
                 diagonal: str) -> tuple[int, str]:
    gen = _generic_bound(system, diagonal)
    deg = _degree_bound(g, rules)
    if deg > gen:
        return deg, "minimum out-degree (first force)"
    return gen, "generic minimum dedicated inputs (strong implies structural)"


class _OutOfTime(Exception):
    pass


def _exact(g: _Graph, rules: list[_Rule], upper: np.ndarray, lower: int,
           time_limit: float, t0: float, allowed: np.ndarray | None = None
           ) -> tuple[np.ndarray, int, bool, int]:
    """Branch and bound over forts, then (if time ran out) an integer-program bound.

    Every forcing set meets every fort, so at a node with partial set ``S`` a minimal
    fort ``F`` disjoint from ``S`` is found and the search branches on its members, the
    i-th branch excluding the members before it (no set is visited twice). Nodes are
    pruned by ``|S|`` plus a packing of pairwise disjoint forts from the pool that ``S``
    misses. States outside ``allowed`` are forbidden from the start (never branched on,
    removed from the forts of the bounds). Returns (best set, proven lower bound,
    optimal, nodes explored)."""
    n, N = g.n, g.n + g.m
    forb0 = np.zeros(n, bool) if allowed is None else ~np.asarray(allowed, bool)
    closed2 = np.ascontiguousarray(np.stack([r.closed for r in rules]))
    ok2 = np.ascontiguousarray(np.stack([r.white_ok for r in rules]))
    state: dict[str, Any] = {"best": np.sort(upper).astype(np.int64),
                             "pool": np.zeros((64, n), bool), "n_pool": 0, "nodes": 0,
                             "order": np.zeros(0, np.int64), "sizes": np.zeros(64, np.int64)}
    seen: set[bytes] = set()
    deadline = t0 + 0.8 * time_limit

    def add(mask: np.ndarray) -> None:
        key = np.packbits(mask).tobytes()
        if key in seen:
            return
        seen.add(key)
        pool = state["pool"]
        k = state["n_pool"]
        if k == pool.shape[0]:
            pool = np.concatenate([pool, np.zeros_like(pool)])
            state["pool"] = pool
            state["sizes"] = np.concatenate([state["sizes"], np.zeros_like(state["sizes"])])
        pool[k] = mask
        state["sizes"][k] = int(mask.sum())
        state["n_pool"] = k + 1
        # smallest forts first (re-sorted now and then; new ones appended meanwhile)
        if (k + 1) & k == 0 or (k + 1) % 256 == 0:
            state["order"] = np.argsort(state["sizes"][:k + 1], kind="stable")
        else:
            state["order"] = np.append(state["order"], k)

    def rec(S: np.ndarray, size: int, forb: np.ndarray) -> None:
        state["nodes"] += 1
        if time.perf_counter() > deadline:
            raise _OutOfTime
        best = state["best"]
        pk = _packing(state["pool"], state["order"], S, forb, n)
        if pk < 0 or size + pk >= best.size:
            return
        F = _minimal_fort(g.out_ptr, g.out_idx, g.in_ptr, g.in_idx, closed2, ok2, S, n, N)
        if not F.any():
            state["best"] = np.flatnonzero(S).astype(np.int64)
            return
        add(F)
        if size + 1 >= best.size:
            return
        fb = forb.copy()
        for v in np.flatnonzero(F & ~forb):
            S[v] = True
            rec(S, size + 1, fb)
            S[v] = False
            fb = fb.copy()
            fb[v] = True

    try:
        rec(np.zeros(n, bool), 0, forb0.copy())
    except _OutOfTime:
        pass
    else:
        best = state["best"]
        return best, int(best.size), True, state["nodes"]
    best = state["best"]
    lb = max(lower, _packing(state["pool"], state["order"], np.zeros(n, bool), forb0, n))
    lb = max(lb, _fort_cover_bound(state["pool"][:state["n_pool"]] & ~forb0,
                                   max(0.05, time_limit - (time.perf_counter() - t0))))
    return best, lb, best.size <= lb, state["nodes"]


def _fort_cover_bound(pool: np.ndarray, seconds: float) -> int:
    """Lower bound: the fewest states meeting every fort of ``pool`` (HiGHS; its dual
    bound when the time runs out)."""
    import scipy.sparse as sp
    from scipy.optimize import Bounds, LinearConstraint, milp

    if pool.shape[0] == 0:
        return 0
    n = pool.shape[1]
    res = milp(np.ones(n), constraints=LinearConstraint(sp.csr_array(pool.astype(float)),
                                                        lb=1, ub=np.inf),
               integrality=np.ones(n), bounds=Bounds(0, 1),
               options={"time_limit": seconds, "disp": False})
    if res.status == 0 and res.x is not None:
        return int(round(res.fun))
    bound = getattr(res, "mip_dual_bound", None)
    if bound is not None and np.isfinite(bound):
        return int(np.ceil(bound - 1e-6))
    return 0


def _unforceable(g: _Graph, rules: list[_Rule], allowed: np.ndarray) -> np.ndarray:
    """States some rule leaves white even when every allowed state is black."""
    left = np.zeros(g.n, bool)
    for F in _all_forced(g, rules, np.flatnonzero(allowed)):
        left[F] = True
    return np.flatnonzero(left).astype(np.int64)


def minimum_strong_inputs(system: StructuredSystem, *, diagonal: str = "as-given",
                          method: str = "auto", time_limit: float = 60.0,
                          sites: Any = "node table") -> StrongInputDesign:
    r"""Fewest dedicated inputs that make ``system`` strongly structurally controllable.

    Existing inputs of ``system`` are ignored (as in :func:`netctl.minimum_inputs`);
    check a given design with :func:`strong_controllability`.

    Parameters
    ----------
    system : StructuredSystem
    diagonal : {"as-given", "zero", "nonzero", "free"}, default "as-given"
        See :data:`DIAGONALS`.
    method : {"auto", "exact", "greedy"}, default "auto"
        ``exact``: branch and bound over forts, proven optimal unless ``time_limit``
        runs out (then the best set found and a proven lower bound are reported).
        ``greedy``: near-linear heuristic with a lower bound. ``auto``: exact up to
        :data:`EXACT_AUTO_LIMIT` states, greedy beyond.
    time_limit : float, default 60
        Seconds for the exact method (the greedy one always finishes).
    sites : "node table", "any" or boolean array, default "node table"
        Which states may get an input. ``"node table"``: the node table's ``actuator``
        column (states marked false never), and in a second-order (swing) model only
        velocity (frequency) states -- those with an actuator site first, any velocity
        state when they cannot force everything -- never a position (angle), as
        ``drivers`` and ``place`` do. When no allowed set forces every state the design
        says so (``feasible`` False, ``unreachable``) instead of using another state.

    Returns
    -------
    StrongInputDesign
        The set, the method that ran, a proven lower bound and the gap.

    Notes
    -----
    The minimum under the ``free`` (or ``nonzero``) convention is the directed zero
    forcing number; computing it is NP-hard (Aazami 2008), hence the two methods.

    *Exact*: a set of black states forces everything iff it meets every *fort* -- a
    nonempty set ``F`` such that no vertex allowed to force has exactly one member of
    ``F`` in its neighbourhood [4]_, [5]_ -- and the set a rule leaves white is a fort.
    Branch and bound: at a partial set ``S``, the white set left by ``S`` is shrunk to a
    minimal fort (blacken all outside it plus one member; what some rule still leaves
    white is a smaller fort), and the search branches on its members, the i-th branch
    excluding the earlier ones; a node is cut when ``|S|`` plus a packing of disjoint
    forts it misses reaches the best set known (the greedy one to start). A complete
    search proves the minimum. If ``time_limit`` runs out first, the best set is
    returned with the larger of the fort packing bound and the fort-cover integer
    program ``min sum x_v`` s.t. ``sum_{v in F} x_v >= 1`` over every fort met (HiGHS via
    ``scipy.optimize.milp``; a relaxation, hence a lower bound) as the proven bound. For
    the two-condition conventions the forts of both rules are used together.

    *Greedy*: forcing runs until it stalls, then the white neighbour of an eligible
    vertex with the fewest white neighbours is made black, and so on (a binary heap;
    O((n + E) log n)); for two conditions both orders are tried and the smaller union
    kept; on small cases redundant members are then dropped. The lower bound is the
    larger of the generic minimum of dedicated inputs (strong implies structural
    controllability, so it needs at least as many; Commault & Dion 2013) and, for the
    standard rule, the minimum out-degree.

    One minimum set of possibly many; ties follow state order, so a search that
    finishes (or the greedy one) gives the same set on every run. A search cut short by
    ``time_limit`` returns whatever it reached, which depends on the machine's speed.

    References
    ----------
    .. [1] H. Mayeda, T. Yamada, "Strong structural controllability", SIAM J. Control
       Optim. 17(1):123-138, 1979.
    .. [2] N. Monshizadeh, S. Zhang, M. K. Camlibel, IEEE TAC 59(9):2562-2567, 2014.
       doi:10.1109/TAC.2014.2308619
    .. [3] M. Trefois, J.-C. Delvenne, Linear Algebra Appl. 484:199-218, 2015.
    .. [4] C. C. Fast, I. V. Hicks, "Effects of vertex degrees on the zero-forcing number
       and propagation time of a graph", Discrete Appl. Math. 250:215-226, 2018
       (details from memory).
    .. [5] B. Brimkov, C. C. Fast, I. V. Hicks, "Computational approaches for zero
       forcing and related problems", European J. Oper. Res. 273(3):889-903, 2019
       (details from memory).

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> cycle = StructuredSystem.from_edges([0, 1, 2, 3], [1, 2, 3, 0])
    >>> d = minimum_strong_inputs(cycle, diagonal="free")
    >>> d.n_inputs, d.method, d.optimal
    (1, 'exact', True)
    """
    t0 = time.perf_counter()
    diagonal = _prepare(system, diagonal)
    if not isinstance(method, str) or method not in METHODS:
        raise OptionError(f"unknown method {method!r}; choose one of "
                          f"{', '.join(repr(k) for k in METHODS)}.")
    if isinstance(time_limit, bool) or not isinstance(time_limit, (int, float)) or \
            not time_limit > 0:
        raise OptionError(f"time_limit must be a positive number of seconds, found "
                          f"{time_limit!r}; 60 is usual (the exact search then reports the "
                          "best set found and a lower bound).")
    n = system.n_states
    g = _graph(system.pattern("A"), None)
    rules = _rules(_loops(system, diagonal), diagonal, 0)
    run = method
    if method == "auto":
        run = "exact" if n <= EXACT_AUTO_LIMIT else "greedy"
    from netctl.structural._engine import site_tiers

    tiers = site_tiers(system.nodes, system.model, n, sites)
    lower, source = _lower_bound(system, g, rules, diagonal)
    rule_text, allowed = tiers[0]
    unreachable = np.zeros(0, np.int64)
    for rule_text, allowed in tiers:
        unreachable = (np.zeros(0, np.int64) if allowed is None or not n
                       else _unforceable(g, rules, allowed))
        if unreachable.size == 0:
            break
    n_ok = -1 if allowed is None else int(np.count_nonzero(allowed))
    if unreachable.size:
        return StrongInputDesign(n_states=n, n_inputs=0, drivers=np.zeros(0, np.int64),
                                 diagonal=diagonal, method=run, optimal=False,
                                 lower_bound=int(lower), lower_bound_source=source,
                                 iterations=0, seconds=time.perf_counter() - t0,
                                 state_names=system.state_names, model=system.model,
                                 sites=rule_text, n_eligible=n_ok, feasible=False,
                                 unreachable=unreachable)
    prune = n * max(1, g.out_idx.size) <= 5e6 or run == "exact"
    S = _greedy_set(g, rules, prune, allowed) if n else np.zeros(0, np.int64)
    it = 0
    if run == "exact" and n and S.size > lower:
        S, lb, _, it = _exact(g, rules, S, lower, float(time_limit), t0, allowed)
        if lb > lower:
            lower, source = lb, ("branch and bound over forts (complete search)"
                                 if lb == S.size else "fort packing / fort cover bound")
    S = np.sort(S).astype(np.int64)
    return StrongInputDesign(n_states=n, n_inputs=int(S.size), drivers=S, diagonal=diagonal,
                             method=run, optimal=S.size == lower, lower_bound=int(lower),
                             lower_bound_source=source, iterations=it,
                             seconds=time.perf_counter() - t0,
                             state_names=system.state_names, model=system.model,
                             sites=rule_text, n_eligible=n_ok)
