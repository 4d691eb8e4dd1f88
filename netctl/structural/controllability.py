"""Structural controllability (Lin's test) with the reasons when it fails, and its dual."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl.graph.dm import alternating_reach_rows
from netctl.structural._engine import (
    Structure,
    accessible_states,
    completion,
    site_preference,
    sites_to_avoid,
    stack_AB,
    structure_of,
)
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

if TYPE_CHECKING:
    import scipy.sparse as sp

#: ``progress(stage, done, total)`` of a long analysis (see :func:`controllability`).
Progress = Callable[[str, int, int], None]

#: From this many links (``A`` and ``B``) a failing system's Hosoe dimension starts on a
#: second thread as soon as an inaccessible state makes the failure certain.
BACKGROUND_LINKS = 200_000

__all__ = [
    "ControllabilityReport",
    "Dilation",
    "InaccessibleGroup",
    "controllability",
    "observability",
    "is_structurally_controllable",
    "is_structurally_observable",
]


@dataclass(frozen=True)
class InaccessibleGroup:
    """States no input reaches, grouped by the source component that feeds them.

    ``source`` holds the states of one source strongly connected component that no
    input acts on; ``downstream`` the other inaccessible states it reaches first (each
    inaccessible state is listed once, under the first source whose breadth-first search
    reaches it, so the groups partition the inaccessible states). One input on any state
    of ``source`` reaches ``downstream`` and possibly more.
    """

    source: np.ndarray
    downstream: np.ndarray


@dataclass(frozen=True)
class Dilation:
    """A dilation witness: states ``states`` fed by fewer states/inputs ``fed_by``.

    ``fed_by`` lists column indices of ``[A B]``: values below ``n`` are states, values
    ``n + k`` are input ``k``. ``deficiency`` = ``len(states) - len(fed_by)`` (>= 1).
    ``region`` is the whole over-determined part of the Dulmage–Mendelsohn decomposition
    of ``[A B]`` (all states that some maximum matching leaves unmatched, plus those
    competing with them).
    """

    states: np.ndarray
    fed_by: np.ndarray
    region: np.ndarray

    @property
    def deficiency(self) -> int:
        return int(self.states.size - self.fed_by.size)


@dataclass(frozen=True)
class ControllabilityReport(ResultTables):
    """Outcome of :func:`controllability` (or :func:`observability`).

    Attributes
    ----------
    controllable : bool
        Structurally controllable (observable for ``kind == "observability"``).
    inaccessible : ndarray of int
        States no input reaches (for observability: states seen by no output).
    groups : tuple of InaccessibleGroup
    structural_rank : int
        Generic (term) rank of ``[A B]``.
    dilation : Dilation or None
        Present when ``structural_rank < n``.
    controllable_dimension : int or None
        Generic dimension of the controllable subspace (Hosoe 1980); ``None`` when it
        was not computed.
    fix : ndarray of int
        Fewest states at which added dedicated inputs make the system controllable.
    """

    _frame_rows = "states"
    _frame_sets = ("inaccessible", "fix")

    kind: str
    controllable: bool
    n_states: int
    n_inputs: int
    inaccessible: np.ndarray
    groups: tuple[InaccessibleGroup, ...]
    structural_rank: int
    dilation: Dilation | None
    controllable_dimension: int | None
    fix: np.ndarray
    state_names: Sequence[str] = field(repr=False)
    input_names: Sequence[str] = field(repr=False)
    model: str = "given"

    @property
    def n_missing_inputs(self) -> int:
        """How many dedicated inputs must be added (0 when controllable)."""
        return int(self.fix.size)

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def column_names(self, columns: Any) -> list[str]:
        """Names for columns of ``[A B]`` (states, then inputs)."""
        n = self.n_states
        return [self.state_names[int(c)] if c < n else self.input_names[int(c) - n]
                for c in columns]

    def reasons(self, *, word: Callable[[str], str] | None = None,
                site: str = "any one of its states") -> list[str]:
        """Plain-language reasons the property fails (empty when it holds).

        ``word`` maps each state (input) name to the words the text uses (e.g. a grid's
        ``bus 12 frequency``); by default the names themselves. ``site`` says where in an
        unreached component the input (output) may go (a grid's inputs: ``"the frequency
        of any one of its buses"``, never an angle).
        """
        said = _said(self, word)
        what = "input" if self.kind == "controllability" else "output"
        reach = "reaches" if self.kind == "controllability" else "sees"
        out: list[str] = []
        for g in self.groups:
            src = _short(said.names(g.source))
            tail = (f" and the {g.downstream.size} state(s) downstream of it"
                    if self.kind == "controllability" and g.downstream.size else
                    f" and the {g.downstream.size} state(s) upstream of it"
                    if g.downstream.size else "")
            out.append(f"no {what} {reach} the component {{{src}}}{tail}; "
                       f"put an {what} on {site}.")
        if self.dilation is not None and self.dilation.fed_by.size == 0:
            d = self.dilation
            link = "incoming link" if self.kind == "controllability" else "outgoing link"
            out.append(
                f"dilation: {{{_short(said.names(d.states))}}} has no {link} and no {what}, "
                f"so it needs an {what} of its own; the structural rank of "
                f"{'[A B]' if self.kind == 'controllability' else '[A; C]'} is "
                f"{self.structural_rank} < {self.n_states}.")
        elif self.dilation is not None:
            d = self.dilation
            verb = "are fed by" if self.kind == "controllability" else "feed"
            out.append(
                f"dilation: the {d.states.size} state(s) {{{_short(said.names(d.states))}}} "
                f"{verb} only {d.fed_by.size} state(s)/{what}(s) "
                f"{{{_short(said.columns(d.fed_by))}}}; the structural rank of "
                f"{'[A B]' if self.kind == 'controllability' else '[A; C]'} is "
                f"{self.structural_rank} < {self.n_states}.")
        return out

    def causes(self, limit: int = 8, *, word: Callable[[str], str] | None = None,
               site: str = "any state of each") -> list[str]:
        """Every cause the property fails, grouped by kind with counts (empty when it holds).

        One short line per kind: the source components no input reaches (sink components
        no output sees), each named by its first state, and the dilations (the structural
        rank deficiency of ``[A B]``), named by the over-determined region. At most
        ``limit`` names a line, then how many more; :meth:`reasons` explains each cause
        at length. ``word`` as in :meth:`reasons`; ``site`` says where in each component
        the input (output) may go.
        """
        said = _said(self, word)
        what = "input" if self.kind == "controllability" else "output"
        out: list[str] = []
        if self.groups:
            k = len(self.groups)
            end = "source" if self.kind == "controllability" else "sink"
            reach = "reaches" if self.kind == "controllability" else "sees"
            firsts = said.names([g.source[0] for g in self.groups])
            out.append(f"{k} {end} component{'s' if k != 1 else ''} no {what} {reach} "
                       f"({_short(firsts, limit)}), leaving {self.inaccessible.size} "
                       f"state(s) {'unreached' if what == 'input' else 'unseen'}; "
                       f"one {what} on {site} reaches it.")
        deficit = self.n_states - self.structural_rank
        if deficit > 0 and self.dilation is not None:
            region = self.dilation.region
            stack = "[A B]" if self.kind == "controllability" else "[A; C]"
            out.append(f"{deficit} dilation{'s' if deficit != 1 else ''} (structural rank "
                       f"of {stack} {self.structural_rank} < {self.n_states}; "
                       f"{region.size} state(s) compete for too few "
                       f"{'feeders' if what == 'input' else 'readers'}: "
                       f"{_short(said.names(region), limit)}).")
        return out

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        key = "controllable" if self.kind == "controllability" else "observable"
        return {
            "analysis": self.kind,
            key: self.controllable,
            "n_states": self.n_states,
            "n_inputs" if self.kind == "controllability" else "n_outputs": self.n_inputs,
            "model": self.model,
            "controllable_dimension" if self.kind == "controllability"
            else "observable_dimension": self.controllable_dimension,
            "structural_rank": self.structural_rank,
            "inaccessible": self.names(self.inaccessible),
            "inaccessible_groups": [
                {"source": self.names(g.source), "downstream": self.names(g.downstream)}
                for g in self.groups],
            "dilation": None if self.dilation is None else {
                "states": self.names(self.dilation.states),
                "fed_by": self.column_names(self.dilation.fed_by),
                "deficiency": self.dilation.deficiency,
                "region": self.names(self.dilation.region),
            },
            "fix": {"n_additional": self.n_missing_inputs, "states": self.names(self.fix)},
            "reasons": self.reasons(),
        }


class _Said:
    """Names (states, then columns of ``[A B]``) in the words a text uses."""

    def __init__(self, report: ControllabilityReport,
                 word: Callable[[str], str] | None) -> None:
        self.report, self.word = report, word

    def names(self, indices: Any) -> list[str]:
        got = self.report.names(indices)
        return got if self.word is None else [self.word(x) for x in got]

    def columns(self, columns: Any) -> list[str]:
        got = self.report.column_names(columns)
        return got if self.word is None else [self.word(x) for x in got]


def _said(report: ControllabilityReport, word: Callable[[str], str] | None) -> _Said:
    return _Said(report, word)


def _short(names: list[str], limit: int = 8) -> str:
    if len(names) <= limit:
        return ", ".join(names)
    return ", ".join(names[:limit]) + f", ... ({len(names) - limit} more)"


def controllability(system: StructuredSystem, *, dimension: bool = True,
                    progress: Progress | None = None) -> ControllabilityReport:
    r"""Structural controllability of ``(A, B)`` by Lin's theorem, with the reasons.

    ``(A, B)`` is structurally controllable iff every state is reachable from an input
    (accessibility) and the generic rank of ``[A B]`` is ``n`` (no dilation) [1]_, [2]_.

    Parameters
    ----------
    system : StructuredSystem
    dimension : bool, default True
        Also compute the generic dimension of the controllable subspace (Hosoe [3]_).
        It costs one min-cost assignment on the accessible part when the system is not
        controllable (nothing when it is); switch off for very large failing systems.
    progress : callable, optional
        ``progress(stage, done, total)``: ``"reach and matching"`` (0/1, then 1/1), then,
        when the dimension is computed, ``"controllable dimension"`` after each phase of
        the assignment (``done`` of the ``total`` states a maximum matching left
        unmatched are placed): 12-15 s at 10^7 links. Above ``BACKGROUND_LINKS``
        links, when a state is unreached, the dimension runs on a second thread
        beside the search for the reasons; its progress is still passed on from the
        calling thread.

    Returns
    -------
    ControllabilityReport
        Verdict; inaccessible states grouped by source component; a dilation witness;
        the generic controllable dimension; the fewest dedicated inputs to add and where.

    Notes
    -----
    Convention: edge ``u -> v`` iff ``A[v, u] != 0``. The witness and the fix are one of
    possibly many; ties are broken deterministically by state order.
    Cost: one maximum matching of ``[A B]`` (Karp–Sipser + Pothen–Fan), one more for the
    fix, strongly connected components and a breadth-first search: near-linear.

    The generic controllable dimension is in general *smaller* than the term rank of
    ``[A_RR B_R]`` on the accessible states ``R``: it is the largest number of states
    covered by a stem–cycle disjoint subgraph whose stems start at inputs [3]_. It is
    computed as a min-cost assignment: rows are the accessible states, columns their
    in-neighbours and the inputs, real edges cost 1 and a dummy edge from each state to
    its own column costs 2 (a state on its dummy edge emits no matched edge, so every
    path of real edges starts at an input).

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    .. [2] R. W. Shields, J. B. Pearson, "Structural controllability of multiinput linear
       systems", IEEE TAC 21(2):203-212, 1976.
    .. [3] S. Hosoe, "Determination of generic dimensions of controllable subspaces and
       its application", IEEE TAC 25(6):1192-1196, 1980 (details from memory).

    Examples
    --------
    >>> from netctl import StructuredSystem, controllability
    >>> s = StructuredSystem.from_edges([0, 0], [1, 2], 3, inputs=[0])
    >>> r = controllability(s)
    >>> r.controllable, r.controllable_dimension, r.names(r.fix)
    (False, 2, ['x2'])
    """
    return _report(system, "controllability", dimension, progress)


def observability(system: StructuredSystem, *, dimension: bool = True,
                  progress: Progress | None = None) -> ControllabilityReport:
    """Structural observability of ``(A, C)``: controllability of the dual ``(A^T, C^T)``.

    Every state must have a directed path *to* a measured state, and the generic rank of
    ``[A; C]`` must be ``n``. The report's ``fix`` lists where to add dedicated sensors;
    ``inaccessible`` the states no output sees, grouped by *sink* component.
    See :func:`controllability` for the method and ``progress`` (its dimension stage
    is ``"observable dimension"``).

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    .. [2] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Observability of complex
       systems", PNAS 110(7):2460-2465, 2013 (details from memory): the dual view,
       one sensor per root component of the inference diagram.
    """
    return _report(system.dual(), "observability", dimension, progress)


def is_structurally_controllable(system: StructuredSystem) -> bool:
    """True when ``(A, B)`` is structurally controllable (no reasons computed).

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    """
    return controllability(system, dimension=False).controllable


def is_structurally_observable(system: StructuredSystem) -> bool:
    """True when ``(A, C)`` is structurally observable (Lin's test on the dual).

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    """
    return observability(system, dimension=False).controllable


def _report(system: StructuredSystem, kind: str, dimension: bool,
            progress: Progress | None = None) -> ControllabilityReport:
    if progress is not None:
        progress("reach and matching", 0, 1)
    A, B = system.pattern("A"), system.pattern("B")
    n, m = system.n_states, system.n_inputs
    st = structure_of(A)
    acc = accessible_states(st, B)
    inaccessible = np.flatnonzero(~acc)
    stage = "controllable" if kind == "controllability" else "observable"
    early = None
    if dimension and inaccessible.size and A.nnz + B.nnz >= BACKGROUND_LINKS:
        # certain to fail: Hosoe's dimension starts now, on a second thread (compiled
        # kernels without the GIL), while the reasons below are found
        from netctl._background import Background

        early = Background(lambda note: _hosoe_dimension(A, B, acc, note),
                           name="netctl-dimension")
    groups = _inaccessible_groups(st, acc) if inaccessible.size else ()
    # a fix for an unreached component goes where an actuator (sensor) may sit, when the
    # node table says where (e.g. a grid's generator buses, their frequency states)
    # and, for inputs in a second-order model, on a velocity state, never on a position
    prefer = site_preference(system.nodes, system.model, actuators=kind == "controllability")
    # of the smallest fixes, one with the fewest states the node table bars (exact, also
    # with cycles: completion's Notes), as the minimum input design does
    avoid = sites_to_avoid(system.nodes, actuators=kind == "controllability")
    comp = completion(A, B, st, prefer=prefer, avoid=avoid)
    rank = comp.matching_size
    dil = _dilation(A, B, comp.row_match) if rank < n else None
    ok = bool(inaccessible.size == 0 and rank == n)
    if progress is not None:
        progress("reach and matching", 1, 1)
    dim: int | None
    step = None if progress is None else (
        lambda done, total: progress(f"{stage} dimension", done, total))
    if early is not None:
        dim = early.result(step)
    elif ok:
        dim = n
    elif dimension:
        dim = _hosoe_dimension(A, B, acc, step)
    else:
        dim = None
    return ControllabilityReport(
        kind=kind, controllable=ok, n_states=n, n_inputs=m, inaccessible=inaccessible,
        groups=groups, structural_rank=rank, dilation=dil, controllable_dimension=dim,
        fix=comp.states if not ok else np.zeros(0, np.int64),
        state_names=system.state_names, input_names=system.input_names, model=system.model)


def _inaccessible_groups(st: Structure, acc: np.ndarray) -> tuple[InaccessibleGroup, ...]:
    from netctl.graph.components import (condensation_sources, label_reach,
                                         strongly_connected_components)

    unreached = ~acc
    if "_components" in st.__dict__:  # the whole graph's components, already at hand
        k, scc, is_source = st.n_scc, st.scc, st.source_scc
    else:
        # a predecessor of an inaccessible state is inaccessible, so the inaccessible
        # states are whole components of the graph, and a source component of their
        # subgraph is one of the whole graph: decompose that subgraph only (Tarjan over
        # its in-edges; the accessible part, most of a failing design, is not visited)
        k, scc = strongly_connected_components(st.in_indptr, st.in_indices, unreached)
        is_source = condensation_sources(st.in_indptr, st.in_indices, scc, k)
    comps = np.unique(scc[unreached])
    sources = comps[is_source[comps]]
    # members of every unreached source component, grouped (one sort, not one scan each)
    slot = np.full(k + 1, -1, np.int64)  # slot[-1] (label -1: accessible) stays -1
    slot[sources] = np.arange(sources.size)
    members = np.flatnonzero(slot[scc] >= 0)
    members = members[np.argsort(slot[scc[members]], kind="stable")]
    bounds = np.searchsorted(slot[scc[members]], np.arange(sources.size + 1))
    # one labelled search: each inaccessible state goes to the first source reaching it
    labels = label_reach(st.out_indptr, st.out_indices, members, slot[scc[members]], unreached)
    down = np.flatnonzero((labels >= 0) & (slot[scc] < 0))
    down = down[np.argsort(labels[down], kind="stable")]
    dbounds = np.searchsorted(labels[down], np.arange(sources.size + 1))
    return tuple(InaccessibleGroup(source=members[bounds[k]:bounds[k + 1]],
                                   downstream=down[dbounds[k]:dbounds[k + 1]])
                 for k in range(sources.size))


def _dilation(A: sp.csr_array, B: sp.csr_array, row_match: np.ndarray) -> Dilation:
    indptr, indices, n_cols = stack_AB(A, B)
    col_match = np.full(n_cols, -1, np.int64)
    rows = np.flatnonzero(row_match >= 0)
    col_match[row_match[rows]] = rows
    region_rows, _ = alternating_reach_rows(indptr, indices, n_cols, col_match)
    first = np.flatnonzero(row_match < 0)[:1]
    s_rows, s_cols = alternating_reach_rows(indptr, indices, n_cols, col_match, starts=first)
    return Dilation(states=np.flatnonzero(s_rows), fed_by=np.flatnonzero(s_cols),
                    region=np.flatnonzero(region_rows))


def _hosoe_dimension(A: sp.csr_array, B: sp.csr_array, acc: np.ndarray,
                     progress: Callable[[int, int], None] | None = None) -> int:
    """Hosoe's generic dimension: the most accessible states covered by disjoint stems
    and cycles (:func:`netctl.graph.cover.stem_cycle_cover`, primal-dual phases)."""
    from netctl.graph.cover import accessible_rows, stem_cycle_cover

    acc = np.asarray(acc, bool)
    r = int(np.count_nonzero(acc))
    if r == 0:
        return 0
    # [A B] on the accessible rows and state columns (inputs all kept), one pass
    ptr, ind, n_cols, has_loop = accessible_rows(A.indptr, A.indices, B.indptr, B.indices,
                                                 B.shape[1], acc)
    _, n_unc = stem_cycle_cover(ptr, ind, n_cols, has_loop, progress=progress)
    return r - n_unc


def _hosoe_dimension_reference(A: sp.csr_array, B: sp.csr_array, acc: np.ndarray) -> int:
    """Hosoe's dimension by SciPy's minimum-weight full matching (LAPJVsp) on the same
    costs: an independent reference for tests and benchmarks (slow on huge systems)."""
    # imported here: scipy.sparse.csgraph pulls in scipy.linalg (~0.1 s at start-up)
    import scipy.sparse as sp
    from scipy.sparse.csgraph import min_weight_full_bipartite_matching

    R = np.flatnonzero(acc)
    r = R.size
    if r == 0:
        return 0
    AB = sp.hstack([A[R][:, R], B[R]], format="csr") if B.shape[1] else A[R][:, R].tocsr()
    real = sp.csr_array((np.ones(AB.nnz), AB.indices, AB.indptr), shape=AB.shape)
    has_loop = real[np.arange(r), np.arange(r)] != 0
    dummy_cost = np.where(has_loop, 0.0, 2.0)
    dummy = sp.csr_array((dummy_cost, (np.arange(r), np.arange(r))), shape=AB.shape)
    cost = (real + dummy).tocsr()
    cost.eliminate_zeros()
    row_ind, col_ind = min_weight_full_bipartite_matching(sp.csr_matrix(cost))
    used = cost[row_ind, col_ind]
    return int(np.count_nonzero(used == 1.0))
