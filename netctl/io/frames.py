"""Systems from tables: a pandas DataFrame of links (and optionally one of nodes).

Orientation: a row ``source, target`` means **source influences target**
(``A[target, source] != 0``), as everywhere in netctl. The optional ``kind`` column says
what a row joins:

========================  ==========================================================
``kind``                  the row means
========================  ==========================================================
``link`` (or empty)       state ``source`` influences state ``target`` (a link of ``A``)
``input``                 input ``source`` acts on state ``target`` (an entry of ``B``;
                          several rows with one input name make a shared input)
``output``                output ``target`` reads state ``source`` (an entry of ``C``)
``disturbance``           disturbance ``source`` acts on state ``target`` (``E``)
========================  ==========================================================

Columns ``source_x, source_y, target_x, target_y`` (when present) give map coordinates of
the two ends; a node table (index or column ``name``) gives any other node attributes
(:data:`netctl.system.NODE_COLUMNS` and anything else), and declares isolated states.
Nothing is dropped silently: self-loops and weights are kept, zero-weight links are left
out with a warning that counts them, duplicate links are merged (weights summed) with a
warning.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping
from typing import Any

import numpy as np
import scipy.sparse as sp

from netctl.errors import InvalidSystemError
from netctl.system import StructuredSystem

__all__ = ["KINDS", "from_frame"]

#: Values of the ``kind`` column.
KINDS: tuple[str, ...] = ("link", "input", "output", "disturbance")
_COORDS = ("source_x", "source_y", "target_x", "target_y")
_TRUE_BY_DEFAULT = ("actuator", "sensor")


def _column(frame: Any, name: str, what: str) -> list[Any]:
    if name not in frame.columns:
        raise InvalidSystemError(
            f"the {what} table has no column {name!r}; it has {list(frame.columns)!r}. "
            f"Name the column with the matching keyword argument (e.g. {what}={name!r}).")
    return list(frame[name].tolist())


def _missing(v: Any) -> bool:
    return v is None or (isinstance(v, float) and math.isnan(v))


def _row_labels(frame: Any) -> list[Any]:
    return list(frame.index.tolist()) if hasattr(frame, "index") else list(range(len(frame)))


def from_frame(links: Any, nodes: Any = None, *, source: str = "source",
               target: str = "target", weight: str | None = "weight",
               kind: str | None = "kind", model: str = "given") -> StructuredSystem:
    """Build a system from an edge table (a pandas DataFrame or alike).

    Parameters
    ----------
    links : DataFrame
        One row per link; ``source`` influences ``target`` (see the module docstring for
        the ``kind`` column and coordinates).
    nodes : DataFrame, optional
        Node attributes, one row per state or disturbance, named by the column ``name``
        (else by the index). A boolean column ``disturbance`` marks disturbances. Names
        that appear in no link become isolated states.
    source, target : str
        Column names of the two ends.
    weight : str or None, default "weight"
        Column of link weights, used when present (``None``: ignore weights). Without
        weights the system is a pattern.
    kind : str or None, default "kind"
        Column of row kinds, used when present (values in :data:`KINDS`).
    model : str
        Recorded as the system's model name.

    Returns
    -------
    StructuredSystem
        States numbered in order of the node table, then of first appearance in the
        links.

    Raises
    ------
    InvalidSystemError
        A named column is missing, a name or weight is empty or not finite, a ``kind`` is
        unknown, two rows give one node different coordinates, or a disturbance has an
        incoming link; the message names the row (by its index label).

    Examples
    --------
    >>> import pandas as pd
    >>> t = pd.DataFrame({"source": ["valve", "tank", "tank", "rain"],
    ...                   "target": ["tank", "pump", "level", "tank"],
    ...                   "kind": ["input", "link", "output", "disturbance"]})
    >>> s = from_frame(t)
    >>> s.state_names, s.input_names, s.output_names, s.disturbance_names
    (('tank', 'pump'), ('valve',), ('level',), ('rain',))
    """
    if not hasattr(links, "columns"):
        raise InvalidSystemError(f"expected a pandas DataFrame of links, found "
                                 f"{type(links).__name__}.")
    labels = _row_labels(links)
    src = _column(links, source, "source")
    dst = _column(links, target, "target")
    w = _column(links, weight, "weight") if weight is not None and (
        weight in links.columns or weight != "weight") else None
    kinds = _column(links, kind, "kind") if kind is not None and (
        kind in links.columns or kind != "kind") else ["link"] * len(src)
    for k, (a, b, c) in enumerate(zip(src, dst, kinds)):
        if _missing(a) or _missing(b) or str(a) == "" or str(b) == "":
            end = source if _missing(a) or str(a) == "" else target
            raise InvalidSystemError(f"links row {labels[k]!r}: empty {end!r} name; every "
                                     "row needs both ends.")
        if _missing(c) or c == "":
            kinds[k] = "link"
        elif c not in KINDS:
            raise InvalidSystemError(f"links row {labels[k]!r}: unknown kind {c!r}; choose "
                                     f"one of {', '.join(map(repr, KINDS))} (empty = 'link').")
    wts = None
    if w is not None:
        wts = np.asarray([np.nan if _missing(v) else v for v in w], dtype=np.float64)
        bad = np.flatnonzero(~np.isfinite(wts))
        if bad.size:
            raise InvalidSystemError(f"links row {labels[int(bad[0])]!r}: weight "
                                     f"{w[int(bad[0])]!r} is not a finite number.")
    # ------------------------------------------------ names, in order of declaration
    order: dict[str, int] = {}
    node_rows: list[str] = []
    node_cols: dict[str, list[Any]] = {}
    marked: list[str] = []
    if nodes is not None:
        if not hasattr(nodes, "columns"):
            raise InvalidSystemError(f"expected a pandas DataFrame of nodes, found "
                                     f"{type(nodes).__name__}.")
        names = _column(nodes, "name", "nodes") if "name" in nodes.columns else \
            _row_labels(nodes)
        node_rows = [str(x) for x in names]
        if len(set(node_rows)) != len(node_rows):
            dup = next(x for x in node_rows if node_rows.count(x) > 1)
            raise InvalidSystemError(f"the node table names {dup!r} twice; one row a node.")
        for c in nodes.columns:
            if c != "name":
                node_cols[str(c)] = list(nodes[c].tolist())
        if "disturbance" in node_cols:
            marked = [n for n, v in zip(node_rows, node_cols.pop("disturbance"))
                      if not _missing(v) and bool(v)]
        for x in node_rows:
            order.setdefault(x, len(order))
    a_src: list[int] = []
    a_dst: list[int] = []
    a_w: list[float] = []
    ins: dict[str, list[tuple[int, float]]] = {}
    outs: dict[str, list[tuple[int, float]]] = {}
    for k, (a, b, c) in enumerate(zip(src, dst, kinds)):
        a, b = str(a), str(b)
        val = 1.0 if wts is None else float(wts[k])
        if c == "input":
            ins.setdefault(a, []).append((order.setdefault(b, len(order)), val))
        elif c == "output":
            outs.setdefault(b, []).append((order.setdefault(a, len(order)), val))
        else:
            a_src.append(order.setdefault(a, len(order)))
            a_dst.append(order.setdefault(b, len(order)))
            a_w.append(val)
            if c == "disturbance" and a not in marked:
                marked.append(a)
    n = len(order)
    names_all = list(order)
    clash = (set(ins) | set(outs)) & set(order)
    if clash:
        raise InvalidSystemError(f"{sorted(clash)[0]!r} names both an input or output and a "
                                 "state; rename one of them.")
    # ------------------------------------------------ zero weights, node table
    aw = np.asarray(a_w, np.float64)
    zero = aw == 0.0
    if wts is not None and zero.any():
        warnings.warn(f"{int(zero.sum())} link(s) of weight 0 left out (a zero is no "
                      "influence).", stacklevel=2)
    keep = ~zero
    table = _node_table(names_all, node_rows, node_cols, links, src, dst, labels)
    system = StructuredSystem.from_edges(
        np.asarray(a_src, np.int64)[keep], np.asarray(a_dst, np.int64)[keep], n,
        weights=aw[keep] if wts is not None else None, state_names=names_all, nodes=table,
        model=model)
    if ins:
        system = system.with_inputs(_matrix(ins, n), names=list(ins))
    if outs:
        system = system.with_outputs(_matrix(outs, n).T.tocsr(), names=list(outs))
    if marked:
        system = system.states_to_disturbances(marked)
    return system


def _matrix(cols: Mapping[str, list[tuple[int, float]]], n: int) -> sp.csr_array:
    rows = [i for v in cols.values() for i, _ in v]
    data = [x for v in cols.values() for _, x in v]
    cidx = [j for j, v in enumerate(cols.values()) for _ in v]
    return sp.csr_array((np.asarray(data, np.float64), (rows, cidx)), shape=(n, len(cols)))


def _node_table(names: list[str], node_rows: list[str], node_cols: dict[str, list[Any]],
                links: Any, src: list[Any], dst: list[Any], labels: list[Any]
                ) -> dict[str, np.ndarray]:
    """Node-table columns over ``names`` from the node table and the edge coordinates."""
    pos = {x: i for i, x in enumerate(names)}
    n = len(names)
    table: dict[str, np.ndarray] = {}
    rows = np.asarray([pos[x] for x in node_rows], np.int64)
    for c, vals in node_cols.items():
        present = [v for v in vals if not _missing(v)]
        if present and all(isinstance(v, (bool, np.bool_)) for v in present):
            arr = np.full(n, c in _TRUE_BY_DEFAULT, bool)
            arr[rows] = [bool(v) if not _missing(v) else c in _TRUE_BY_DEFAULT for v in vals]
        elif all(isinstance(v, (int, float, np.number)) and not isinstance(v, bool)
                 for v in present):
            arr = np.full(n, np.nan)
            arr[rows] = [np.nan if _missing(v) else float(v) for v in vals]
        else:
            arr = np.full(n, "", dtype=object)
            arr[rows] = ["" if _missing(v) else str(v) for v in vals]
            arr = arr.astype(str)
        table[c] = arr
    if any(c in links.columns for c in _COORDS):
        for axis in ("x", "y"):
            arr = table.get(axis, np.full(n, np.nan)).astype(float)
            for end, ends in (("source", src), ("target", dst)):
                col = f"{end}_{axis}"
                if col not in links.columns:
                    continue
                for k, (name, v) in enumerate(zip(ends, links[col].tolist())):
                    if _missing(v):
                        continue
                    i = pos[str(name)]
                    if math.isnan(arr[i]):
                        arr[i] = float(v)
                    elif arr[i] != float(v):
                        raise InvalidSystemError(
                            f"links row {labels[k]!r}: {col} = {v!r} for {str(name)!r}, but "
                            f"an earlier row or the node table gave {arr[i]!r}; one node has "
                            "one position.")
            table[axis] = arr
    return table
