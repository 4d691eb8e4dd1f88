"""Shared structural building blocks on index arrays (private).

Everything here works on the canonical CSR arrays of a :class:`StructuredSystem`; the
public analyses attach names at their result boundary.
"""

from __future__ import annotations

from collections.abc import Mapping
from concurrent.futures import ThreadPoolExecutor
import functools
from dataclasses import dataclass, field

from typing import TYPE_CHECKING

import numpy as np
from netctl._jit import njit
from netctl.errors import OptionError

if TYPE_CHECKING:
    import scipy.sparse as sp

from netctl.graph.components import (
    condensation_sources,
    induced_subgraph,
    reachable_from,
    strongly_connected_components,
)
from netctl.graph.matching import index_dtype, matching_work, transpose_index

__all__ = ["Structure", "structure_of", "completion", "Completion", "stack_AB",
           "unreached_sources", "accessible_states", "union_sorted", "site_preference",
           "site_tiers", "sites_to_avoid"]


def sites_to_avoid(nodes: Mapping[str, np.ndarray], *, actuators: bool) -> np.ndarray | None:
    """``avoid`` of :func:`completion`: the states the node table's ``actuator``
    (``sensor``) column marks false, or None when the column is absent, not boolean, or
    false nowhere (then the matching, and every result, is as without it)."""
    eligible = nodes.get("actuator" if actuators else "sensor")
    if eligible is None or np.asarray(eligible).dtype != bool:
        return None
    barred = ~np.asarray(eligible, bool)
    return barred if barred.any() else None


def site_preference(nodes: Mapping[str, np.ndarray], model: str, *, actuators: bool
                    ) -> np.ndarray | None:
    """``prefer`` of :func:`completion`: where a source component's representative goes.

    The node table's ``actuator`` (``sensor``) column when it names at least one site.
    For actuators in a second-order model (node table column ``part``), an input acts on
    a velocity (a grid's frequency) state, never on a position (angle): levels 3/1/0 =
    an eligible velocity state, another velocity state, a position state, so a position
    is chosen only where the component holds no velocity state (never in the swing
    model, where each position is fed by its own velocity). DESIGN.md, models.
    """
    eligible = nodes.get("actuator" if actuators else "sensor")
    prefer: np.ndarray | None = None
    if eligible is not None and eligible.dtype == bool and eligible.any():
        prefer = eligible
    part = nodes.get("part")
    if actuators and part is not None and model.startswith("second-order"):
        vel = np.asarray(part, dtype=object) == "vel"
        prefer = vel.astype(np.int8) + (2 * prefer.astype(np.int8) if prefer is not None
                                        else 0)
    return prefer


def site_tiers(nodes: Mapping[str, np.ndarray], model: str, n: int,
               sites: object = "node table") -> list[tuple[str, np.ndarray | None]]:
    """Sets of states an actuator search may use, most preferred first, each with a
    sentence naming it (``[("", None)]``: every state).

    ``sites="node table"``: the states :func:`site_preference` ranks highest and the node
    table allows: the ``actuator`` column's sites (a state marked false never; a column
    marking none allows none), and in a second-order model only velocity (frequency)
    states, never a position (angle). ``"any"``: every state. A boolean array of shape
    ``(n,)``: exactly those states (a user's own site list overrides the node table).
    """
    if not isinstance(sites, str):
        mask = np.asarray(sites)
        if mask.dtype != bool or mask.shape != (n,):
            raise OptionError(f"sites must be a boolean array of shape ({n},), found dtype "
                              f"{mask.dtype} and shape {mask.shape}; or 'node table' / "
                              "'any'.")
        return [("the states given", mask)]
    if sites == "any":
        return [("", None)]
    if sites != "node table":
        raise OptionError(f"sites must be 'node table', 'any' or a boolean array over the "
                          f"states, found {sites!r}.")
    pref = site_preference(nodes, model, actuators=True)
    col = nodes.get("actuator")
    has_col = col is not None and col.dtype == bool and col.size == n
    if pref is None:
        if has_col:  # a column marking no state at all: nowhere, not everywhere
            return [("states with an actuator site (node table column 'actuator': none)",
                     np.zeros(n, bool))]
        return [("", None)]
    if pref.dtype == bool:
        return [("states with an actuator site (node table column 'actuator')", pref)]
    # second-order: 3 = velocity with a site, 1 = other velocity, 0 = position
    if has_col:
        return [("frequency (velocity) states with an actuator site (node table column "
                 "'actuator'); never an angle (position)", pref >= 3)]
    return [("frequency (velocity) states; never an angle (position)", pref >= 1)]


