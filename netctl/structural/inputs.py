"""Minimum inputs (driver nodes) and minimum sensors, and a summary of a network."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import Pattern, coo_pattern, diagonal_mask, empty_pattern
from netctl.structural._engine import (
    completion,
    site_preference,
    sites_to_avoid,
    structure_of,
)
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["InputDesign", "minimum_inputs", "minimum_sensors", "NetworkSummary", "summarize"]


@dataclass(frozen=True)
class InputDesign(ResultTables):
    """A minimum input (or sensor) design.

    Attributes
    ----------
    kind : {"inputs", "sensors"}
    dedicated : bool
        Whether each input acts on exactly one state.
    n_inputs : int
        The minimum number of inputs (sensors).
    drivers : ndarray of int
        The states acted on (read) directly, sorted.
    unmatched : ndarray of int
        The states left unmatched by the chosen maximum matching (Liu et al. 2011).
    wiring_indptr, wiring_states : ndarray of int
        Input ``k`` acts on ``wiring_states[wiring_indptr[k]:wiring_indptr[k+1]]`` (CSR
        form, so a design with 10^5 inputs holds two arrays, not 10^5 objects);
        :attr:`wiring` gives the same as a tuple of arrays.
    matching_size : int
        Size of a maximum matching of ``A`` (its structural rank).
    n_source_components : int
        Source components of ``A`` (sink components for sensors), ``beta``.
    n_sources_with_unmatched : int
        ``alpha``: source components that hold an unmatched state in the chosen matching.
    """

    _frame_rows = "states"
    _frame_sets = ("drivers", "unmatched")

    kind: str
    dedicated: bool
    n_states: int
    n_inputs: int
    drivers: np.ndarray
    unmatched: np.ndarray
    wiring_indptr: np.ndarray
    wiring_states: np.ndarray
    matching_size: int
    n_source_components: int
    n_sources_with_unmatched: int
    state_names: Sequence[str] = field(repr=False)
    model: str = "given"

    def names(self, indices: Any) -> list[str]:
        sn = self.state_names
        return [sn[i] for i in np.asarray(indices, dtype=np.int64).tolist()]

    @property
    def wiring(self) -> tuple[np.ndarray, ...]:
        """For each input, the states it acts on (sorted)."""
        p, w = self.wiring_indptr, self.wiring_states
        return tuple(w[p[k]:p[k + 1]] for k in range(p.size - 1))

    @property
    def driver_names(self) -> list[str]:
        return self.names(self.drivers)

    def apply(self, system: StructuredSystem) -> StructuredSystem:
        """``system`` with this design's inputs (or outputs, for sensors) installed."""
        n = system.n_states
        k = self.wiring_indptr.size - 1
        rows = self.wiring_states
        cols = np.repeat(np.arange(k), np.diff(self.wiring_indptr))
        M = coo_pattern(rows, cols, None, (n, k), count=False)[0]
        prefix = "u" if self.kind == "inputs" else "y"
        sizes = np.diff(self.wiring_indptr)
        names = [f"{prefix}:{self.state_names[int(rows[self.wiring_indptr[j]])]}"
                 if sizes[j] == 1 else f"{prefix}{j}" for j in range(k)]
        if self.kind == "inputs":
            return system.with_inputs(M, names=names)
        return system.with_outputs(M.to_scipy().T, names=names)

    def _wiring_names(self) -> list[list[str]]:
        flat = self.names(self.wiring_states)
        p = self.wiring_indptr.tolist()
        return [flat[a:b] for a, b in zip(p[:-1], p[1:])]

    def to_dict(self) -> dict[str, Any]:
        count_key = "n_inputs" if self.kind == "inputs" else "n_sensors"
        list_key = "drivers" if self.kind == "inputs" else "sensors"
        return {
            "analysis": "minimum_" + self.kind,
            "n_states": self.n_states,
            count_key: self.n_inputs,
            "dedicated": self.dedicated,
            "model": self.model,
            list_key: self.driver_names,
            "unmatched": self.names(self.unmatched),
            # input (sensor) k acts on (reads) the states wiring[k] (schema 2: arrays, not
            # one object per input; docs/JSON.md)
            "wiring": self._wiring_names(),
            "structural_rank_A": self.matching_size,
            "n_source_components" if self.kind == "inputs" else "n_sink_components":
                self.n_source_components,
        }


