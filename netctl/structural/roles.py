"""Node and link roles for control: which states and links every minimum design needs.

Node roles (Jia et al. 2013) classify each state by the minimum driver sets it belongs
to; link roles (Liu et al. 2011) classify each link by the maximum matchings it belongs
to. Both come from *one* maximum matching plus alternating reachability (and, for links,
the strongly connected components of the matching's alternating graph): near-linear in
the number of links, never one matching per element.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``. In the bipartite graph of ``A`` the
rows are the influenced states (``v``) and the columns the influencing states (``u``);
a state whose row no maximum-matching edge covers is a driver (Liu et al. 2011).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from netctl._jit import njit

from netctl.errors import UnknownNameError
from netctl.graph.components import condensation_sources, strongly_connected_components
from netctl.graph.dm import alternating_reach_cols, alternating_reach_rows
from netctl.graph.matching import maximum_matching
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = [
    "LINK_ROLES",
    "NODE_ROLES",
    "LinkRoles",
    "NodeRoles",
    "link_roles",
    "node_roles",
]

#: Node roles in code order: ``role == 0`` is critical, 1 intermittent, 2 redundant.
NODE_ROLES: tuple[str, ...] = ("critical", "intermittent", "redundant")
#: Link roles in code order: ``role == 0`` is critical, 1 ordinary, 2 redundant.
LINK_ROLES: tuple[str, ...] = ("critical", "ordinary", "redundant")


# ---------------------------------------------------------------------- engine
@dataclass(frozen=True)
class MatchingFacts:
    """One maximum matching of a bipartite graph (CSR over rows) and what follows from it.

    ``rows_free``: rows some maximum matching leaves unmatched (alternating reach from
    the unmatched rows). ``cols_free``: the same for columns. ``h_indptr``/``h_indices``:
    the alternating graph on rows, ``r -> col_match[c]`` for every unmatched edge
    ``(r, c)`` with ``c`` matched; ``h_scc`` its strongly connected components and
    ``h_scc_size`` their sizes. An edge ``(r, c)`` lies on an even alternating cycle iff
    (matched) ``r`` is in a component of size >= 2, or (unmatched) ``r`` and
    ``col_match[c]`` share a component.
    """

    n_rows: int
    n_cols: int
    indptr: np.ndarray
    indices: np.ndarray
    row_match: np.ndarray
    col_match: np.ndarray
    matching_size: int
    rows_free: np.ndarray
    cols_free: np.ndarray
    h_indptr: np.ndarray
    h_indices: np.ndarray
    h_n_scc: int
    h_scc: np.ndarray
    h_scc_size: np.ndarray


def matching_facts(indptr: np.ndarray, indices: np.ndarray, n_cols: int, *,
                   with_cycles: bool = True) -> MatchingFacts:
    """Compute :class:`MatchingFacts` (one matching, two alternating searches, one SCC)."""
    indptr = np.ascontiguousarray(indptr, np.int64)
    indices = np.ascontiguousarray(indices, np.int64)
    n_rows = indptr.size - 1
    row_match, col_match = maximum_matching(indptr, indices, n_cols)
    size = int(np.count_nonzero(row_match >= 0))
    rows_free, _ = alternating_reach_rows(indptr, indices, n_cols, col_match)
    if size < n_cols:
        cols_free, _ = alternating_reach_cols(indptr, indices, n_cols, row_match)
    else:
        cols_free = np.zeros(n_cols, bool)
    if with_cycles and n_rows:
        h_indptr, h_indices = _alternating_graph(indptr, indices, col_match)
        k, labels = strongly_connected_components(h_indptr, h_indices)
        sizes = np.bincount(labels, minlength=k).astype(np.int64)
    else:
        h_indptr = np.zeros(n_rows + 1, np.int64)
        h_indices = np.zeros(0, np.int64)
        k, labels, sizes = n_rows, np.arange(n_rows, dtype=np.int64), np.ones(n_rows, np.int64)
    return MatchingFacts(n_rows=n_rows, n_cols=int(n_cols), indptr=indptr, indices=indices,
                         row_match=row_match, col_match=col_match, matching_size=size,
                         rows_free=rows_free, cols_free=cols_free, h_indptr=h_indptr,
                         h_indices=h_indices, h_n_scc=int(k), h_scc=labels,
                         h_scc_size=sizes)


@njit(cache=True, nogil=True)
def _alternating_graph(indptr, indices, col_match):  # pragma: no cover - compiled
    """CSR of ``r -> col_match[c]`` for every edge ``(r, c)`` with ``c`` matched to
    another row (one pass)."""
    n = indptr.size - 1
    ptr = np.zeros(n + 1, np.int64)
    out = np.empty(indices.size, np.int64)
    pos = 0
    for r in range(n):
        for k in range(indptr[r], indptr[r + 1]):
            p = col_match[indices[k]]
            if p >= 0 and p != r:
                out[pos] = p
                pos += 1
        ptr[r + 1] = pos
    return ptr, out[:pos].copy()


def edge_classes(f: MatchingFacts) -> np.ndarray:
    """Class of every stored edge (CSR order): 0 in every maximum matching, 1 in some but
    not all, 2 in none (Liu et al. 2011 critical / ordinary / redundant)."""
    return _edge_classes(f.indptr, f.indices, f.row_match, f.col_match, f.h_scc,
                         f.h_scc_size, f.rows_free, f.cols_free)


@njit(cache=True, nogil=True)
def _edge_classes(indptr, indices, row_match, col_match, scc, scc_size, rows_free,
                  cols_free):  # pragma: no cover - compiled
    out = np.empty(indices.size, np.int8)
    for r in range(indptr.size - 1):
        for k in range(indptr[r], indptr[r + 1]):
            c = indices[k]
            matched = row_match[r] == c
            if matched:
                same = scc_size[scc[r]] >= 2
            else:
                p = col_match[c]
                same = p >= 0 and scc[r] == scc[p]
            if rows_free[r] or cols_free[c] or same:
                out[k] = 1
            elif matched:
                out[k] = 0
            else:
                out[k] = 2
    return out


# ---------------------------------------------------------------------- results
@dataclass(frozen=True)
class NodeRoles(ResultTables):
    """Role of every state in the minimum driver sets (see :func:`node_roles`).

    Attributes
    ----------
    role : ndarray of int8, shape (n,)
        Code per state: index into :data:`NODE_ROLES`.
    critical, intermittent, redundant : ndarray of int
        Sorted state indices with that role.
    n_inputs : int
        Minimum number of inputs ``N_D = max(n - |M*|, 1)`` (0 for an empty system).
    matching_size : int
        ``|M*|``, the structural rank of ``A``.
    basis : {"matching", "source-components", "empty"}
        ``"matching"``: minimum driver sets are the unmatched states of the maximum
        matchings (``|M*| < n``). ``"source-components"``: ``A`` has a perfect matching,
        one input suffices and a minimum driver set holds one state of every source
        component (see Notes of :func:`node_roles`).
    """

    _frame_rows = "states"
    _frame_values = ("role",)
    _frame_labels = {"role": NODE_ROLES}

    n_states: int
    role: np.ndarray
    critical: np.ndarray
    intermittent: np.ndarray
    redundant: np.ndarray
    n_inputs: int
    matching_size: int
    basis: str
    state_names: Sequence[str] = field(repr=False)
    model: str = "given"

    @property
    def perfect_matching(self) -> bool:
        """Whether ``A`` has a perfect matching (every state matched)."""
        return self.basis == "source-components"

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def role_of(self, state: str | int) -> str:
        """The role of one state, by name (or index)."""
        if isinstance(state, (int, np.integer)) and not isinstance(state, bool):
            i = int(state)
        else:
            try:
                i = self.state_names.index(str(state))
            except ValueError:
                raise UnknownNameError(f"unknown state name {state!r}; the system has "
                                       f"{self.n_states} states.") from None
        return NODE_ROLES[int(self.role[i])]

    def counts(self) -> dict[str, int]:
        """Number of states per role."""
        return {"critical": int(self.critical.size), "intermittent":
                int(self.intermittent.size), "redundant": int(self.redundant.size)}

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready: ``nodes`` maps state name -> role."""
        return {
            "analysis": "node_roles",
            "n_states": self.n_states,
            "model": self.model,
            "n_inputs": self.n_inputs,
            "structural_rank_A": self.matching_size,
            "perfect_matching": self.perfect_matching,
            "basis": self.basis,
            "counts": self.counts(),
            "nodes": {self.state_names[i]: NODE_ROLES[int(r)]
                      for i, r in enumerate(self.role.tolist())},
        }


