"""Water distribution networks from WNTR (optional: ``pip install "netctl[water]"``).

A WNTR ``WaterNetworkModel`` (read by WNTR from an EPANET ``.inp`` file) becomes a system:

* **states**: junctions and tanks (their heads);
* **couplings**: every pipe, pump and valve couples its two end nodes both ways (flow can
  change direction, and a head change travels both ways through a link), except a pipe
  with a check valve, which acts from its start node to its end node only. Links closed in
  the initial status are kept: operation opens and closes them;
* **disturbances**: each reservoir (a fixed head nobody in the network commands; nothing
  acts on it, so links into a reservoir are left out) and each junction's demand (a
  disturbance ``demand:<junction>`` acting on that junction, for every junction with a
  nonzero base demand);
* **candidate actuator sites**: the end node of each pump and valve (the node whose head
  or pressure the device sets): node-table column ``actuator`` is true there only, and
  ``device`` names the pumps and valves acting there.

Node table: ``node_type`` (``Junction`` / ``Tank``), ``elevation``, ``x``, ``y`` (the
model's coordinates), ``actuator``, ``device``. Disturbance table: the same columns
(``node_type`` ``Reservoir`` or ``Demand``) plus ``base_demand``.

Only model *objects* are read here; reading ``.inp`` files is WNTR's job
(``wntr.network.WaterNetworkModel(path)``).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from netctl._extras import release, require
from netctl.errors import InvalidSystemError
from netctl.system import StructuredSystem

__all__ = ["MIN_WNTR", "from_wntr"]

#: Oldest WNTR release whose model API this adapter is written against.
MIN_WNTR: tuple[int, int] = (1, 0)


def _check(wn: Any) -> None:
    wntr = require("wntr", "from_wntr()")
    if isinstance(wn, type) or not all(hasattr(wn, a) for a in (
            "junction_name_list", "tank_name_list", "reservoir_name_list", "links",
            "get_node")):
        raise InvalidSystemError(
            f"from_wntr expected a wntr WaterNetworkModel object "
            f"(wntr.network.WaterNetworkModel('network.inp')), found {type(wn).__name__}.")
    found = str(getattr(wntr, "__version__", "0"))
    if release(found) < MIN_WNTR:
        raise InvalidSystemError(
            f"from_wntr needs WNTR >= {'.'.join(map(str, MIN_WNTR))}, found {found}: "
            'pip install -U "netctl[water]".')


def _coords(node: Any) -> tuple[float, float]:
    c: Any = getattr(node, "coordinates", None)
    try:
        return float(c[0]), float(c[1])
    except (TypeError, IndexError, ValueError):
        return math.nan, math.nan


def _base_demand(node: Any) -> float:
    total = 0.0
    for d in getattr(node, "demand_timeseries_list", None) or []:
        v = getattr(d, "base_value", 0.0)
        total += abs(float(v)) if v is not None else 0.0
    return total


def from_wntr(wn: Any, *, model: str = "given", demands: bool = True) -> StructuredSystem:
    """Build a water network's structure from a WNTR ``WaterNetworkModel``.

    Parameters
    ----------
    wn : wntr.network.WaterNetworkModel
    model : str
        Recorded as the system's model name.
    demands : bool, default True
        Make every junction demand a disturbance ``demand:<junction>``.

    Returns
    -------
    StructuredSystem
        States: junctions then tanks, in the model's order; disturbances: reservoirs, then
        demands. See the module docstring for couplings and the node table.

    Raises
    ------
    InvalidSystemError
        ``wn`` is not a WNTR model, WNTR is older than :data:`MIN_WNTR`, or a link names a
        node the model lacks.
    MissingExtraError
        WNTR is not installed.

    Notes
    -----
    O(nodes + links). Tank levels integrate their net inflow: to model that as
    self-dynamics, apply :func:`netctl.models.apply_model` afterwards (a model choice,
    never a silent default). Parallel links between two nodes become one coupling.

    References
    ----------
    .. [1] L. A. Rossman, "EPANET 2 Users Manual", U.S. EPA, EPA/600/R-00/057 (2000):
       the network elements (junctions, tanks, reservoirs, pipes, pumps, valves).
    .. [2] K. A. Klise et al., "A software framework for assessing the resilience of drinking
       water systems to disasters with an example earthquake case study", Environmental
       Modelling & Software 95:420-431 (2017). doi:10.1016/j.envsoft.2017.06.022 (WNTR).
    """
    _check(wn)
    states = [str(x) for x in list(wn.junction_name_list) + list(wn.tank_name_list)]
    reservoirs = [str(x) for x in wn.reservoir_name_list]
    names = states + reservoirs
    pos = {x: i for i, x in enumerate(names)}
    is_res = np.zeros(len(names), bool)
    is_res[len(states):] = True
    src: list[int] = []
    dst: list[int] = []
    device: dict[int, list[str]] = {}
    for lname, link in wn.links():
        try:
            a, b = pos[str(link.start_node_name)], pos[str(link.end_node_name)]
        except KeyError as exc:
            raise InvalidSystemError(f"WNTR link {lname!r} names node {exc.args[0]!r}, which "
                                     "is not a junction, tank or reservoir of the model.") from None
        kind = str(getattr(link, "link_type", type(link).__name__))
        src.append(a)
        dst.append(b)
        if not (kind == "Pipe" and bool(getattr(link, "check_valve", False))):
            src.append(b)
            dst.append(a)
        if kind in ("Pump", "Valve") and not is_res[b]:
            device.setdefault(b, []).append(str(lname))
    s = np.asarray(src, np.int64)
    d = np.asarray(dst, np.int64)
    keep = ~is_res[d] & (s != d) if d.size else np.zeros(0, bool)
    s, d = s[keep], d[keep]
    key = np.unique(s * max(len(names), 1) + d)
    s, d = key // max(len(names), 1), key % max(len(names), 1)
    n_all = len(names)
    node_type, elev, xs, ys, base = [], [], [], [], []
    for x in names:
        node = wn.get_node(x)
        node_type.append(str(getattr(node, "node_type", type(node).__name__)))
        e = getattr(node, "elevation", None)
        elev.append(float(e) if e is not None else math.nan)
        cx, cy = _coords(node)
        xs.append(cx)
        ys.append(cy)
        base.append(_base_demand(node) if node_type[-1] == "Junction" else 0.0)
    dem_names: list[str] = []
    if demands:
        for i in range(len(states)):
            if node_type[i] == "Junction" and base[i] > 0:
                dem_names.append(f"demand:{names[i]}")
                s = np.append(s, n_all + len(dem_names) - 1)
                d = np.append(d, i)
                node_type.append("Demand")
                elev.append(elev[i])
                xs.append(xs[i])
                ys.append(ys[i])
                base.append(base[i])
    total = n_all + len(dem_names)
    actuator = np.zeros(total, bool)
    dev = np.full(total, "", dtype=object)
    for i, devs in device.items():
        actuator[i] = True
        dev[i] = ";".join(devs)
    nodes = {"node_type": np.asarray(node_type, dtype=str), "elevation": np.asarray(elev),
             "x": np.asarray(xs), "y": np.asarray(ys), "actuator": actuator,
             "device": dev.astype(str), "base_demand": np.asarray(base)}
    system = StructuredSystem.from_edges(s, d, total, state_names=names + dem_names,
                                         nodes=nodes, model=model)
    return system.states_to_disturbances(reservoirs + dem_names)
