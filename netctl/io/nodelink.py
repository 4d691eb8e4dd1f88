"""Node-link JSON (``.json``): ``{"directed": ..., "nodes": [...], "links": [...]}``.

Each node is an object with an ``id`` and any scalar attributes (the node table); each
link has ``source``, ``target`` and optionally ``weight``. ``"edges"`` is accepted in
place of ``"links"``. ``"directed": false`` makes every link act both ways. This is the
layout networkx's ``node_link_data`` writes.
"""

from __future__ import annotations

import json
import re
import json.decoder
import json.scanner
import os
import warnings
from typing import Any

from netctl.io._common import atomic_write, file_error, read_text, refuse_lone_surrogates
from netctl.io._graphs import Locate, node_rows, system_from_parts, warn_not_kept
from netctl.io._signals import dedicated_regulated, disturbance_links, disturbance_rows
from netctl.system import StructuredSystem

__all__ = ["read_nodelink", "write_nodelink"]

_TOP = ("directed", "multigraph", "graph", "nodes", "links", "edges")


def read_nodelink(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read node-link JSON.

    Raises
    ------
    NetworkFileError
        Invalid JSON (with line and column), a missing ``nodes`` list, a node without
        ``id``, a link naming an unknown node, non-scalar attributes, bad weights.
    """
    text = read_text(path)
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise file_error(path, exc.lineno, f"invalid JSON at column {exc.colno}: {exc.msg}. "
                         "Check commas, brackets and quotes.") from None
    if isinstance(data, dict) and "_module" in data and "_class" in data:
        raise file_error(path, 1, f"this JSON is a saved {data.get('_class')!r} object (a "
                         "pandapower network?), not node-link JSON; read it with "
                         "--format pandapower (netctl reads it without importing anything "
                         "it names).")
    if not isinstance(data, dict) or not isinstance(data.get("nodes"), list):
        raise file_error(path, None, "expected a JSON object with a \"nodes\" list and a "
                         "\"links\" list (node-link layout, see docs/FORMATS.md).")
    if "links" in data and "edges" in data:  # one list would be passed over
        m = re.search(r'"edges"\s*:', text)
        raise file_error(path, text.count("\n", 0, m.start()) + 1 if m else None,
                         f"the file holds both a \"links\" list ({_count(data['links'])}) "
                         f"and an \"edges\" list ({_count(data['edges'])}); netctl reads one "
                         "list of links and would pass over the other. Put all links in "
                         "\"links\".")
    unknown = [k for k in data if k not in _TOP]
    if unknown or data.get("graph"):
        warnings.warn(f"{path}: the keys {', '.join(map(repr, unknown + (['graph'] if data.get('graph') else [])))} "
                      "are not kept.", stacklevel=2)
    links = data.get("links", data.get("edges", []))
    if not isinstance(links, list):
        raise file_error(path, None, "\"links\" must be a list of {\"source\", \"target\"} "
                         "objects.")
    names: list[Any] = []
    attrs: list[dict[str, Any]] = []
    locate = _locator(text, "links" if "links" in data else "edges")
    for k, node in enumerate(data["nodes"]):
        if not isinstance(node, dict):
            raise file_error(path, locate("node", k), f"node {k} is {node!r:.60}, not an "
                             "object; write each node as an object with an \"id\", such as "
                             "{\"id\": \"a\"}.")
        if "id" not in node:
            raise file_error(path, locate("node", k), f"node {k} ({node!r:.60}) has no "
                             "\"id\"; every node is an object with an \"id\".")
        if isinstance(node["id"], bool) or not isinstance(node["id"], (str, int)):
            raise file_error(path, locate("node", k), f"node {k} has the id {node['id']!r}; "
                             "ids must be strings or integers.")
        names.append(node["id"])
        attrs.append({a: v for a, v in node.items() if a != "id"})
    index = {v: i for i, v in enumerate(names)}
    src, dst, wts = [], [], []
    weighted = any(isinstance(e, dict) and "weight" in e for e in links)
    extra: set[str] = set()
    for k, e in enumerate(links):
        if not isinstance(e, dict):
            raise file_error(path, locate("edge", k), f"link {k} is {e!r:.60}, not an "
                             "object; write each link as an object such as {\"source\": \"a\", "
                             "\"target\": \"b\"} (a \"weight\" is optional).")
        if "source" not in e or "target" not in e:
            raise file_error(path, locate("edge", k), f"link {k} ({e!r:.60}) needs "
                             "\"source\" and \"target\"; give both (ids from \"nodes\").")
        for end in ("source", "target"):
            if not isinstance(e[end], (str, int)) or e[end] not in index:
                raise file_error(path, locate("edge", k), f"link {k} names the {end} "
                                 f"{e[end]!r}, which is not in \"nodes\"; list every node.")
        src.append(index[e["source"]])
        dst.append(index[e["target"]])
        if weighted:
            wts.append(e.get("weight"))
        extra.update(x for x in e if x not in ("source", "target", "weight", "key"))
    if extra:
        warnings.warn(f"{path}: link attributes {', '.join(map(repr, sorted(extra)))} are not "
                      "kept (only 'weight' is).", stacklevel=2)
    directed = data.get("directed", True)
    if not isinstance(directed, bool):
        raise file_error(path, None, f"\"directed\" must be true or false, found {directed!r}.")
    return system_from_parts(path, names, attrs, src, dst, wts if weighted else None,
                             directed, model=model, what="node-link JSON", locate=locate)


def _count(items: Any) -> str:
    """``"3 items"`` for a list, else its JSON type (for a message)."""
    if isinstance(items, list):
        return f"{len(items)} item{'s' if len(items) != 1 else ''}"
    return f"a {type(items).__name__}, not a list"


class _Items(list):  # type: ignore[type-arg]
    """A JSON array with the offset in the text where each of its items starts."""

    starts: list[int] = []


def _parse_array(s_and_end: tuple[str, int], scan_once: Any) -> tuple[_Items, int]:
    starts: list[int] = []

    def scan(string: str, idx: int) -> tuple[Any, int]:
        starts.append(idx)  # the array's own items only: nested arrays come back here
        return scan_once(string, idx)

    values, end = json.decoder.JSONArray(s_and_end, scan)  # type: ignore[attr-defined]
    found = _Items(values)
    found.starts = starts
    return found, end


def _locator(text: str, key: str) -> Locate:
    """``locate(kind, k)``: the line of node ``k`` (``"node"``) or link ``k`` (``"edge"``
    or ``"repeat"``, in the list ``key``), whatever the item is (an object, a number, a
    list...). The text is parsed again, keeping where each array item starts, only when
    a line is asked for (the pure-Python parser: an error's price, not a read's)."""
    found: list[Any] = []

    def locate(kind: str, k: int) -> int | None:
        if not found:
            decoder = json.JSONDecoder()
            decoder.parse_array = _parse_array  # type: ignore[attr-defined]
            decoder.scan_once = json.scanner.py_make_scanner(decoder)  # type: ignore[attr-defined]
            try:
                found.append(decoder.decode(text))
            except (ValueError, RecursionError):
                found.append(None)
        doc = found[0]
        items = doc.get("nodes" if kind == "node" else key) if isinstance(doc, dict) else None
        if not isinstance(items, _Items) or not 0 <= k < len(items.starts):
            return None
        return text.count("\n", 0, items.starts[k]) + 1

    return locate


def write_nodelink(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write node-link JSON (directed; node table as node attributes), atomically."""
    warn_not_kept(system, path, "node-link JSON")
    refuse_lone_surrogates(system, "node-link JSON")
    names = system.state_names
    regulated = set(dedicated_regulated(system) or ())
    nodes = [{"id": n, **row, **({"regulated": True} if n in regulated else {})}
             for n, row in zip(names, node_rows(system))]
    nodes += [{"id": n, **row} for n, row in zip(system.disturbance_names,
                                                 disturbance_rows(system))]
    src, dst = system.edges()
    if system.weighted:
        links = [{"source": names[a], "target": names[b], "weight": w} for a, b, w in
                 zip(src.tolist(), dst.tolist(), system.pattern("A").data.tolist())]
        links += [{"source": a, "target": b, "weight": w}
                  for a, b, w in disturbance_links(system)]
    else:
        links = [{"source": names[a], "target": names[b]} for a, b in
                 zip(src.tolist(), dst.tolist())]
        links += [{"source": a, "target": b} for a, b, _ in disturbance_links(system)]
    doc = {"directed": True, "multigraph": False, "graph": {}, "nodes": nodes, "links": links}
    with atomic_write(path) as fh:
        json.dump(doc, fh, ensure_ascii=False, indent=1, allow_nan=False)
        fh.write("\n")
