"""The reduced placement problem shared by every solver: the rows where choices matter,
the source components no existing input reaches, why no design may exist, and the
outcome a solver hands back.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; ``[A B]`` has one row per state and one
column per state and per input. See :func:`netctl.structural.placement.place_inputs`
(Notes) for why the over-determined Dulmage--Mendelsohn block ``D`` is all that matters.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from netctl._csr import Pattern, coo_pattern, transpose_pattern
from netctl.graph.dm import alternating_reach_rows
from netctl.graph.matching import maximum_matching
from netctl.records import Candidates
from netctl.structural._engine import Structure, stack_AB
from netctl.system import StructuredSystem

__all__ = [
    "Outcome",
    "Reduced",
    "gain_per_cost",
    "gather_ranges",
    "infeasibility",
    "reduce_problem",
]

_MAX_LISTED = 20  # infeasible source components spelled out one by one


# ====================================================================== solver outcome
@dataclass
class Outcome:
    """What a solver found, before the shared finishing step checks and reports it.

    ``lower_bound`` bounds the minimum cost (cost problems), ``upper_bound`` the best
    achievable dimension (best effort); ``inaccessible`` (optional) lists the states the
    solver proved no eligible site reaches.
    """

    problem: str
    method: str
    feasible: bool
    best_effort: bool
    chosen: np.ndarray
    cost: float
    lower_bound: float | None
    upper_bound: float | None
    dimension: int | None
    reasons: list[str]
    guarantee: str
    inaccessible: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))


# ====================================================================== reduced problem
@dataclass
class Reduced:
    """The part of the problem where choices matter (see place_inputs Notes)."""

    n: int
    D: np.ndarray               # rows (states) some maximum matching of [A B] leaves unmatched
    deficiency: int             # n - term rank [A B]
    sub_indptr: np.ndarray      # CSR of D rows over the local real columns
    sub_indices: np.ndarray
    n_real: int                 # local real columns (in-neighbours of D in [A B])
    unreached: np.ndarray       # labels of source components no existing input reaches
    comp_slot: np.ndarray       # per component: slot in `unreached`, or -1
    scc: np.ndarray
    cand_D: Pattern             # K x |D| incidence (candidate acts on D row)
    cand_comp: Pattern          # K x len(unreached) incidence (all values 1)
    useful: np.ndarray          # bool per candidate: touches D or an unreached source

    def milp_size(self) -> int:
        return int(self.sub_indices.size + self.cand_D.nnz + self.useful.sum())


def reduce_problem(A: Pattern, B: Pattern, st: Structure, cands: Candidates) -> Reduced:
    """The reduced problem of ``(A, B)`` (a system's stored patterns) for ``cands``."""
    n = A.shape[0]
    indptr, indices, n_cols = stack_AB(A, B)
    row_match, col_match = maximum_matching(indptr, indices, n_cols)
    deficiency = int(np.count_nonzero(row_match < 0))
    if deficiency:
        D_mask, col_mask = alternating_reach_rows(indptr, indices, n_cols, col_match)
    else:
        D_mask, col_mask = np.zeros(n, bool), np.zeros(n_cols, bool)
    D = np.flatnonzero(D_mask).astype(np.int64)
    col_local = np.full(n_cols, -1, np.int64)
    col_local[col_mask] = np.arange(int(col_mask.sum()))
    lens = np.diff(indptr)[D]
    sub_indptr = np.zeros(D.size + 1, np.int64)
    np.cumsum(lens, out=sub_indptr[1:])
    take = gather_ranges(indptr, D)
    sub_indices = col_local[indices[take]]
    # source components that no existing input reaches
    driven = np.zeros(st.n_scc, bool)
    if B.nnz:
        driven[st.scc[np.flatnonzero(np.diff(B.indptr))]] = True
    unreached = np.flatnonzero(st.source_scc & ~driven).astype(np.int64)
    comp_slot = np.full(st.n_scc, -1, np.int64)
    comp_slot[unreached] = np.arange(unreached.size)
    K = cands.n_candidates
    krow = np.repeat(np.arange(K, dtype=np.int64), np.diff(cands.indptr))
    d_local = np.full(n, -1, np.int64)
    d_local[D] = np.arange(D.size)
    loc = d_local[cands.indices]
    keep = loc >= 0
    cand_D = coo_pattern(krow[keep], loc[keep], None, (K, D.size), count=False)[0]
    slot = comp_slot[st.scc[cands.indices]]
    keep = slot >= 0
    cc = coo_pattern(krow[keep], slot[keep], None, (K, unreached.size), count=False)[0]
    cc = Pattern(np.ones(cc.nnz), cc.indices, cc.indptr, cc.shape).frozen()
    useful = (np.diff(cand_D.indptr) > 0) | (np.diff(cc.indptr) > 0)
    return Reduced(n=n, D=D, deficiency=deficiency, sub_indptr=sub_indptr,
                    sub_indices=sub_indices, n_real=int(col_mask.sum()), unreached=unreached,
                    comp_slot=comp_slot, scc=st.scc, cand_D=cand_D, cand_comp=cc,
                    useful=useful)


def gather_ranges(indptr: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """Concatenated positions ``indptr[r]:indptr[r+1]`` for the given rows (vectorized)."""
    starts = indptr[rows]
    lens = indptr[rows + 1] - starts
    total = int(lens.sum())
    if total == 0:
        return np.zeros(0, np.int64)
    offs = np.repeat(starts - np.concatenate([[0], np.cumsum(lens)[:-1]]), lens)
    return np.arange(total, dtype=np.int64) + offs


# ====================================================================== infeasibility
def infeasibility(work: StructuredSystem, prob: Reduced, cands: Candidates) -> list[str]:
    """Reasons (naming states) why no design within the candidates works."""
    names = work.state_names
    reasons: list[str] = []
    word = "site" if cands.dedicated else "candidate actuator"
    # accessibility: an unreached source component no candidate touches
    touched = np.bincount(prob.cand_comp.indices, minlength=prob.cand_comp.shape[1]) > 0
    bad_slots = np.flatnonzero(~touched)
    named = np.zeros(prob.n, bool)
    if bad_slots.size:
        bad_comp = np.zeros(prob.scc.max(initial=-1) + 1, bool)
        bad_comp[prob.unreached[bad_slots]] = True
        named = bad_comp[prob.scc]
        states = np.flatnonzero(named)
        groups = np.split(states[np.argsort(prob.scc[states], kind="stable")],
                          np.flatnonzero(np.diff(np.sort(prob.scc[states])))+1)
        for members in groups[:_MAX_LISTED]:
            reasons.append(
                f"no eligible {word} {'is in' if cands.dedicated else 'acts on'} the source "
                f"component {{{_short([names[i] for i in members])}}}: nothing else influences "
                f"these states, so an actuator must act on one of them; "
                + ("make one of them eligible." if cands.dedicated else
                   "add a candidate actuator acting on one of them."))
        if len(groups) > _MAX_LISTED:
            reasons.append(f"... and {len(groups) - _MAX_LISTED} more source component(s) "
                           f"with no eligible {word} ({len(groups)} in all; the JSON "
                           "'inaccessible' list names every state no input reaches).")
    # rank: the D rows must be matchable into real columns plus all candidates
    if prob.deficiency:
        cD = transpose_pattern(prob.cand_D)  # row r lists candidates acting on D row r
        ind, ptr = _augment_rows(prob.sub_indptr, prob.sub_indices, cD.indptr, cD.indices,
                                 prob.n_real)
        n_cols = prob.n_real + cands.n_candidates
        rm, cm = maximum_matching(ptr, ind, n_cols)
        if np.any(rm < 0) and not np.all(named[prob.D[rm < 0]]):
            rows, cols = alternating_reach_rows(ptr, ind, n_cols, cm)
            S = prob.D[np.flatnonzero(rows)]
            cl = np.flatnonzero(cols)
            n_cand = int(np.count_nonzero(cl >= prob.n_real))
            short = int(np.count_nonzero(rm < 0))
            reasons.append(
                f"dilation no eligible {word} can fix: the {S.size} state(s) "
                f"{{{_short([names[i] for i in S])}}} are influenced by only "
                f"{cl.size - n_cand} state(s)/existing input(s) and {n_cand} eligible "
                f"{word}(s) acting on them; {short} more independent "
                f"{'eligible site(s) among these states' if cands.dedicated else 'actuator(s) acting on these states'}"
                f" are needed.")
    return reasons


def _augment_rows(indptr: np.ndarray, indices: np.ndarray, ex_ptr: np.ndarray,
                  ex_ind: np.ndarray, offset: int) -> tuple[np.ndarray, np.ndarray]:
    """CSR rows = ``indices`` rows followed by ``ex_ind + offset`` (per row, vectorized)."""
    n = indptr.size - 1
    la, lb = np.diff(indptr), np.diff(ex_ptr)
    ptr = np.zeros(n + 1, np.int64)
    np.cumsum(la + lb, out=ptr[1:])
    out = np.empty(int(ptr[-1]), np.int64)
    rows_a = np.repeat(np.arange(n), la)
    pos_a = ptr[rows_a] + (np.arange(indices.size) - indptr[rows_a])
    out[pos_a] = indices
    rows_b = np.repeat(np.arange(n), lb)
    pos_b = ptr[rows_b] + la[rows_b] + (np.arange(ex_ind.size) - ex_ptr[rows_b])
    out[pos_b] = ex_ind.astype(np.int64) + offset
    return out, ptr


def _short(names: list[str], limit: int = 8) -> str:
    if len(names) <= limit:
        return ", ".join(names)
    return ", ".join(names[:limit]) + f", ... ({len(names) - limit} more)"


def gain_per_cost(gain: float, c: float) -> float:
    return float("inf") if c <= 0 else gain / c
