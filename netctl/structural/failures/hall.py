"""Hall-set formulation of secure placement: cuts, their separation, the exact programme.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``; rows of ``[A B]`` are states, the
columns of ``A`` the states that feed them (see :mod:`netctl`).

The theory, for dedicated sites ``S`` (``y_i = 1`` iff state ``i`` carries a new site)
added to kept input columns ``B0`` (possibly empty), against the loss of any ``k``
elements of the whole design:

* **Reach** (Lin's first condition): a source strongly connected component ``C`` of
  ``A`` stays reached after any ``k`` losses iff ``e(C) + y(C) >= k + 1``, where ``e(C)``
  counts the kept columns touching ``C``.
* **Rank** (Lin's second condition): by Hall's theorem ``[A B]`` has a matching covering
  every row iff ``|N_A(X)| + |N_B(X)| >= |X|`` for every set ``X`` of states. The loss
  that hurts ``X`` most takes ``min(k, |N_B(X)|)`` of its input neighbours, so the design
  survives every ``k`` losses iff, with ``def(X) = |X| - |N_A(X)|``,

      ``e(X) + y(X) >= def(X) + k``  for every ``X`` with ``def(X) >= 1``.

  (If ``def(X) <= 0`` the set needs nothing.) Only subsets of the rows some maximum
  matching of ``A`` leaves unmatched matter (``def`` is supermodular and that set
  maximizes it), but they are exponentially many: the programme adds them as the
  designs it tries turn up violated ones. For a candidate ``S`` that loses rank after
  the loss of ``F``, the rows ``X`` an alternating search reaches from the rows left
  unmatched have ``def(X) - e(X) - |S cap X| + |F cap N_B(X)| >= 1``: ``X`` gives a cut
  the candidate violates, and its right-hand side counts every site already inside
  ``X`` (a cut ``y(X) >= k + 1`` would not).

Against the loss of one line ``L`` (no element lost) the same holds with ``A`` replaced
by ``A - L`` and ``k = 0``, for every line.

The linear relaxation over the cuts found is a valid lower bound (it relaxes a subset of
the valid inequalities); so is HiGHS's dual bound of the integer programme over them.
"""

from __future__ import annotations

import itertools
import math
import time
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp

from netctl.graph.dm import alternating_reach_rows
from netctl.graph.matching import maximum_matching
from netctl.structural._engine import stack_AB
from netctl.structural.failures._core import dedicated_B, design_facts, source_components

__all__ = ["CutPool", "hall_violations", "hall_secure", "solve_cuts", "deficiency"]


def _row_mask(n: int, X: np.ndarray) -> np.ndarray:
    m = np.zeros(n, bool)
    m[X] = True
    return m


def deficiency(A: sp.csr_array, X: np.ndarray) -> int:
    """``def(X) = |X| - |N_A(X)|``: states of ``X`` minus the states feeding them.

    References
    ----------
    .. [1] P. Hall, "On representatives of subsets", J. London Math. Soc. 10:26-30,
       1935.
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    """
    n = A.shape[0]
    sel = np.repeat(_row_mask(n, X), np.diff(A.indptr))
    return int(np.unique(X).size - np.unique(A.indices[sel]).size)


def _touching(B0: sp.csr_array, X: np.ndarray) -> int:
    """Kept input columns acting on some state of ``X``."""
    if B0.shape[1] == 0 or X.size == 0:
        return 0
    sel = np.repeat(_row_mask(B0.shape[0], X), np.diff(B0.indptr))
    return int(np.unique(B0.indices[sel]).size)


def _design_B(n: int, B0: sp.csr_array, S: np.ndarray) -> sp.csr_array:
    """Kept columns, then one dedicated column per site of ``S``."""
    return dedicated_B(n, S, B0)


