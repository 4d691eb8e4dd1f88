"""GraphML (``.graphml``): nodes with typed attributes, edges with weights.

Read with networkx after a safety check: files that declare a document type or entities
are refused before any XML parser sees them (no entity expansion, no external entities).
Node attributes become the node table; the edge attribute ``weight`` the link weights.
A node with ``disturbance = true`` is a disturbance and ``regulated = true`` adds a
regulated output reading the node (see :mod:`netctl.io._signals`).
"""

from __future__ import annotations

import io
import math
import os
import re
import warnings
from collections.abc import Callable
from typing import Any

import numpy as np

from netctl.io._common import atomic_write, excerpt, file_error, read_bytes
from netctl.io._graphs import node_rows, refuse_unsafe_xml, system_from_parts, warn_not_kept
from netctl.io._signals import dedicated_regulated, disturbance_links, disturbance_rows
from netctl.system import StructuredSystem

__all__ = ["read_graphml", "write_graphml", "graph_to_system", "system_to_graph",
           "network_parts", "Find", "finite_weight"]


#: ``find(kind, key)``: the line of the node ``key`` (``kind`` ``"node"``, the graph's
#: node key) or of the edge ``key`` (``"edge"``, a pair of node keys), or of the second
#: edge with the ends ``key`` (``"repeat"``), or None.
Find = Callable[[str, Any], "int | None"]


def graph_to_system(g: Any, path: object, *, model: str, what: str,
                    find: Find | None = None) -> StructuredSystem:
    """A networkx graph (as read from ``path``) as a system; warns about what is not kept.
    ``find`` places a node or edge the system refuses on its line of the file."""
    nodes = list(g.nodes())
    index = {v: i for i, v in enumerate(nodes)}
    edges = list(g.edges(data=True))
    extra = sorted({k for _, _, d in edges for k in d if k not in ("weight", "id", "key")})
    dropped = sorted(k for k in g.graph if k not in ("node_default", "edge_default"))
    if extra or dropped:
        warnings.warn(f"{path}: " + "; ".join(x for x in (
            f"edge attributes {', '.join(map(repr, extra))} are not kept (only 'weight' is)"
            if extra else "",
            f"graph attributes {', '.join(map(repr, dropped))} are not kept" if dropped else "")
            if x) + ".", stacklevel=3)
    weighted = any("weight" in d for _, _, d in edges)

    def locate(kind: str, k: int) -> int | None:
        if find is None:
            return None
        return find(kind, nodes[k] if kind == "node" else (edges[k][0], edges[k][1]))

    return system_from_parts(
        path, nodes, [dict(g.nodes[v]) for v in nodes],
        [index[u] for u, _, _ in edges], [index[v] for _, v, _ in edges],
        [d.get("weight") for _, _, d in edges] if weighted else None,
        g.is_directed(), model=model, what=what, locate=locate)


def system_to_graph(system: StructuredSystem) -> Any:
    """A networkx ``DiGraph`` with the node table as node attributes and weights."""
    import networkx as nx

    g = nx.DiGraph()
    names = system.state_names
    regulated = set(dedicated_regulated(system) or ())
    for name, row in zip(names, node_rows(system)):
        if name in regulated:
            row["regulated"] = True
        g.add_node(name, **row)
    for name, row in zip(system.disturbance_names, disturbance_rows(system)):
        g.add_node(name, **row)
    src, dst = system.edges()
    if system.weighted:
        g.add_weighted_edges_from(zip((names[i] for i in src.tolist()),
                                      (names[i] for i in dst.tolist()),
                                      system.pattern("A").data.tolist()))
        g.add_weighted_edges_from(disturbance_links(system))
    else:
        g.add_edges_from(zip((names[i] for i in src.tolist()),
                             (names[i] for i in dst.tolist())))
        g.add_edges_from((w, x) for w, x, _ in disturbance_links(system))
    return g


