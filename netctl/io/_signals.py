"""Disturbances and regulated outputs in network files (shared by the readers and writers).

A file marks a node as a disturbance (node attribute ``disturbance = true`` in GraphML,
GML, node-link JSON and the TOML description; a ``# disturbances:`` comment line at the top
of an edge list); its outgoing links become its column of ``E`` and it leaves the states.
A node attribute ``regulated = true`` (or a ``# regulated:`` line) adds a regulated output
``z:<state>`` reading that state. See docs/FORMATS.md.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from typing import Any

import numpy as np

from netctl._parts import _truthy
from netctl.errors import InvalidSystemError, UnknownNameError
from netctl.io._common import file_error
from netctl.system import StructuredSystem

__all__ = ["mark_disturbances", "apply_node_kinds", "disturbance_rows",
           "disturbance_links", "dedicated_regulated", "regulated_not_kept"]

def mark_disturbances(system: StructuredSystem, names: Sequence[str], path: object,
                      line: int | None = None) -> StructuredSystem:
    """``system.states_to_disturbances(names)`` with errors reported against the file."""
    if not len(names):
        return system
    try:
        return system.states_to_disturbances(list(names))
    except (InvalidSystemError, UnknownNameError) as exc:
        raise file_error(path, line, str(exc)) from None


def apply_node_kinds(system: StructuredSystem, path: object) -> StructuredSystem:
    """Turn the node-table columns ``disturbance`` and ``regulated`` (true/false) into
    disturbances and regulated outputs, and drop the columns (the structure holds them)."""
    if "disturbance" not in system.nodes and "regulated" not in system.nodes:
        return system
    nodes = dict(system.nodes)
    marks = {k: nodes.pop(k, None) for k in ("disturbance", "regulated")}
    chosen: dict[str, list[str]] = {}
    for k, col in marks.items():
        chosen[k] = []
        if col is None:
            continue
        for i, v in enumerate(col.tolist()):
            if v is None or (isinstance(v, float) and math.isnan(v)):
                continue
            if not isinstance(v, (bool, int, str)) or str(v).strip().lower() not in (
                    "true", "false", "1", "0", "yes", "no"):
                raise file_error(path, None, f"node {system.state_names[i]!r} has {k} = "
                                 f"{v!r}; it must be true or false.")
            if _truthy(v):
                chosen[k].append(system.state_names[i])
    out = system._replace(nodes=nodes)
    if chosen["regulated"]:
        out = out.with_regulated(chosen["regulated"])
    return mark_disturbances(out, chosen["disturbance"], path)


def disturbance_rows(system: StructuredSystem) -> list[dict[str, Any]]:
    """One attribute dict per disturbance (``disturbance = True`` plus its table)."""
    rows: list[dict[str, Any]] = [{"disturbance": True} for _ in range(system.n_disturbances)]
    for k, col in system.disturbance_nodes.items():
        for j, v in enumerate(col.tolist()):
            if v is None or (isinstance(v, float) and math.isnan(v)):
                continue
            rows[j][k] = v
    return rows


def disturbance_links(system: StructuredSystem) -> Iterable[tuple[str, str, float]]:
    """``(disturbance, state, weight)`` for every entry of ``E``, column by column."""
    from netctl._csr import transpose_pattern

    E = transpose_pattern(system.pattern("E"))  # row j: the states disturbance j acts on
    for j, w in enumerate(system.disturbance_names):
        for p in range(E.indptr[j], E.indptr[j + 1]):
            yield w, system.state_names[int(E.indices[p])], float(E.data[p])


def dedicated_regulated(system: StructuredSystem) -> list[str] | None:
    """States read by regulated outputs when each reads one state and is named
    ``z:<state>`` (what a node attribute can say), else None."""
    H = system.pattern("H")
    if not system.n_regulated:
        return []
    if not np.all(np.diff(H.indptr) == 1):
        return None
    states = [system.state_names[int(i)] for i in H.indices]
    if [f"z:{s}" for s in states] != list(system.regulated_names):
        return None
    return states


def regulated_not_kept(system: StructuredSystem) -> str:
    """A warning fragment when the regulated outputs cannot be written as node marks."""
    if dedicated_regulated(system) is None:
        return (f"the {system.n_regulated} regulated output(s) are not all 'z:<state>' "
                "reading one state each, so they were not written")
    return ""
