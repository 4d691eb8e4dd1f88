"""Power and energy-system networks from PyPSA (optional: ``pip install "netctl[pypsa]"``).

A ``pypsa.Network`` object becomes a system in the shape of
:func:`netctl.io.power_grid.from_pandapower`:

* **states**: buses (of every carrier: AC, DC, heat, hydrogen, ...);
* **couplings**: lines and transformers couple their two buses both ways (an electrical
  connection acts symmetrically). A link (HVDC, converter, heat pump, electrolyser...)
  carries power from ``bus0`` to ``bus1`` (and to ``bus2``, ``bus3``... of a multi-port
  link): ``bus0`` influences the others. A link that may also run backwards
  (``p_min_pu < 0``) couples both ways;
* **candidate actuator sites**: buses with a generator, a storage unit or a store
  (node-table column ``actuator``; ``n_generators``, ``n_storage`` count them);
* **disturbances**: each load, acting on its bus (named by the load's name; when a load
  name equals a bus name, every load is named ``load:<name>`` instead).

Inactive elements (``active`` false) are left out, and parallel branches merged, each with a
warning that counts them. Node table: ``x``, ``y``, ``v_nom``, ``carrier``, ``actuator``,
``n_generators``, ``n_storage``; disturbance table: ``bus``, ``p_set``, ``x``, ``y``.
Use :func:`netctl.models.apply_model` (``"second-order"``) for swing-type dynamics.

Only network *objects* are read: PyPSA's own files are read by PyPSA
(``pypsa.Network("file.nc")``).
"""

from __future__ import annotations

import math
import warnings
from typing import Any

import numpy as np

from netctl._extras import release, require
from netctl.errors import InvalidSystemError
from netctl.system import StructuredSystem

__all__ = ["MIN_PYPSA", "from_pypsa"]

#: Oldest PyPSA release whose component tables this adapter is written against.
MIN_PYPSA: tuple[int, int] = (0, 25)
_TABLES = ("buses", "lines", "links", "transformers", "generators", "loads")


def _check(network: Any) -> None:
    pypsa = require("pypsa", "from_pypsa()")
    if isinstance(network, type) or not all(hasattr(network, t) for t in _TABLES):
        raise InvalidSystemError(
            f"from_pypsa expected a pypsa Network object (pypsa.Network(...)), found "
            f"{type(network).__name__}; for a pandapower net use "
            "netctl.io.power_grid.from_pandapower.")
    found = str(getattr(pypsa, "__version__", "0"))
    if release(found) < MIN_PYPSA:
        raise InvalidSystemError(
            f"from_pypsa needs PyPSA >= {'.'.join(map(str, MIN_PYPSA))}, found {found}: "
            'pip install -U "netctl[pypsa]".')


def _table(network: Any, name: str) -> Any:
    df = getattr(network, name, None)
    return df if df is not None and hasattr(df, "columns") else None


def _active(df: Any) -> np.ndarray:
    if "active" in df.columns:
        return df["active"].to_numpy().astype(bool)
    return np.ones(len(df), bool)


def _col(df: Any, name: str, default: Any) -> np.ndarray:
    return df[name].to_numpy() if name in df.columns else np.full(len(df), default)


