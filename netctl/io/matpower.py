"""Plain-text power-grid case files (``.m``): bus, generator and branch tables.

The published IEEE and PEGASE test grids are distributed in this open text layout (the
MATPOWER case format, version 2): a file assigns numeric matrices to fields of one
structure, one row a line or rows separated by ``;``, ``%`` starting a comment::

    mpc.baseMVA = 100;
    mpc.bus = [
        1  3  0  0  0  0  1  1.06  0  138  1  1.06  0.94;
        ...
    ];
    mpc.gen = [ ... ];
    mpc.branch = [ ... ];

Only text is parsed; nothing in the file is evaluated. Columns used (1-based, as the
format documents them): bus 1 number, 2 type (4 = isolated: out of service), 10 base kV;
generator 1 bus, 8 status (> 0 in service); branch 1 from bus, 2 to bus, 4 reactance x
(per unit), 9 tap ratio, 10 phase shift (degrees), 11 status (1 in service). A branch is
a *transformer* when its tap ratio is neither 0 nor 1, it shifts phase, or its two buses
have different base voltages; otherwise a *line*. Branches are named ``branch k`` by
their 1-based row in the branch table, generators ``gen k``. An optional ``mpc.bus_name``
cell array of quoted names is kept in the node table as ``bus_name``. Optional fields
``mpc.gen_inertia_s`` and ``mpc.gen_damping_pu`` (one value per generator row, in the
order of ``mpc.gen``, like the format's own ``mpc.genfuel``) give the swing parameters
(see :mod:`netctl.io._grid`).
"""

from __future__ import annotations

import os
import re

import numpy as np

from netctl.io._common import file_error, read_text
from netctl.io._grid import DAMPING_COLUMN, INERTIA_COLUMN, GridTables, build_grid, label
from netctl.system import StructuredSystem

__all__ = ["read_matpower"]

_START = re.compile(r"^\s*mpc\.(\w+)\s*=\s*(.*)$")
_NEED = {"bus": 13, "gen": 10, "branch": 11}


def _strip_comment(line: str) -> str:
    if "%" not in line:
        return line
    if "'" not in line:
        return line[:line.index("%")]
    quote = False
    for k, ch in enumerate(line):
        if ch == "'":
            quote = not quote
        elif ch == "%" and not quote:
            return line[:k]
    return line


def _parse(path: object, text: str) -> tuple[dict[str, tuple[np.ndarray, list[int]]],
                                              dict[str, list[str]]]:
    """Numeric matrices (values, file line of each row) and cell arrays of strings."""
    mats: dict[str, tuple[np.ndarray, list[int]]] = {}
    cells: dict[str, list[str]] = {}
    lines = text.splitlines()
    k = 0
    while k < len(lines):
        m = _START.match(_strip_comment(lines[k]))
        k += 1
        if not m:
            continue
        name, rest = m.group(1), m.group(2).strip()
        if not rest.startswith(("[", "{")):
            continue  # a scalar such as baseMVA or version
        close = "]" if rest[0] == "[" else "}"
        rows: list[list[str]] = []
        row_lines: list[int] = []
        body = rest[1:]
        lineno = k
        cur: list[str] = []
        done = False
        while True:
            end = body.find(close) if close == "]" else _cell_end(body)
            chunk = body if end < 0 else body[:end]
            parts = chunk.split(";")
            for j, part in enumerate(parts):
                toks = (re.findall(r"'((?:[^']|'')*)'", part) if close == "}" else
                        part.replace(",", " ").split())
                if toks:
                    if not cur:
                        row_lines.append(lineno)
                    cur.extend(toks)
                if j < len(parts) - 1 and cur:
                    rows.append(cur)
                    cur = []
            if close == "]" and end < 0 and cur:  # a newline ends a row too
                rows.append(cur)
                cur = []
            if end >= 0:
                done = True
                break
            if k >= len(lines):
                break
            body = _strip_comment(lines[k])
            lineno = k + 1
            k += 1
        if cur:
            rows.append(cur)
        if not done:
            raise file_error(path, row_lines[0] if row_lines else lineno,
                             f"the table mpc.{name} is not closed with {close!r}; end it "
                             f"with '{close};'.")
        if close == "}":
            cells[name] = [r[0].replace("''", "'") for r in rows]
            continue
        width = len(rows[0]) if rows else 0
        for row, ln in zip(rows, row_lines):
            if len(row) != width:
                raise file_error(path, ln, f"mpc.{name} row has {len(row)} entries, the first "
                                 f"row {width}; every row of a table has the same columns.")
        try:
            vals = np.array(rows, dtype=np.float64).reshape(len(rows), width)
        except ValueError:
            for row, ln in zip(rows, row_lines):
                for c, tok in enumerate(row):
                    try:
                        float(tok)
                    except ValueError:
                        raise file_error(path, ln, f"mpc.{name} column {c + 1} is {tok!r}, "
                                         "expected a number.") from None
            raise
        mats[name] = (vals, row_lines)
    return mats, cells


