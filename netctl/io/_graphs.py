"""Helpers shared by the graph-file formats (GraphML, GML, node-link JSON).

Node attributes become the node table; the edge attribute ``weight`` becomes the link
weight. Anything else is kept or warned about, never dropped silently.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

from netctl._parts import _node_table_from_attrs
from netctl.io._common import excerpt, file_error
from netctl.io._signals import apply_node_kinds, regulated_not_kept
from netctl.system import StructuredSystem

__all__ = ["Locate", "system_from_parts", "node_rows", "refuse_unsafe_xml", "warn_not_kept"]

_SCALARS = (str, int, float, bool)
_NUMERIC = ("x", "y", "actuator_cost", "sensor_cost")


def _scalar(v: Any) -> bool:
    return isinstance(v, _SCALARS) or isinstance(v, (np.integer, np.floating, np.bool_))


#: ``locate(kind, index)``: the line of the file that holds node ``index`` (``kind``
#: ``"node"``) or edge ``index`` (``"edge"``) of the lists given to
#: :func:`system_from_parts`, or None where the format (or the file) does not say.
#: ``"repeat"``: edge ``index``, which has the ends of an earlier edge (a parallel
#: edge); where edges are found by their ends, the line of the second such edge.
Locate = Callable[[str, int], "int | None"]


def _no_line(kind: str, index: int) -> int | None:
    return None


def system_from_parts(path: object, names: Sequence[Any], attrs: Sequence[Mapping[str, Any]],
                      sources: Sequence[int], targets: Sequence[int],
                      weights: Sequence[Any] | None, directed: bool, *,
                      model: str, what: str, locate: Locate | None = None) -> StructuredSystem:
    """Build a system from node names, node attribute dicts and edge index lists.

    Raises NetworkFileError for non-scalar node attributes, non-numeric, NaN or infinite
    weights and two nodes of one name, each naming the node or link and, where
    ``locate`` finds it, the line (it is called only on such an error: a good file
    pays nothing for it).
    """
    where = locate or _no_line
    for i, (name, a) in enumerate(zip(names, attrs)):
        for k, v in a.items():
            if not _scalar(v):
                raise file_error(path, where("node", i), f"attribute {k!r} of node "
                                 f"{str(name)!r} has the type {type(v).__name__} ({v!r}); node "
                                 f"attributes must be numbers, strings or booleans in a {what} "
                                 "file for netctl.")
            if k in _NUMERIC and (isinstance(v, (bool, np.bool_)) or not _is_number(v)
                                  or not math.isfinite(float(v))):
                raise file_error(path, where("node", i), f"attribute {k!r} of node "
                                 f"{str(name)!r} must be a finite number, found {v!r}; give "
                                 "a finite number (or leave the attribute out).")
    str_names = [str(x) for x in names]
    if len(set(str_names)) != len(str_names):
        first: dict[str, int] = {}
        for i, x in enumerate(str_names):
            if x in first:
                break
            first[x] = i
        before = where("node", first[x])
        raise file_error(path, where("node", i), f"a second node has the name {x!r} (as "
                         "text; the first is "
                         f"{f'on line {before}' if before is not None else f'node {first[x]}'}"
                         f"); give every node a distinct id.")
    src = np.asarray(sources, dtype=np.int64)
    dst = np.asarray(targets, dtype=np.int64)
    kept = np.arange(src.size)  # each link's place in the lists given (for ``where``)
    w = None
    if weights is not None:
        try:
            if any(isinstance(x, (bool, np.bool_)) for x in weights):
                raise TypeError("a boolean is no weight")  # float(True) would be 1.0
            w = np.array([1.0 if x is None else float(x) for x in weights], dtype=np.float64)
        except (TypeError, ValueError):
            e = next(i for i, x in enumerate(weights) if x is not None and not _is_number(x))
            raise file_error(path, where("edge", e), f"the weight {weights[e]!r} of the link "
                             f"{_link(str_names, src, dst, e)} is not a number; give numeric "
                             "weights (or none).") from None
        if not np.all(np.isfinite(w)):
            e = int(np.flatnonzero(~np.isfinite(w))[0])
            raise file_error(path, where("edge", e), f"the link "
                             f"{_link(str_names, src, dst, e)} has the weight "
                             f"{weights[e]!r}, which is NaN or infinite; give a finite "
                             "weight.")
        unweighted = [i for i, x in enumerate(weights) if x is None]
        if unweighted:  # kept, with the weight 1.0: said, with the first one's line
            e, n_un = unweighted[0], len(unweighted)
            line = where("edge", e)
            warnings.warn(f"{path}{f':{line}' if line is not None else ''}: {n_un} "
                          f"link{'s' if n_un > 1 else ''} without a weight "
                          f"{'were' if n_un > 1 else 'was'} given the weight 1.0, because "
                          f"other links have weights (the first: "
                          f"{_link(str_names, src, dst, e)}). Give every link a weight "
                          "(or none).", stacklevel=3)
        zero = w == 0
        if zero.any():
            nz = int(zero.sum())
            warnings.warn(f"{path}: {nz} link{'s' if nz > 1 else ''} with weight 0 "
                          f"{'are' if nz > 1 else 'is'} not a link and "
                          f"{'were' if nz > 1 else 'was'} left out.", stacklevel=3)
            src, dst, w, kept = src[~zero], dst[~zero], w[~zero], kept[~zero]
    repeat = _first_repeat(src, dst, kept, directed, len(str_names))
    if not directed:
        loop = src == dst
        src, dst = np.concatenate([src, dst[~loop]]), np.concatenate([dst, src[~loop]])
        if w is not None:
            w = np.concatenate([w, w[~loop]])
    table = _node_table_from_attrs(list(attrs)) if any(attrs) else {}
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        system = StructuredSystem.from_edges(src, dst, len(str_names), weights=w,
                                             state_names=str_names, nodes=table, model=model)
    for c in caught:
        text = str(c.message)
        if repeat is not None and "duplicate link" in text:
            text = _said_where(text, str_names, src, dst, repeat, where, path)
        else:
            text = f"{path}: {text}"
        warnings.warn(text, stacklevel=3)
    return apply_node_kinds(system, path)


def _first_repeat(src: np.ndarray, dst: np.ndarray, kept: np.ndarray, directed: bool,
                  n: int) -> tuple[int, int, int] | None:
    """The first link that repeats the ends of an earlier one (either way round when
    undirected), as (its position in ``src``, its index and the earlier one's index in
    the lists given), or None."""
    if src.size < 2:
        return None
    a, b = (src, dst) if directed else (np.minimum(src, dst), np.maximum(src, dst))
    key = a * max(n, 1) + b
    _, first = np.unique(key, return_index=True)
    later = np.ones(key.size, bool)
    later[first] = False
    if not later.any():
        return None
    pos = int(np.flatnonzero(later)[0])
    before = int(np.flatnonzero(key == key[pos])[0])
    return pos, int(kept[pos]), int(kept[before])


def _said_where(text: str, names: Sequence[str], src: np.ndarray, dst: np.ndarray,
                repeat: tuple[int, int, int], where: Locate, path: object) -> str:
    """The merge warning of :meth:`StructuredSystem.from_edges`, placed on the line of
    the first repeated link, with the line of the link it repeats and the fix."""
    pos, again, first = repeat
    line, before = where("repeat", again), where("edge", first)
    if line is None:
        return f"{path}: {text}"
    earlier = f" on line {before}" if before is not None and before != line else " before it"
    fix = (" (one link with the summed weight, if both were meant)" if "weights summed" in text
           else "")
    return (f"{path}:{line}: {text.rstrip('.')}: the link {_link(names, src, dst, pos)} here "
            f"repeats the one{earlier}. Give each link once{fix}.")


def _link(names: Sequence[str], src: np.ndarray, dst: np.ndarray, e: int) -> str:
    """``'u' -> 'v'``: link ``e`` by the names of its ends."""
    return f"{excerpt(names[int(src[e])])} -> {excerpt(names[int(dst[e])])}"


def _is_number(x: Any) -> bool:
    if isinstance(x, (bool, np.bool_)):
        return False
    try:
        float(x)
        return True
    except (TypeError, ValueError):
        return False


def node_rows(system: StructuredSystem) -> list[dict[str, Any]]:
    """One dict of plain Python attribute values per state (missing values left out)."""
    cols = list(system.nodes.items())
    rows: list[dict[str, Any]] = [{} for _ in range(system.n_states)]
    for k, col in cols:
        vals = col.tolist()
        for i, v in enumerate(vals):
            if v is None or (isinstance(v, float) and math.isnan(v)):
                continue
            rows[i][k] = v
    return rows


def warn_not_kept(system: StructuredSystem, path: object, fmt: str) -> None:
    """Warn that inputs and outputs (and regulated outputs other than ``z:<state>``
    marks) cannot be stored in ``fmt``."""
    if system.n_inputs or system.n_outputs:
        warnings.warn(f"{path}: the {fmt} format holds the network only; the "
                      f"{system.n_inputs} input(s) and {system.n_outputs} output(s) were not "
                      "written (use a .toml system description to keep them).", stacklevel=3)
    lost = regulated_not_kept(system)
    if lost:
        warnings.warn(f"{path}: {lost} (use a .toml system description to keep them).",
                      stacklevel=3)


def refuse_unsafe_xml(path: object, data: bytes) -> None:
    """Refuse XML with a document type declaration (entity expansion, external entities)
    and XML that is not UTF-8, before any parser sees it."""
    if data[:2] in (b"\xff\xfe", b"\xfe\xff") or b"\x00" in data[:4096]:
        raise file_error(path, 1, "the XML is not UTF-8 (UTF-16?); save it as UTF-8.")
    low = data.lower()
    for token in (b"<!doctype", b"<!entity"):
        at = low.find(token)
        if at >= 0:
            line = data.count(b"\n", 0, at) + 1
            raise file_error(path, line, "the file declares a document type or entities "
                             "(<!DOCTYPE/<!ENTITY>), which netctl refuses: they allow entity "
                             "expansion bombs and reading other files. Remove the declaration "
                             "(GraphML does not need one).")