def minimum_inputs(system: StructuredSystem, *, dedicated: bool = False) -> InputDesign:
    r"""Fewest inputs that make ``system`` structurally controllable, and where to put them.

    Existing inputs of ``system`` are ignored (see :func:`controllability` for completing
    a given design).

    Parameters
    ----------
    system : StructuredSystem
    dedicated : bool, default False
        False: inputs may act on several states (Liu, Slotine, Barabási [1]_); the count
        is ``N_D = max(n - |M*|, 1)``. True: each input acts on exactly one state; the
        count is ``m_u + beta - alpha`` [2]_, [3]_.

    Returns
    -------
    InputDesign

    Notes
    -----
    With a maximum matching ``M*`` of the bipartite graph of ``A``, the unmatched states
    need an input each; every *source* strongly connected component (one no other
    component feeds) must also be reached. Among all maximum matchings, netctl picks one
    whose unmatched states lie in as many source components as possible (``alpha``), so
    the set of driven states is as small as possible (it is the dedicated optimum); with
    shared inputs, input 0 also acts on one state of each source component still
    unreached. When ``n > 0`` at least one input is needed. Where a source component needs
    a representative, a state the node table allows to host an actuator (column
    ``actuator``; ``sensor`` for sensors) is preferred, and of all the smallest driver
    sets the one chosen holds as few states that column bars as any (exact: a
    least-cost matching, :func:`netctl.structural._engine.completion`); constrained and
    cost-aware placement proper is :mod:`netctl.structural.placement`.

    The minimum set is one of possibly many; ties are broken deterministically by the
    matching order (state indices). Cost: two maximum matchings and the strongly
    connected components, near-linear in the number of links.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] C. Commault, J.-M. Dion, "Input addition and leader selection for the
       controllability of graph-based systems", Automatica 49(11):3322-3328, 2013
       (details from memory).
    .. [3] S. Pequito, S. Kar, A. P. Aguiar, "A framework for structural input/output
       and control configuration selection in large-scale systems", IEEE TAC
       61(2):303-318, 2016 (volume and pages from memory). arXiv:1309.5868

    Examples
    --------
    >>> from netctl import StructuredSystem, minimum_inputs
    >>> star = StructuredSystem.from_edges([0, 0, 0], [1, 2, 3])   # out-star, 3 leaves
    >>> minimum_inputs(star).n_inputs
    3
    """
    return _design(system, "inputs", dedicated)


def minimum_sensors(system: StructuredSystem, *, dedicated: bool = False) -> InputDesign:
    """Fewest outputs (sensors) that make ``system`` structurally observable.

    The dual of :func:`minimum_inputs`: computed on ``(A^T, C^T)``, so *sink* components
    (no edge leaving them) must each hold a sensor. Existing outputs are ignored.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] S. Pequito, S. Kar, A. P. Aguiar, "A framework for structural input/output
       and control configuration selection in large-scale systems", IEEE TAC
       61(2):303-318, 2016 (volume and pages from memory). arXiv:1309.5868
    """
    return _design(system.dual(), "sensors", dedicated)