def _cell_end(body: str) -> int:
    quote = False
    for k, ch in enumerate(body):
        if ch == "'":
            quote = not quote
        elif ch == "}" and not quote:
            return k
    return -1


def read_matpower(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read a plain-text case file (bus, generator and branch tables).

    Returns
    -------
    StructuredSystem
        The bus network (see :func:`netctl.io._grid.build_grid`): states named by the
        case's bus numbers, couplings ``1/|x|`` per branch, elements ``branch k``,
        ``bus N`` and ``gen k``.

    Raises
    ------
    NetworkFileError
        A missing ``mpc.bus`` or ``mpc.branch`` table, too few columns, non-numeric
        entries, a table not closed, duplicate bus numbers, a branch naming a missing bus
        or running from a bus to itself (file and line).
    """
    text = read_text(path)
    mats, cells = _parse(path, text)
    for name in ("bus", "branch"):
        if name not in mats:
            raise file_error(path, None, f"no mpc.{name} table found; expected a case file "
                             "with 'mpc.bus = [ ... ];', 'mpc.gen = [ ... ];' and "
                             "'mpc.branch = [ ... ];'.")
    for name, need in _NEED.items():
        if name in mats and mats[name][0].size and mats[name][0].shape[1] < need:
            raise file_error(path, mats[name][1][0], f"mpc.{name} has "
                             f"{mats[name][0].shape[1]} columns, expected at least {need}.")
    bus, bus_lines = mats["bus"]
    br, br_lines = mats["branch"]
    gen, gen_lines = mats.get("gen", (np.zeros((0, 10)), []))
    for vals, lines, cols, what in ((bus, bus_lines, [0], "bus number"),
                                    (br, br_lines, [0, 1], "bus number"),
                                    (gen, gen_lines, [0], "bus number")):
        for c in cols:
            bad = np.flatnonzero(~np.isfinite(vals[:, c]) | (vals[:, c] != np.round(vals[:, c])))
            if bad.size:
                k = int(bad[0])
                raise file_error(path, lines[k], f"column {c + 1} is {vals[k, c]!r}, expected "
                                 f"an integer {what}.")
    labels = [label(float(v)) for v in bus[:, 0]]
    kv = bus[:, 9]
    kv_of = dict(zip(labels, kv.tolist()))
    t = GridTables(path=str(path), bus_labels=labels,
                   bus_ids=bus[:, 0].astype(np.int64).tolist(), bus_kv=kv.tolist(),
                   bus_in_service=(bus[:, 1] != 4).tolist(), bus_lines=list(bus_lines),
                   source="matpower")
    fb = [label(float(v)) for v in br[:, 0]]
    tb = [label(float(v)) for v in br[:, 1]]
    tap, shift = br[:, 8], br[:, 9]
    for k in range(br.shape[0]):
        trafo = (tap[k] not in (0.0, 1.0)) or shift[k] != 0 or (
            kv_of.get(fb[k], 0.0) != kv_of.get(tb[k], 0.0))
        t.branch_ids.append(f"branch {k + 1}")
        t.branch_kinds.append("transformer" if trafo else "line")
    t.branch_from, t.branch_to = fb, tb
    t.branch_x = br[:, 3].tolist()
    t.branch_circuits = [1] * br.shape[0]
    t.branch_in_service = (br[:, 10] > 0).tolist()
    t.branch_lines = list(br_lines)
    t.gen_ids = [f"gen {k + 1}" for k in range(gen.shape[0])]
    t.gen_bus = [label(float(v)) for v in gen[:, 0]]
    t.gen_in_service = (gen[:, 7] > 0).tolist() if gen.shape[0] else []
    t.gen_lines = list(gen_lines)
    for field_name, target in ((f"gen_{INERTIA_COLUMN}", t.gen_inertia_s),
                               (f"gen_{DAMPING_COLUMN}", t.gen_damping_pu)):
        extra = mats.get(field_name)  # optional: one value per generator row
        if extra is None:
            continue
        vals, lines = extra
        if vals.shape[0] != gen.shape[0] or (vals.size and vals.shape[1] != 1):
            raise file_error(path, lines[0] if lines else None, f"mpc.{field_name} has "
                             f"{vals.shape[0]} row(s) of {vals.shape[1] if vals.size else 0} "
                             f"column(s); expected one value per generator row "
                             f"({gen.shape[0]}), in the order of mpc.gen.")
        target.extend(vals[:, 0].tolist() if vals.size else [])
    system = build_grid(t, model=model)
    names = cells.get("bus_name")
    if names is not None and len(names) == bus.shape[0]:
        live = bus[:, 1] != 4
        col = np.empty(int(live.sum()), dtype=object)
        col[:] = [nm for nm, ok in zip(names, live.tolist()) if ok]
        system = system._replace(nodes={**system.nodes, "bus_name": col})
    return system
