"""pandapower networks saved as JSON, read safely (``--format pandapower``).

pandapower saves a network as JSON objects tagged ``{"_module": ..., "_class": ...,
"_object": ...}``; its own loader imports the module and calls the class each tag names,
so a crafted file can run code. This reader never imports or calls anything: it parses the
text with :func:`json.loads` (no object hooks), checks that the top-level tag reads
``pandapowerNet``, and decodes only the element tables it needs, each a pandas
"split"-oriented table (``{"columns": [...], "index": [...], "data": [[...], ...]}``)
stored as a JSON string. Tags are compared as plain strings; every other entry is ignored.

Tables read: ``bus`` (with ``name``, ``vn_kv``, ``in_service``, ``geo``), ``line``,
``trafo``, ``trafo3w``, ``impedance``, ``switch`` (closed bus-bus switches), and the
generating units ``gen``, ``sgen``, ``ext_grid``, ``storage``. Buses are named by their
``name`` when every bus has a distinct one (the published test cases keep the case's bus
number there), else by their pandapower index.
"""

from __future__ import annotations

import json
import math
import os
import re
import warnings
from collections.abc import Sequence
from typing import Any

from netctl.io._common import file_error, read_text
from netctl.io._grid import DAMPING_COLUMN, INERTIA_COLUMN, GridTables, build_grid, label
from netctl.system import StructuredSystem

__all__ = ["PPTable", "read_pandapower_json", "grid_tables", "looks_like_pandapower",
           "with_loads"]

_TABLES = ("bus", "line", "trafo", "trafo3w", "impedance", "switch", "gen", "sgen",
           "ext_grid", "storage", "bus_geodata", "load")


class PPTable:
    """One pandapower element table as plain lists: ``index`` and ``columns``."""

    def __init__(self, index: Sequence[Any], columns: dict[str, list[Any]], *,
                 name: str, line: int | None) -> None:
        index = list(index)
        if all(isinstance(i, int) and not isinstance(i, bool) for i in index) and any(
                index[k] > index[k + 1] for k in range(len(index) - 1)):
            # pandas writes the index in text order ("0, 1, 10, 100, ..."); rows follow
            # the numeric index, as pandapower shows them
            order = sorted(range(len(index)), key=index.__getitem__)
            index = [index[k] for k in order]
            columns = {c: [v[k] for k in order] for c, v in columns.items()}
        self.index = index
        self.columns = columns
        self.name = name
        self.line = line
        self._blank: dict[Any, list[Any]] = {}

    def __len__(self) -> int:
        return len(self.index)

    def col(self, name: str, default: Any) -> list[Any]:
        got = self.columns.get(name)
        if got is None:
            key = (name, repr(default))
            got = self._blank.get(key)  # type: ignore[call-overload]
            if got is None:
                got = self._blank[key] = [default] * len(self.index)  # type: ignore[index]
        return got


def looks_like_pandapower(text: str) -> bool:
    """Whether the start of a JSON text carries pandapower's network tag."""
    return '"pandapowerNet"' in text[:4096] or '"_module": "pandapower' in text[:4096]


def _line_of(text: str, key: str) -> int | None:
    m = re.search(r'"' + re.escape(key) + r'"\s*:', text)
    return text.count("\n", 0, m.start()) + 1 if m else None