@dataclass
class CutPool:
    """Inequalities ``y(X) >= rhs`` over the eligible states (deduplicated)."""

    elig: np.ndarray
    cuts: list[tuple[np.ndarray, int]] = field(default_factory=list)
    seen: set[tuple[bytes, int]] = field(default_factory=set)
    infeasible: list[np.ndarray] = field(default_factory=list)

    def add(self, X: np.ndarray, rhs: int) -> bool:
        """Add ``y(X) >= rhs``; returns True if new. ``rhs`` above the eligible states
        of ``X`` records an uncoverable set instead."""
        if rhs <= 0:
            return False
        p = np.unique(X[self.elig[X]]).astype(np.int64)
        if p.size < rhs:
            self.infeasible.append(np.unique(X))
            return False
        key = (p.tobytes(), int(rhs))
        if key in self.seen:
            return False
        self.seen.add(key)
        self.cuts.append((p, int(rhs)))
        return True

    def matrix(self, var: np.ndarray, n: int) -> tuple[sp.csr_array, np.ndarray]:
        pos = np.full(n, -1, np.int64)
        pos[var] = np.arange(var.size)
        if not self.cuts:
            return sp.csr_array((0, var.size)), np.zeros(0)
        rows = np.concatenate([np.full(p.size, j) for j, (p, _) in enumerate(self.cuts)])
        cols = pos[np.concatenate([p for p, _ in self.cuts])]
        M = sp.csr_array((np.ones(rows.size), (rows, cols)), shape=(len(self.cuts), var.size))
        return M, np.array([r for _, r in self.cuts], float)

    def violated_by(self, y: np.ndarray, tol: float = 1e-6) -> bool:
        return any(float(y[p].sum()) < r - tol for p, r in self.cuts)


def _free_rows_of(A: sp.csr_array, B: sp.csr_array) -> tuple[np.ndarray, int]:
    """Rows some maximum matching of ``[A B]`` leaves unmatched, and the rank."""
    ptr, ind, nc = stack_AB(A, B)
    ptr = np.ascontiguousarray(ptr, np.int64)
    ind = np.ascontiguousarray(ind, np.int64)
    rm, cm = maximum_matching(ptr, ind, nc)
    rank = int(np.count_nonzero(rm >= 0))
    if rank == A.shape[0]:
        return np.zeros(0, np.int64), rank
    rows, _ = alternating_reach_rows(ptr, ind, nc, cm)
    return np.flatnonzero(rows).astype(np.int64), rank


def _reach_cuts(A: sp.csr_array, B0: sp.csr_array, need: int,
                unreached: np.ndarray | None = None) -> list[tuple[np.ndarray, int]]:
    """``y(C) >= need - e(C)`` per source component ``C`` (all, or those wholly in
    ``unreached``)."""
    n = A.shape[0]
    cp, mem = source_components(A)
    hit = None if unreached is None else _row_mask(n, unreached)
    out = []
    for c in range(cp.size - 1):
        C = mem[cp[c]:cp[c + 1]]
        if hit is not None and not hit[C].all():
            continue
        out.append((C, need - _touching(B0, C)))
    return out


def _hall_cut(A: sp.csr_array, B0: sp.csr_array, X: np.ndarray, k: int) -> tuple[np.ndarray, int]:
    return X, deficiency(A, X) + k - _touching(B0, X)


def hall_violations(A: sp.csr_array, B0: sp.csr_array, S: np.ndarray, k: int,
                    against: str = "elements", lines: list[np.ndarray] | None = None,
                    limit: int = 20_000, first: bool = False,
                    ) -> list[tuple[np.ndarray, int]]:
    """Cuts ``(X, rhs)`` that design ``B0 + e_S`` violates (empty: it is secure).

    ``against="elements"``: any ``k`` of its elements lost; ``"lines"``: any one line of
    ``lines`` (link positions in the CSR order of ``A``) lost. Exact: for ``k = 1`` one
    matching and one alternating search per rank-critical element; for ``k > 1`` every
    ``k``-subset (raises :class:`TooMany` beyond ``limit``), with Lin's test each.

    References
    ----------
    .. [1] P. Hall, "On representatives of subsets", J. London Math. Soc. 10:26-30,
       1935.
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    """
    n = A.shape[0]
    S = np.asarray(S, np.int64)
    B = _design_B(n, B0, S)
    out: list[tuple[np.ndarray, int]] = []
    kk = k if against == "elements" else 0
    # the intact design
    X, rank = _free_rows_of(A, B)
    reach = _unreached(A, B)
    if rank < n or reach.size:
        if rank < n:
            out.append(_hall_cut(A, B0, X, kk))
            out.extend(_closure_cuts(A, B, B0, kk))
        if reach.size:
            out.extend(_reach_cuts(A, B0, kk + 1, reach))
        return out
    if against == "lines":
        from netctl.structural.failures.links import _without

        for L in lines or []:
            AL = _without(A, L)
            X, rank = _free_rows_of(AL, B)
            if rank < n:
                out.append(_hall_cut(AL, B0, X, 0))
            reach = _unreached(AL, B)
            if reach.size:
                out.extend(_reach_cuts(AL, B0, 1, reach))
            if first and out:
                return out
        return out
    m = B.shape[1]
    if k == 1:
        f = design_facts(A, B)
        for q in np.flatnonzero(f.rank_lost):
            out.append(_hall_cut(A, B0, f.rivals(int(q)), 1))
            if first:
                return out
        cut = np.flatnonzero(f.cut_off > 0)
        for q in cut:
            out.extend(_reach_cuts(A, B0, 2, f.cut_states(int(q))))
        return out
    total = math.comb(m, min(k, m))
    if total > limit:
        raise TooMany(total)
    Bc = B.tocsc()
    for F in itertools.combinations(range(m), min(k, m)):
        keep = np.setdiff1d(np.arange(m), F)
        Bk = sp.csr_array(Bc[:, keep])
        Bk.sort_indices()
        X, rank = _free_rows_of(A, Bk)
        if rank < n:
            out.append(_hall_cut(A, B0, X, k))
        reach = _unreached(A, Bk)
        if reach.size:
            out.extend(_reach_cuts(A, B0, k + 1, reach))
        if first and out:
            return out
    return out