def network_parts(system: StructuredSystem
                  ) -> tuple[list[str], list[dict[str, Any]], list[int], list[int],
                             list[dict[str, Any]]] | None:
    """What :func:`system_to_graph` puts in its ``DiGraph``, without networkx: node ids
    (states, then disturbances), their attribute dicts, and the edges as node positions
    with their attribute dicts (``weight`` when weighted), in the ``DiGraph``'s order
    (:func:`netctl.io._graphtext.digraph_order`). None where a ``DiGraph`` would merge
    something (two nodes of one id, an edge given twice): the caller then uses networkx."""
    from netctl.io._graphtext import digraph_order

    names = list(system.state_names)
    ids = names + list(system.disturbance_names)
    position = {x: i for i, x in enumerate(ids)}
    if len(position) != len(ids):
        return None
    rows = node_rows(system)
    for name in dedicated_regulated(system) or ():
        rows[position[name]]["regulated"] = True
    rows += disturbance_rows(system)
    src, dst = system.edges()
    links = list(disturbance_links(system))
    src_all = np.concatenate([src, np.array([position[w] for w, _, _ in links], np.int64)])
    dst_all = np.concatenate([dst, np.array([position[x] for _, x, _ in links], np.int64)])
    order = digraph_order(src_all, dst_all, len(ids))
    if order is None:
        return None
    if system.weighted:
        w_all = system.pattern("A").data.tolist() + [w for _, _, w in links]
        edge_attrs = [{"weight": w_all[k]} for k in order.tolist()]
    else:
        edge_attrs = [{} for _ in range(order.size)]
    return ids, rows, src_all[order].tolist(), dst_all[order].tolist(), edge_attrs


def _expat_pass(data: bytes, start: Callable[[str, dict[str, str], int], None],
                end: Callable[[str], None], chars: Callable[[str], None]) -> bool:
    """One expat pass over ``data`` for the line look-ups: ``start(local tag, attributes,
    line)``, ``end(local tag)``, ``chars(text)`` (tags without their namespace prefix);
    False when the XML is malformed (the full parser reports that, with its line)."""
    import xml.parsers.expat

    parser = xml.parsers.expat.ParserCreate()
    parser.StartElementHandler = lambda tag, attrs: start(
        tag.rsplit(":", 1)[-1], attrs, parser.CurrentLineNumber)
    parser.EndElementHandler = lambda tag: end(tag.rsplit(":", 1)[-1])
    parser.CharacterDataHandler = chars
    try:
        parser.Parse(data, True)
    except xml.parsers.expat.ExpatError:
        return False
    return True


