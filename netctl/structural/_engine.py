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
from netctl.graph.matching import extend_matching, maximum_matching, transpose_csr

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
    out_indptr: np.ndarray  # successors of each state (the transpose of A's CSR)
    out_indices: np.ndarray
    n_scc: int
    scc: np.ndarray  # component label of each state (ordered by smallest member)
    source_scc: np.ndarray  # bool per component: receives no edge from another component


def structure_of(A: sp.csr_array) -> Structure:
    """Out-adjacency, strongly connected components and source components of ``A``."""
    n = A.shape[0]
    indptr = np.ascontiguousarray(A.indptr, np.int64)
    indices = np.ascontiguousarray(A.indices, np.int64)
    out_ptr, out_ind = transpose_csr(indptr, indices, np.int64(n))
    k, labels = strongly_connected_components(indptr, indices)
    src = condensation_sources(indptr, indices, labels, k)
    return Structure(n=n, out_indptr=out_ptr, out_indices=out_ind, n_scc=k, scc=labels,
                     source_scc=src)


@dataclass(frozen=True)
class Completion:
    """The fewest dedicated inputs to add to ``(A, B)`` for structural controllability.

    ``states``: where to add them (sorted). ``unmatched``: the states left unmatched by
    the chosen maximum matching of ``[A B]`` (they need an input for the rank condition).
    ``representatives``: one state of each source component that is neither reached by
    an existing input nor holds an unmatched state. ``row_match``: the chosen matching
    (column of ``[A B]`` matched to each state, ``-1`` if none).
    """

    states: np.ndarray
    unmatched: np.ndarray
    representatives: np.ndarray
    matching_size: int
    n_unreached_sources: int
    n_sources_hit: int
    row_match: np.ndarray


def completion(A: sp.csr_array, B: sp.csr_array, st: Structure | None = None, *,
               prefer: np.ndarray | None = None) -> Completion:
    """Fewest dedicated inputs to add so that ``(A, [B, new])`` is structurally controllable.

    Count = ``m_u + beta - alpha`` (Commault & Dion 2013; Pequito, Kar & Aguiar 2016):
    ``m_u`` unmatched states of a maximum matching of ``[A B]``, ``beta`` source
    components of ``A`` that no existing input reaches, ``alpha`` the largest number of
    those that can hold an unmatched state at once, over all maximum matchings.

    ``alpha`` is found by giving every unreached source component an extra column
    adjacent to its states and extending the maximum matching with as many extra columns
    as possible (:func:`netctl.graph.matching.extend_matching`). Components that already
    hold an unmatched state start with their extra column matched to it; only the others
    are searched for, so the usual case costs nothing beyond the first matching.

    ``prefer`` (boolean per state, e.g. the node table's ``actuator`` column) decides the
    representative of a source component that still needs one: its smallest preferred
    state, else its smallest state. It does not change the count.
    """
    n = A.shape[0]
    st = st or structure_of(A)
    indptr, indices, n_cols = stack_AB(A, B)
    if B.shape[1] == 0:
        transpose = (st.out_indptr, st.out_indices)
    else:
        transpose = transpose_csr(indptr, indices, np.int64(n_cols))
    row_match, col_match = maximum_matching(indptr, indices, n_cols, transpose=transpose)
    matching_size = int(np.count_nonzero(row_match >= 0))
    # source components with no existing input on them are unreached (nothing feeds them)
    driven_comp = np.zeros(st.n_scc, bool)
    if B.nnz:
        driven_comp[st.scc[_rows_with_entries(B)]] = True
    unreached = np.flatnonzero(st.source_scc & ~driven_comp)
    n_unreached = int(unreached.size)
    free_rows = np.flatnonzero(row_match < 0)
    # an unreached source component already holding a free row: its extra column starts
    # matched to the smallest such row
    slot = np.full(st.n_scc, -1, np.int64)
    slot[unreached] = np.arange(n_unreached)
    x_match = np.full(n_unreached, -1, np.int64)
    fr_slot = slot[st.scc[free_rows]]
    keep = fr_slot >= 0
    # reversed assignment so that the smallest free row of each component wins
    x_match[fr_slot[keep][::-1]] = free_rows[keep][::-1]
    if np.any(x_match == -1):
        rm_ext = row_match.copy()
        rm_ext[x_match[x_match >= 0]] = n_cols + np.flatnonzero(x_match >= 0)
        members = np.flatnonzero(slot[st.scc] >= 0)
        order = np.argsort(slot[st.scc[members]], kind="stable")
        members = members[order]
        xptr = np.zeros(n_unreached + 1, np.int64)
        np.cumsum(np.bincount(slot[st.scc[members]], minlength=n_unreached), out=xptr[1:])
        rm_ext, col_match, x_match = extend_matching(transpose, n_cols, rm_ext, col_match,
                                                     (xptr, members), x_match)
        real = (rm_ext >= 0) & (rm_ext < n_cols)
        row_match = np.where(real, rm_ext, -1)
    unmatched = np.flatnonzero(row_match < 0)
    missed = unreached[x_match == -1]
    # representative: the smallest state of each missed source component
    if missed.size:
        idx = np.flatnonzero(np.isin(st.scc, missed))
        if prefer is not None:
            # preferred states first, each group in state order (stable sort)
            idx = idx[np.argsort(~np.asarray(prefer, bool)[idx], kind="stable")]
        _, first = np.unique(st.scc[idx], return_index=True)
        reps = np.sort(idx[first])
    else:
        reps = np.zeros(0, np.int64)
    states = np.union1d(unmatched, reps).astype(np.int64)
    return Completion(states=states, unmatched=unmatched.astype(np.int64),
                      representatives=reps.astype(np.int64), matching_size=matching_size,
                      n_unreached_sources=n_unreached,
                      n_sources_hit=n_unreached - int(missed.size), row_match=row_match)


def accessible_states(st: Structure, B: sp.csr_array) -> np.ndarray:
    """Boolean mask of the states reachable from some input."""
    driven = _rows_with_entries(B)
    return reachable_from(st.out_indptr, st.out_indices, driven)


def _rows_with_entries(M: sp.csr_array) -> np.ndarray:
    """Indices of the rows of a CSR matrix that hold at least one entry."""
    return np.flatnonzero(np.diff(M.indptr)).astype(np.int64)
