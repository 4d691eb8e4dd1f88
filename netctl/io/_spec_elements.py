"""The ``[elements]`` section of a system description: a grid's element table (branches,
three-winding transformers, buses, generating units by the case's IDs), so that a grid
saved as TOML keeps its elements and reopens with the same element N-1 results.

Schema (docs/FORMATS.md)::

    [elements]
    buses = ["1", "2", "3"]            # the grid's buses, in order
    table = [                          # [ID, kind, bus, bus (, third bus)]
      ["branch 1", "line", "1", "2"],
      ["trafo3w 0", "transformer", "1", "2", "3"],
      ["bus 1", "bus", "1"],
      ["gen 1", "generator", "1"],
    ]
    x_pu = [0.1, nan, nan, nan]        # per-element numbers, one per row (optional)
"""

from __future__ import annotations

import json
import math
from typing import Any

import numpy as np

from netctl.records import BRANCH_KINDS, ELEMENT_KINDS, ElementTable

__all__ = ["element_lines", "read_elements"]

_KEYS = ("buses", "table")


def _text(v: str) -> str:
    return json.dumps(v, ensure_ascii=False)


def _num(v: float) -> str:
    if math.isnan(v):
        return "nan"
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    return repr(float(v))


def element_lines(table: ElementTable) -> list[str]:
    """TOML lines of the ``[elements]`` section for ``table``."""
    names = table.node_names
    lines = ["", "[elements]",
             "# the grid's elements by the case's IDs: [ID, kind, bus, bus (, third bus)]",
             "buses = [" + ", ".join(_text(s) for s in names) + "]", "table = ["]
    for k in range(len(table)):
        a, b, c = int(table.end_a[k]), int(table.end_b[k]), int(table.end_c[k])
        ends = [names[v] for v in (a, b, c) if v >= 0]
        lines.append("  [" + ", ".join(_text(s) for s in
                                        [table.ids[k], table.kinds[k], *ends]) + "],")
    lines.append("]")
    for key, col in table.params.items():
        name = key if key.replace("_", "").isalnum() else _text(key)
        lines.append(f"{name} = [" + ", ".join(_num(float(v)) for v in col) + "]")
    return lines


def read_elements(doc: Any, value: Any, buses_known: set[str] | None) -> ElementTable:
    """The :class:`ElementTable` of an ``[elements]`` section (``doc`` is the parsed
    description, for errors with a line; ``buses_known``: the buses the states name in
    their ``node`` column, or their own names, to check the table against)."""
    if not isinstance(value, dict):
        raise doc.error("[elements] must be a table with 'buses' and 'table' (see "
                        "docs/FORMATS.md).", "elements")
    for key in ("buses", "table"):
        if key not in value:
            raise doc.error(f"[elements] needs {key!r} (see docs/FORMATS.md).", "elements")
    buses = value["buses"]
    if not (isinstance(buses, list) and all(isinstance(s, str) for s in buses)):
        raise doc.error(f"[elements] buses must be a list of bus names, found {buses!r:.80}.",
                        "buses")
    pos = {s: k for k, s in enumerate(buses)}
    if len(pos) != len(buses):
        dup = next(s for k, s in enumerate(buses) if s in buses[:k])
        raise doc.error(f"[elements] buses lists {dup!r} twice; bus names are unique.",
                        "buses")
    if buses_known is not None:
        missing = [s for s in buses if s not in buses_known]
        if missing:
            raise doc.error(f"[elements] bus {missing[0]!r} is not a bus of the states "
                            "(their 'node' column, or their names); correct the name.",
                            missing[0])
    rows = value["table"]
    if not isinstance(rows, list):
        raise doc.error("[elements] table must be a list of [ID, kind, bus, ...] rows.",
                        "table")
    ids: list[str] = []
    kinds: list[str] = []
    ends: list[list[int]] = []
    for r in rows:
        if not (isinstance(r, list) and 3 <= len(r) <= 5 and all(isinstance(x, str)
                                                                for x in r)):
            raise doc.error(f"[elements] row {r!r:.80} must be [ID, kind, bus] or [ID, kind, "
                            "bus, bus] (a three-winding transformer: three buses), all text.",
                            *(r[:1] if isinstance(r, list) and r and isinstance(r[0], str)
                              else ["table"]))
        eid, kind, *bs = r
        if kind not in ELEMENT_KINDS:
            raise doc.error(f"[elements] {eid!r}: kind {kind!r} is not one of "
                            f"{', '.join(ELEMENT_KINDS)}.", eid)
        want = (2, 3) if kind in BRANCH_KINDS else (1,)
        if len(bs) not in want:
            raise doc.error(f"[elements] {eid!r}: a {kind} names {' or '.join(map(str, want))}"
                            f" bus(es), found {len(bs)}.", eid)
        for s in bs:
            if s not in pos:
                raise doc.error(f"[elements] {eid!r} names bus {s!r}, which is not under "
                                "[elements] buses; add it or correct the name.", eid)
        if len(set(bs)) != len(bs):
            raise doc.error(f"[elements] {eid!r} joins bus {bs[0]!r} to itself; a branch "
                            "joins different buses.", eid)
        ids.append(eid)
        kinds.append(kind)
        ends.append([pos[s] for s in bs] + [-1] * (3 - len(bs)))
    if len(set(ids)) != len(ids):
        dup = next(s for k, s in enumerate(ids) if s in ids[:k])
        raise doc.error(f"[elements] the ID {dup!r} is listed twice; element IDs are unique.",
                        dup)
    params: dict[str, np.ndarray] = {}
    for key, col in value.items():
        if key in _KEYS:
            continue
        if not (isinstance(col, list) and len(col) == len(ids) and all(
                isinstance(v, (int, float)) and not isinstance(v, bool) for v in col)):
            raise doc.error(f"[elements] {key!r} must be a list of {len(ids)} numbers (one "
                            "per row of the table).", key)
        params[key] = np.asarray(col, float)
    e = np.array(ends, np.int64).reshape(-1, 3)
    return ElementTable(node_names=tuple(buses), ids=tuple(ids), kinds=tuple(kinds),
                        end_a=e[:, 0].copy(), end_b=e[:, 1].copy(), end_c=e[:, 2].copy(),
                        params=params)