def _check_ids(path: object, data: bytes
               ) -> tuple[list[int], list[tuple[int, str]], list[int], list[int]] | None:
    """Refuse what networkx would merge or invent silently: a node id declared twice
    with different attributes, and an edge to a node no ``<node>`` declares (each with
    its line). Returns what networkx passes over, for :func:`_warn_unread` once the
    file is read: the lines of the top-level graphs, of graphs nested in a node that is
    not a yFiles group (with the node's id), of ``<port>`` elements and of
    ``<hyperedge>`` elements."""
    nodes: dict[str, tuple[int, list[tuple[str, str]]]] = {}
    ends: list[tuple[str, int]] = []
    again: list[tuple[str, int, int]] = []  # (id, first line, line of the repeat)
    state: dict[str, Any] = {"node": None, "key": None, "text": [], "depth": 0}
    tops: list[int] = []  # lines of the top-level graphs (networkx reads the first)
    nested: list[tuple[int, str]] = []  # graphs in a node that networkx does not read
    ports: list[int] = []
    hyper: list[int] = []  # networkx refuses a hyperedge: the message names its line
    group: list[bool] = []  # per open <node>: a yFiles group (its graph is read)
    node_ids: list[str] = []

    def start(local: str, attrs: dict[str, str], line: int) -> None:
        if local == "graph":
            state["depth"] += 1
            if state["depth"] == 1:
                tops.append(line)
            elif len(tops) == 1 and not (group and group[-1]):
                nested.append((line, node_ids[-1] if node_ids else ""))
        elif local == "node":
            group.append(attrs.get("yfiles.foldertype") == "group")
            node_ids.append(attrs.get("id", ""))
        elif local == "port" and len(tops) == 1:
            ports.append(line)
        elif local == "hyperedge":
            hyper.append(line)
        if state["depth"] != 1:  # nested graphs are networkx's business
            return
        if local == "node" and "id" in attrs:
            state["node"] = (attrs["id"], line, [])
        elif local == "edge":
            for end in ("source", "target"):
                if end in attrs:
                    ends.append((attrs[end], line))
        elif local == "data" and state["node"] is not None:
            state["key"] = attrs.get("key", "")
            state["text"] = []

    def chars(text: str) -> None:
        if state["key"] is not None:
            state["text"].append(text)

    def end(local: str) -> None:
        if local == "node" and group:
            group.pop()
            node_ids.pop()
        if local == "graph":
            state["depth"] -= 1
        elif local == "data" and state["key"] is not None and state["node"] is not None:
            state["node"][2].append((state["key"], "".join(state["text"]).strip()))
            state["key"] = None
        elif local == "node" and state["node"] is not None:
            nid, line, attrs = state["node"]
            state["node"] = None
            if nid in nodes and sorted(nodes[nid][1]) != sorted(attrs):
                raise file_error(path, line, f"the node id {excerpt(nid)} is declared again "
                                 f"with different attributes (first on line {nodes[nid][0]}); "
                                 "give each node one declaration.")
            if nid in nodes:
                again.append((nid, nodes[nid][0], line))
            nodes.setdefault(nid, (line, attrs))

    if not _expat_pass(data, start, end, chars):
        return None  # malformed XML: the full parser reports it with its line
    unread = (tops, nested, ports, hyper)
    for nid, line in ends:
        if nid not in nodes:
            raise file_error(path, line, f"an edge names the node {excerpt(nid)}, which no "
                             "<node> declares; declare it (netctl does not invent states).")
    if again:
        nid, first, line = again[0]
        more = f" ({len(again) - 1} more node ids likewise)" if len(again) > 1 else ""
        warnings.warn(f"{path}:{line}: the node id {excerpt(nid)} is declared again, with the "
                      f"same attributes (first on line {first}); read as one node{more}. "
                      "GraphML wants each id once: remove the repeat, or give a different "
                      "node its own id.", stacklevel=3)
    return unread


def _warn_unread(path: object, tops: list[int], nested: list[tuple[int, str]],
                 ports: list[int]) -> None:
    """Warn about what the GraphML reader (networkx) passes over: graphs after the
    first, a graph nested in a node that is not a yFiles group, and ``<port>``
    elements (each with its line)."""
    if len(tops) > 1:
        k = len(tops) - 1
        warnings.warn(f"{path}:{tops[1]}: the file holds {len(tops)} graphs; only the first "
                      f"(line {tops[0]}) was read, and the nodes and links of the other "
                      f"{'graph are' if k == 1 else f'{k} graphs are'} not kept. Put each "
                      "network in a file of its own.", stacklevel=3)
    if nested:
        line, node = nested[0]
        more = f" ({len(nested)} nested graphs in all)" if len(nested) > 1 else ""
        warnings.warn(f"{path}:{line}: the graph nested in node {excerpt(node)} was not "
                      f"read{more}: its nodes and links are not kept (a nested graph is read "
                      "only in a yFiles group node). Move its nodes and links into the "
                      "top-level graph.", stacklevel=3)
    if ports:
        more = f" ({len(ports)} in all)" if len(ports) > 1 else ""
        warnings.warn(f"{path}:{ports[0]}: <port> elements are not kept{more}: each link "
                      "is read as joining its two nodes. Remove the ports to silence "
                      "this.", stacklevel=3)


def finite_weight(value: Any) -> bool:
    """Whether ``value`` (a weight as the file gives it) reads as a finite number."""
    if isinstance(value, bool):
        return False
    try:
        return math.isfinite(float(value))
    except (TypeError, ValueError, OverflowError):
        return False


