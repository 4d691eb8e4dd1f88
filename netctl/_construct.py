"""Building a :class:`~netctl.system.StructuredSystem` from edges, matrices or graphs.

The bodies of the ``StructuredSystem.from_*`` class methods (their docstrings, the public
reference, stay on the class). Each function takes the class as its first argument, so
this module never imports :mod:`netctl.system` at run time (no import cycle) and a
subclass gets instances of itself.
"""

from __future__ import annotations

import warnings
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl._csr import Pattern, coo_pattern
from netctl._parts import _as_index_array, _empty_csr, _is_bool, _seq, _shape, check_finite
from netctl.errors import InvalidSystemError

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = ["from_edges", "from_named_edges", "from_matrices", "from_networkx", "from_igraph"]


def from_edges(
    cls: type[StructuredSystem],
    sources: Any,
    targets: Any,
    n_states: int | None = None,
    *,
    weights: Any = None,
    state_names: Sequence[object] | None = None,
    inputs: Any = None,
    outputs: Any = None,
    nodes: Mapping[str, Any] | None = None,
    model: str = "given",
) -> StructuredSystem:
    """:meth:`StructuredSystem.from_edges` (see there)."""
    if n_states is None:
        if state_names is not None:
            n_states = len(state_names)
        else:
            s = np.asarray(sources)
            t = np.asarray(targets)
            n_states = int(max(s.max(initial=-1), t.max(initial=-1))) + 1 if (
                s.size and np.issubdtype(s.dtype, np.number)) else 0
    if n_states < 0:
        raise InvalidSystemError(f"n_states must be >= 0, found {n_states}.")
    src = _as_index_array(sources, n_states, "sources")
    dst = _as_index_array(targets, n_states, "targets")
    if src.shape != dst.shape:
        raise InvalidSystemError(
            f"sources and targets must have equal lengths, found {src.size} and {dst.size}.")
    if weights is None:
        data = np.ones(src.size)
        weighted = False
    else:
        data = np.asarray(weights, dtype=np.float64)
        if data.shape != src.shape:
            raise InvalidSystemError(
                f"weights must have one value per edge ({src.size}), found {data.size}.")
        weighted = True
    A, n_dup = coo_pattern(dst, src, data if weighted else None, (n_states, n_states))
    if n_dup:
        # 3: past this function and the class method, at the caller's line
        warnings.warn(
            f"{n_dup} duplicate link{'s were' if n_dup > 1 else ' was'} merged"
            + (" (weights summed)" if weighted else "") + ".", stacklevel=3)
    if weighted:
        check_finite(A.data, "A")
    elif n_dup:  # a pattern: a merged link is still 1.0
        A = Pattern(np.ones(A.nnz), A.indices, A.indptr, A.shape).frozen()
    sys_ = cls(A=A, B=None, C=None, state_names=_seq(state_names), input_names=(),
               output_names=(), nodes=dict(nodes or {}), weighted=weighted, model=model)
    if inputs is not None:
        sys_ = sys_.with_inputs(inputs)
    if outputs is not None:
        sys_ = sys_.with_outputs(outputs)
    return sys_


def from_named_edges(
    cls: type[StructuredSystem],
    sources: Sequence[object],
    targets: Sequence[object],
    *,
    weights: Any = None,
    states: Sequence[object] | None = None,
    inputs: Any = None,
    outputs: Any = None,
    nodes: Mapping[str, Any] | None = None,
    model: str = "given",
) -> StructuredSystem:
    """:meth:`StructuredSystem.from_named_edges` (see there)."""
    if len(sources) != len(targets):
        raise InvalidSystemError(
            f"sources and targets must have equal lengths, found {len(sources)} and "
            f"{len(targets)}.")
    order: dict[str, int] = {}
    for name in (states or ()):
        order.setdefault(str(name), len(order))
    src = np.empty(len(sources), np.int64)
    dst = np.empty(len(targets), np.int64)
    for k, (a, b) in enumerate(zip(sources, targets)):
        src[k] = order.setdefault(str(a), len(order))
        dst[k] = order.setdefault(str(b), len(order))
    return cls.from_edges(src, dst, len(order), weights=weights, state_names=list(order),
                          inputs=inputs, outputs=outputs, nodes=nodes, model=model)


def from_matrices(
    cls: type[StructuredSystem],
    A: Any,
    B: Any = None,
    C: Any = None,
    *,
    state_names: Sequence[object] | None = None,
    input_names: Sequence[object] | None = None,
    output_names: Sequence[object] | None = None,
    nodes: Mapping[str, Any] | None = None,
    weighted: bool = True,
    model: str = "given",
) -> StructuredSystem:
    """:meth:`StructuredSystem.from_matrices` (see there)."""
    n = _shape(A, "A")[0]
    if B is None:
        B = _empty_csr((n, 0))
    if C is None:
        C = _empty_csr((0, n))
    if _is_bool(A):
        weighted = False
    return cls(A=A, B=B, C=C, state_names=_seq(state_names),
               input_names=_seq(input_names), output_names=_seq(output_names),
               nodes=dict(nodes or {}), weighted=weighted, model=model)


def from_networkx(cls: type[StructuredSystem], graph: Any, *, weight: str | None = None,
                  inputs: Any = None, model: str = "given") -> StructuredSystem:
    """:meth:`StructuredSystem.from_networkx` (see there)."""
    from netctl._graphlibs import networkx_edges

    src, dst, w, names, table = networkx_edges(graph, weight)
    return cls.from_edges(src, dst, len(names), weights=w, state_names=names,
                          inputs=inputs, nodes=table, model=model)


def from_igraph(cls: type[StructuredSystem], graph: Any, *, weight: str | None = None,
                inputs: Any = None, model: str = "given") -> StructuredSystem:
    """:meth:`StructuredSystem.from_igraph` (see there)."""
    from netctl._graphlibs import igraph_edges

    n, src, dst, w, names, table = igraph_edges(graph, weight)
    return cls.from_edges(src, dst, n, weights=w, state_names=names, inputs=inputs,
                          nodes=table, model=model)
