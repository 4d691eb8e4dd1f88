"""Best effort under a budget too small for full control: the affordable design of
largest generic controllable dimension (Hosoe 1980), exhaustive on small cases, else a
budgeted greedy on that monotone submodular dimension with an a-posteriori bound.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a candidate is one column of ``B``.

References
----------
.. [1] S. Hosoe, "Determination of generic dimensions of controllable subspaces and
   its application", IEEE TAC 25(6):1192-1196, 1980.
.. [2] S. Khuller, A. Moss, J. Naor, "The budgeted maximum coverage problem",
   Information Processing Letters 70(1):39-45, 1999.
.. [3] G. L. Nemhauser, L. A. Wolsey, M. L. Fisher, "An analysis of approximations
   for maximizing submodular set functions I", Math. Programming 14:265-294, 1978.
"""

from __future__ import annotations

import heapq
import itertools
from typing import Any

import numpy as np

from netctl.graph.components import reachable_from
from netctl.records import Candidates
from netctl.structural.placement._assignment import assignment_by_component
from netctl.structural.placement._reduced import Outcome, Reduced, gain_per_cost
from netctl.system import StructuredSystem

__all__ = ["DimensionOracle", "EXHAUSTIVE_MAX_CANDIDATES", "best_effort_design"]

#: Largest number of affordable candidates for which the best-effort (budget too small)
#: design is found by trying every affordable subset with ``method="auto"``.
EXHAUSTIVE_MAX_CANDIDATES: int = 12


# ====================================================================== best effort
class DimensionOracle:
    """Generic controllable dimension (Hosoe 1980) of ``(A, [B, B_S])`` for many ``S``.

    The same construction as :func:`netctl.structural.controllability` (a min-cost
    assignment on the input-accessible states: real edges cost 1, a dummy edge from each
    state to its own column cost 2, so matched real edges form stems from inputs and
    cycles), without the rest of the report, and solved per connected component.
    """

    def __init__(self, work: StructuredSystem, cands: Candidates) -> None:
        self.A = work.A
        self.B = work.B
        self.n = work.n_states
        self.cands = cands
        At = work.A.T.tocsr()
        At.sort_indices()
        self.out_ptr = At.indptr.astype(np.int64)
        self.out_ind = At.indices.astype(np.int64)
        self.base_driven = np.flatnonzero(np.diff(work.B.indptr)).astype(np.int64)
        self.cache: dict[tuple[int, ...], int] = {}
        self._reach: dict[int, int] = {}

    def reach_size(self, k: int) -> int:
        """Number of states candidate ``k`` reaches (bounds its Krylov dimension)."""
        got = self._reach.get(k)
        if got is None:
            got = int(np.count_nonzero(reachable_from(self.out_ptr, self.out_ind,
                                                      self.cands.states_of(int(k)))))
            self._reach[k] = got
        return got

    def __call__(self, chosen: Any) -> int:
        key = tuple(sorted(int(k) for k in chosen))
        hit = self.cache.get(key)
        if hit is not None:
            return hit
        import scipy.sparse as sp  # here: the best effort alone needs it

        n = self.n
        M = self.cands.matrix(np.asarray(key, np.int64), n)
        B = sp.hstack([self.B, M], format="csr") if self.B.shape[1] else M.tocsr()
        driven = np.flatnonzero(np.diff(B.indptr))
        acc = reachable_from(self.out_ptr, self.out_ind, driven.astype(np.int64))
        R = np.flatnonzero(acc)
        r = R.size
        if r == 0:
            self.cache[key] = 0
            return 0
        AR = self.A if r == n else self.A[R][:, R]
        AB = sp.hstack([AR, B if r == n else B[R]], format="csr")
        AB.sort_indices()
        # real edges cost 1; a dummy (i, i) costs 2 unless i has a self-loop (then the
        # loop itself covers i at cost 1)
        rows_real = np.repeat(np.arange(r), np.diff(AB.indptr))
        loop = np.zeros(r, bool)
        loop[rows_real[AB.indices == rows_real]] = True
        nd = np.flatnonzero(~loop)
        cost = sp.csr_matrix(
            (np.concatenate([np.ones(AB.nnz), np.full(nd.size, 2.0)]),
             (np.concatenate([rows_real, nd]), np.concatenate([AB.indices, nd]))),
            shape=AB.shape)
        if r <= 5000:
            from scipy.sparse.csgraph import min_weight_full_bipartite_matching

            rows, cols = min_weight_full_bipartite_matching(cost)
        else:
            rows, cols = assignment_by_component(cost)
        used = np.asarray(cost[rows, cols]).ravel()
        d = int(np.count_nonzero(used == 1.0))
        self.cache[key] = d
        return d