def _design(system: StructuredSystem, kind: str, dedicated: bool) -> InputDesign:
    if not isinstance(dedicated, bool):
        from netctl.errors import OptionError
        raise OptionError(f"dedicated must be True or False, found {dedicated!r}.")
    n = system.n_states
    # where a source component needs a representative, prefer states that may host one
    # (an input on a velocity (frequency) state, never on an angle, in a second-order model)
    prefer = site_preference(system.nodes, system.model, actuators=kind == "inputs")
    # of the smallest driver sets, one with the fewest states the node table bars (the
    # count does not depend on it)
    avoid = sites_to_avoid(system.nodes, actuators=kind == "inputs")
    comp = completion(system.pattern("A"), empty_pattern((n, 0)), prefer=prefer,
                      avoid=avoid)
    drivers = comp.states
    unmatched = comp.unmatched
    reps = comp.representatives
    if dedicated or n == 0:
        # one input per driven state
        ptr = np.arange(drivers.size + 1, dtype=np.int64)
        states = drivers.astype(np.int64)
    elif unmatched.size:
        # input k acts on unmatched state k; input 0 also on the unreached sources' states
        first = np.union1d(unmatched[:1], reps).astype(np.int64)
        states = np.concatenate([first, unmatched[1:]]).astype(np.int64)
        ptr = np.concatenate([[0], first.size + np.arange(unmatched.size, dtype=np.int64)])
    else:
        ptr = np.array([0, reps.size], np.int64)
        states = reps.astype(np.int64)
    return InputDesign(
        kind=kind, dedicated=dedicated, n_states=n, n_inputs=int(ptr.size - 1),
        drivers=drivers, unmatched=unmatched, wiring_indptr=ptr, wiring_states=states,
        matching_size=comp.matching_size,
        n_source_components=comp.n_unreached_sources,  # no inputs: every source is unreached
        n_sources_with_unmatched=comp.n_sources_hit, state_names=system.state_names,
        model=system.model)


@dataclass(frozen=True)
class NetworkSummary(ResultTables):
    """Sizes and structural facts of a system (what ``netctl inspect`` prints)."""

    _frame_rows = "summary"

    n_states: int
    n_links: int
    n_self_loops: int
    n_inputs_given: int
    n_outputs_given: int
    n_weak_components: int
    n_strong_components: int
    n_source_components: int
    n_sink_components: int
    structural_rank: int
    n_inputs: int
    n_dedicated_inputs: int
    n_sensors: int
    n_dedicated_sensors: int
    n_isolated: int
    weighted: bool
    model: str

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__, analysis="summary")


def summarize(system: StructuredSystem) -> NetworkSummary:
    """Sizes, components, structural rank and minimum input / sensor counts.

    The minimum counts are those of :func:`minimum_inputs` (shared inputs and
    dedicated) and :func:`minimum_sensors` (dedicated sensors = shared, see Notes
    there), each one near-linear.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    """
    from netctl.graph.components import weak_component_count

    n = system.n_states
    A = system.pattern("A")
    st = structure_of(A)
    _ = st.n_scc  # components once: the dual shares them (they do not depend on orientation)
    st_dual = st.dual()
    k_weak = weak_component_count(st.in_indptr, st.in_indices)
    comp = completion(A, empty_pattern((n, 0)), st)
    # A's transpose as the index arrays already built (no transpose, no data copy; the
    # data are never read)
    AT = Pattern(np.ones(st.out_indices.size, np.int8), st.out_indices, st.out_indptr, (n, n))
    # a maximum matching of A, transposed, is one of A^T: the dual skips the search
    rows = np.flatnonzero(comp.row_match >= 0)
    col_match = np.full(n, -1, np.int64)
    col_match[comp.row_match[rows]] = rows
    comp_dual = completion(AT, empty_pattern((n, 0)), st_dual, start=(col_match, comp.row_match))
    del rows, col_match
    deg = np.diff(st.in_indptr) + np.diff(st.out_indptr)
    loops = diagonal_mask(A)
    isolated = int(np.count_nonzero((deg - 2 * loops) == 0))
    return NetworkSummary(
        n_states=n, n_links=system.n_links, n_self_loops=system.n_self_loops,
        n_inputs_given=system.n_inputs, n_outputs_given=system.n_outputs,
        n_weak_components=int(k_weak), n_strong_components=st.n_scc,
        n_source_components=int(np.count_nonzero(st.source_scc)),
        n_sink_components=int(np.count_nonzero(st_dual.source_scc)),
        structural_rank=comp.matching_size,
        n_inputs=max(n - comp.matching_size, 1) if n else 0,
        n_dedicated_inputs=int(comp.states.size),
        n_sensors=max(n - comp.matching_size, 1) if n else 0,
        n_dedicated_sensors=int(comp_dual.states.size),
        n_isolated=isolated, weighted=system.weighted, model=system.model)
