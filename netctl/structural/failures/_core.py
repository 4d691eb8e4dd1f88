"""Shared index-array building blocks of the failure analyses (private).

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``; ``B[i, k] != 0``: input ``k`` acts on
state ``i`` (see :mod:`netctl`). A *design* is the set of input columns of ``B``; its
elements fail one at a time (or ``k`` at a time) by losing their column.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from netctl.graph.components import (
    condensation_sources,
    reachable_from,
    strongly_connected_components,
)
from netctl.graph.dm import alternating_reach_rows
from netctl.graph.dominators import input_dominators
from netctl.graph.matching import maximum_matching, transpose_csr
from netctl.structural._engine import stack_AB

if TYPE_CHECKING:  # imported where used (a small audit needs no scipy)
    import scipy.sparse as sp

__all__ = ["DesignFacts", "design_facts", "is_controlling", "source_components",
           "dedicated_B", "free_rows_after_loss", "rank_after", "Check"]


def dedicated_B(n: int, states: np.ndarray, kept: sp.csr_array | None = None
                ) -> sp.csr_array:
    """``n x len(states)`` input matrix, one dedicated input per listed state; with
    ``kept`` (``n x m``), its columns first and the dedicated ones after them. CSR with
    sorted int64 index arrays."""
    import scipy.sparse as sp

    states = np.asarray(states, np.int64)
    B = sp.csr_array((np.ones(states.size), (states, np.arange(states.size))),
                     shape=(n, states.size))
    if kept is not None and kept.shape[1]:
        B = sp.csr_array(sp.hstack([kept, B], format="csr"))
    B.sum_duplicates()
    B.sort_indices()
    B.indptr = B.indptr.astype(np.int64)
    B.indices = B.indices.astype(np.int64)
    return B


def source_components(A: sp.csr_array) -> tuple[np.ndarray, np.ndarray]:
    """``(comp_ptr, members)``: the source strongly connected components of ``A`` in CSR
    form (sorted members, components in order of their smallest state)."""
    indptr = np.ascontiguousarray(A.indptr, np.int64)
    indices = np.ascontiguousarray(A.indices, np.int64)
    n = indptr.size - 1
    if n == 0:
        return np.zeros(1, np.int64), np.zeros(0, np.int64)
    k, labels = strongly_connected_components(indptr, indices)
    src = condensation_sources(indptr, indices, labels, k)
    ids = np.flatnonzero(src)
    slot = np.full(k, -1, np.int64)
    slot[ids] = np.arange(ids.size)
    s = slot[labels]
    members = np.flatnonzero(s >= 0)
    order = np.argsort(s[members], kind="stable")
    members = members[order].astype(np.int64)
    ptr = np.zeros(ids.size + 1, np.int64)
    np.cumsum(np.bincount(s[s >= 0], minlength=ids.size), out=ptr[1:])
    return ptr, members


@dataclass(frozen=True)
class Check:
    """Lin's two conditions for one design: rank of ``[A B]`` and input reach."""

    rank: int
    n: int
    unreached: np.ndarray  # states no input reaches (sorted)

    @property
    def ok(self) -> bool:
        return self.rank == self.n and self.unreached.size == 0


def is_controlling(A: sp.csr_array, B: sp.csr_array,
                   out: tuple[np.ndarray, np.ndarray] | None = None) -> Check:
    """Lin's test on index arrays (one matching, one breadth-first search)."""
    n = A.shape[0]
    ptr, ind, n_cols = stack_AB(A, B)
    rm, _ = maximum_matching(np.ascontiguousarray(ptr, np.int64),
                             np.ascontiguousarray(ind, np.int64), n_cols)
    if out is None:
        out = transpose_csr(np.ascontiguousarray(A.indptr, np.int64),
                            np.ascontiguousarray(A.indices, np.int64), np.int64(n))
    driven = np.flatnonzero(np.diff(B.indptr)).astype(np.int64)
    reach = reachable_from(out[0], out[1], driven) if n else np.zeros(0, bool)
    return Check(rank=int(np.count_nonzero(rm >= 0)), n=n,
                 unreached=np.flatnonzero(~reach).astype(np.int64))


def rank_after(A: sp.csr_array, B: sp.csr_array) -> int:
    """Generic rank of ``[A B]`` (size of a maximum matching)."""
    ptr, ind, n_cols = stack_AB(A, B)
    rm, _ = maximum_matching(np.ascontiguousarray(ptr, np.int64),
                             np.ascontiguousarray(ind, np.int64), n_cols)
    return int(np.count_nonzero(rm >= 0))