def read_pandapower_json(path: str | os.PathLike[str], *, model: str = "given",
                         loads: bool = True) -> StructuredSystem:
    """Read a pandapower network saved as JSON, without importing anything it names.

    Each in-service load becomes a disturbance on its bus (``loads=False`` leaves them
    out), as :func:`netctl.io.power_grid.from_pandapower` does for a network object.

    Raises
    ------
    NetworkFileError
        Not JSON; not a pandapower network (the top-level tag is not ``pandapowerNet``,
        or names a module outside pandapower); a table that is not pandas' split layout;
        a branch naming a missing bus; duplicate bus indices; a branch from a bus to
        itself; non-numeric entries (file, line of the table, table row).
    """
    text = read_text(path)
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise file_error(path, exc.lineno, f"invalid JSON at column {exc.colno}: {exc.msg}. "
                         "Check commas, brackets and quotes.") from None
    if not isinstance(doc, dict) or doc.get("_class") != "pandapowerNet":
        found = doc.get("_class") if isinstance(doc, dict) else type(doc).__name__
        raise file_error(path, 1, f"expected a pandapower network (top-level \"_class\": "
                         f"\"pandapowerNet\"), found {found!r}. Save the network with "
                         "pandapower's to_json, or give a node-link file with --format json.")
    module = doc.get("_module")
    if not (isinstance(module, str) and (module == "pandapower" or
                                         module.startswith("pandapower."))):
        raise file_error(path, 1, f"the network names the module {module!r}; only "
                         "pandapower networks are read, and nothing named in a file is "
                         "imported or run. Re-save the network with pandapower.")
    body = doc.get("_object")
    if isinstance(body, str):
        try:
            body = json.loads(body)
        except json.JSONDecodeError as exc:
            raise file_error(path, None, f"the network body is not JSON ({exc.msg}).") from None
    if not isinstance(body, dict):
        raise file_error(path, None, "the network body (\"_object\") is not a JSON object.")
    tables: dict[str, PPTable] = {}
    for name in _TABLES:
        if name in body:
            tables[name] = _table(path, name, body[name], _line_of(text, name))
    if "bus" not in tables:
        raise file_error(path, None, "the network has no \"bus\" table.")
    sn = body.get("sn_mva", 1.0)
    sn_mva = float(sn) if isinstance(sn, (int, float)) and not isinstance(sn, bool) and sn > 0 \
        else 1.0
    system = build_grid(grid_tables(tables, sn_mva, str(path)), model=model)
    load = tables.get("load")
    if not loads or load is None or len(load) == 0:
        return system
    return with_loads(system, load, str(path))


def with_loads(system: StructuredSystem, load: PPTable, where: str) -> StructuredSystem:
    """``system`` with one disturbance per in-service load of the pandapower table ``load``.

    A load is named ``load <index>`` (``load:<index>`` if a bus already carries such a
    name) and acts on its bus; its ``bus``, ``p_mw``, ``q_mvar`` and the bus coordinates
    go into the disturbance table. Loads out of service, or on a bus left out, are left
    out with a warning that counts them.
    """
    import numpy as np
    import scipy.sparse as sp

    state_of = {label(b): k for k, b in enumerate(np.asarray(system.nodes["bus"]).tolist())}
    on = [v is None or bool(v) for v in load.col("in_service", True)]
    at = [state_of.get(label(b), -1) if b is not None else -1 for b in load.col("bus", None)]
    keep = [k for k in range(len(load)) if on[k] and at[k] >= 0]
    off = len(load) - len(keep)
    if off:
        warnings.warn(f"{where}: {off} load(s) out of service or on a bus out of service "
                      "left out of the disturbances.", stacklevel=3)
    names = [f"load {load.index[k]}" for k in keep]
    if set(names) & set(system.state_names):  # a bus named like a load: keep names apart
        names = [f"load:{load.index[k]}" for k in keep]
    rows = np.array([at[k] for k in keep], np.int64)
    E = sp.csr_array((np.ones(rows.size), (rows, np.arange(rows.size))),
                     shape=(system.n_states, rows.size))

    def col(name: str) -> np.ndarray:
        vals = load.col(name, None)
        out = np.full(rows.size, math.nan)
        for j, k in enumerate(keep):
            v = vals[k]
            if isinstance(v, (int, float)) and not isinstance(v, bool):
                out[j] = float(v)
        return out

    dnodes: dict[str, np.ndarray] = {"bus": np.asarray(system.nodes["bus"])[rows],
                                     "p_mw": col("p_mw"), "q_mvar": col("q_mvar")}
    for c in ("x", "y"):
        if c in system.nodes:
            dnodes[c] = np.asarray(system.nodes[c], float)[rows]
    return system.with_disturbances(E, names=names, nodes=dnodes)