@dataclass(frozen=True)
class LinkRoles(ResultTables):
    """Role of every link of ``A`` (see :func:`link_roles`).

    Attributes
    ----------
    sources, targets : ndarray of int
        The links ``sources[k] -> targets[k]``, sorted by target then source (the order
        of :meth:`StructuredSystem.edges`); self-loops included.
    role : ndarray of int8
        Code per link: index into :data:`LINK_ROLES`.
    critical, ordinary, redundant : ndarray of int
        Sorted link positions (into ``sources``/``targets``) with that role.
    n_inputs : int
        ``N_D`` of the intact system.
    n_inputs_after_loss : ndarray of int
        ``N_D`` after losing each link alone (exact).
    matching_size : int
    """

    _frame_rows = "links"
    _frame_values = ("role", "n_inputs_after_loss")
    _frame_labels = {"role": LINK_ROLES}

    n_states: int
    sources: np.ndarray
    targets: np.ndarray
    role: np.ndarray
    critical: np.ndarray
    ordinary: np.ndarray
    redundant: np.ndarray
    n_inputs: int
    n_inputs_after_loss: np.ndarray
    matching_size: int
    state_names: Sequence[str] = field(repr=False)
    model: str = "given"

    @property
    def n_links(self) -> int:
        """Number of links (self-loops included)."""
        return int(self.sources.size)

    def link_names(self, positions: Any) -> list[tuple[str, str]]:
        """``(source name, target name)`` for link positions."""
        return [(self.state_names[int(self.sources[k])], self.state_names[int(self.targets[k])])
                for k in positions]

    def role_of(self, source: str | int, target: str | int) -> str:
        """Role of the link ``source -> target`` (names or indices)."""
        names = self.state_names
        u = names.index(str(source)) if str(source) in names else source
        v = names.index(str(target)) if str(target) in names else target
        hit = np.flatnonzero((self.sources == u) & (self.targets == v))
        if hit.size == 0:
            raise UnknownNameError(f"no link {source!r} -> {target!r} in the system; "
                                   "links are given as 'source -> target' (source influences "
                                   "target).")
        return LINK_ROLES[int(self.role[hit[0]])]

    def counts(self) -> dict[str, int]:
        """Number of links per role."""
        return {"critical": int(self.critical.size), "ordinary": int(self.ordinary.size),
                "redundant": int(self.redundant.size)}

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready: ``links`` is a list of ``{source, target, role}``."""
        names = self.state_names
        return {
            "analysis": "link_roles",
            "n_states": self.n_states,
            "n_links": self.n_links,
            "model": self.model,
            "n_inputs": self.n_inputs,
            "structural_rank_A": self.matching_size,
            "counts": self.counts(),
            "links": [{"source": names[u], "target": names[v], "role": LINK_ROLES[r]}
                      for u, v, r in zip(self.sources.tolist(), self.targets.tolist(),
                                         self.role.tolist())],
        }


# ---------------------------------------------------------------------- analyses
def _n_d(n: int, size: int) -> int:
    return max(n - size, 1) if n else 0


def node_role_codes(indptr: np.ndarray, indices: np.ndarray, col_match: np.ndarray,
                    ) -> tuple[np.ndarray, int, str]:
    """Role codes (see :data:`NODE_ROLES`), matching size and basis, given the CSR of a
    square ``A`` and the column side of one of its maximum matchings."""
    n = indptr.size - 1
    size = int(np.count_nonzero(col_match >= 0))
    indeg = np.diff(indptr)
    role = np.full(n, 2, np.int8)
    if size < n:
        reached, _ = alternating_reach_rows(indptr, indices, n, col_match)
        role[reached] = 1
        role[indeg == 0] = 0
        return role, size, "matching"
    k, labels = strongly_connected_components(indptr, indices)
    src = condensation_sources(indptr, indices, labels, k)
    sizes = np.bincount(labels, minlength=k)
    in_src = src[labels]
    role[in_src] = 1
    role[in_src & (sizes[labels] == 1)] = 0
    return role, size, "source-components"


def node_roles(system: StructuredSystem) -> NodeRoles:
    r"""Critical, intermittent and redundant states for control (Jia et al. [1]_).

    A state is *critical* if it is a driver in every minimum driver set, *intermittent*
    if in some, *redundant* if in none [1]_. Existing inputs of ``system`` are ignored.

    Parameters
    ----------
    system : StructuredSystem

    Returns
    -------
    NodeRoles

    Notes
    -----
    Minimum driver sets (``|M*| < n``): the states left unmatched by the maximum
    matchings of the bipartite graph of ``A`` (rows = influenced states, columns =
    influencing states) [2]_. One maximum matching ``M`` is computed; a state is
    unmatched in *some* maximum matching iff its row is reached by an alternating path
    (any edge, then a matched edge) from a row ``M`` leaves unmatched. Hence: critical
    iff no link enters the state (in-degree 0, self-loops count as links); intermittent
    iff reached and in-degree >= 1; redundant iff not reached. These are Jia et al.'s
    sets, which ignore the extra wiring an existing input may need to reach a source
    component holding no driver.

    Perfect matching (``|M*| = n``, so ``N_D = 1``): no state is unmatched in any maximum
    matching, and the single input must act on at least one state of every *source*
    strongly connected component (one no other component feeds) to reach everything;
    the minimum driver sets are then the sets holding exactly one state of each source
    component. So: critical iff the state is a source component by itself (it then
    has a self-loop), intermittent iff it lies in a larger source component, redundant
    otherwise. ``basis`` says which definition applied.

    Cost: one maximum matching (Karp–Sipser + Pothen–Fan) and one breadth-first
    alternating search, near-linear in the number of links.

    References
    ----------
    .. [1] T. Jia, Y.-Y. Liu, E. Csóka, M. Pósfai, J.-J. Slotine, A.-L. Barabási,
       "Emergence of bimodality in controlling complex networks", Nat. Commun. 4:2002,
       2013. doi:10.1038/ncomms3002
    .. [2] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    The five-state network ``1 -> 2 -> {3, 4, 5}`` has ``N_D = 3``:

    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 1, 1], [1, 2, 3, 4],
    ...                                 state_names=["1", "2", "3", "4", "5"])
    >>> r = node_roles(s)
    >>> r.n_inputs, r.names(r.critical), r.names(r.intermittent), r.names(r.redundant)
    (3, ['1'], ['3', '4', '5'], ['2'])
    """
    return _node_roles(system, None)


def _node_roles(system: StructuredSystem, facts: MatchingFacts | None) -> NodeRoles:
    """:func:`node_roles`, reusing the matching of ``facts`` (of ``A``) when given."""
    A = system.pattern("A")
    n = system.n_states
    indptr = A.indptr.astype(np.int64)
    indices = A.indices.astype(np.int64)
    if n == 0:
        role, size, basis = np.zeros(0, np.int8), 0, "empty"
    else:
        col_match = (maximum_matching(indptr, indices, n)[1] if facts is None
                     else facts.col_match)
        role, size, basis = node_role_codes(indptr, indices, col_match)
    return NodeRoles(
        n_states=n, role=role, critical=np.flatnonzero(role == 0),
        intermittent=np.flatnonzero(role == 1), redundant=np.flatnonzero(role == 2),
        n_inputs=_n_d(n, size), matching_size=size, basis=basis,
        state_names=system.state_names, model=system.model)


def link_roles(system: StructuredSystem) -> LinkRoles:
    r"""Critical, ordinary and redundant links for control (Liu et al. [1]_).

    A link is *critical* if it is in every maximum matching of ``A``: losing it lowers
    the structural rank of ``A`` by one, so the minimum number of inputs ``N_D`` rises
    by one (unless the matching was perfect, see Notes). It is *redundant* if it is in
    no maximum matching: losing it never changes ``N_D`` nor the possible minimum driver
    sets. Otherwise it is *ordinary*. Self-loops are links like any other.

    Parameters
    ----------
    system : StructuredSystem

    Returns
    -------
    LinkRoles
        Links in :meth:`StructuredSystem.edges` order, their roles, and ``N_D`` after
        losing each one.

    Notes
    -----
    From one maximum matching ``M`` [2]_, [3]_: a link (row ``v``, column ``u``) is in
    some but not all maximum matchings iff it lies on an even alternating cycle (its
    two ends share a strongly connected component of the graph that orients unmatched
    edges row -> column and matched edges column -> row), or an even alternating path
    from a free vertex reaches one of its ends (the row is unmatched in some maximum
    matching, or the column is). A matched link with neither is critical; an unmatched
    link with neither is redundant. Cost: one matching, two alternating searches and one
    strongly connected components pass, near-linear in the number of links.

    With a perfect matching (``N_D = 1``) a critical link's loss lowers the structural
    rank to ``n - 1`` and ``N_D = max(n - |M*|, 1)`` stays 1, but the single input must
    then act on the state left unmatched; ``n_inputs_after_loss`` gives the exact count.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] A. L. Dulmage, N. S. Mendelsohn, "Coverings of bipartite graphs", Canad. J.
       Math. 10:517-534, 1958 (details from memory).
    .. [3] T. Tassa, "Finding all maximally-matchable edges in a bipartite graph",
       Theor. Comput. Sci. 423:50-58, 2012. doi:10.1016/j.tcs.2011.12.071
       (details from memory)

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 1, 1], [1, 2, 3, 4])
    >>> r = link_roles(s)
    >>> r.link_names(r.critical), len(r.ordinary), r.n_inputs_after_loss.tolist()
    ([('x0', 'x1')], 3, [4, 3, 3, 3])
    """
    return _link_roles(system, None)


def _roles_facts(system: StructuredSystem) -> MatchingFacts | None:
    """The :class:`MatchingFacts` of ``A`` that :func:`node_roles` and
    :func:`link_roles` share (``None`` for a system without states or links)."""
    A = system.pattern("A")
    if system.n_states == 0 or A.nnz == 0:
        return None
    return matching_facts(A.indptr, A.indices, system.n_states)


def _link_roles(system: StructuredSystem, facts: MatchingFacts | None) -> LinkRoles:
    """:func:`link_roles`, reusing ``facts`` (from :func:`roles_facts`) when given."""
    A = system.pattern("A")
    n = system.n_states
    src, tgt = system.edges()
    if n == 0 or A.nnz == 0:
        role = np.full(src.size, 2, np.int8)
        size = 0
    else:
        f = matching_facts(A.indptr, A.indices, n) if facts is None else facts
        role = edge_classes(f)
        size = f.matching_size
    after = np.where(role == 0, _n_d(n, size - 1) if size else 0, _n_d(n, size))
    return LinkRoles(
        n_states=n, sources=src, targets=tgt, role=role,
        critical=np.flatnonzero(role == 0), ordinary=np.flatnonzero(role == 1),
        redundant=np.flatnonzero(role == 2), n_inputs=_n_d(n, size),
        n_inputs_after_loss=after.astype(np.int64), matching_size=size,
        state_names=system.state_names, model=system.model)
