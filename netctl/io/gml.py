"""GML (``.gml``): nodes with attributes, edges with weights (read with networkx).

Node labels are the state names; node attributes become the node table; the edge
attribute ``weight`` the link weights. GML has no booleans: ``actuator``/``sensor``
are written as 1/0 and read back as true/false.
"""

from __future__ import annotations

import html
import io
import os
import re
from typing import Any

from netctl.io._common import (
    atomic_write,
    excerpt,
    file_error,
    read_text,
    refuse_lone_surrogates,
)
from netctl.io._graphs import warn_not_kept
from netctl.io.graphml import (
    Find,
    finite_weight,
    graph_to_system,
    network_parts,
    system_to_graph,
)
from netctl.system import StructuredSystem

__all__ = ["read_gml", "write_gml"]


def read_gml(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read a GML file (nodes named by ``label``; undirected edges act both ways).

    Raises
    ------
    NetworkFileError
        Malformed GML (with line and column), duplicate labels, nested (list) node
        attributes, non-numeric weights.
    """
    import networkx as nx

    text = read_text(path)
    try:
        g = nx.parse_gml(text, label="label")
    except nx.NetworkXError as exc:
        msg = str(exc)
        m = re.search(r"at \((\d+), (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        dup = _DUPLICATE.search(msg)
        if dup:  # networkx names the id or label, not where it is
            raise _duplicate(path, text, dup.group(1), dup.group(2)) from None
        twice = _given_twice(text)
        if twice is not None and ("[" in msg or "unhashable" in msg):
            raise file_error(path, *twice) from None
        item = _ITEM.match(msg)
        if line is None and item:  # networkx counts the node or edge, from 0
            kinds = [b for b in _blocks(text) if b[0] == item.group(1)]
            k = int(item.group(2))
            line = kinds[k][1] if k < len(kinds) else None
        fix = ("Give each link once." if "is duplicated" in msg else
               "Declare that node (node [ id ... label ... ]), or correct the edge's id."
               if "undefined" in msg else
               "Every node needs an id and a label, every edge a source and a target."
               if "has no" in msg else
               "Check brackets and quotes; every node needs an id and a unique label.")
        raise file_error(path, line, f"malformed GML: {msg}. {fix}") from None
    except (ValueError, TypeError, KeyError) as exc:
        if "integer string conversion" in str(exc):
            raise  # the reader's caller names the line of the long number
        twice = _given_twice(text)
        if twice is not None:
            raise file_error(path, *twice) from None
        raise file_error(path, None, f"not a GML graph netctl can read: {exc}.") from None
    return graph_to_system(g, path, model=model, what="GML", find=_finder(text))


#: networkx's message for a node id or label given twice
_DUPLICATE = re.compile(r"node (id|label) (.*) is duplicated")
#: networkx's messages about the node or edge number k (from 0, in file order)
_ITEM = re.compile(r"(node|edge) #(\d+)")
#: keys that name a node or an edge's ends: one value each
_ONCE = ("id", "label", "source", "target")


def _given_twice(text: str) -> tuple[int, str] | None:
    """(line, message) for the first node or edge that gives one of :data:`_ONCE` twice
    (networkx makes a list of the two values and then fails without a line)."""
    for kind, line, d in _blocks(text):
        key = d.get("\0twice")
        if key is not None:
            return line, (f"this {kind} gives {key!r} twice; give each {kind} one "
                          f"{key!r}.")
    return None
#: GML's tokens, as networkx reads them: keys, numbers, strings, brackets; '#' comments
_TOKEN = re.compile(r'([A-Za-z][0-9A-Za-z_]*)|([+-]?(?:[0-9]*\.[0-9]+|[0-9]+\.?[0-9]*|INF)'
                    r'(?:[Ee][+-]?[0-9]+)?)|("[^"]*")|(\[)|(\])|#[^\n]*|\s+|(.)')


def _blocks(text: str) -> list[tuple[str, int, dict[str, str]]]:
    """The node and edge blocks of a GML graph, in file order: (``node`` or ``edge``, the
    line it opens on, its scalar keys with their values as written, strings unquoted
    and unescaped)."""
    out: list[tuple[str, int, dict[str, str]]] = []
    stack: list[str] = []
    key: str | None = None
    current: dict[str, str] | None = None
    for m in _TOKEN.finditer(text):
        word, number, string, opening, closing, other = m.groups()
        if opening is not None:
            stack.append(key or "")
            if len(stack) == 2 and stack[0] == "graph" and stack[1] in ("node", "edge"):
                current = {}
                out.append((stack[1], text.count("\n", 0, m.start()) + 1, current))
            key = None
        elif closing is not None:
            if stack:
                stack.pop()
            if len(stack) < 2:
                current = None
            key = None
        elif key is None and word is not None:
            key = word
        elif key is not None and (word or number or string) is not None:
            value = html.unescape(string[1:-1]) if string is not None else (word or number)
            if current is not None and len(stack) == 2:
                if key in current and key in _ONCE:
                    current.setdefault("\0twice", key)
                current.setdefault(key, value)
            key = None
        elif other is not None:
            key = None
    return out


def _same(written: str | None, key: Any) -> bool:
    """Whether an id or label as written in the file is ``key`` as networkx read it."""
    if written is None:
        return False
    if written == str(key):
        return True
    try:
        return float(written) == float(key)
    except (TypeError, ValueError):
        return False


def _duplicate(path: object, text: str, what: str, shown: str) -> Exception:
    """The error for a node id or label given twice, with the lines of both."""
    field = what
    key = shown[1:-1] if shown[:1] in "'\"" and shown[-1:] == shown[:1] else shown
    lines = [line for kind, line, d in _blocks(text) if kind == "node" and
             _same(d.get(field), key)]
    line = lines[1] if len(lines) > 1 else None
    first = f" (first on line {lines[0]})" if len(lines) > 1 else ""
    return file_error(path, line, f"a second node has the {field} {shown}{first}; give "
                      f"every node its own {field}.")


def _finder(text: str) -> Find:
    """``find`` for :func:`graph_to_system` over the GML ``text`` (labels name the
    nodes, edges give ids): tokenized again only when a line is asked for."""
    found: list[list[tuple[str, int, dict[str, str]]]] = []

    def find(kind: str, key: Any) -> int | None:
        if not found:
            found.append(_blocks(text))
        blocks = found[0]
        nodes = [(line, d) for k, line, d in blocks if k == "node"]
        if kind == "node":
            return next((line for line, d in nodes if _same(d.get("label"), key)), None)
        ids = [next((d.get("id") for _, d in nodes if _same(d.get("label"), end)), None)
               for end in key]
        hits = [(line, d.get("weight")) for k, line, d in blocks if k == "edge"
                and all(_same(d.get(end), i) for end, i in zip(("source", "target"), ids)
                        if i is not None)
                and None not in ids]
        if kind == "repeat":  # the second edge with these ends, in the file's order
            return hits[1][0] if len(hits) > 1 else None
        bad = [line for line, w in hits if w is not None and not finite_weight(w)]
        lines = bad or [line for line, _ in hits]
        return lines[0] if lines else None

    return find


def write_gml(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write the network and node table as GML (atomically).

    The document is the one networkx writes for :func:`system_to_graph` (booleans as 1/0),
    built without importing networkx (:mod:`netctl.io._graphtext`); a node table value of
    another type than text, integer, number or boolean goes through networkx itself.

    Raises
    ------
    InvalidSystemError
        A node-table column whose name is not a GML key.
    """
    from netctl.io._graphtext import gml_bytes

    warn_not_kept(system, path, "GML")
    refuse_lone_surrogates(system, "GML")
    _check_keys(system, path)
    parts = network_parts(system)
    data = None
    if parts is not None:
        ids, rows, src, dst, edge_attrs = parts
        rows = [{k: int(v) if isinstance(v, bool) else v for k, v in row.items()}
                for row in rows]
        data = gml_bytes(ids, rows, src, dst, edge_attrs)
    if data is None:
        import networkx as nx

        g = system_to_graph(system)
        for _, d in g.nodes(data=True):
            for k, v in list(d.items()):
                if isinstance(v, bool):
                    d[k] = int(v)
        buf = io.BytesIO()
        nx.write_gml(g, buf)
        data = buf.getvalue()
    with atomic_write(path, "wb") as fh:
        fh.write(data)


#: A GML key: a letter, then letters, digits or '_' (Himsolt 1997, the GML grammar)
_KEY = re.compile(r"[A-Za-z][0-9A-Za-z_]*\Z")


def _check_keys(system: StructuredSystem, path: object) -> None:
    """Refuse a node-table column that GML cannot name (networkx failed on it with a
    traceback), and warn about the columns ``id`` and ``label``, which GML uses for each
    node's number and name (they are not written)."""
    import warnings

    from netctl.errors import InvalidSystemError

    columns = list(system.nodes) + [k for k in system.disturbance_nodes
                                    if k not in system.nodes]
    for k in columns:
        if not _KEY.match(k):
            raise InvalidSystemError(
                f"the node-table column {excerpt(k)} is not a GML key (a letter, then "
                "letters, digits or '_'), so it cannot be written to GML; rename the "
                "column, or write GraphML, node-link JSON or a .toml description.")
    lost = [k for k in columns if k in ("id", "label")]
    if lost:
        warnings.warn(f"{path}: the node-table column{'s' if len(lost) > 1 else ''} "
                      f"{' and '.join(map(repr, lost))} {'were' if len(lost) > 1 else 'was'} "
                      "not written: GML gives every node its number as 'id' and its name "
                      "as 'label'. Rename the column, or write GraphML, node-link JSON or a "
                      ".toml description, to keep it.", stacklevel=3)