def _table(path: object, name: str, entry: Any, line: int | None) -> PPTable:
    if not (isinstance(entry, dict) and entry.get("_class") == "DataFrame"
            and entry.get("_module") == "pandas.core.frame"):
        raise file_error(path, line, f"table {name!r} is not a pandas table "
                         "(\"_class\": \"DataFrame\"); re-save the network with pandapower.")
    obj = entry.get("_object")
    try:
        data = json.loads(obj) if isinstance(obj, str) else obj
    except json.JSONDecodeError as exc:
        raise file_error(path, line, f"table {name!r} is not JSON ({exc.msg}).") from None
    if entry.get("orient", "split") != "split" or not isinstance(data, dict) or not all(
            isinstance(data.get(k), list) for k in ("columns", "index", "data")):
        raise file_error(path, line, f"table {name!r}: expected pandas' split layout "
                         "({\"columns\", \"index\", \"data\"}); re-save with pandapower.")
    cols = [str(c) for c in data["columns"]]
    rows = data["data"]
    if len(rows) != len(data["index"]) or any(
            not isinstance(r, list) or len(r) != len(cols) for r in rows):
        raise file_error(path, line, f"table {name!r}: rows and index differ in length, or a "
                         f"row does not have {len(cols)} entries.")
    columns = {c: [r[j] for r in rows] for j, c in enumerate(cols)}
    return PPTable(data["index"], columns, name=name, line=line)


def _num(t: PPTable, col: str, k: int, default: float, path: str) -> float:
    v = t.col(col, default)[k]
    if v is None:
        return default
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise file_error(path, t.line, f"table {t.name!r}, row {t.index[k]!r}: {col} is "
                         f"{v!r}, expected a number.")
    return float(v)


def _flag(t: PPTable, col: str, k: int, path: str) -> bool:
    v = t.col(col, True)[k]
    if v is None:
        return True
    if not isinstance(v, (bool, int)):
        raise file_error(path, t.line, f"table {t.name!r}, row {t.index[k]!r}: {col} is "
                         f"{v!r}, expected true or false.")
    return bool(v)


def _bus_ref(t: PPTable, col: str, k: int, by_index: dict[Any, str], path: str) -> str:
    v = t.col(col, None)[k]
    if isinstance(v, float) and v.is_integer():
        v = int(v)
    if isinstance(v, (int, str)) and not isinstance(v, bool) and v in by_index:
        return by_index[v]  # (a list or an object is no bus index, and unhashable)
    raise file_error(path, t.line, f"table {t.name!r}, row {t.index[k]!r}: {col} names bus "
                     f"{v!r}, which is not in the bus table; add the bus or correct the "
                     "index.")