def _closure_cuts(A: sp.csr_array, B: sp.csr_array, B0: sp.csr_array, k: int,
                  limit: int = 200) -> list[tuple[np.ndarray, int]]:
    """One cut per unmatched row ``u`` of a maximum matching of ``[A B]`` (at most
    ``limit``): the rows ``X`` alternating paths reach from ``u`` alone. Every column
    touching ``X`` is matched into ``X - u``, so ``B`` falls short there by at least
    one before any loss (the cut is violated by ``k + 1``)."""
    n = A.shape[0]
    ptr, ind, nc = stack_AB(A, B)
    ptr = np.ascontiguousarray(ptr, np.int64)
    ind = np.ascontiguousarray(ind, np.int64)
    rm, cm = maximum_matching(ptr, ind, nc)
    out = []
    for u in np.flatnonzero(rm < 0)[:limit]:
        rows, _ = alternating_reach_rows(ptr, ind, nc, cm, np.array([u], np.int64))
        out.append(_hall_cut(A, B0, np.flatnonzero(rows), k))
    return out


class TooMany(Exception):
    """More loss scenarios than the exhaustive check may visit."""


def _unreached(A: sp.csr_array, B: sp.csr_array) -> np.ndarray:
    from netctl.graph.components import reachable_from
    from netctl.graph.matching import transpose_csr

    n = A.shape[0]
    if n == 0:
        return np.zeros(0, np.int64)
    out = transpose_csr(np.ascontiguousarray(A.indptr, np.int64),
                        np.ascontiguousarray(A.indices, np.int64), np.int64(n))
    driven = np.flatnonzero(np.diff(B.indptr)).astype(np.int64)
    reach = reachable_from(out[0], out[1], driven)
    return np.flatnonzero(~reach).astype(np.int64)


def hall_secure(A: sp.csr_array, B0: sp.csr_array, S: np.ndarray, k: int) -> bool:
    """Brute Hall test (every subset ``X``; tiny systems only): the characterization.

    References
    ----------
    .. [1] P. Hall, "On representatives of subsets", J. London Math. Soc. 10:26-30,
       1935.
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    """
    n = A.shape[0]
    y = _row_mask(n, np.asarray(S, np.int64)).astype(int)
    for C, rhs in _reach_cuts(A, B0, k + 1):
        if y[C].sum() < rhs:
            return False
    for r in range(1, n + 1):
        for X in itertools.combinations(range(n), r):
            Xa = np.array(X, np.int64)
            d = deficiency(A, Xa)
            if d >= 1 and y[Xa].sum() + _touching(B0, Xa) < d + k:
                return False
    return True


@dataclass
class CutResult:
    S: np.ndarray | None
    lower: float
    optimal: bool
    rounds: int
    n_cuts: int
    lp_bound: float
    #: the bound from the relaxation and HiGHS alone (``lower`` is also capped by the
    #: incumbent's cost, which is a bound only if the incumbent is truly secure)
    proven: float = 0.0


