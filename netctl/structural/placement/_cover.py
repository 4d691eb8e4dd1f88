"""Candidate actuators on large cases: the cost-effectiveness greedy for the submodular
cover ``g(S)`` = term rank of ``[A B B_S]`` + source components touched (Wolsey 1982),
with a proven lower bound (the cheapest basis of the rank matroid, Edmonds 1971).

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a candidate is one column of ``B``.

References
----------
.. [1] L. A. Wolsey, "An analysis of the greedy algorithm for the submodular set
   covering problem", Combinatorica 2(4):385-393, 1982.
.. [2] J. Edmonds, "Matroids and the greedy algorithm", Math. Programming
   1:127-136, 1971.
"""

from __future__ import annotations

import heapq

import numpy as np

from netctl._csr import transpose_pattern
from netctl._jit import njit

from netctl.graph.matching import maximum_matching, transpose_csr
from netctl.records import Candidates
from netctl.structural.placement._reduced import Outcome, Reduced, gain_per_cost

__all__ = ["greedy_cover"]


# ====================================================================== candidates: greedy
@njit(cache=True, nogil=True)
def _augment_from(k_col, start_rows, tptr, tind, rm, cm, seen, stamp, parent, queue,
                  dead, commit):  # pragma: no cover - compiled
    """Is there an augmenting path from the new column ``k_col`` (adjacent to
    ``start_rows``)? Breadth-first over rows: row -> its matched column -> that column's
    rows, until an unmatched row. With ``commit`` the path is flipped (rank + 1).

    Rows visited by a failed search cannot reach an unmatched row, and adding columns
    never gives them one again (the over-determined block only shrinks), so they are
    marked ``dead`` and skipped from then on: failed searches cost O(E) in total."""
    tail = 0
    for r in start_rows:
        if seen[r] != stamp and not dead[r]:
            seen[r] = stamp
            parent[r] = k_col
            queue[tail] = r
            tail += 1
    head = 0
    while head < tail:
        r = queue[head]
        head += 1
        c = rm[r]
        if c < 0:
            if commit:
                while True:
                    pc = parent[r]
                    prev = cm[pc]
                    rm[r] = pc
                    cm[pc] = r
                    if pc == k_col:
                        break
                    r = prev
            return True
        for p in range(tptr[c], tptr[c + 1]):
            r2 = tind[p]
            if seen[r2] != stamp and not dead[r2]:
                seen[r2] = stamp
                parent[r2] = c
                queue[tail] = r2
                tail += 1
    for i in range(tail):
        dead[queue[i]] = True
    return False


