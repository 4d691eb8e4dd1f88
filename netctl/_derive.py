"""Systems derived from a :class:`~netctl.system.StructuredSystem`: new input, output,
disturbance or regulated-output columns, the dual, self-dynamics on every state.

The bodies of the ``StructuredSystem.with_*`` methods and of
:meth:`StructuredSystem.dual <netctl.system.StructuredSystem.dual>` (their docstrings, the
public reference, stay on the class), and the one place that reads a *column
specification* -- a sequence of state names or indices, a mapping ``name -> states``, or a
matrix -- into a pattern and its names. Orientation as everywhere (see :mod:`netctl`).
Each function takes the system as an argument and builds its result through the system's
own ``_replace`` / ``_trusted``, so this module never imports :mod:`netctl.system` at run
time (no import cycle).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl._csr import Pattern, coo_pattern, is_sparse, transpose_pattern
from netctl._parts import _as_list, check_not_states
from netctl.errors import UnknownNameError

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = ["states_of", "columns", "with_inputs", "with_outputs", "with_disturbances",
           "with_regulated", "dual", "with_self_loops"]


def states_of(system: StructuredSystem, states: Any) -> np.ndarray:
    """State indices of ``states``.

    A 1-D integer array is indices as they are (a state named ``"1"`` that is not state 1
    cannot capture them); anything else goes through
    :meth:`~netctl.system.StructuredSystem.index_of` (names first, then integers as
    indices).

    Raises
    ------
    UnknownNameError
        A name is unknown, or an index is outside ``0 .. n-1``.
    """
    if isinstance(states, np.ndarray) and states.ndim == 1 and states.dtype.kind in "iu":
        n = system.n_states
        idx = states.astype(np.int64)
        bad = idx[(idx < 0) | (idx >= n)]
        if bad.size:
            raise UnknownNameError(f"state index {int(bad[0])} is out of range: the "
                                   f"system has {n} states (0 .. {n - 1}).")
        return idx
    return system.index_of(_as_list(states))


def columns(system: StructuredSystem, spec: Any, names: Sequence[object] | None,
            prefix: str) -> tuple[Any, tuple[str, ...]]:
    """Columns over the states (an ``n x k`` pattern or matrix) and their names, from a
    mapping ``name -> states``, a sequence of states (one column each, named
    ``<prefix>:<state>``) or a matrix (columns named ``<prefix><j>`` unless ``names``)."""
    n = system.n_states
    if isinstance(spec, Mapping):
        cols = [system.index_of(_as_list(v)) for v in spec.values()]
        rows = np.concatenate(cols) if cols else np.zeros(0, np.int64)
        colidx = np.repeat(np.arange(len(cols)), [c.size for c in cols])
        M = coo_pattern(rows, colidx, None, (n, len(cols)), count=False)[0]
        return M, tuple(str(k) for k in spec.keys())
    if is_sparse(spec) or (isinstance(spec, np.ndarray) and spec.ndim == 2):
        k = spec.shape[1]
        return spec, (tuple(str(x) for x in names) if names is not None
                      else tuple(f"{prefix}{j}" for j in range(k)))
    idx = system.index_of(_as_list(spec))
    M = coo_pattern(idx, np.arange(idx.size), None, (n, idx.size), count=False)[0]
    return M, (tuple(str(x) for x in names) if names is not None
               else tuple(f"{prefix}:{system.state_names[i]}" for i in idx))


def with_inputs(system: StructuredSystem, inputs: Any, *,
                names: Sequence[object] | None = None) -> StructuredSystem:
    """:meth:`StructuredSystem.with_inputs` (see there)."""
    n = system.n_states
    input_names: Sequence[object] | None = names
    if isinstance(inputs, Mapping):
        input_names = list(inputs.keys())
        cols = [system.index_of(_as_list(v)) for v in inputs.values()]
        rows = np.concatenate(cols) if cols else np.zeros(0, np.int64)
        colidx = np.repeat(np.arange(len(cols)), [c.size for c in cols])
        B: Any = coo_pattern(rows, colidx, None, (n, len(cols)), count=False)[0]
    elif isinstance(inputs, Pattern) or is_sparse(inputs) or (
            isinstance(inputs, np.ndarray) and inputs.ndim == 2):
        B = inputs
    else:
        idx = states_of(system, inputs)
        if input_names is None:
            input_names = [f"u:{system.state_names[i]}" for i in idx]
        B = coo_pattern(idx, np.arange(idx.size), None, (n, idx.size), count=False)[0]
    m = B.shape[1]
    return system._replace(B=B, input_names=tuple(input_names) if input_names is not None
                           else tuple(f"u{k}" for k in range(m)))


def with_outputs(system: StructuredSystem, outputs: Any, *,
                 names: Sequence[object] | None = None) -> StructuredSystem:
    """:meth:`StructuredSystem.with_outputs` (see there): inputs of the dual."""
    # a 1-D array is a list of states (as with_inputs takes it), not a matrix
    matrix = is_sparse(outputs) or (isinstance(outputs, np.ndarray) and outputs.ndim == 2)
    if isinstance(outputs, Mapping):
        for v in outputs.values():
            system.index_of(_as_list(v))  # errors name this system's states
    elif not matrix:
        states_of(system, outputs)
    flipped = system.dual().with_inputs(outputs.T if matrix else outputs, names=names)
    if names is None and not isinstance(outputs, Mapping):
        flipped = flipped._replace(input_names=tuple(
            f"y{j}" for j in range(flipped.n_inputs)) if matrix else tuple(
            "y:" + s[2:] for s in flipped.input_names))
    back = flipped.dual()
    if system.disturbance_nodes:  # the dual has no table for its regulated outputs
        back = back._replace(disturbance_nodes=dict(system.disturbance_nodes))
    return back


def with_disturbances(system: StructuredSystem, disturbances: Any, *,
                      names: Sequence[object] | None = None,
                      nodes: Mapping[str, Any] | None = None) -> StructuredSystem:
    """:meth:`StructuredSystem.with_disturbances` (see there)."""
    E, dnames = columns(system, disturbances, names, "w")
    return system._replace(E=E, disturbance_names=dnames,
                           disturbance_nodes=dict(nodes or {}))


def with_regulated(system: StructuredSystem, regulated: Any, *,
                   names: Sequence[object] | None = None) -> StructuredSystem:
    """:meth:`StructuredSystem.with_regulated` (see there): the rows of ``H`` are read as
    columns over the states, then transposed."""
    if is_sparse(regulated) or isinstance(regulated, np.ndarray):
        H, znames = columns(system, regulated.T, names, "z")
    else:
        H, znames = columns(system, regulated, names, "z")
    if not isinstance(H, Pattern):
        import scipy.sparse as sp

        return system._replace(H=sp.csr_array(H).T.tocsr(), regulated_names=znames)
    return system._replace(H=transpose_pattern(H), regulated_names=znames)


def dual(system: StructuredSystem) -> StructuredSystem:
    """:meth:`StructuredSystem.dual` (see there): every part transposed, assembled without
    a second validation pass except the one check that can newly fail (the regulated
    outputs become disturbances, whose names must not be state names)."""
    disturbances = system.regulated_names
    check_not_states(disturbances, system.state_names)
    t = {k: transpose_pattern(system.pattern(k)) for k in ("A", "B", "C", "E", "H")}
    index = system._index
    return system._trusted(
        A=t["A"], B=t["C"], C=t["B"],
        state_names=system.state_names, input_names=system.output_names,
        output_names=system.input_names, nodes=dict(system.nodes),
        weighted=system.weighted, model=system.model,
        E=t["H"], H=t["E"],
        disturbance_names=disturbances, regulated_names=system.disturbance_names,
        disturbance_nodes={}, elements=system.elements,
        # the states are the same: share their name lookup (built once, never changed)
        _index={"state": index["state"]} if "state" in index else {})


def with_self_loops(system: StructuredSystem) -> StructuredSystem:
    """:meth:`StructuredSystem.with_self_loops` (see there): weight 1 where the diagonal
    is empty, built from the stored arrays (:func:`netctl._csr.coo_pattern`: no scipy
    import on small systems, issue 15)."""
    P = system.pattern("A")
    n = system.n_states
    rows = np.repeat(np.arange(n, dtype=np.int64), np.diff(P.indptr))
    has = np.zeros(n, bool)
    has[rows[rows == P.indices]] = True  # a stored entry is never 0 (canonical)
    add = np.flatnonzero(~has)
    A, _ = coo_pattern(np.concatenate([rows, add]), np.concatenate([P.indices, add]),
                       np.concatenate([P.data, np.ones(add.size)]), (n, n), count=False)
    return system._replace(A=A)