@dataclass(frozen=True)
class DesignFacts:
    """One maximum matching of ``[A B]`` and the input-dominator tree of a design."""

    n: int
    m: int
    ab_indptr: np.ndarray
    ab_indices: np.ndarray
    row_match: np.ndarray
    col_match: np.ndarray
    rank: int
    unreached: np.ndarray  # states no input reaches
    rank_lost: np.ndarray  # bool per input: its loss lowers the generic rank
    cut_off: np.ndarray  # int per input: states only it reaches (dominator subtree)
    dom_pre: np.ndarray
    dom_size: np.ndarray
    dom_order: np.ndarray

    @property
    def controllable(self) -> bool:
        return self.rank == self.n and self.unreached.size == 0

    def cut_states(self, k: int) -> np.ndarray:
        """Sorted states that no input but ``k`` reaches."""
        v = self.n + k
        if self.dom_pre[v] < 0:
            return np.zeros(0, np.int64)
        lo = int(self.dom_pre[v])
        inside = self.dom_order[lo:lo + int(self.dom_size[v])]
        return np.sort(inside[inside < self.n])

    def rivals(self, k: int) -> np.ndarray:
        """When losing input ``k`` lowers the rank: the states that then compete for too
        few feeders (rows an alternating search from the freed row reaches; one of them
        must be driven anew). Empty when the rank is kept."""
        if not self.rank_lost[k]:
            return np.zeros(0, np.int64)
        col = self.n + k
        row = int(self.col_match[col])
        row_seen, _ = alternating_reach_rows(self.ab_indptr, self.ab_indices, self.n + self.m,
                                             self.col_match, np.array([row], np.int64),
                                             banned=col)
        return np.flatnonzero(row_seen).astype(np.int64)


def design_facts(A: sp.csr_array, B: sp.csr_array) -> DesignFacts:
    """Matching of ``[A B]``, input dominators; near-linear in the number of links.

    The loss of input column ``k`` lowers the generic rank iff every maximum matching
    of ``[A B]`` covers column ``k`` (it is then not reachable by an alternating path
    from an unmatched column). The states it alone reaches form the subtree of input
    node ``k`` in the dominator tree of the flow graph root -> inputs -> states.
    """
    n, m = A.shape[0], B.shape[1]
    ptr, ind, n_cols = stack_AB(A, B)
    ptr = np.ascontiguousarray(ptr, np.int64)
    ind = np.ascontiguousarray(ind, np.int64)
    rm, cm = maximum_matching(ptr, ind, n_cols)
    rank = int(np.count_nonzero(rm >= 0))
    # columns some maximum matching leaves unmatched: alternating search from the
    # unmatched columns over the transpose
    tptr, tind = transpose_csr(ptr, ind, np.int64(n_cols))
    col_free = np.zeros(n_cols, np.bool_)
    starts = np.flatnonzero(cm < 0)
    if starts.size:
        col_free, _ = alternating_reach_rows(tptr, tind, n, rm, starts)
    rank_lost = (~col_free[n:]) & (cm[n:] >= 0) if rank == n else np.zeros(m, bool)
    # flow graph: states 0..n-1, input nodes n..n+m-1; in-lists are the rows of [A B]
    N = n + m
    in_ptr = np.concatenate([ptr, np.full(m, ptr[-1], np.int64)])
    out_ptr, out_ind = transpose_csr(in_ptr, ind, np.int64(N))
    driven = np.zeros(N, np.bool_)
    driven[n:] = True
    idom, pre, size = input_dominators(out_ptr, out_ind, in_ptr, ind, driven)
    reach = idom[:n] >= 0
    cut = np.where(pre[n:N] >= 0, size[n:N] - 1, 0).astype(np.int64)
    live = np.flatnonzero(pre >= 0)
    order = np.full(N + 1, N, np.int64)
    order[pre[live]] = live
    return DesignFacts(n=n, m=m, ab_indptr=ptr, ab_indices=ind, row_match=rm, col_match=cm,
                       rank=rank, unreached=np.flatnonzero(~reach).astype(np.int64),
                       rank_lost=np.asarray(rank_lost, bool), cut_off=cut, dom_pre=pre,
                       dom_size=size, dom_order=order)


def free_rows_after_loss(facts: DesignFacts, k: int) -> np.ndarray | None:
    """Rows a maximum matching of ``[A B]`` without input ``k`` may leave unmatched, when
    losing ``k`` lowers the rank (a new dedicated input at any of them restores it);
    ``None`` when the rank is kept."""
    if not facts.rank_lost[k]:
        return None
    return facts.rivals(k)