def _search_state(prob: Reduced, n_cols: int) -> tuple[
        np.ndarray, np.ndarray, int, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """A maximum matching of the rows ``D`` over the real columns, as ``(rm, cm)`` with
    ``n_cols`` columns in all (the candidates' after the real ones, unmatched), how many
    rows it leaves unmatched, and the work arrays of :func:`_augment_from` (``seen``,
    ``parent``, ``queue``, ``dead``)."""
    nD, n_real = prob.D.size, prob.n_real
    rm = np.full(nD, -1, np.int64)
    if nD:
        rm, _ = maximum_matching(prob.sub_indptr, prob.sub_indices, n_real)
    cm = np.full(n_cols, -1, np.int64)
    mr = np.flatnonzero(rm >= 0)
    cm[rm[mr]] = mr
    return (rm, cm, nD - int(mr.size), np.zeros(nD, np.int64), np.full(nD, -1, np.int64),
            np.empty(max(nD, 1), np.int64), np.zeros(nD, np.bool_))


def greedy_cover(prob: Reduced, cands: Candidates) -> Outcome:
    """Cost-effectiveness greedy for the submodular cover g(S) = rank + sources touched.

    Lazy evaluation (stale gains are upper bounds by submodularity); the rank gain of a
    candidate (0 or 1) is one augmenting-path search from its column, local to the part
    of the graph it can reach.
    """
    K = cands.n_candidates
    cost = cands.cost
    cD = prob.cand_D
    cc = prob.cand_comp
    covered = np.zeros(prob.unreached.size, bool)
    chosen: list[int] = []
    n_real = prob.n_real
    # columns: real in-neighbours of D, then one per candidate; transpose = column -> rows
    tptr_r, tind_r = transpose_csr(prob.sub_indptr, prob.sub_indices, np.int64(n_real))
    tptr = np.concatenate([tptr_r, tptr_r[-1] + cD.indptr[1:].astype(np.int64)])
    tind = np.concatenate([tind_r, cD.indices.astype(np.int64)])
    rm, cm, need_rank, seen, parent, queue, dead = _search_state(prob, n_real + K)
    stamp = 0
    single = np.diff(cD.indptr) > 0
    n_comp = np.diff(cc.indptr).astype(np.int64)
    max_gain = int((single.astype(np.int64) + n_comp).max(initial=0))
    rank_alive = single.copy()
    heap = [(-gain_per_cost(float(single[k]) + float(n_comp[k]), float(cost[k])), k)
            for k in np.flatnonzero(prob.useful).tolist()]
    heapq.heapify(heap)
    while (need_rank > 0 or not covered.all()) and heap:
        _, k = heapq.heappop(heap)
        rows_k = cD.indices[cD.indptr[k]:cD.indptr[k + 1]].astype(np.int64)
        cov = int(np.count_nonzero(~covered[cc.indices[cc.indptr[k]:cc.indptr[k + 1]]]))
        rg = 0
        if need_rank > 0 and rank_alive[k]:
            stamp += 1
            if _augment_from(np.int64(n_real + k), rows_k, tptr, tind, rm, cm, seen,
                             np.int64(stamp), parent, queue, dead, False):
                rg = 1
            else:
                rank_alive[k] = False  # the rank gain never comes back (submodularity)
        g = rg + cov
        if g == 0:
            continue
        r = gain_per_cost(float(g), float(cost[k]))
        if heap and r < -heap[0][0]:
            heapq.heappush(heap, (-r, k))
            continue
        chosen.append(k)
        covered[cc.indices[cc.indptr[k]:cc.indptr[k + 1]]] = True
        if rg:
            stamp += 1
            _augment_from(np.int64(n_real + k), rows_k, tptr, tind, rm, cm, seen,
                          np.int64(stamp), parent, queue, dead, True)
            need_rank -= 1
    chosen_a = np.array(sorted(chosen), np.int64)
    total = float(cost[chosen_a].sum())
    H = sum(1.0 / i for i in range(1, max(max_gain, 1) + 1))
    lb = total / H
    # the rank part alone is a matroid (columns that raise the term rank one each: the
    # transversal matroid contracted by the existing columns); its cheapest basis, found
    # exactly by the greedy in cost order (Edmonds 1971), is a lower bound
    if prob.deficiency:
        lb = max(lb, _min_cost_rank_basis(prob, cost, tptr, tind, single))
    if prob.unreached.size:
        ccs = transpose_pattern(cc)  # per component its candidates; feasible: every unreached source has a candidate
        per = np.minimum.reduceat(cost[ccs.indices], ccs.indptr[:-1])
        lb = max(lb, float(per.max()))
    return Outcome("candidates", "greedy", True, False, chosen_a, total, min(lb, total), None,
                    None, [], f"greedy submodular cover: cost <= H({max_gain}) = {H:.3f} x "
                    "the optimum (Wolsey 1982)")


def _min_cost_rank_basis(prob: Reduced, cost: np.ndarray, tptr: np.ndarray,
                         tind: np.ndarray, single: np.ndarray) -> float:
    """Cheapest set of candidates that restores the term rank (ignoring accessibility)."""
    n_real = prob.n_real
    cD = prob.cand_D
    rm, cm, need, seen, parent, queue, dead = _search_state(prob, tptr.size - 1)
    total = 0.0
    order = np.flatnonzero(single)
    order = order[np.argsort(cost[order], kind="stable")]
    for stamp, k in enumerate(order.tolist(), start=1):
        if need == 0:
            break
        rows_k = cD.indices[cD.indptr[k]:cD.indptr[k + 1]].astype(np.int64)
        if _augment_from(np.int64(n_real + k), rows_k, tptr, tind, rm, cm, seen,
                         np.int64(stamp), parent, queue, dead, True):
            total += float(cost[k])
            need -= 1
    return total
