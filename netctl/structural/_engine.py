"""Shared structural building blocks on index arrays (private).

Everything here works on the canonical CSR arrays of a :class:`StructuredSystem`; the
public analyses attach names at their result boundary.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from netctl.graph.components import (
    condensation_sources,
    reachable_from,
    strongly_connected_components,
)
from netctl.graph.matching import maximum_matching

__all__ = ["Structure", "structure_of", "completion", "Completion", "stack_AB"]


def stack_AB(A: sp.csr_array, B: sp.csr_array) -> tuple[np.ndarray, np.ndarray, int]:
    """CSR index arrays of the pattern ``[A B]``: rows are states, columns are the ``n``
    states followed by the ``m`` inputs."""
    n, m = A.shape[0], B.shape[1]
    if m == 0:
        return A.indptr, A.indices, n
    AB = sp.hstack([A, B], format="csr")
    AB.sort_indices()
    return AB.indptr.astype(np.int64), AB.indices.astype(np.int64), n + m


@dataclass(frozen=True)
class Structure:
    """Graph facts of ``A`` that several analyses need, computed once."""

    n: int
    out_indptr: np.ndarray  # successors of each state
    out_indices: np.ndarray
    n_scc: int
    scc: np.ndarray  # component label of each state (ordered by smallest member)
    source_scc: np.ndarray  # bool per component: receives no edge from another component


def structure_of(A: sp.csr_array) -> Structure:
    """Out-adjacency, strongly connected components and source components of ``A``."""
    n = A.shape[0]
    At = A.T.tocsr()
    At.sort_indices()
    k, labels = strongly_connected_components(A.indptr, A.indices)
    src = condensation_sources(A.indptr, A.indices, labels, k)
    return Structure(n=n, out_indptr=At.indptr.astype(np.int64),
                     out_indices=At.indices.astype(np.int64), n_scc=k, scc=labels,
                     source_scc=src)


@dataclass(frozen=True)
class Completion:
    """The fewest dedicated inputs to add to ``(A, B)`` for structural controllability.

    ``states``: where to add them (sorted). ``unmatched``: the states left unmatched by
    the chosen maximum matching of ``[A B]`` (they need an input for the rank condition).
    ``representatives``: one state of each source component that is neither reached by
    an existing input nor holds an unmatched state. ``row_match``: the chosen matching.
    """

    states: np.ndarray
    unmatched: np.ndarray
    representatives: np.ndarray
    matching_size: int
    n_unreached_sources: int
    n_sources_hit: int
    row_match: np.ndarray


def completion(A: sp.csr_array, B: sp.csr_array, st: Structure | None = None) -> Completion:
    """Fewest dedicated inputs to add so that ``(A, [B, new])`` is structurally controllable.

    Count = ``m_u + beta - alpha`` (Commault & Dion 2013; Pequito, Kar & Aguiar 2016):
    ``m_u`` unmatched states of a maximum matching of ``[A B]``, ``beta`` source
    components of ``A`` that no existing input reaches, ``alpha`` the largest number of
    those that can hold an unmatched state at once. ``alpha`` comes from one more
    matching: a slack column per unreached source component joined to its states, with
    the maximum matching of ``[A B]`` as the warm start. Augmenting paths never unmatch
    a vertex, so the real part stays maximum and the slack part is as large as it can be.
    """
    n = A.shape[0]
    st = st or structure_of(A)
    indptr, indices, n_cols = stack_AB(A, B)
    row_match, col_match = maximum_matching(indptr, indices, n_cols)
    matching_size = int(np.count_nonzero(row_match >= 0))
    # source components with no existing input on them are unreached (nothing feeds them)
    driven_comp = np.zeros(st.n_scc, bool)
    if B.nnz:
        driven_comp[st.scc[_rows_with_entries(B)]] = True
    unreached = np.flatnonzero(st.source_scc & ~driven_comp)
    n_unreached = int(unreached.size)
    if n_unreached:
        # slack column s_k (index n_cols + k) adjacent to every state of unreached source k
        slot = np.full(st.n_scc, -1, np.int64)
        slot[unreached] = np.arange(n_unreached)
        rows_slack = np.flatnonzero(slot[st.scc] >= 0)
        slack_col = n_cols + slot[st.scc[rows_slack]]
        counts = np.diff(indptr).copy()
        counts[rows_slack] += 1
        new_ptr = np.zeros(n + 1, np.int64)
        np.cumsum(counts, out=new_ptr[1:])
        new_ind = np.empty(new_ptr[-1], np.int64)
        # real neighbours first, then the slack column (rows have at most one slack)
        pos = new_ptr[:-1].copy()
        lens = np.diff(indptr)
        dest = np.repeat(pos, lens) + (np.arange(indices.size) - np.repeat(indptr[:-1], lens))
        new_ind[dest] = indices
        new_ind[new_ptr[rows_slack + 1] - 1] = slack_col
        cm0 = np.concatenate([col_match, np.full(n_unreached, -1, np.int64)])
        row_match, col_match = maximum_matching(new_ptr, new_ind, n_cols + n_unreached,
                                                row_match=row_match, col_match=cm0)
    real = (row_match >= 0) & (row_match < n_cols)
    unmatched = np.flatnonzero(~real)
    hit = np.zeros(st.n_scc, bool)
    hit[st.scc[unmatched]] = True
    missed = unreached[~hit[unreached]]
    # representative: the smallest state of each missed source component
    first = np.full(st.n_scc, n, np.int64)
    np.minimum.at(first, st.scc, np.arange(n, dtype=np.int64))
    reps = np.sort(first[missed])
    states = np.union1d(unmatched, reps).astype(np.int64)
    return Completion(states=states, unmatched=unmatched.astype(np.int64),
                      representatives=reps.astype(np.int64), matching_size=matching_size,
                      n_unreached_sources=n_unreached,
                      n_sources_hit=n_unreached - int(missed.size),
                      row_match=np.where(real, row_match, -1))


def accessible_states(st: Structure, B: sp.csr_array) -> np.ndarray:
    """Boolean mask of the states reachable from some input."""
    driven = _rows_with_entries(B)
    return reachable_from(st.out_indptr, st.out_indices, driven)


def _rows_with_entries(M: sp.csr_array) -> np.ndarray:
    """Indices of the rows of a CSR matrix that hold at least one entry."""
    return np.flatnonzero(np.diff(M.indptr)).astype(np.int64)
