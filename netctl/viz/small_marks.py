"""What the notebook map marks for each kind of result (index arrays, no drawing).

:func:`result_marks` gives the point marks (states) and :func:`result_lines` the
highlighted links of a result computed on one system; :func:`change_view` gives the
system, marks and links of a before/after comparison (:func:`netctl.what_if`), drawn on
the union of the two networks; :func:`map_view` gives those of a network map's
:class:`~netctl.viz.MapMarks` (the report's static map). The marks are those of :mod:`netctl.viz.style`; the
drawing is :mod:`netctl.viz.small_map`.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from netctl.viz.style import MARKS

__all__ = ["Lines", "Rows", "change_view", "map_view", "result_lines", "result_marks"]

#: ``(mark, legend text, sorted state indices)`` rows.
Rows = list[tuple[str, str, np.ndarray]]
#: ``(mark, legend text, sources, targets)``: highlighted links ``source -> target``.
Lines = list[tuple[str, str, np.ndarray, np.ndarray]]


def _idx(value: Any) -> np.ndarray | None:
    if value is None:
        return None
    arr = np.asarray(value)
    if arr.dtype.kind not in "iu" or arr.ndim != 1:
        return None
    return np.unique(arr.astype(np.int64))


def _candidate_states(result: Any, chosen: np.ndarray) -> np.ndarray | None:
    """States some candidate actuator (sensor) of a placement acts on (reads), the chosen
    sites left out; ``None`` when every other state is one (the mark would say nothing)."""
    cands = getattr(result, "candidates", None)
    indices = getattr(cands, "indices", None)
    if indices is None:
        return None
    states = np.setdiff1d(np.unique(np.asarray(indices, np.int64)), chosen)
    n = len(getattr(result, "state_names", ()))
    if n and states.size >= n - np.unique(chosen).size:
        return None
    return states


def result_marks(result: Any, system: Any) -> Rows:
    """What the small map marks: ``(mark, legend text, sorted state indices)`` rows.

    The result's own findings come first; the system's own inputs, outputs and
    disturbances are shown where the result does not replace them (a minimum design
    replaces the given inputs; a sensor design the given outputs). Rows with no state
    are left out.
    """
    n = int(system.n_states)
    kind = str(getattr(result, "kind", "inputs"))
    sensing = kind in ("sensors", "observability")
    rows: Rows = []

    def add(key: str, label: str, idx: np.ndarray | None) -> None:
        if idx is not None and idx.size:
            rows.append((key, label, idx[(idx >= 0) & (idx < n)]))

    design = _idx(getattr(result, "drivers", None))
    placement = design is None and hasattr(result, "chosen")
    if design is None:
        design = _idx(getattr(result, "sites", None))
    if design is not None:
        if placement:
            label = ("chosen site: a sensor of this placement reads here" if sensing
                     else "chosen site: an actuator of this placement acts here")
        else:
            label = "sensor site of this design" if sensing else "driver node of this design"
        add("sensor" if sensing else "driver", label, design)
        if placement:
            key = "candidate_sensor" if sensing else "candidate"
            add(key, MARKS[key].label, _candidate_states(result, design))
    if getattr(result, "_frame_rows", "") == "states" and hasattr(result, "critical"):
        for key, field in (("role_critical", "critical"), ("role_intermittent", "intermittent"),
                           ("role_redundant", "redundant")):
            add(key, MARKS[key].label, _idx(getattr(result, field, None)))
    what = "output sees" if sensing else "input reaches"
    add("unreached", f"no {what} this state", _idx(getattr(result, "inaccessible", None)))
    add("unreached", "not forced by the inputs (strong structural test)",
        _idx(getattr(result, "unforced", None)))
    if hasattr(result, "unclosed_states"):
        add("unreached", "on a fixed mode: no station's loop closes it",
            _idx(result.unclosed_states))
    add("suggested_sensor" if sensing else "suggested",
        MARKS["suggested_sensor" if sensing else "suggested"].label,
        _idx(getattr(result, "fix", None)))
    dilation = getattr(result, "dilation", None)
    if dilation is not None and hasattr(dilation, "states"):
        add("dilation", MARKS["dilation"].label, _idx(dilation.states))
    if hasattr(result, "bottleneck"):  # decoupling
        add("bottleneck", MARKS["bottleneck"].label, _idx(result.bottleneck))
        fixes = [int(f.state) for f in getattr(result, "fixes", ()) if f.kind == "input"]
        add("suggested", "one more input here decouples the disturbances",
            _idx(np.asarray(fixes, np.int64)))
    if hasattr(result, "cut_off_states") and getattr(result, "elements", "") == "nodes":
        _sweep_states(result, add)
    if getattr(result, "_frame_rows", "") == "elements":  # a grid's N-1 over elements
        _element_states(result, system, add)
    if design is None or sensing:
        add("driver", "driver node: an input of the system acts here",
            _idx(system.driven_states()))
    if design is None or not sensing:
        add("sensor", "sensor site: an output of the system reads here",
            _idx(system.measured_states()))
    if system.n_disturbances:
        add("disturbed", MARKS["disturbed"].label, _idx(system.disturbed_states()))
    return rows


def _sweep_states(result: Any, add: Any) -> None:
    """States whose single loss breaks the design / raises the minimum inputs."""
    breaking = np.asarray(result.breaking, np.int64)
    costly = np.setdiff1d(np.asarray(result.costly, np.int64), breaking)
    src = np.asarray(result.sources, np.int64)
    add("fragile", "its loss alone breaks the design", _idx(src[breaking]))
    add("costly", MARKS["costly"].label, _idx(src[costly]))


def _element_effects(result: Any, system: Any) -> tuple[Any, np.ndarray, np.ndarray]:
    """What each element of a grid sweep removes, and the positions of the losses that
    break the design and of the others that raise the minimum inputs."""
    from netctl.structural.robustness import element_effects

    breaking = np.asarray(result.breaking, np.int64)
    return (element_effects(system), breaking,
            np.setdiff1d(np.asarray(result.costly, np.int64), breaking))


def _element_states(result: Any, system: Any, add: Any) -> None:
    """Buses (their states) and generators (the states their inputs act on) whose loss
    alone breaks the design / raises the minimum inputs."""
    eff, breaking, costly = _element_effects(result, system)
    B = system.pattern("B")
    acted = np.repeat(np.arange(system.n_states, dtype=np.int64), np.diff(B.indptr))
    for key, label, pos in (("fragile", "its loss (bus or generator) alone breaks the "
                             "design", breaking),
                            ("costly", "its loss (bus or generator) alone raises the "
                             "minimum number of inputs", costly)):
        states = [np.zeros(0, np.int64)]
        for k in pos.tolist():
            _, lost, inputs = eff.of(k)
            states.append(lost)
            states.append(acted[np.isin(B.indices, inputs)])
        add(key, label, _idx(np.concatenate(states)))


def result_lines(result: Any, system: Any = None) -> Lines:
    """Highlighted links of a result: critical links (link roles, every maximum matching),
    for a contingency sweep of links the links whose single loss breaks the design or
    raises the minimum number of inputs, and for a grid's sweep over elements (given
    ``system``) the links of the branches whose loss does."""
    out: Lines = []
    if getattr(result, "_frame_rows", "") == "elements" and system is not None:
        eff, breaking, costly = _element_effects(result, system)
        src, dst = system.edges()
        for key, label, pos in (("fragile_link", "a branch whose loss alone breaks the "
                                 "design", breaking),
                                ("costly_link", "a branch whose loss alone raises the "
                                 "minimum number of inputs", costly)):
            links = np.unique(np.concatenate([np.zeros(0, np.int64)]
                                             + [eff.of(k)[0] for k in pos.tolist()]))
            if links.size:
                out.append((key, label, src[links], dst[links]))
    if getattr(result, "_frame_rows", "") == "links":
        crit = _idx(getattr(result, "critical", None))
        if crit is not None and crit.size:
            out.append(("critical_link", MARKS["critical_link"].label,
                        np.asarray(result.sources, np.int64)[crit],
                        np.asarray(result.targets, np.int64)[crit]))
    if hasattr(result, "cut_off_states") and getattr(result, "elements", "") == "links":
        src = np.asarray(result.sources, np.int64)
        dst = np.asarray(result.targets, np.int64)
        breaking = np.asarray(result.breaking, np.int64)
        costly = np.setdiff1d(np.asarray(result.costly, np.int64), breaking)
        for key, pos in (("fragile_link", breaking), ("costly_link", costly)):
            if pos.size:
                out.append((key, MARKS[key].label, src[pos], dst[pos]))
    return out


def change_view(result: Any) -> tuple[Any, Rows, Lines]:
    """The map of a before/after comparison (a :class:`~netctl.structural.robustness.WhatIf`).

    Returns the union of the two networks (the states and links before the change plus
    the added ones; new states last), the point marks (driver nodes after the change,
    drivers before it only, removed states, the smallest fix after it) and the added and
    removed links, all in the union's indices.
    """
    from netctl.structural.robustness.whatif import apply_change

    before = result.before
    union, _, _ = apply_change(before, add_links=list(result.added_links))
    pos = {name: i for i, name in enumerate(union.state_names)}

    def at(names: Any) -> np.ndarray:
        return np.unique(np.array([pos[str(x)] for x in names if str(x) in pos], np.int64))

    rows: Rows = []

    def add(key: str, label: str, idx: np.ndarray) -> None:
        if idx.size:
            rows.append((key, label, idx))

    add("removed_state", MARKS["removed_state"].label, at(result.removed_nodes))
    add("driver", "driver node after the change (one minimum set)", at(result.drivers_after))
    add("former_driver", MARKS["former_driver"].label, at(result.drivers_lost))
    add("suggested", "after the change, add a dedicated input here (smallest fix)",
        at(result.fix_after))
    lines: Lines = []
    for key, links in (("removed_link", result.removed_links),
                       ("added_link", result.added_links)):
        if links:
            s = np.array([pos[str(u)] for u, _ in links], np.int64)
            t = np.array([pos[str(v)] for _, v in links], np.int64)
            lines.append((key, MARKS[key].label, s, t))
    return union, rows, lines


def map_view(marks: Any) -> tuple[Rows, Lines]:
    """What the static map of :func:`netctl.viz.draw_map` marks, as the small map's
    point marks and highlighted links.

    ``marks`` is a :class:`~netctl.viz.MapMarks`. Point marks: the states a disturbance
    acts on, unreached states, the dilation, the single points of failure, the driver
    nodes and where to add inputs, and the node roles when the map has them and they
    differ; links: critical links (when asked for), then the control paths (``chain``)
    and control cycles (``cycle``: its self-loops are drawn as rings) of the matching.
    """
    rows: Rows = []

    def add(key: str, idx: Any) -> None:
        arr = np.unique(np.asarray(idx, np.int64))
        if arr.size:
            rows.append((key, MARKS[key].label, arr))

    for key, field in (("disturbed", "disturbed"), ("unreached", "unreached"),
                       ("dilation", "dilation"), ("fragile", "fragile"),
                       ("driver", "drivers"), ("suggested", "suggested")):
        add(key, getattr(marks, field))
    roles = marks.roles
    if roles is not None and np.unique(roles).size > 1:  # one role everywhere says nothing
        for k, key in enumerate(("role_critical", "role_intermittent", "role_redundant")):
            add(key, np.flatnonzero(np.asarray(roles) == k))
    lines: Lines = []
    if marks.critical_sources is not None and marks.critical_targets is not None \
            and len(marks.critical_sources):
        lines.append(("critical_link", MARKS["critical_link"].label,
                      np.asarray(marks.critical_sources, np.int64),
                      np.asarray(marks.critical_targets, np.int64)))
    src = np.asarray(marks.matched_sources, np.int64)
    dst = np.asarray(marks.matched_targets, np.int64)
    cyc = np.asarray(marks.on_cycle, bool)
    for key, sel in (("chain", ~cyc), ("cycle", cyc)):
        if sel.any():
            lines.append((key, MARKS[key].label, src[sel], dst[sel]))
    return rows, lines
