"""Conversions between a :class:`~netctl.system.StructuredSystem` and the graph objects
of networkx and igraph (private; the public entry points are
``StructuredSystem.from_networkx``, ``from_igraph`` and ``to_networkx``).

Orientation as everywhere (see :mod:`netctl`): an edge ``u -> v`` means state ``u``
influences state ``v`` (``A[v, u] != 0``); an undirected edge means both directions.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

from netctl._parts import _node_table_from_attrs, _py
from netctl.errors import InvalidSystemError

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = ["igraph_edges", "networkx_edges", "to_networkx"]


def networkx_edges(graph: Any, weight: str | None) -> tuple[
        np.ndarray, np.ndarray, np.ndarray | None, list[str], dict[str, np.ndarray]]:
    """``(sources, targets, weights, state names, node table)`` of a networkx graph."""
    if isinstance(graph, type) or not all(
            hasattr(graph, a) for a in ("nodes", "edges", "is_directed")):
        raise InvalidSystemError(
            f"from_networkx expected a networkx Graph or DiGraph object, found "
            f"{type(graph).__name__}; for an igraph graph use from_igraph, for a numpy "
            "or scipy.sparse matrix from_matrices.")
    nodes_list = list(graph.nodes())
    index = {v: i for i, v in enumerate(nodes_list)}
    edges = list(graph.edges(data=True))
    src = np.fromiter((index[u] for u, _, _ in edges), dtype=np.int64, count=len(edges))
    dst = np.fromiter((index[v] for _, v, _ in edges), dtype=np.int64, count=len(edges))
    w = None
    if weight is not None:
        w = np.array([d.get(weight, 1.0) for _, _, d in edges], dtype=np.float64)
    if not graph.is_directed():
        loops = src == dst
        src, dst = np.concatenate([src, dst[~loops]]), np.concatenate([dst, src[~loops]])
        if w is not None:
            w = np.concatenate([w, w[~loops]])
    table = _node_table_from_attrs([graph.nodes[v] for v in nodes_list])
    return src, dst, w, [str(v) for v in nodes_list], table


def igraph_edges(graph: Any, weight: str | None) -> tuple[
        int, np.ndarray, np.ndarray, np.ndarray | None, list[str] | None,
        dict[str, np.ndarray]]:
    """``(n, sources, targets, weights, state names or None, node table)`` of an igraph
    graph."""
    if isinstance(graph, type) or not all(
            hasattr(graph, a) for a in ("vcount", "get_edgelist", "is_directed")):
        raise InvalidSystemError(
            f"from_igraph expected an igraph Graph object, found {type(graph).__name__}; "
            "for a networkx graph use from_networkx, for a numpy or scipy.sparse matrix "
            "from_matrices.")
    n = graph.vcount()
    el = np.asarray(graph.get_edgelist(), dtype=np.int64).reshape(-1, 2)
    src, dst = el[:, 0], el[:, 1]
    w = np.asarray(graph.es[weight], dtype=np.float64) if weight is not None else None
    if not graph.is_directed():
        loops = src == dst
        src, dst = np.concatenate([src, dst[~loops]]), np.concatenate([dst, src[~loops]])
        if w is not None:
            w = np.concatenate([w, w[~loops]])
    vattrs = graph.vs.attributes()
    label = "name" if "name" in vattrs else "_nx_name" if "_nx_name" in vattrs else None
    names = [str(v) for v in graph.vs[label]] if label is not None else None
    attrs = [{k: graph.vs[i][k] for k in vattrs if k != label} for i in range(n)]
    return n, src, dst, w, names, _node_table_from_attrs(attrs)


def to_networkx(system: StructuredSystem) -> Any:
    """A networkx ``DiGraph`` of the state graph (see ``StructuredSystem.to_networkx``)."""
    import networkx as nx

    g = nx.DiGraph()
    driven = set(system.driven_states().tolist())
    measured = set(system.measured_states().tolist())
    for i, name in enumerate(system.state_names):
        attrs = {k: _py(v[i]) for k, v in system.nodes.items()}
        g.add_node(name, driven=i in driven, measured=i in measured, **attrs)
    src, dst = system.edges()
    vals = system.pattern("A").data
    for k in range(src.size):
        if system.weighted:
            g.add_edge(system.state_names[src[k]], system.state_names[dst[k]], weight=float(vals[k]))
        else:
            g.add_edge(system.state_names[src[k]], system.state_names[dst[k]])
    return g