def _finder(data: bytes, directed: bool) -> Find:
    """``find`` for :func:`graph_to_system` over the GraphML ``data``: one more expat pass,
    made only when a line is asked for. An edge is found by its ends; among several,
    the first whose weight is not a finite number."""
    found: dict[str, Any] = {}

    def scan() -> None:
        nodes: dict[str, int] = {}
        edges: dict[tuple[str, str], list[tuple[int, str | None]]] = {}
        weight_keys: set[str] = set()
        state: dict[str, Any] = {"edge": None, "data": None, "text": [], "depth": 0}

        def start(local: str, attrs: dict[str, str], line: int) -> None:
            if local == "key" and attrs.get("attr.name") == "weight" and \
                    attrs.get("for", "all") in ("edge", "all"):
                weight_keys.add(attrs.get("id", ""))
            elif local == "graph":
                state["depth"] += 1
            elif state["depth"] != 1:
                return
            elif local == "node" and "id" in attrs:
                nodes.setdefault(attrs["id"], line)
            elif local == "edge":
                state["edge"] = [(attrs.get("source", ""), attrs.get("target", "")), line, None]
            elif local == "data" and state["edge"] is not None and \
                    attrs.get("key") in weight_keys:
                state["data"], state["text"] = True, []

        def chars(text: str) -> None:
            if state["data"]:
                state["text"].append(text)

        def end(local: str) -> None:
            if local == "graph":
                state["depth"] -= 1
            elif local == "data" and state["data"]:
                state["edge"][2] = "".join(state["text"]).strip()
                state["data"] = None
            elif local == "edge" and state["edge"] is not None:
                ends, line, weight = state["edge"]
                edges.setdefault(ends, []).append((line, weight))
                state["edge"] = None

        _expat_pass(data, start, end, chars)
        found.update(nodes=nodes, edges=edges)

    def find(kind: str, key: Any) -> int | None:
        if not found:
            scan()
        if kind == "node":
            return found["nodes"].get(str(key))
        u, v = str(key[0]), str(key[1])
        hits = found["edges"].get((u, v), []) + (
            [] if directed or u == v else found["edges"].get((v, u), []))
        if kind == "repeat":  # the second edge with these ends, in the file's order
            return sorted(hits)[1][0] if len(hits) > 1 else None
        bad = [line for line, w in hits if w is not None and not finite_weight(w)]
        lines = bad or [line for line, _ in hits]
        return lines[0] if lines else None

    return find