def stack_AB(A: sp.csr_array, B: sp.csr_array) -> tuple[np.ndarray, np.ndarray, int]:
    """CSR index arrays (int64) of the pattern ``[A B]``: rows are states, columns are the
    ``n`` states followed by the ``m`` inputs; column indices sorted."""
    n, m = A.shape[0], B.shape[1]
    if m == 0:
        return A.indptr, A.indices, n
    if A.has_sorted_indices and B.has_sorted_indices:
        # each row: A's columns, then B's shifted by n (sorted when both are); one pass,
        # where scipy's general hstack took seconds at 10^7 entries
        return (*_hstack_rows(np.ascontiguousarray(A.indptr, np.int64),
                              np.ascontiguousarray(A.indices, np.int64),
                              np.ascontiguousarray(B.indptr, np.int64),
                              np.ascontiguousarray(B.indices, np.int64), np.int64(n)), n + m)
    import scipy.sparse as sp

    AB = sp.hstack([A, B], format="csr")
    AB.sort_indices()
    return AB.indptr.astype(np.int64), AB.indices.astype(np.int64), n + m


@njit(cache=True, nogil=True)
def _hstack_rows(a_ptr, a_ind, b_ptr, b_ind, n):  # pragma: no cover - compiled
    rows = a_ptr.size - 1
    ptr = a_ptr + b_ptr
    ind = np.empty(ptr[rows], np.int64)
    for r in range(rows):
        k = ptr[r]
        for e in range(a_ptr[r], a_ptr[r + 1]):
            ind[k] = a_ind[e]
            k += 1
        for e in range(b_ptr[r], b_ptr[r + 1]):
            ind[k] = b_ind[e] + n
            k += 1
    return ptr, ind


@dataclass(frozen=True)
class Structure:
    """Graph facts of ``A`` that several analyses need, computed once.

    The out-adjacency (the transpose of ``A``'s CSR, int32 unless the sizes need int64)
    is built at once; the strongly connected components only when first asked for
    (``n_scc``, ``scc``, ``source_scc``): a controllable design never needs them.
    """

    n: int
    out_indptr: np.ndarray  # successors of each state (the transpose of A's CSR)
    out_indices: np.ndarray
    in_indptr: np.ndarray = field(repr=False)  # A's own CSR: predecessors of each state
    in_indices: np.ndarray = field(repr=False)

    @functools.cached_property
    def _components(self) -> tuple[int, np.ndarray, np.ndarray]:
        k, labels = strongly_connected_components(self.in_indptr, self.in_indices)
        return k, labels, condensation_sources(self.in_indptr, self.in_indices, labels, k)

    @property
    def n_scc(self) -> int:
        return self._components[0]

    @property
    def scc(self) -> np.ndarray:
        """Component label of each state (ordered by smallest member)."""
        return self._components[1]

    @property
    def source_scc(self) -> np.ndarray:
        """Bool per component: receives no edge from another component."""
        return self._components[2]

    def dual(self) -> Structure:
        """The structure of ``A``'s transpose from this one, without a new transpose: the
        same components (they do not depend on orientation); its sources are this
        graph's sinks."""
        d = Structure(n=self.n, out_indptr=self.in_indptr, out_indices=self.in_indices,
                      in_indptr=self.out_indptr, in_indices=self.out_indices)
        if "_components" in self.__dict__:
            k, labels, _ = self._components
            d.__dict__["_components"] = (k, labels, condensation_sources(
                self.out_indptr, self.out_indices, labels, k))
        return d


def structure_of(A: sp.csr_array) -> Structure:
    """Out-adjacency of ``A`` (components on demand, see :class:`Structure`)."""
    n = A.shape[0]
    indptr = np.ascontiguousarray(A.indptr)
    indices = np.ascontiguousarray(A.indices)
    if indptr.dtype not in (np.int32, np.int64) or indices.dtype != indptr.dtype:
        indptr = indptr.astype(np.int64)
        indices = indices.astype(np.int64)
    out_ptr, out_ind = transpose_index(indptr, indices, n)
    return Structure(n=n, out_indptr=out_ptr, out_indices=out_ind, in_indptr=indptr,
                     in_indices=indices)


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