def grid_tables(tables: dict[str, PPTable], sn_mva: float, path: str) -> GridTables:
    """:class:`GridTables` from decoded pandapower tables (also used for live networks)."""
    bus = tables["bus"]
    for k, i in enumerate(bus.index):
        if isinstance(i, bool) or not isinstance(i, int):
            raise file_error(path, bus.line, f"table 'bus', row {k}: the index is {i!r}, "
                             "expected an integer bus index.")
    names = bus.col("name", None)
    named = all(v is not None and not (isinstance(v, float) and math.isnan(v)) and
                str(v) != "" for v in names)
    labels = [label(v) for v in names] if named else [str(i) for i in bus.index]
    if named and len(set(labels)) != len(labels):
        labels = [str(i) for i in bus.index]
    by_index: dict[Any, str] = {}
    for k, i in enumerate(bus.index):
        if i in by_index:
            raise file_error(path, bus.line, f"table 'bus': the index {i!r} is listed twice; "
                             "bus indices must be unique.")
        by_index[i] = labels[k]
    kv = [_num(bus, "vn_kv", k, math.nan, path) for k in range(len(bus))]
    t = GridTables(path=path, bus_labels=labels, bus_ids=list(bus.index), bus_kv=kv,
                   bus_in_service=[_flag(bus, "in_service", k, path) for k in range(len(bus))],
                   bus_lines=[bus.line] * len(bus), source="pandapower")
    t.coords = _coords(tables, bus)
    kv_of = dict(zip(labels, kv))

    def add(tab: str, kind: str, a: str, b: str, x_of: Any, ident: str | None = None,
            par: bool = True) -> None:
        tt = tables.get(tab)
        if tt is None:
            return
        for k in range(len(tt)):
            fa = _bus_ref(tt, a, k, by_index, path)
            fb = _bus_ref(tt, b, k, by_index, path)
            # the three legs of a three-winding transformer share its ID: one element
            t.branch_ids.append(f"{ident or tab} {label(tt.index[k])}")
            t.branch_kinds.append(kind)
            t.branch_from.append(fa)
            t.branch_to.append(fb)
            t.branch_x.append(x_of(tt, k, fa))
            t.branch_circuits.append(max(int(_num(tt, "parallel", k, 1, path)), 1) if par else 1)
            t.branch_in_service.append(_flag(tt, "in_service", k, path))
            t.branch_lines.append(tt.line)

    def x_line(tt: PPTable, k: int, fa: str) -> float:
        zb = kv_of[fa] ** 2 / sn_mva
        return _num(tt, "x_ohm_per_km", k, 0.0, path) * _num(tt, "length_km", k, 1.0, path) / zb

    def x_trafo(sn_col: str, vk: str, vkr: str) -> Any:
        def f(tt: PPTable, k: int, fa: str) -> float:
            v, r = _num(tt, vk, k, 0.0, path), _num(tt, vkr, k, 0.0, path)
            s = _num(tt, sn_col, k, sn_mva, path) or sn_mva
            return math.sqrt(max(v * v - r * r, 0.0)) / 100.0 * sn_mva / s
        return f

    def x_imp(tt: PPTable, k: int, fa: str) -> float:
        s = _num(tt, "sn_mva", k, sn_mva, path) or sn_mva
        return _num(tt, "xft_pu", k, 0.0, path) * sn_mva / s

    add("line", "line", "from_bus", "to_bus", x_line)
    add("trafo", "transformer", "hv_bus", "lv_bus", x_trafo("sn_mva", "vk_percent",
                                                           "vkr_percent"))
    for a, b, s, v, r in (("hv_bus", "mv_bus", "sn_mv_mva", "vk_hv_percent", "vkr_hv_percent"),
                          ("mv_bus", "lv_bus", "sn_lv_mva", "vk_mv_percent", "vkr_mv_percent"),
                          ("hv_bus", "lv_bus", "sn_lv_mva", "vk_lv_percent", "vkr_lv_percent")):
        add("trafo3w", "transformer", a, b, x_trafo(s, v, r), par=False)
    add("impedance", "impedance", "from_bus", "to_bus", x_imp, par=False)
    sw = tables.get("switch")
    if sw is not None and len(sw):
        keep = [k for k in range(len(sw)) if sw.col("et", "")[k] == "b"]
        closed = sw.col("closed", True)
        sub = PPTable([sw.index[k] for k in keep],
                      {"bus": [sw.col("bus", None)[k] for k in keep],
                       "element": [sw.col("element", None)[k] for k in keep],
                       "in_service": [closed[k] is not False for k in keep]},
                      name="switch", line=sw.line)
        tables = {**tables, "switch": sub}
        add("switch", "switch", "bus", "element", lambda tt, k, fa: 0.0, par=False)
    for tab in ("gen", "sgen", "ext_grid", "storage"):
        tt = tables.get(tab)
        if tt is None:
            continue
        for k in range(len(tt)):
            t.gen_ids.append(f"{tab} {label(tt.index[k])}")
            t.gen_bus.append(_bus_ref(tt, "bus", k, by_index, path))
            t.gen_in_service.append(_flag(tt, "in_service", k, path))
            t.gen_lines.append(tt.line)
            # optional columns a user may add (pandapower stores no inertia)
            t.gen_inertia_s.append(_num(tt, INERTIA_COLUMN, k, math.nan, path))
            t.gen_damping_pu.append(_num(tt, DAMPING_COLUMN, k, math.nan, path))
    return t


def _coords(tables: dict[str, PPTable], bus: PPTable) -> tuple[list[float], list[float]] | None:
    n = len(bus)
    x, y = [math.nan] * n, [math.nan] * n
    found = False
    for k, g in enumerate(bus.col("geo", None)):
        if isinstance(g, str) and g:
            try:
                c = json.loads(g).get("coordinates")
            except (ValueError, AttributeError):
                continue
            if isinstance(c, list) and len(c) >= 2 and all(
                    isinstance(v, (int, float)) and not isinstance(v, bool) for v in c[:2]):
                x[k], y[k] = float(c[0]), float(c[1])
                found = True
    geo = tables.get("bus_geodata")
    if not found and geo is not None and len(geo):
        pos = {b: k for k, b in enumerate(bus.index)}
        for b, gx, gy in zip(geo.index, geo.col("x", None), geo.col("y", None)):
            if b in pos and isinstance(gx, (int, float)) and isinstance(gy, (int, float)):
                x[pos[b]], y[pos[b]] = float(gx), float(gy)
                found = True
    return (x, y) if found else None