def best_effort_design(work: StructuredSystem, cands: Candidates, prob: Reduced, budget: float,
                 method: str) -> Outcome:
    cost = cands.cost
    pool = np.flatnonzero((cost <= budget * (1 + 1e-12) + 1e-12)).astype(np.int64)
    problem = "dedicated" if cands.dedicated else "candidates"
    dim_of = DimensionOracle(work, cands)
    base = dim_of([])
    if pool.size == 0:
        return Outcome(problem, "exhaustive", True, True, np.zeros(0, np.int64), 0.0, None,
                        float(base), base, [], "no candidate is affordable")
    top = dim_of(pool)
    exhaustive = method == "exact" or (method == "auto" and pool.size <= EXHAUSTIVE_MAX_CANDIDATES)
    if exhaustive:
        best: tuple[int, float, tuple[int, ...]] = (base, 0.0, ())
        for r in range(1, pool.size + 1):
            any_affordable = False
            for S in itertools.combinations(pool.tolist(), r):
                c = float(cost[list(S)].sum())
                if c > budget * (1 + 1e-12) + 1e-12:
                    continue
                any_affordable = True
                d = dim_of(S)
                if d > best[0] or (d == best[0] and c < best[1] - 1e-12):
                    best = (d, c, S)
            if not any_affordable:
                break
        chosen = np.array(sorted(best[2]), np.int64)
        return Outcome(problem, "exhaustive", True, True, chosen, float(best[1]), None,
                        float(best[0]), best[0], [], "exact: every affordable subset tried "
                        "(largest generic controllable dimension, then lowest cost)")
    # lazy cost-effectiveness greedy (CELF) + best single candidate. Initial gains are
    # bounded by the number of states each candidate reaches (its Krylov subspace lives
    # there); every stale value is an upper bound on the current gain (submodularity).
    oracle_reach = dim_of.reach_size
    f_S = base
    sel: list[int] = []
    spent = 0.0
    last: dict[int, float] = {}
    heap: list[tuple[float, int, int]] = []
    for k in pool.tolist():
        last[k] = float(min(oracle_reach(k), work.n_states - base))
        if last[k] > 0:
            heapq.heappush(heap, (-gain_per_cost(last[k], cost[k]), k, -1))
    it = 0
    cap = budget * (1 + 1e-12) + 1e-12
    while heap:
        negr, k, stamp = heapq.heappop(heap)
        if spent + cost[k] > cap:
            continue
        if stamp != it:
            g = dim_of(sel + [k]) - f_S
            last[k] = float(g)
            if g > 0:
                heapq.heappush(heap, (-gain_per_cost(g, cost[k]), k, it))
            continue
        sel.append(k)
        last.pop(k, None)
        spent += float(cost[k])
        f_S = dim_of(sel)
        it += 1
    # a-posteriori bound on the optimum: f(OPT) <= f(G) + fractional knapsack of the
    # (upper bounds on the) marginal gains at the greedy set G
    ub = f_S + _fractional_knapsack(list(last.values()), [float(cost[k]) for k in last],
                                    budget)
    ub = float(min(ub, top))
    # best single affordable candidate, lazily (reach sizes bound the single gains)
    best_k, best_g = -1, -1
    for k in sorted(pool.tolist(), key=lambda k: (-oracle_reach(k), k)):
        if oracle_reach(k) <= best_g:
            break
        g = dim_of([k]) - base
        if g > best_g:
            best_k, best_g = k, g
    if best_k >= 0 and base + best_g > f_S:
        sel, f_S, spent = [best_k], base + best_g, float(cost[best_k])
    equal = np.ptp(cost[pool]) == 0
    ratio_txt = ("1 - 1/e (equal costs; Nemhauser, Wolsey & Fisher 1978)" if equal else
                 "(1 - 1/e)/2 (knapsack budget; Khuller, Moss & Naor 1999, from memory)")
    return Outcome(problem, "greedy", True, True, np.array(sorted(sel), np.int64), spent, None,
                    ub, f_S, [], f"budgeted greedy on the submodular generic controllable "
                    f"dimension: at least {ratio_txt} of the optimum")


def _fractional_knapsack(gains: list[float], costs: list[float], cap: float) -> float:
    total = 0.0
    items = sorted(((g, c) for g, c in zip(gains, costs) if g > 0),
                   key=lambda t: -gain_per_cost(t[0], t[1]))
    for g, c in items:
        if c <= 0:
            total += g
        elif cap >= c:
            total += g
            cap -= c
        else:
            total += g * cap / c
            break
    return total