def solve_cuts(n: int, elig: np.ndarray, cost: np.ndarray, pool: CutPool,
               oracle: Callable[[np.ndarray], list[tuple[np.ndarray, int]]],
               t_end: float, lp_rounds: int = 30,
               repair: Callable[[np.ndarray], np.ndarray | None] | None = None,
               integer: bool = True) -> CutResult:
    """Cutting planes on the linear relaxation (rounded points checked by ``oracle``,
    and ``repair``-ed into secure designs: the incumbent), then the integer programme
    over the cuts, re-solved while its optimum violates new ones. ``oracle(S)`` returns
    cuts ``S`` violates (``[]``: feasible).

    References
    ----------
    .. [1] G. Dantzig, R. Fulkerson, S. Johnson, "Solution of a large-scale
       traveling-salesman problem", Operations Research 2(4):393-410, 1954 (cutting
       planes added as violated; from memory).
    .. [2] Q. Huangfu, J. A. J. Hall, "Parallelizing the dual revised simplex method",
       Math. Prog. Comp. 10:119-142, 2018 (HiGHS).
    """
    from scipy.optimize import Bounds, LinearConstraint, milp

    var = np.flatnonzero(elig)
    c = cost[var]
    lower = 0.0
    lp_bound = 0.0
    best: np.ndarray | None = None
    integral_costs = bool(np.all(np.abs(c - np.round(c)) < 1e-9))

    inc: list[np.ndarray] = []  # best secure design found (repaired roundings)

    def ub() -> float:
        return float(cost[inc[0]].sum()) if inc else math.inf

    def offer(S: np.ndarray) -> None:
        if repair is None:
            return
        T = repair(S)
        if T is not None and float(cost[T].sum()) < ub():
            inc[:] = [T]

    def solve(integer: bool, left: float):
        M, rhs = pool.matrix(var, n)
        cons = [LinearConstraint(M, rhs, np.inf)] if M.shape[0] else []
        gap = 0.0
        if integer and integral_costs and math.isfinite(ub()) and ub() > 0:
            # with integral costs a gap below one unit proves optimality
            gap = 0.999 / ub()
        return milp(c, integrality=np.full(var.size, 1 if integer else 0), bounds=Bounds(0, 1),
                    constraints=cons, options={"time_limit": max(left, 1e-3),
                                               "mip_rel_gap": gap})

    def feed(S: np.ndarray, y: np.ndarray | None) -> int:
        new = 0
        try:
            found = oracle(S)
        except TooMany:
            return -1
        for X, rhs in found:
            if pool.add(X, rhs):
                new += 1
        return new

    # 1. linear relaxation with cuts from rounded points
    y_last: np.ndarray | None = None
    for _ in range(lp_rounds):
        left = t_end - time.monotonic()
        if left <= 0:
            break
        res = solve(False, left)
        if res.status != 0 or res.x is None:
            break
        lp_bound = max(lp_bound, float(res.fun))
        y = np.zeros(n)
        y[var] = res.x
        y_last = y
        new = 0
        for t in (0.999, 0.5, 1e-6):
            S = np.flatnonzero(y >= t)
            before = len(pool.cuts)
            if feed(S, y) < 0:
                break
            new += len(pool.cuts) - before
            if pool.infeasible:
                break
        if new == 0 or pool.infeasible:
            break
    if not pool.infeasible and y_last is not None:
        for t in (0.5, 1e-6):
            offer(np.flatnonzero(y_last >= t))
    lower = lp_bound
    if integral_costs:
        lower = math.ceil(lower - 1e-6)
    # 2. integer programme, re-solved while its answer violates new cuts
    rounds = 0
    while integer and not pool.infeasible:
        left = t_end - time.monotonic()
        if left <= 0:
            break
        rounds += 1
        res = solve(True, left)
        if res.x is None or res.status != 0:
            dual = getattr(res, "mip_dual_bound", None)
            if dual is not None and np.isfinite(dual):
                lower = max(lower, float(dual))
            if res.x is not None:
                offer(np.sort(var[res.x > 0.5]))
            break
        dual = getattr(res, "mip_dual_bound", None)
        lower = max(lower, float(dual) if dual is not None and np.isfinite(dual)
                    else float(res.fun))
        if integral_costs:
            lower = math.ceil(lower - 1e-6)
        S = np.sort(var[res.x > 0.5])
        got = feed(S, None)
        if got < 0:
            break
        if got == 0:
            if float(cost[S].sum()) <= lower + 1e-9 or not inc:
                inc[:] = [S]
            break
        offer(S)
    if inc and ub() <= lower + 1e-9:
        return CutResult(S=inc[0], lower=ub(), optimal=True, rounds=rounds,
                         n_cuts=len(pool.cuts), lp_bound=lp_bound, proven=float(lower))
    return CutResult(S=inc[0] if inc else None, lower=float(min(lower, ub())), optimal=False,
                     rounds=rounds, n_cuts=len(pool.cuts), lp_bound=lp_bound,
                     proven=float(lower))
