"""Writing a :class:`~netctl.system.StructuredSystem` as a TOML system description.

The schema is the one :mod:`netctl.io.system_spec` reads (docs/FORMATS.md); what this
writes, that reads back to the same system (``tests/io/test_system_spec.py`` round-trips
it). Orientation as everywhere: a coupling ``[u, v]`` means "u influences v".
"""

from __future__ import annotations

import json
import math
import os
import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from netctl._csr import diagonal, transpose_pattern, without_diagonal
from netctl.io._common import atomic_group, atomic_write
from netctl.stations import Station
from netctl.system import StructuredSystem

__all__ = ["INLINE_LINKS", "write_system"]

#: Model names a description may record (the same list the reader accepts).
_MODEL_NAMES = ("first-order", "self-loops", "second-order")

_BARE = re.compile(r"[A-Za-z0-9_-]+\Z")

#: Systems with more links than this are written with their couplings in an edge list
#: beside the TOML file (``<name>.edges.csv``) instead of inline.
INLINE_LINKS = 20_000


def _str(s: str) -> str:
    """A TOML basic string: JSON's escapes are TOML's, except that TOML also forbids a raw
    DEL (U+007F)."""
    return json.dumps(s, ensure_ascii=False).replace("\x7f", "\\u007f")


def _key(s: str) -> str:
    return s if _BARE.match(s) else _str(s)


def _val(v: Any) -> str:
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return repr(v)
    return _str(str(v))


def write_system(system: StructuredSystem, path: str | os.PathLike[str], *,
                 stations: Sequence[Station] = ()) -> None:
    """Write ``system`` as a TOML system description (atomically).

    States with their node-table attributes and self-dynamics, couplings (inline, or in
    an edge list beside the file when there are more than :data:`INLINE_LINKS`), inputs,
    outputs, and subsystems when the node table has a ``subsystem`` column. Links across
    subsystems are written as couplings (they read back as state ties). Disturbances are
    written as nodes with ``disturbance = true`` (and their own attributes) whose
    couplings are the entries of ``E``; regulated outputs under ``[regulated]``; the
    given ``stations`` under ``[stations]``; a grid's element table under ``[elements]``.
    """
    names = system.state_names
    n = system.n_states
    diag = diagonal(system.pattern("A"))
    lines = ["# netctl system description (schema: docs/FORMATS.md).",
             "# A coupling [u, v] means state u influences state v (A[v, u] != 0).",
             "", "[system]", f"name = {_val(Path(path).stem)}",
             f"weighted = {_val(system.weighted)}"]
    if system.model in _MODEL_NAMES:
        lines.append(f"model = {_val(system.model)}  # the states below are under this model")
    lines += ["", "[states]"]
    cols = {k: v for k, v in system.nodes.items() if k != "subsystem"}
    for i in range(n):
        parts = []
        for k, col in cols.items():
            v = col[i]
            if v is None or (isinstance(v, (float, np.floating)) and math.isnan(v)):
                continue
            parts.append(f"{_key(k)} = {_val(v)}")
        if diag[i] != 0:
            parts.append("self = " + (_val(float(diag[i])) if system.weighted else "true"))
        lines.append(f"{_key(names[i])} = {{ {', '.join(parts)} }}" if parts
                     else f"{_key(names[i])} = {{}}")
    from netctl.io._signals import disturbance_links, disturbance_rows

    for dname, row in zip(system.disturbance_names, disturbance_rows(system)):
        lines.append(f"{_key(dname)} = {{ "
                     + ", ".join(f"{_key(k)} = {_val(v)}" for k, v in row.items()) + " }")
    src, dst = system.edges()
    vals = system.pattern("A").data
    off = src != dst
    lines += ["", "[couplings]"]
    side = None
    if int(off.sum()) > INLINE_LINKS:
        side = Path(path).with_name(Path(path).stem + ".edges.csv")
        lines.append(f"file = {_val(side.name)}")
    items = []
    if side is None:
        for a, b, x in zip(src[off].tolist(), dst[off].tolist(), vals[off].tolist()):
            w = f", {x!r}" if system.weighted else ""
            items.append(f"  [{_val(names[a])}, {_val(names[b])}{w}],")
    # disturbance links stay inline (the side file holds state links only; a
    # disturbance's name may not fit an edge list), read after the file's links
    for a_name, b_name, x in disturbance_links(system):
        w = f", {x!r}" if system.weighted else ""
        items.append(f"  [{_val(a_name)}, {_val(b_name)}{w}],")
    if items or side is None:
        lines += ["links = ["] + items + ["]"]
    # per input: the states it acts on (rows of B's transpose); per output and regulated
    # output: the states it reads (rows of C, H); sorted, as scipy's CSC columns
    for kind, M, pool in (("inputs", transpose_pattern(system.pattern("B")), system.input_names),
                          ("outputs", system.pattern("C"), system.output_names),
                          ("regulated", system.pattern("H"), system.regulated_names)):
        if pool:
            lines += ["", f"[{kind}]"]
            for j, nm in enumerate(pool):
                rows = M.indices[M.indptr[j]:M.indptr[j + 1]]
                lines.append(f"{_key(nm)} = [{', '.join(_val(names[r]) for r in rows)}]")
    if "subsystem" in system.nodes:
        col = system.nodes["subsystem"]
        groups: dict[str, list[str]] = {}
        for i in range(n):
            if col[i] is not None:
                groups.setdefault(str(col[i]), []).append(names[i])
        if groups:
            lines += ["", "[subsystems]"]
            for sub, members in groups.items():
                lines.append(f"{_key(sub)} = [{', '.join(_val(s) for s in members)}]")
    if stations:
        from netctl.stations import check_stations

        check_stations(system, stations)
        lines += ["", "[stations]"]
        for st in stations:
            ins = ", ".join(_val(system.input_names[i]) for i in st.inputs)
            outs = ", ".join(_val(system.output_names[i]) for i in st.outputs)
            lines.append(f"{_key(st.name)} = {{ inputs = [{ins}], outputs = [{outs}] }}")
    if system.elements is not None:  # a grid keeps its elements (branch IDs, buses)
        from netctl.io._spec_elements import element_lines

        lines += element_lines(system.elements)
    with atomic_group():  # the side file and the description appear together or not at all
        _write_both(system, path, side, lines)


def _write_both(system: StructuredSystem, path: str | os.PathLike[str], side: Path | None,
                lines: list[str]) -> None:
    if side is not None:
        from netctl.io.edgelist import write_edgelist

        edges_only = system._replace(A=without_diagonal(system.pattern("A")),
                                     B=None, C=None, input_names=(), output_names=(), nodes={},
                                     H=None, regulated_names=(), E=None,
                                     disturbance_names=(), disturbance_nodes={})
        write_edgelist(edges_only, side)
    with atomic_write(path) as fh:
        fh.write("\n".join(lines) + "\n")
