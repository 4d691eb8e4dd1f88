"""What a network map shows, computed apart from drawing it (index arrays, no matplotlib)."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["LAYERS", "MapMarks", "map_marks", "roles_available"]

#: Optional layers a map can show on request (``show=``).
LAYERS: tuple[str, ...] = ("roles", "critical-links")

#: Role codes in :attr:`MapMarks.roles`.
ROLE_NAMES: tuple[str, ...] = ("critical", "intermittent", "redundant")


@dataclass(frozen=True)
class MapMarks:
    """Everything a network map marks, as sorted index arrays.

    Attributes
    ----------
    design : {"minimum", "given", "chosen"}
        Where the driver nodes come from: a minimum design computed here, the inputs of
        the system itself, or states chosen by the caller.
    drivers : ndarray of int
        States an input acts on directly (driver nodes).
    n_inputs : int
        Number of input columns (a shared input may act on several drivers).
    suggested : ndarray of int
        Where to add dedicated inputs when the design is not structurally controllable
        (the smallest fix); empty otherwise.
    unreached : ndarray of int
        States no input reaches.
    dilation : ndarray of int
        A dilation witness: states fed by fewer states/inputs than they number.
    matched_sources, matched_targets : ndarray of int
        The matched links ``u -> v`` of the chosen maximum matching of ``[A B]``: they
        form disjoint control paths (stems, starting at a driver or at a state that no
        input matches) and control cycles.
    on_cycle : ndarray of bool
        Per matched link: whether it lies on a cycle of matched links.
    roles : ndarray of int8 or None
        Per state: 0 critical, 1 intermittent, 2 redundant (see :data:`ROLE_NAMES`);
        ``None`` when not asked for.
    critical_sources, critical_targets : ndarray of int or None
        Links in every maximum matching; ``None`` when not asked for. For a grid (the
        system has an element table): the links of the critical branches instead (both
        directions; their outage raises the minimum inputs or breaks the drawn design),
        never a link inside a bus.
    critical_elements : tuple of str
        For a grid with the critical-links layer: the IDs of those branches.
    critical_link_elements : tuple of str
        For a grid: the branch ID of each critical link.
    grid : bool
        The system is a grid (it has an element table).
    disturbed : ndarray of int
        States some disturbance acts on directly (``E`` pattern; empty without).
    fragile : ndarray of int
        States where a single point of failure sits: the sites of the actuators (of a
        given or chosen design) and of the file's sensors whose loss alone breaks
        structural controllability (observability); see
        :func:`netctl.structural.failures.audit_design`.
    fragile_notes : tuple of (int, str)
        Per such state, which element it is and what its loss costs, in words.
    failures_note : str
        What the single-point audit covered (or why it was not run).
    """

    n_states: int
    design: str
    drivers: np.ndarray
    n_inputs: int
    controllable: bool
    suggested: np.ndarray
    unreached: np.ndarray
    dilation: np.ndarray
    matched_sources: np.ndarray
    matched_targets: np.ndarray
    on_cycle: np.ndarray
    roles: np.ndarray | None
    critical_sources: np.ndarray | None
    critical_targets: np.ndarray | None
    model: str
    state_names: tuple[str, ...] = field(repr=False)
    disturbed: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    fragile: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    fragile_notes: tuple[tuple[int, str], ...] = field(default=(), repr=False)
    failures_note: str = ""
    critical_elements: tuple[str, ...] = ()
    critical_link_elements: tuple[str, ...] = field(default=(), repr=False)
    grid: bool = False

    def names(self, indices: Iterable[Any]) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    @property
    def n_cycles_links(self) -> int:
        """Number of matched links that lie on control cycles."""
        return int(np.count_nonzero(self.on_cycle))

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        d: dict[str, Any] = {
            "analysis": "map",
            "n_states": self.n_states,
            "model": self.model,
            "design": self.design,
            "n_inputs": self.n_inputs,
            "controllable": self.controllable,
            "drivers": self.names(self.drivers),
            "suggested_inputs": self.names(self.suggested),
            "unreached": self.names(self.unreached),
            "dilation": self.names(self.dilation),
            "control_links": [
                {"source": self.state_names[int(u)], "target": self.state_names[int(v)],
                 "cycle": bool(c)}
                for u, v, c in zip(self.matched_sources, self.matched_targets, self.on_cycle)],
        }
        if self.disturbed.size:
            d["disturbed_states"] = self.names(self.disturbed)
        if self.failures_note:
            d["single_points_of_failure"] = {
                "covered": self.failures_note,
                "states": self.names(self.fragile),
                "why": [{"state": self.state_names[i], "element": text}
                        for i, text in self.fragile_notes]}
        if self.roles is not None:
            d["roles"] = {name: self.names(np.flatnonzero(self.roles == k))
                          for k, name in enumerate(ROLE_NAMES)}
        if self.critical_sources is not None and self.critical_targets is not None:
            d["critical_links"] = [
                {"source": self.state_names[int(u)], "target": self.state_names[int(v)]}
                for u, v in zip(self.critical_sources, self.critical_targets)]
            for row, e in zip(d["critical_links"], self.critical_link_elements):
                row["element"] = e  # the branch ID (a grid)
            if self.critical_elements:
                d["critical_branches"] = list(self.critical_elements)
        return d


def roles_available() -> bool:
    """Whether the node/link role analysis (:mod:`netctl.structural.roles`) is installed."""
    import importlib.util

    try:
        return importlib.util.find_spec("netctl.structural.roles") is not None
    except (ImportError, ValueError):
        return False


def map_marks(system: StructuredSystem, *, inputs: Any = None,
              show: Iterable[str] = (), failures: bool = True) -> MapMarks:
    r"""Compute what a map of ``system`` marks: drivers, control paths, trouble spots.

    Parameters
    ----------
    system : StructuredSystem
    inputs : None, "minimum" or sequence of state names or indices
        ``None``: the system's own inputs when it has any, otherwise a minimum design
        (:func:`netctl.structural.minimum_inputs`). ``"minimum"``: always a minimum
        design. A sequence: a dedicated input on each of those states.
    show : iterable of {"roles", "critical-links"}
        Optional layers (they need :mod:`netctl.structural.roles`).
    failures : bool, default True
        Mark the single points of failure: the actuators of a given or chosen design
        and the file's sensors whose loss alone breaks the design (every actuator of a
        minimum design is one by definition, so a minimum design is not audited).

    Returns
    -------
    MapMarks

    Raises
    ------
    OptionError
        Unknown layer in ``show``, or a layer whose analysis is not installed.

    Notes
    -----
    The control paths are the links of one maximum matching of ``[A B]`` (Liu, Slotine,
    Barabási [1]_): each state has at most one matched in-link and one matched out-link,
    so the matched links split into disjoint paths and cycles. A path starts at a state
    whose in-copy is matched to an input (a driver) or is unmatched. The maximum
    matching is one of possibly many; the choice is deterministic. Trouble spots come
    from Lin's test (:func:`netctl.structural.controllability`). Near-linear cost.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> path = StructuredSystem.from_edges([0, 1, 2], [1, 2, 3], 4)
    >>> m = map_marks(path)
    >>> m.design, m.names(m.drivers), m.matched_sources.tolist(), m.on_cycle.tolist()
    ('minimum', ['x0'], [0, 1, 2], [False, False, False])
    """
    from netctl.structural import controllability, minimum_inputs
    from netctl.structural._engine import completion

    layers = _check_layers(show)
    n = system.n_states
    if isinstance(inputs, str) and inputs == "minimum":
        design = "minimum"
    elif inputs is None:
        design = "given" if system.n_inputs else "minimum"
    elif isinstance(inputs, str):
        raise OptionError(f"inputs must be None, 'minimum' or a sequence of states, found "
                          f"{inputs!r}.")
    else:
        design = "chosen"
    if design == "minimum":
        actuated = minimum_inputs(system).apply(system)
    elif design == "chosen":
        idx = system.index_of(list(inputs))
        actuated = system.with_inputs(system.names_of(idx))
    else:
        actuated = system
    report = controllability(actuated, dimension=False)
    comp = completion(actuated.pattern("A"), actuated.pattern("B"))
    rm = comp.row_match
    state_pred = (rm >= 0) & (rm < n)
    tgt = np.flatnonzero(state_pred).astype(np.int64)
    src = rm[tgt].astype(np.int64)
    # matched links form disjoint paths and cycles; a component of them is a cycle
    # exactly when none of its states lacks a matched in-link from a state
    if tgt.size:
        from netctl.viz.layout import weak_labels

        _, lab = weak_labels(n, src, tgt)
        has_head = np.zeros(n, bool)
        has_head[lab[~state_pred]] = True
        on_cycle = ~has_head[lab[tgt]]
    else:
        on_cycle = np.zeros(0, bool)
    roles = crit_s = crit_t = None
    crit_el: tuple[str, ...] = ()
    crit_owner: tuple[str, ...] = ()
    if layers:
        roles, crit_s, crit_t = _roles(system, layers)
        if "critical-links" in layers and system.elements is not None:
            crit_s, crit_t, crit_el, crit_owner = _critical_branches(actuated)
    fragile, notes, covered = (_single_points(system, actuated, design) if failures
                               else (np.zeros(0, np.int64), (), ""))
    return MapMarks(
        n_states=n, design=design, drivers=actuated.driven_states(),
        n_inputs=actuated.n_inputs, controllable=report.controllable,
        suggested=np.asarray(report.fix, np.int64), unreached=report.inaccessible,
        dilation=(report.dilation.states if report.dilation is not None
                  else np.zeros(0, np.int64)),
        matched_sources=src, matched_targets=tgt, on_cycle=on_cycle, roles=roles,
        critical_sources=crit_s, critical_targets=crit_t, model=system.model,
        state_names=tuple(system.state_names), disturbed=system.disturbed_states(),
        fragile=fragile, fragile_notes=notes, failures_note=covered,
        critical_elements=crit_el, critical_link_elements=crit_owner,
        grid=system.elements is not None)


def _critical_branches(actuated: StructuredSystem
                       ) -> tuple[np.ndarray, np.ndarray, tuple[str, ...], tuple[str, ...]]:
    """Links (both directions, between buses only) and IDs of the branches whose outage
    raises the minimum inputs or leaves the drawn design not structurally controllable;
    links inside a bus (part of the model) are never marked."""
    from netctl.records import BRANCH_KINDS
    from netctl.structural.branches import link_elements
    from netctl.structural.robustness.elements import element_sweep

    table = actuated.elements
    assert table is not None
    sw = element_sweep(actuated, kinds=BRANCH_KINDS)
    bad = (sw.n_inputs_after > sw.n_inputs) | (~sw.controllable_after if sw.has_design
                                               else False)
    ids = tuple(sw.ids[k] for k in np.flatnonzero(bad).tolist())
    want = np.array(sorted(table.position(e) for e in ids), np.int64)
    owner = link_elements(actuated)
    # every circuit of the pair: a link is marked when the branch owning it is critical
    keep = np.isin(owner, want) if want.size else np.zeros(owner.size, bool)
    src, tgt = actuated.edges()
    return src[keep].astype(np.int64), tgt[keep].astype(np.int64), ids, tuple(
        table.ids[int(k)] for k in owner[keep].tolist())


#: At most this many single points of failure are explained on a map (all are marked).
EXPLAINED = 200


def _single_points(system: StructuredSystem, actuated: StructuredSystem, design: str
                   ) -> tuple[np.ndarray, tuple[tuple[int, str], ...], str]:
    """States of critical actuators (given/chosen design) and critical sensors, with
    why; and what was covered. Near-linear (no useful/useless classification). The
    audit module (and scipy with it) is imported only when there is something to audit."""
    sites: list[np.ndarray] = []
    notes: list[tuple[int, str]] = []
    covered: list[str] = []
    audits = []
    if (design != "minimum" and actuated.n_inputs) or system.n_outputs:
        from netctl.structural.failures import audit_design
    if design != "minimum" and actuated.n_inputs:
        audits.append(("actuator", audit_design(actuated, kind="inputs", classify=False)))
    elif design == "minimum":
        covered.append("actuators not audited (a minimum design has no spare: every "
                       "actuator is a single point of failure by definition)")
    if system.n_outputs:
        audits.append(("sensor", audit_design(system, kind="sensors", classify=False)))
    for word, au in audits:
        what = "controllable" if word == "actuator" else "observable"
        if not au.works:
            covered.append(f"{word}s not audited (the intact design is not structurally "
                           f"{what})")
            continue
        crit = au.critical
        covered.append(f"{au.n_elements} {word}(s) audited, {crit.size} single point(s) "
                       "of failure")
        for j, k in enumerate(crit.tolist()):
            at = au.element_states[k]
            sites.append(at)
            if j < EXPLAINED:
                why = "; ".join(au.reasons(k))
                text = (f"{word} {au.element_names[k]}: losing it leaves the system not "
                        f"structurally {what}" + (f" ({why})" if why else ""))
                notes.extend((int(i), text) for i in at.tolist())
    fragile = (np.unique(np.concatenate(sites)).astype(np.int64) if sites
               else np.zeros(0, np.int64))
    return fragile, tuple(sorted(notes)), "; ".join(covered)


def _check_layers(show: Iterable[str]) -> tuple[str, ...]:
    if isinstance(show, str):
        show = [s.strip() for s in show.split(",") if s.strip()]
    layers = tuple(show)
    for layer in layers:
        if layer not in LAYERS:
            raise OptionError(f"unknown map layer {layer!r}; choose from {', '.join(LAYERS)}.")
    if layers and not roles_available():
        raise OptionError(f"the layer(s) {', '.join(layers)} need the node and link role "
                          "analysis (netctl.structural.roles), which is not available in "
                          "this version of netctl; draw the map without --show.")
    return layers


def _roles(system: StructuredSystem, layers: tuple[str, ...]
           ) -> tuple[np.ndarray | None, np.ndarray | None, np.ndarray | None]:
    from netctl.structural import roles as roles_mod

    roles = crit_s = crit_t = None
    if "roles" in layers:
        nr = roles_mod.node_roles(system)
        # recode by name, so the map's order never depends on the analysis' codes
        recode = np.array([ROLE_NAMES.index(name) for name in roles_mod.NODE_ROLES], np.int8)
        roles = recode[np.asarray(nr.role, np.int64)]
    if "critical-links" in layers:
        lr = roles_mod.link_roles(system)
        crit = np.asarray(lr.critical, np.int64)
        crit_s, crit_t = lr.sources[crit].astype(np.int64), lr.targets[crit].astype(np.int64)
    return roles, crit_s, crit_t
