"""GraphML and GML text of a directed network, written without networkx (private).

Importing networkx costs more than the rest of a small ``convert`` or ``map`` run (issue
15, goal 1; benchmarks/RESULTS.md), so the writers build the documents themselves: the
same bytes networkx 3 writes for the same directed graph (``write_graphml`` with Python's
ElementTree, ``generate_graphml(prettyprint=False)``, ``write_gml``). GraphML goes
through :mod:`xml.etree.ElementTree` (its escaping and serialization); GML is text.

A network is given as node ids with one attribute dict each, and edges as pairs of node
positions with one attribute dict each. The edges are written in the order a networkx
``DiGraph`` keeps them (by source, in node order; for one source, in the order given).
Where a value is of a type this module does not write (anything but ``str``, ``int``,
``float`` and ``bool``), or two nodes share an id, or an edge is given twice, the
functions return ``None`` and the caller writes with networkx, as before, so nothing
unusual changes.

References
----------
.. [1] U. Brandes, M. Eiglsperger, J. Lerner, C. Pich, "Graph markup language
   (GraphML)", in R. Tamassia (ed.), *Handbook of Graph Drawing and Visualization*,
   CRC Press, 2013, ch. 16.
.. [2] M. Himsolt, "GML: A portable graph file format", Universität Passau, 1997.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

__all__ = ["Attrs", "digraph_order", "graphml_bytes", "gml_bytes"]

#: The attributes of one node or edge, in the order they are written.
Attrs = Mapping[str, Any]

#: GraphML's attribute types of the Python types written (networkx's choice: ``long``
#: for ``int``, ``double`` for ``float``)
_GRAPHML_TYPE = {bool: "boolean", int: "long", float: "double", str: "string"}
_NS = "http://graphml.graphdrawing.org/xmlns"
_XSI = "http://www.w3.org/2001/XMLSchema-instance"
_SCHEMA = f"{_NS} {_NS}/1.0/graphml.xsd"


def digraph_order(src: np.ndarray, dst: np.ndarray, n_nodes: int) -> np.ndarray | None:
    """Positions of the edges ``src[k] -> dst[k]`` in the order a networkx ``DiGraph``
    built from them (nodes first, in order) lists its edges: by source node, stable. None
    when an edge is given twice (a ``DiGraph`` would merge it)."""
    src = np.asarray(src, np.int64)
    dst = np.asarray(dst, np.int64)
    key = src * max(n_nodes, 1) + dst
    if np.unique(key).size != key.size:
        return None
    return np.argsort(src, kind="stable")


def _writable(rows: Sequence[Attrs]) -> bool:
    return all(type(v) in _GRAPHML_TYPE and isinstance(k, str)
               for row in rows for k, v in row.items())


def graphml_bytes(ids: Sequence[str], node_attrs: Sequence[Attrs], src: Sequence[int],
                  dst: Sequence[int], edge_attrs: Sequence[Attrs], *, pretty: bool = True
                  ) -> bytes | None:
    """A directed GraphML document (UTF-8 with its XML declaration, indented; or with
    ``pretty=False`` one line of ASCII with character references and no declaration, as
    networkx's ``generate_graphml(prettyprint=False)``), or None (see the module notes).

    ``src``/``dst`` are node positions, already in :func:`digraph_order`. Each attribute
    gets a ``<key>`` per (name, type, node or edge), numbered ``d0, d1, ...`` in the order
    first met and listed newest first, as networkx does.
    """
    import xml.etree.ElementTree as ET

    if len(set(ids)) != len(ids) or not (_writable(node_attrs) and _writable(edge_attrs)):
        return None
    root = ET.Element("graphml", {"xmlns": _NS, "xmlns:xsi": _XSI,
                                  "xsi:schemaLocation": _SCHEMA})
    graph = ET.Element("graph", edgedefault="directed")
    keys: dict[tuple[str, str, str], str] = {}

    def add(element: Any, scope: str, attrs: Attrs) -> None:
        for k, v in attrs.items():
            kind = _GRAPHML_TYPE[type(v)]
            key = keys.get((k, kind, scope))
            if key is None:
                key = keys[(k, kind, scope)] = f"d{len(keys)}"
                root.insert(0, ET.Element("key", {"id": key, "for": scope, "attr.name": k,
                                                  "attr.type": kind}))
            ET.SubElement(element, "data", key=key).text = str(v)

    for nid, attrs in zip(ids, node_attrs):
        add(ET.SubElement(graph, "node", id=nid), "node", attrs)
    for u, v, attrs in zip(src, dst, edge_attrs):
        add(ET.SubElement(graph, "edge", source=ids[u], target=ids[v]), "edge", attrs)
    root.append(graph)
    if not pretty:
        text = ET.tostring(root).decode("utf-8")  # US-ASCII: character references
        return ("\n".join(text.splitlines()) + "\n").encode("utf-8")
    _indent(root)
    import io

    buf = io.BytesIO()
    ET.ElementTree(root).write(buf, encoding="utf-8", xml_declaration=True)
    return buf.getvalue()


def _indent(root: Any) -> None:
    """Indent by two spaces a level, each element on its own line (the layout of
    networkx's GraphML writer): an element with children opens a new line for them, and
    every element's tail leads to its next sibling, or after the last, to its parent's
    closing tag. The text of an element without children is left as it is."""
    stack = [(root, 0)]
    root.tail = "\n"
    while stack:
        elem, level = stack.pop()
        if len(elem):
            if not elem.text or not elem.text.strip():
                elem.text = "\n" + "  " * (level + 1)
            for child in elem:
                if not child.tail or not child.tail.strip():
                    child.tail = "\n" + "  " * (level + 1)
                stack.append((child, level + 1))
            last = elem[-1]
            if not last.tail or not last.tail.strip():
                last.tail = "\n" + "  " * level


#: GML keys (Himsolt 1997): a letter, then letters, digits or '_'
_GML_KEY = re.compile(r"[A-Za-z][0-9A-Za-z_]*\Z")
#: characters GML strings hold as character references: not printable ASCII, '&', '"'
_GML_ESCAPE = re.compile('[^ -~]|[&"]')


def _gml_escape(text: str) -> str:
    return _GML_ESCAPE.sub(lambda m: f"&#{ord(m.group())};", text)


def _gml_value(key: str, value: Any) -> str | None:
    """``key value`` as networkx writes it, or None for a type it is not written here."""
    kind = type(value)
    if kind is bool:
        return f"{key} {int(value)}"
    if kind is int:
        return f"{key} {value}" if -(2**31) <= value < 2**31 else f'{key} "{value}"'
    if kind is float:
        text = repr(value).upper()
        if text == "INF":
            text = "+INF"
        else:
            e = text.rfind("E")
            if e != -1 and "." not in text[:e]:  # GML wants a point in a real
                text = text[:e] + "." + text[e:]
        return f"{key} {text}"
    if kind is str:
        return f'{key} "{_gml_escape(value)}"'
    return None


def gml_bytes(ids: Sequence[str], node_attrs: Sequence[Attrs], src: Sequence[int],
              dst: Sequence[int], edge_attrs: Sequence[Attrs]) -> bytes | None:
    """A directed GML document (ASCII; nodes numbered from 0 in order, labelled by their
    ids; attributes named ``id`` or ``label`` on nodes, ``source`` or ``target`` on edges
    are not written, as networkx does), or None (see the module notes). Attribute names
    must be GML keys (the caller checks)."""
    if len(set(ids)) != len(ids):
        return None
    lines = ["graph [", "  directed 1"]
    for i, (nid, attrs) in enumerate(zip(ids, node_attrs)):
        lines += ["  node [", f"    id {i}", f'    label "{_gml_escape(nid)}"']
        for k, v in attrs.items():
            if k in ("id", "label"):
                continue
            text = _gml_value(k, v)
            if text is None or not _GML_KEY.match(k):
                return None
            lines.append("    " + text)
        lines.append("  ]")
    for u, v, attrs in zip(src, dst, edge_attrs):
        lines += ["  edge [", f"    source {u}", f"    target {v}"]
        for k, x in attrs.items():
            if k in ("source", "target"):
                continue
            text = _gml_value(k, x)
            if text is None or not _GML_KEY.match(k):
                return None
            lines.append("    " + text)
        lines.append("  ]")
    lines.append("]")
    return ("\n".join(lines) + "\n").encode("ascii")
