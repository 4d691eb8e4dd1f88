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

__all__ = ["Structure", "structure_of", "completion", "Completion", "stack_AB",
           "unreached_sources", "accessible_states"]


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


def unreached_sources(A: sp.csr_array, out: tuple[np.ndarray, np.ndarray],
                      driven: np.ndarray) -> tuple[int, np.ndarray, np.ndarray]:
    """Source components of ``A`` that no driven state reaches, without a full SCC pass.

    Returns ``(n_trivial, comp_ptr, members)``: ``n_trivial`` undriven states with no
    in-link at all (each its own source component, always unmatched), and the other
    unreached source components in CSR form (component ``k`` is
    ``members[comp_ptr[k]:comp_ptr[k+1]]``, states sorted, components in order of their
    smallest state).

    Every other unreached source lies in ``W``, the states reached neither from a driven
    state nor from an in-degree-zero state; ``W`` has no in-link from outside, so its
    source components are sources of ``A``. Strongly connected components are computed
    on ``W`` only, which is empty or small in most sparse networks.
    """
    n = A.shape[0]
    empty_rows = np.diff(A.indptr) == 0
    is_driven = np.zeros(n, bool)
    is_driven[driven] = True
    trivial = np.flatnonzero(empty_rows & ~is_driven)
    seeds = np.concatenate([trivial, np.flatnonzero(is_driven)]).astype(np.int64)
    reach = reachable_from(out[0], out[1], seeds)
    W = np.flatnonzero(~reach)
    if W.size == 0:
        return int(trivial.size), np.zeros(1, np.int64), np.zeros(0, np.int64)
    indptr = np.ascontiguousarray(A.indptr, np.int64)
    indices = np.ascontiguousarray(A.indices, np.int64)
    k, labels = strongly_connected_components(indptr, indices, mask=~reach)
    src = condensation_sources(indptr, indices, labels, k)
    src_ids = np.flatnonzero(src)  # labels are in order of smallest member
    slot = np.full(k, -1, np.int64)
    slot[src_ids] = np.arange(src_ids.size)
    lab_w = labels[W]
    local = np.flatnonzero(slot[lab_w] >= 0)
    order = np.argsort(slot[lab_w[local]], kind="stable")
    members = W[local[order]].astype(np.int64)
    ptr = np.zeros(src_ids.size + 1, np.int64)
    np.cumsum(np.bincount(slot[lab_w[local]], minlength=src_ids.size), out=ptr[1:])
    return int(trivial.size), ptr, members


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
    hold an unmatched state start with their extra column matched to it (states with no
    in-link always do); only the others are searched for, so the usual case costs nothing
    beyond the first matching. The unreached source components come from
    :func:`unreached_sources` (one breadth-first search, components only where needed).

    ``prefer`` (boolean per state, e.g. the node table's ``actuator`` column) decides the
    representative of a source component that still needs one: its smallest preferred
    state, else its smallest state. It does not change the count.
    """
    n = A.shape[0]
    if st is not None:
        out = (st.out_indptr, st.out_indices)
    else:
        out = transpose_csr(np.ascontiguousarray(A.indptr, np.int64),
                            np.ascontiguousarray(A.indices, np.int64), np.int64(n))
    indptr, indices, n_cols = stack_AB(A, B)
    transpose = out if B.shape[1] == 0 else transpose_csr(indptr, indices, np.int64(n_cols))
    row_match, col_match = maximum_matching(indptr, indices, n_cols, transpose=transpose)
    matching_size = int(np.count_nonzero(row_match >= 0))
    n_trivial, cptr, members = unreached_sources(A, out, _rows_with_entries(B))
    n_comp = cptr.size - 1
    comp_of = np.full(n, -1, np.int64)
    comp_of[members] = np.repeat(np.arange(n_comp, dtype=np.int64), np.diff(cptr))
    free_rows = np.flatnonzero(row_match < 0)
    # a component already holding a free row starts with its extra column matched to the
    # smallest such row (reversed assignment: the smallest index is written last)
    x_match = np.full(n_comp, -1, np.int64)
    fr_comp = comp_of[free_rows]
    keep = fr_comp >= 0
    x_match[fr_comp[keep][::-1]] = free_rows[keep][::-1]
    if np.any(x_match == -1):
        # row_match and col_match are ours (fresh from the matching): extend in place;
        # rows matched to an extra column are then marked unmatched again
        row_match[x_match[x_match >= 0]] = n_cols + np.flatnonzero(x_match >= 0)
        extend_matching(transpose, n_cols, row_match, col_match, (cptr, members), x_match,
                        inplace=True)
        row_match[row_match >= n_cols] = -1
    unmatched = np.flatnonzero(row_match < 0)
    missed = np.flatnonzero(x_match == -1)
    reps = np.empty(missed.size, np.int64)
    pref = None if prefer is None else np.asarray(prefer, bool)
    for j, c in enumerate(missed.tolist()):  # one per missed component (few)
        group = members[cptr[c]:cptr[c + 1]]
        if pref is not None and pref[group].any():
            group = group[pref[group]]
        reps[j] = group[0]
    reps = np.sort(reps)
    states = np.union1d(unmatched, reps).astype(np.int64)
    n_unreached = n_trivial + n_comp
    return Completion(states=states, unmatched=unmatched.astype(np.int64),
                      representatives=reps, matching_size=matching_size,
                      n_unreached_sources=n_unreached,
                      n_sources_hit=n_unreached - int(missed.size), row_match=row_match)


def accessible_states(st: Structure, B: sp.csr_array) -> np.ndarray:
    """Boolean mask of the states reachable from some input."""
    driven = _rows_with_entries(B)
    return reachable_from(st.out_indptr, st.out_indices, driven)


def _rows_with_entries(M: sp.csr_array) -> np.ndarray:
    """Indices of the rows of a CSR matrix that hold at least one entry."""
    return np.flatnonzero(np.diff(M.indptr)).astype(np.int64)