def from_pypsa(network: Any, *, model: str = "given", include_inactive: bool = False,
               loads: bool = True) -> StructuredSystem:
    """Build the bus network of a PyPSA ``network`` as a system.

    Parameters
    ----------
    network : pypsa.Network
    model : str
        Recorded as the system's model name.
    include_inactive : bool
        Keep branches marked inactive (default: leave them out, with a warning).
    loads : bool, default True
        Make every load a disturbance acting on its bus.

    Returns
    -------
    StructuredSystem
        One state per bus, named by the bus name; see the module docstring.

    Raises
    ------
    InvalidSystemError
        ``network`` is not a PyPSA network, PyPSA is older than :data:`MIN_PYPSA`, or an
        element names a bus the network lacks.
    MissingExtraError
        PyPSA is not installed.

    Notes
    -----
    O(buses + branches), array code over the component tables.

    References
    ----------
    .. [1] T. Brown, J. Hoersch, D. Schlachtberger, "PyPSA: Python for Power System
       Analysis", Journal of Open Research Software 6(1):4 (2018). doi:10.5334/jors.188
    """
    _check(network)
    buses = network.buses
    names = [str(b) for b in buses.index.tolist()]
    pos = {b: k for k, b in enumerate(names)}
    n = len(names)
    src: list[np.ndarray] = []
    dst: list[np.ndarray] = []
    dropped: dict[str, int] = {}

    def ends(df: Any, col: str, ok: np.ndarray, table: str) -> np.ndarray:
        vals = [str(v) for v in df[col].to_numpy()[ok].tolist()]
        try:
            return np.fromiter((pos[v] for v in vals), np.int64, len(vals))
        except KeyError as exc:
            raise InvalidSystemError(f"PyPSA {table} names bus {exc.args[0]!r} in column "
                                     f"{col!r}, which is not in network.buses.") from None

    for table in ("lines", "transformers", "links"):
        df = _table(network, table)
        if df is None or len(df) == 0:
            continue
        ok = np.ones(len(df), bool) if include_inactive else _active(df)
        if (~ok).any():
            dropped[table] = int((~ok).sum())
        a = ends(df, "bus0", ok, table)
        if table != "links":
            b = ends(df, "bus1", ok, table)
            src += [a, b]
            dst += [b, a]
            continue
        back = (_col(df, "p_min_pu", 0.0).astype(float) < 0)[ok]
        ports = sorted((c for c in df.columns if c.startswith("bus") and c[3:].isdigit()
                        and c != "bus0"), key=lambda c: int(c[3:]))
        for c in ports:
            used = np.array([isinstance(v, str) and v != "" for v in df[c].to_numpy()[ok]],
                            bool)
            if not used.any():
                continue
            sub = ok.copy()
            sub[ok] = used
            b = ends(df, c, sub, table)
            a_used, back_used = a[used], back[used]
            src += [a_used, b[back_used]]
            dst += [b, a_used[back_used]]
    s = np.concatenate(src) if src else np.zeros(0, np.int64)
    d = np.concatenate(dst) if dst else np.zeros(0, np.int64)
    loops = s == d
    s, d = s[~loops], d[~loops]
    key = np.sort(s * max(n, 1) + d)
    n_par = int(np.count_nonzero(key[1:] == key[:-1])) if key.size else 0
    uniq = np.unique(key)
    s, d = uniq // max(n, 1), uniq % max(n, 1)
    msgs = [f"{k} inactive {t} left out" for t, k in dropped.items()]
    if n_par:
        msgs.append(f"{n_par} parallel branch direction(s) merged into one coupling each")
    if int(loops.sum()):
        msgs.append(f"{int(loops.sum())} branch end(s) joining a bus to itself left out")
    if msgs:
        warnings.warn("PyPSA network: " + "; ".join(msgs) + ".", stacklevel=2)
    # ------------------------------------------------ actuator sites and node table
    n_gen = np.zeros(n, np.int64)
    n_sto = np.zeros(n, np.int64)
    for table, count in (("generators", n_gen), ("storage_units", n_sto), ("stores", n_sto)):
        df = _table(network, table)
        if df is not None and len(df):
            ok = _active(df) if not include_inactive else np.ones(len(df), bool)
            np.add.at(count, ends(df, "bus", ok, table), 1)
    nodes: dict[str, np.ndarray] = {
        "x": _col(buses, "x", math.nan).astype(float),
        "y": _col(buses, "y", math.nan).astype(float),
        "v_nom": _col(buses, "v_nom", math.nan).astype(float),
        "carrier": np.asarray([str(v) for v in _col(buses, "carrier", "")], dtype=str),
        "actuator": (n_gen + n_sto) > 0, "n_generators": n_gen, "n_storage": n_sto}
    load_df = _table(network, "loads")
    load_names: list[str] = []
    if loads and load_df is not None and len(load_df):
        ok = _active(load_df) if not include_inactive else np.ones(len(load_df), bool)
        at = ends(load_df, "bus", ok, "loads")
        raw = [str(v) for v in np.asarray(load_df.index.tolist(), dtype=object)[ok]]
        clash = any(x in pos for x in raw)
        load_names = [f"load:{x}" for x in raw] if clash else raw
        s = np.concatenate([s, n + np.arange(len(load_names))])
        d = np.concatenate([d, at])
        p_set = _col(load_df, "p_set", math.nan).astype(float)[ok]
        nodes = {k: np.concatenate([v, v[at]]) for k, v in nodes.items()}
        nodes["actuator"][n:] = False
        nodes["bus"] = np.asarray(names + [names[i] for i in at], dtype=str)
        nodes["p_set"] = np.concatenate([np.full(n, math.nan), p_set])
    system = StructuredSystem.from_edges(s, d, n + len(load_names),
                                         state_names=names + load_names, nodes=nodes,
                                         model=model)
    if not load_names:
        return system
    out = system.states_to_disturbances(load_names)
    keep = {k: v for k, v in out.nodes.items() if k not in ("bus", "p_set")}
    dist = {k: v for k, v in out.disturbance_nodes.items()
            if k in ("bus", "p_set", "x", "y")}
    return out._replace(nodes=keep, disturbance_nodes=dist)