def unreached_sources(A: sp.csr_array | tuple[np.ndarray, np.ndarray],
                      out: tuple[np.ndarray, np.ndarray],
                      driven: np.ndarray) -> tuple[int, np.ndarray, np.ndarray]:
    """Source components of ``A`` that no driven state reaches, without a full SCC pass.

    ``A`` is the state matrix or its CSR index arrays ``(indptr, indices)``; ``out`` the
    out-adjacency (its transpose).

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
    indptr, indices = (A.indptr, A.indices) if hasattr(A, "indptr") else A  # type: ignore[union-attr]
    n = indptr.size - 1
    empty_rows = indptr[1:] == indptr[:-1]
    is_driven = np.zeros(n, bool)
    is_driven[driven] = True
    trivial = np.flatnonzero(empty_rows & ~is_driven)
    is_driven |= empty_rows
    reach = reachable_from(out[0], out[1], np.flatnonzero(is_driven))
    del is_driven, empty_rows
    W = np.flatnonzero(~reach)
    if W.size == 0:
        return int(trivial.size), np.zeros(1, np.int64), np.zeros(0, np.int64)
    del reach
    # components of the subgraph induced by W (W has no in-link from outside it)
    w_ptr, w_ind = induced_subgraph(indptr, indices, W)
    k, labels = strongly_connected_components(w_ptr, w_ind)
    src = condensation_sources(w_ptr, w_ind, labels, k)
    src_ids = np.flatnonzero(src)  # labels are in order of smallest member
    slot = np.full(k, -1, np.int64)
    slot[src_ids] = np.arange(src_ids.size)
    local = np.flatnonzero(slot[labels] >= 0)
    order = np.argsort(slot[labels[local]], kind="stable")
    members = W[local[order]].astype(np.int64)
    ptr = np.zeros(src_ids.size + 1, np.int64)
    np.cumsum(np.bincount(slot[labels[local]], minlength=src_ids.size), out=ptr[1:])
    return int(trivial.size), ptr, members


# Above this many links the breadth-first search for unreached sources runs in a second
# thread while the matching runs (both kernels release the GIL); below it, starting a
# thread costs more than it saves (measured with benchmarks/bench_drivers.py).
_THREAD_MIN_LINKS = 200_000


def completion(A: sp.csr_array, B: sp.csr_array, st: Structure | None = None, *,
               prefer: np.ndarray | None = None,
               start: tuple[np.ndarray, np.ndarray] | None = None,
               avoid: np.ndarray | None = None) -> Completion:
    """Fewest dedicated inputs to add so that ``(A, [B, new])`` is structurally controllable.

    Count = ``m_u + beta - alpha`` (Commault & Dion 2013; Pequito, Kar & Aguiar 2016):
    ``m_u`` unmatched states of a maximum matching of ``[A B]``, ``beta`` source
    components of ``A`` that no existing input reaches, ``alpha`` the largest number of
    those that can hold an unmatched state at once, over all maximum matchings.

    ``alpha`` is found by giving every unreached source component an extra column
    adjacent to its states and extending the maximum matching with as many extra columns
    as possible (:func:`netctl.graph.extra_columns.extend_matching`). Components that already
    hold an unmatched state start with their extra column matched to it (states with no
    in-link always do); only the others are searched for, so the usual case costs nothing
    beyond the first matching. The unreached source components come from
    :func:`unreached_sources` (one breadth-first search, components only where needed),
    which on large systems runs in a second thread beside the matching.

    ``prefer`` (boolean per state, e.g. the node table's ``actuator`` column, or integer
    levels: higher is preferred) decides the representative of a source component that
    still needs one: its smallest state of the highest level present, else its smallest
    state. It does not change the count.

    ``start``: ``(row_match, col_match)``, a matching of ``[A B]`` already known to be
    maximum (e.g. the transpose of ``A``'s for ``A``'s transpose); it is copied and the
    matching search is skipped (so is ``avoid``: the start decides the matching).

    ``avoid`` (boolean per state, e.g. the node table's ``actuator`` column negated)
    decides which states are left unmatched: a maximum matching ``M1`` of the links into
    the avoided states alone is merged with a maximum matching of ``[A B]`` into one
    that is maximum and still matches every row ``M1`` matches (Mendelsohn–Dulmage; the
    same guarantee as completing ``M1`` by augmenting paths, which never unmatch a row:
    Lovász & Plummer 1986; both from memory). No matching matches more avoided rows
    than ``M1``, so none leaves fewer avoided states unmatched (the sets of rows a
    matching covers form a transversal matroid, Edmonds & Fulkerson 1965, from memory).
    The count does not change. When some unreached source component then holds no
    unmatched state, the extra columns are matched by
    :func:`netctl.graph.costmatch.extend_matching_least_cost` instead: a fix is the
    rows no real column takes plus one state (not avoided where the component has one)
    of each component whose extra column stays free, so a matching of the largest size
    whose reward (avoided rows taken by a real column, plus the extra columns matched
    of components avoided throughout) is the largest gives the fewest inputs and,
    among those, the fewest on avoided states; successive shortest paths from this
    start reach it exactly (the start is optimal for its size: it takes the most
    avoided rows, and no extra column is yet matched). Brute force in
    ``tests/structural/test_check_fix_avoid_barred.py``.

    References
    ----------
    .. [1] L. Lovász, M. D. Plummer, *Matching Theory*, North-Holland, 1986 (augmenting
       paths; the Mendelsohn–Dulmage theorem; from memory).
    .. [2] J. Edmonds, D. R. Fulkerson, "Transversals and matroid partition", J. Res.
       NBS 69B:147-153, 1965 (from memory).
    """
    n = A.shape[0]
    # index arrays int64 as the system stores them (no copies); every work array of one
    # integer type, int32 unless the sizes need int64
    ab_ptr, ab_ind, n_cols = stack_AB(A, B)
    ab_ptr = np.ascontiguousarray(ab_ptr, np.int64)
    ab_ind = np.ascontiguousarray(ab_ind, np.int64)
    dt = index_dtype(n, n_cols, ab_ind.size)
    if B.shape[1] == 0:
        a_arrays = (ab_ptr, ab_ind)
    else:
        a_arrays = (np.ascontiguousarray(A.indptr, np.int64),
                    np.ascontiguousarray(A.indices, np.int64))
    transpose = transpose_index(ab_ptr, ab_ind, n_cols, dt)
    if st is not None:
        out = (st.out_indptr, st.out_indices)
    elif B.shape[1] == 0:
        out = transpose
    else:
        out = transpose_index(a_arrays[0], a_arrays[1], n, dt)
    driven = _rows_with_entries(B)
    if start is not None:
        row_match, col_match = start[0].astype(dt), start[1].astype(dt)  # type: ignore[var-annotated]
        n_trivial, cptr, members = unreached_sources(a_arrays, out, driven)
    elif ab_ind.size >= _THREAD_MIN_LINKS:
        with ThreadPoolExecutor(max_workers=1) as pool:
            job = pool.submit(unreached_sources, a_arrays, out, driven)
            row_match, col_match = _avoiding_matching(ab_ptr, ab_ind, n_cols, transpose,
                                                      dt, avoid)
            n_trivial, cptr, members = job.result()
    else:
        row_match, col_match = _avoiding_matching(ab_ptr, ab_ind, n_cols, transpose, dt,
                                                  avoid)
        n_trivial, cptr, members = unreached_sources(a_arrays, out, driven)
    del out
    matching_size = int(np.count_nonzero(row_match >= 0))
    n_comp = cptr.size - 1
    comp_of = np.full(n, -1, np.int64)
    comp_of[members] = np.repeat(np.arange(n_comp, dtype=np.int64), np.diff(cptr))
    free_rows = np.flatnonzero(row_match < 0)
    # a component already holding a free row starts with its extra column matched to the
    # smallest such row (reversed assignment: the smallest index is written last)
    x_match: np.ndarray = np.full(n_comp, -1, dt)
    fr_comp = comp_of[free_rows]
    keep = fr_comp >= 0
    x_match[fr_comp[keep][::-1]] = free_rows[keep][::-1]
    del comp_of, fr_comp, keep
    if np.any(x_match == -1):
        # imported here: only a component holding no free state needs the search (a
        # small network's run usually has none and loads one module less)
        from netctl.graph.costmatch import extend_matching_least_cost
        from netctl.graph.extra_columns import extend_matching

        # row_match and col_match are ours (fresh from the matching): extend in place;
        # rows matched to an extra column are then marked unmatched again
        if avoid is not None and start is None and np.any(avoid):
            # exact: fewest extra inputs, then fewest on avoided states (see Notes);
            # row_match matches as many avoided rows as any maximum matching
            bar = np.asarray(avoid, bool)
            full = (np.logical_and.reduceat(bar[members], cptr[:-1]) if members.size
                    else np.zeros(n_comp, bool))
            x_match = extend_matching_least_cost((ab_ptr, ab_ind), transpose, n_cols,
                                                 row_match, col_match, (cptr, members),
                                                 bar, full)
        else:
            row_match[x_match[x_match >= 0]] = n_cols + np.flatnonzero(x_match >= 0)
            extend_matching(transpose, n_cols, row_match, col_match, (cptr, members),
                            x_match, inplace=True)
        row_match[row_match >= n_cols] = -1
    del transpose, col_match
    unmatched = np.flatnonzero(row_match < 0)
    missed = np.flatnonzero(x_match == -1)
    reps = np.empty(missed.size, np.int64)
    pref = None if prefer is None else np.asarray(prefer)
    for j, c in enumerate(missed.tolist()):  # one per missed component (few)
        group = members[cptr[c]:cptr[c + 1]]
        if pref is not None and group.size:
            g = pref[group]
            top = g.max()
            if top:  # the highest preference present (True, or the largest level)
                group = group[g == top]
        reps[j] = group[0]
    reps = np.sort(reps)
    states = union_sorted(unmatched, reps, n)
    n_unreached = n_trivial + n_comp
    return Completion(states=states, unmatched=unmatched.astype(np.int64),
                      representatives=reps, matching_size=matching_size,
                      n_unreached_sources=n_unreached,
                      n_sources_hit=n_unreached - int(missed.size),
                      row_match=row_match.astype(np.int64, copy=False))


def _avoiding_matching(ab_ptr: np.ndarray, ab_ind: np.ndarray, n_cols: int,
                       transpose: tuple[np.ndarray, np.ndarray], dt: type,
                       avoid: np.ndarray | None) -> tuple[np.ndarray, np.ndarray]:
    """A maximum matching of ``[A B]``; with ``avoid``, one that matches as many avoided
    rows as possible (see :func:`completion`).

    ``M1``, a maximum matching of the links into avoided rows, and ``M``, a maximum
    matching of the whole graph, are merged in linear time (the Mendelsohn–Dulmage
    construction, from memory): every path of ``M1 ∪ M`` that starts at a row matched by
    ``M1`` only takes its ``M1`` links, every other component keeps ``M``'s. The result
    covers ``M1``'s rows and ``M``'s columns, so it is maximum. (Completing ``M1`` by
    augmenting paths gives the same guarantee but was 75 times slower at 10^6 states.)
    """
    m = matching_work(ab_ptr, ab_ind, n_cols, transpose, dtype=dt)
    if avoid is None or not np.any(avoid):
        return m
    avoid = np.asarray(avoid, bool)
    lens = np.diff(ab_ptr)
    sub_ptr = np.zeros(ab_ptr.size, np.int64)
    np.cumsum(np.where(avoid, lens, 0), out=sub_ptr[1:])
    sub_ind = ab_ind[np.repeat(avoid, lens)]
    # the links into avoided rows only
    m1_row, _ = matching_work(sub_ptr, sub_ind, n_cols, dtype=dt)
    del sub_ptr, sub_ind
    row_match, col_match = m
    _merge_matchings(m1_row, row_match.copy(), col_match.copy(), row_match, col_match)
    return row_match, col_match


@njit(cache=True, nogil=True)
def _merge_matchings(m1_row, m_row, m_col, row_match, col_match):  # pragma: no cover
    """In place on ``row_match``/``col_match`` (= ``M`` on entry; ``m_col`` a copy of
    ``M``'s column side): along every path from a row matched by ``M1`` only, take
    ``M1``'s links."""
    for r0 in range(m1_row.size):
        if m1_row[r0] < 0 or m_row[r0] >= 0:
            continue
        r = r0
        while True:
            c = m1_row[r]
            if c < 0:
                row_match[r] = -1  # the path ends at a row matched by M only
                break
            row_match[r] = c
            col_match[c] = r
            nxt = m_col[c]
            if nxt < 0:
                break
            r = nxt


def union_sorted(a: np.ndarray, b: np.ndarray, n: int) -> np.ndarray:
    """Sorted union (int64) of two sorted arrays of distinct indices below ``n``.

    A mask of ``n`` bytes instead of :func:`numpy.union1d`'s sort, which is the slower
    choice once the arrays hold a sizeable fraction of ``n``.
    """
    if b.size == 0:
        return np.asarray(a, np.int64)
    if a.size == 0:
        return np.unique(np.asarray(b, np.int64))
    if a.size + b.size < n // 64:
        return np.union1d(a, b).astype(np.int64)
    mask = np.zeros(n, bool)
    mask[a] = True
    mask[b] = True
    return np.flatnonzero(mask)


def accessible_states(st: Structure, B: sp.csr_array) -> np.ndarray:
    """Boolean mask of the states reachable from some input."""
    driven = _rows_with_entries(B)
    return reachable_from(st.out_indptr, st.out_indices, driven)


def _rows_with_entries(M: sp.csr_array) -> np.ndarray:
    """Indices of the rows of a CSR matrix that hold at least one entry."""
    if M.nnz == 0:
        return np.zeros(0, np.int64)
    return np.flatnonzero(np.diff(M.indptr)).astype(np.int64)
