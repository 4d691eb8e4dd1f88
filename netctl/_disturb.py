"""Turning states of a :class:`~netctl.system.StructuredSystem` into disturbances.

The body of :meth:`StructuredSystem.states_to_disturbances
<netctl.system.StructuredSystem.states_to_disturbances>` (its docstring, the public
reference, stays on the class): readers call it for the nodes a file marks as
disturbances. It checks that each one is exogenous (no link into it, no input, sensor or
regulated output on it) and moves its outgoing links into ``E`` and its node-table row
into the disturbances' table. It takes the system as an argument, so this module never
imports :mod:`netctl.system` at run time (no import cycle).
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl._csr import hstack_patterns, take, transpose_pattern
from netctl._parts import _missing
from netctl.errors import InvalidSystemError

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = ["states_to_disturbances"]


def states_to_disturbances(system: StructuredSystem, names: Iterable[object]
                           ) -> StructuredSystem:
    """:meth:`StructuredSystem.states_to_disturbances` (see there)."""
    idx = system.index_of(list(names))
    if idx.size == 0:
        return system
    if np.unique(idx).size != idx.size:
        dup = system.state_names[int(np.flatnonzero(np.bincount(idx) > 1)[0])]
        raise InvalidSystemError(f"the disturbance {dup!r} is named twice.")
    n = system.n_states
    P = system._parts
    indeg = np.diff(P["A"].indptr)
    for i in idx.tolist():
        if indeg[i]:
            src = system.state_names[int(P["A"].indices[P["A"].indptr[i]])]
            what = "a self-loop" if src == system.state_names[i] else f"a link from {src!r}"
            raise InvalidSystemError(
                f"{system.state_names[i]!r} is marked as a disturbance but has {indeg[i]} "
                f"incoming link{'s' if indeg[i] > 1 else ''} ({what}); a disturbance is "
                "exogenous, nothing in the plant acts on it: remove the links into it, or "
                "model it as a state.")
    for M, what in ((P["B"], "an input acts on"), (transpose_pattern(P["C"]), "a sensor "
                    "reads"), (transpose_pattern(P["H"]), "a regulated output reads")):
        hit = idx[np.diff(M.indptr)[idx] > 0]
        if hit.size:
            raise InvalidSystemError(
                f"{system.state_names[int(hit[0])]!r} is marked as a disturbance, but {what} "
                "it; inputs, sensors and regulated outputs belong on states only.")
    keep = np.ones(n, bool)
    keep[idx] = False
    kept = np.flatnonzero(keep)
    A = take(P["A"], kept, kept)
    E = hstack_patterns(take(P["E"], kept), take(P["A"], kept, idx))
    dnames = tuple(system.disturbance_names) + tuple(system.state_names[int(i)] for i in idx)
    cols = set(system.nodes) | set(system.disturbance_nodes)
    dnodes: dict[str, np.ndarray] = {}
    for c in sorted(cols):
        old = system.disturbance_nodes.get(c)
        new = system.nodes.get(c)
        old_arr = np.asarray(old) if old is not None else _missing(system.n_disturbances, new)
        new_arr = np.asarray(new)[idx] if new is not None else _missing(idx.size, old)
        dnodes[c] = np.concatenate([old_arr, new_arr]) if old_arr.size else new_arr
    names_kept: Any = [system.state_names[int(i)] for i in kept]
    return system._replace(
        A=A, B=take(P["B"], kept), C=take(P["C"], None, kept), H=take(P["H"], None, kept), E=E,
        state_names=tuple(names_kept), disturbance_names=dnames,
        nodes={c: v[kept] for c, v in system.nodes.items()}, disturbance_nodes=dnodes)