def read_graphml(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read a GraphML file (directed or undirected; undirected edges act both ways).

    Raises
    ------
    NetworkFileError
        A document type or entity declaration (refused for safety), malformed XML (with
        line and column), an attribute type GraphML does not define, a non-scalar or
        non-numeric attribute where a number is needed.
    """
    import xml.etree.ElementTree as ET

    import networkx as nx

    data = read_bytes(path)
    refuse_unsafe_xml(path, data)
    unread = _check_ids(path, data)
    try:
        with warnings.catch_warnings():  # said with the file and line by _check_ids
            warnings.filterwarnings("ignore", "GraphML port tag not supported")
            g = nx.read_graphml(io.BytesIO(data))
    except ET.ParseError as exc:
        line, col = getattr(exc, "position", (None, None))
        what = re.sub(r":? *line \d+, column \d+", "", str(exc))
        raise file_error(path, line, f"malformed XML at column {col}: {what}. Check that every "
                         "tag is closed and attribute values are quoted.") from None
    except KeyError as exc:
        raise file_error(path, None, f"unknown GraphML attribute type {exc.args[0]!r}; use "
                         "boolean, int, long, float, double or string.") from None
    except (nx.NetworkXError, ValueError, TypeError) as exc:
        why = str(exc).rstrip(". ")
        fix = ("See docs/FORMATS.md." if "directed=" not in why else
               "A graph that mixes directed and undirected edges is not read: set "
               "edgedefault=\"directed\" on <graph> and write each two-way link as two "
               "edges (or drop the directed= attributes).")
        line = None
        value = _BAD_VALUE.search(why)
        key = _NO_KEY.search(why)
        if value:  # a <data> value its key's attr.type does not read
            line = _data_line(data, text=value.group(1))
            fix = "Give a value of the key's attr.type (or change the type in its <key>)."
        elif key:
            line = _data_line(data, key=key.group(1))
            fix = "Declare the key (a <key id=... for=... attr.name=... attr.type=...>)."
        elif "hyperedge" in why and unread is not None and unread[3]:
            line = unread[3][0]
            fix = ("A link joins two states: write the hyperedge as <edge> elements from "
                   "each source to each target.")
        raise file_error(path, line, f"not a GraphML graph netctl can read: {why}. {fix}"
                         ) from None
    if unread is not None:
        _warn_unread(path, *unread[:3])
    _apply_defaults(g)
    return graph_to_system(g, path, model=model, what="GraphML",
                           find=_finder(data, g.is_directed()))


def _apply_defaults(g: Any) -> None:
    """Give every node and edge without a ``<data>`` of a key that declares a
    ``<default>`` that default, as GraphML means it (networkx keeps the defaults aside
    in ``g.graph``, so a weight or attribute given by default would be lost)."""
    for key, table in (("node_default", g.nodes(data=True)),
                       ("edge_default", g.edges(data=True))):
        default = g.graph.get(key) or {}
        if default:
            for *_, d in table:
                for k, v in default.items():
                    d.setdefault(k, v)


#: networkx's (Python's) messages for a value that its type does not read, and for a
#: <data> element whose key no <key> declares
_BAD_VALUE = re.compile(r"(?:could not convert string to float|invalid literal for int\(\) "
                        r"with base \d+): '(.*)'\Z")
_NO_KEY = re.compile(r"Bad GraphML data: no key (.*)\Z")


def _data_line(data: bytes, *, key: str | None = None, text: str | None = None
               ) -> int | None:
    """The line of the first <data> element with the key ``key`` or the (stripped) text
    ``text`` (an expat pass, on the error path only)."""
    state: dict[str, Any] = {"line": None, "text": None, "found": None}

    def start(local: str, attrs: dict[str, str], line: int) -> None:
        if local == "data" and state["found"] is None:
            if key is not None and attrs.get("key") == key:
                state["found"] = line
            state["line"], state["text"] = line, []

    def chars(t: str) -> None:
        if state["text"] is not None:
            state["text"].append(t)

    def end(local: str) -> None:
        if local == "data" and state["text"] is not None:
            if text is not None and state["found"] is None and \
                    "".join(state["text"]).strip() == text.strip():
                state["found"] = state["line"]
            state["text"] = None

    _expat_pass(data, start, end, chars)
    found: int | None = state["found"]
    return found


#: Characters XML 1.0 cannot hold, even escaped (control characters other than tab, line
#: feed and carriage return; lone surrogates; U+FFFE, U+FFFF).
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


def _refuse_non_xml(system: StructuredSystem) -> None:
    """One line naming the first name or node-table text that XML cannot hold."""
    from netctl.errors import InvalidSystemError

    groups = [("state", system.state_names), ("input", system.input_names),
              ("output", system.output_names), ("disturbance", system.disturbance_names),
              ("regulated output", system.regulated_names)]
    groups += [(f"node-table column {k!r} value", [x for x in v if isinstance(x, str)])
               for k, v in system.nodes.items() if getattr(v, "dtype", None) == object]
    groups += [("node-table column", list(system.nodes))]
    for kind, texts in groups:
        for t in texts:
            m = _NOT_XML.search(t)
            if m:
                raise InvalidSystemError(
                    f"the {kind} {t[:80]!r} holds the character {m.group()!r}, which XML "
                    "(and so GraphML) cannot hold; rename it, or write node-link JSON or a "
                    ".toml description instead.")


def write_graphml(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write the network and node table as GraphML (atomically).

    The document is the one networkx writes for :func:`system_to_graph` (with Python's
    ElementTree), built without importing networkx (:mod:`netctl.io._graphtext`); a node
    table value of another type than text, integer, number or boolean goes through
    networkx itself."""
    from netctl.io._graphtext import graphml_bytes

    warn_not_kept(system, path, "GraphML")
    _refuse_non_xml(system)
    parts = network_parts(system)
    data = None if parts is None else graphml_bytes(*parts)
    if data is None:
        import networkx as nx

        buf = io.BytesIO()
        nx.write_graphml(system_to_graph(system), buf)
        data = buf.getvalue()
    with atomic_write(path, "wb") as fh:
        fh.write(data)
