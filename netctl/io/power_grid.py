"""Power-grid network objects from pandapower (optional: ``pip install netctl[power]``).

Buses become states; lines, two- and three-winding transformers, impedances and closed
bus-bus switches become couplings acting both ways (an electrical connection couples the
two buses symmetrically). Bus coordinates are carried into the node table when present,
with the nominal voltage, the bus type and whether generation is connected. Apply
``--model second-order`` (:func:`netctl.models.apply_model`) for swing-type dynamics.

Only network *objects* are read: pandapower's own file formats are not opened here,
because restoring them can import and run code named inside the file.
"""

from __future__ import annotations

import json
import math
import warnings
from typing import Any

import numpy as np

from netctl.errors import InvalidSystemError
from netctl.system import StructuredSystem

__all__ = ["from_pandapower"]


def _col(df: Any, name: str, default: Any) -> np.ndarray:
    return df[name].to_numpy() if name in df.columns else np.full(len(df), default)


def _coords(net: Any) -> tuple[np.ndarray, np.ndarray] | None:
    bus = net.bus
    n = len(bus)
    x = np.full(n, np.nan)
    y = np.full(n, np.nan)
    found = False
    if "geo" in bus.columns:  # pandapower >= 3: GeoJSON strings
        for k, g in enumerate(bus["geo"].tolist()):
            if isinstance(g, str) and g:
                try:
                    c = json.loads(g).get("coordinates")
                except (ValueError, AttributeError):
                    continue
                if isinstance(c, list) and len(c) >= 2:
                    x[k], y[k] = float(c[0]), float(c[1])
                    found = True
    geo = getattr(net, "bus_geodata", None)
    if not found and geo is not None and len(geo):  # older pandapower
        pos = {b: k for k, b in enumerate(bus.index.tolist())}
        for b, gx, gy in zip(geo.index.tolist(), geo["x"].tolist(), geo["y"].tolist()):
            if b in pos:
                x[pos[b]], y[pos[b]] = float(gx), float(gy)
                found = True
    return (x, y) if found else None


def from_pandapower(net: Any, *, model: str = "given",
                    include_out_of_service: bool = False) -> StructuredSystem:
    """Build the bus network of a pandapower ``net`` as a system.

    Parameters
    ----------
    net : pandapower network object
    model : str
        Recorded as the system's model name.
    include_out_of_service : bool
        Keep buses and branches marked out of service (default: leave them out, with a
        warning that counts them).

    Returns
    -------
    StructuredSystem
        One state per bus, named by the bus ``name`` when those are unique and present,
        else by the bus index; node table ``x``, ``y`` (when the net has coordinates),
        ``vn_kv``, ``generation`` (a generator, static generator, external grid or storage
        is connected) and ``bus`` (the pandapower index).

    Raises
    ------
    InvalidSystemError
        ``net`` is not a pandapower network, or a branch names a bus the net lacks.

    Notes
    -----
    O(buses + branches), array code over the element tables. Parallel branches between
    two buses become one coupling (a warning counts them).
    """
    if not hasattr(net, "bus") or not hasattr(net, "line"):
        raise InvalidSystemError(f"expected a pandapower network object, found "
                                 f"{type(net).__name__}.")
    bus = net.bus
    keep_bus = np.ones(len(bus), bool) if include_out_of_service else \
        _col(bus, "in_service", True).astype(bool)
    index = bus.index.to_numpy()
    pos = {b: k for k, b in enumerate(index.tolist())}
    src: list[np.ndarray] = []
    dst: list[np.ndarray] = []
    dropped: dict[str, int] = {}

    def add(table: str, a: str, b: str) -> None:
        df = getattr(net, table, None)
        if df is None or len(df) == 0:
            return
        ok = np.ones(len(df), bool) if include_out_of_service else \
            _col(df, "in_service", True).astype(bool)
        if table == "switch":
            ok &= (_col(df, "et", "") == "b") & _col(df, "closed", True).astype(bool)
        if (~ok).any() and table != "switch":
            dropped[table] = int((~ok).sum())
        ends = []
        for c in (a, b):
            vals = df[c].to_numpy()[ok]
            try:
                ends.append(np.fromiter((pos[v] for v in vals.tolist()), np.int64, vals.size))
            except KeyError as exc:
                raise InvalidSystemError(f"pandapower table {table!r} names bus {exc.args[0]!r}, "
                                         "which is not in net.bus.") from None
        src.append(ends[0])
        dst.append(ends[1])

    add("line", "from_bus", "to_bus")
    add("trafo", "hv_bus", "lv_bus")
    add("impedance", "from_bus", "to_bus")
    add("switch", "bus", "element")
    for a, b in (("hv_bus", "mv_bus"), ("hv_bus", "lv_bus"), ("mv_bus", "lv_bus")):
        add("trafo3w", a, b)
    s = np.concatenate(src) if src else np.zeros(0, np.int64)
    d = np.concatenate(dst) if dst else np.zeros(0, np.int64)
    live = keep_bus[s] & keep_bus[d] & (s != d)
    s, d = s[live], d[live]
    key = np.minimum(s, d) * len(bus) + np.maximum(s, d)
    order = np.sort(key)
    n_par = int(np.count_nonzero(order[1:] == order[:-1])) if order.size else 0
    msgs = [f"{k} out-of-service {t} element(s) left out" for t, k in dropped.items()]
    if not keep_bus.all():
        msgs.append(f"{int((~keep_bus).sum())} out-of-service bus(es) kept as isolated states")
    if n_par:
        msgs.append(f"{n_par} parallel branch(es) merged into one coupling each")
    if msgs:
        warnings.warn("pandapower net: " + "; ".join(msgs) + ".", stacklevel=2)
    uniq = order[np.concatenate([[True], order[1:] != order[:-1]])] if order.size else order
    end_a, end_b = uniq // max(len(bus), 1), uniq % max(len(bus), 1)
    names_raw = bus["name"].tolist() if "name" in bus.columns else []
    good = (len(names_raw) == len(bus) and all(isinstance(x, str) and x for x in names_raw)
            and len(set(names_raw)) == len(names_raw))
    names = names_raw if good else [str(i) for i in index.tolist()]
    gen_bus = np.zeros(len(bus), bool)
    for t in ("gen", "sgen", "ext_grid", "storage"):
        df = getattr(net, t, None)
        if df is not None and len(df):
            for v in df["bus"].tolist():
                if v in pos:
                    gen_bus[pos[v]] = True
    nodes: dict[str, np.ndarray] = {"bus": index.astype(np.int64),
                                    "vn_kv": _col(bus, "vn_kv", math.nan).astype(float),
                                    "generation": gen_bus}
    xy = _coords(net)
    if xy is not None:
        nodes["x"], nodes["y"] = xy
    return StructuredSystem.from_edges(np.concatenate([end_a, end_b]),
                                       np.concatenate([end_b, end_a]),
                                       len(bus), state_names=names, nodes=nodes, model=model)
