"""Candidate actuators acting on several states, exactly: a mixed-integer programme solved
by HiGHS through :func:`scipy.optimize.milp` (the formulation is in the Notes of
:func:`netctl.structural.placement.place_inputs`). When HiGHS finds no design within the
time limit, the greedy cover answers and HiGHS's dual bound is kept.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a candidate is one column of ``B``.

References
----------
.. [1] S. Pequito, S. Kar, A. P. Aguiar, "Minimum cost input/output design for
   large-scale linear structural systems", Automatica 68:384-391, 2016.
   arXiv:1407.3327
"""

from __future__ import annotations

import numpy as np

from netctl.records import Candidates
from netctl.structural.placement._cover import greedy_cover
from netctl.structural.placement._reduced import Outcome, Reduced

__all__ = ["solve_milp"]


# ====================================================================== candidates: MILP
def solve_milp(prob: Reduced, cands: Candidates, time_limit: float) -> Outcome:
    from scipy.optimize import Bounds, LinearConstraint, milp

    K = cands.n_candidates
    cost = cands.cost
    nD = prob.D.size
    real_r = np.repeat(np.arange(nD), np.diff(prob.sub_indptr))
    real_c = prob.sub_indices
    import scipy.sparse as sp

    cD = prob.cand_D.to_scipy().tocoo()
    cand_k, cand_r = cD.row.astype(np.int64), cD.col.astype(np.int64)
    n_x = real_r.size + cand_k.size
    n_var = n_x + K
    e_rows = np.concatenate([real_r, cand_r])
    blocks_r, blocks_c, blocks_v, lb, ub = [], [], [], [], []
    off = 0
    if nD:
        # each D row matched exactly once
        blocks_r.append(e_rows + off)
        blocks_c.append(np.arange(n_x))
        blocks_v.append(np.ones(n_x))
        lb.append(np.ones(nD))
        ub.append(np.ones(nD))
        off += nD
        # each real column at most once
        blocks_r.append(real_c + off)
        blocks_c.append(np.arange(real_r.size))
        blocks_v.append(np.ones(real_r.size))
        lb.append(np.full(prob.n_real, -np.inf))
        ub.append(np.ones(prob.n_real))
        off += prob.n_real
        # candidate column k at most y_k times
        blocks_r.append(np.concatenate([cand_k + off, np.arange(K) + off]))
        blocks_c.append(np.concatenate([real_r.size + np.arange(cand_k.size), n_x + np.arange(K)]))
        blocks_v.append(np.concatenate([np.ones(cand_k.size), -np.ones(K)]))
        lb.append(np.full(K, -np.inf))
        ub.append(np.zeros(K))
        off += K
    # every unreached source component touched by a chosen candidate
    cc = prob.cand_comp.to_scipy().tocoo()
    if prob.unreached.size:
        blocks_r.append(cc.col.astype(np.int64) + off)
        blocks_c.append(n_x + cc.row.astype(np.int64))
        blocks_v.append(np.ones(cc.nnz))
        lb.append(np.ones(prob.unreached.size))
        ub.append(np.full(prob.unreached.size, np.inf))
        off += prob.unreached.size
    c = np.concatenate([np.zeros(n_x), cost])
    integrality = np.concatenate([np.zeros(n_x), np.ones(K)])
    up = np.concatenate([np.ones(n_x), np.where(prob.useful, 1.0, 0.0)])
    if off == 0:
        return Outcome("candidates", "milp", True, False, np.zeros(0, np.int64), 0.0, 0.0,
                        None, None, [], "exact minimum cost (nothing to add)")
    Acon = sp.csr_array((np.concatenate(blocks_v), (np.concatenate(blocks_r),
                                                    np.concatenate(blocks_c))),
                        shape=(off, n_var))
    res = milp(c, integrality=integrality, bounds=Bounds(np.zeros(n_var), up),
               constraints=LinearConstraint(Acon, np.concatenate(lb), np.concatenate(ub)),
               options={"time_limit": float(time_limit), "mip_rel_gap": 0.0,
                        "presolve": True})
    if res.x is None:
        # no incumbent within the time limit: fall back to the greedy, keep HiGHS's bound
        out = greedy_cover(prob, cands)
        dual = getattr(res, "mip_dual_bound", None)
        if dual is not None and np.isfinite(dual) and out.lower_bound is not None:
            out.lower_bound = max(out.lower_bound, float(dual))
        out.guarantee += f"; the MILP found no design within {time_limit:g} s"
        return out
    y = res.x[n_x:] > 0.5
    chosen = np.flatnonzero(y).astype(np.int64)
    total = float(cost[chosen].sum())
    dual = getattr(res, "mip_dual_bound", None)
    if res.status == 0:
        lbv = total
        guarantee = "exact minimum cost (MILP solved to optimality by HiGHS)"
    else:
        lbv = float(dual) if dual is not None and np.isfinite(dual) else 0.0
        guarantee = (f"MILP stopped at the time limit ({time_limit:g} s); the lower bound is "
                     "HiGHS's proven dual bound")
    return Outcome("candidates", "milp", True, False, chosen, total, min(lbv, total), None,
                    None, [], guarantee)
