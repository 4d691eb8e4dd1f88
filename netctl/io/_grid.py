"""From the tables of a power-grid case to a system: one builder for every grid reader.

The readers (:mod:`netctl.io.matpower`, :mod:`netctl.io.pandapower_json`,
:func:`netctl.io.power_grid.from_pandapower`) fill :class:`GridTables`; :func:`build_grid`
checks them (missing buses, duplicate bus numbers, branches from a bus to itself: file
and line), leaves out-of-service elements out with a warning that names them, and
returns the bus network with its :class:`~netctl.records.ElementTable`.

Couplings are branch susceptances: a branch of series reactance ``x`` (per unit on the
case's base) couples its two buses with ``1 / |x|``, parallel circuits add up; a
reactance of zero or missing counts as ``1 / X_MIN`` (a near-ideal connection). These
weights enter the second-order (swing) model as synchronizing coefficients.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from netctl.records import ElementTable
from netctl.io._common import file_error
from netctl.system import StructuredSystem

__all__ = ["GridTables", "build_grid", "X_MIN", "GRID_CAUTION", "INERTIA_COLUMN",
           "DAMPING_COLUMN"]

#: Optional generator-table column: the unit's inertia constant ``H`` in seconds on the
#: case's MVA base (pandapower ``gen``/``sgen``/``ext_grid``/``storage`` column; MATPOWER
#: field ``mpc.gen_inertia_s``). Neither format stores inertia; a user may add it.
INERTIA_COLUMN = "inertia_s"
#: Optional generator-table column: the unit's damping ``D`` in per unit (power per unit
#: frequency deviation, case base); MATPOWER field ``mpc.gen_damping_pu``.
DAMPING_COLUMN = "damping_pu"

#: Smallest series reactance used for a coupling (per unit); zero-impedance branches
#: and bus-bus switches couple with ``1 / X_MIN``.
X_MIN = 1e-4

GRID_CAUTION = ("results concern a linearized model of the grid, not operating decisions, "
                "which stay with the system operator's procedures and applicable codes")


@dataclass
class GridTables:
    """Raw tables of a grid case (lists, in file order), with the file line of each row.

    ``bus_labels`` are the case's bus numbers or names as text; branch ends and generator
    buses name buses by the same labels. ``*_lines`` hold the file line of each row
    (``None`` where the format has no lines).
    """

    path: str
    bus_labels: list[str]
    bus_ids: list[int]
    bus_kv: list[float]
    bus_in_service: list[bool]
    bus_lines: list[int | None]
    branch_ids: list[str] = field(default_factory=list)
    branch_kinds: list[str] = field(default_factory=list)
    branch_from: list[str] = field(default_factory=list)
    branch_to: list[str] = field(default_factory=list)
    branch_x: list[float] = field(default_factory=list)
    branch_circuits: list[int] = field(default_factory=list)
    branch_in_service: list[bool] = field(default_factory=list)
    branch_lines: list[int | None] = field(default_factory=list)
    gen_ids: list[str] = field(default_factory=list)
    gen_bus: list[str] = field(default_factory=list)
    gen_in_service: list[bool] = field(default_factory=list)
    gen_lines: list[int | None] = field(default_factory=list)
    gen_inertia_s: list[float] = field(default_factory=list)
    gen_damping_pu: list[float] = field(default_factory=list)
    coords: tuple[list[float], list[float]] | None = None
    source: str = "grid"


def _listed(ids: list[str], limit: int = 8) -> str:
    return ", ".join(ids[:limit]) + (f", ... ({len(ids) - limit} more)" if len(ids) > limit
                                     else "")


def build_grid(t: GridTables, *, model: str = "given") -> StructuredSystem:
    """The bus network of ``t``: one state per in-service bus, couplings both ways.

    Returns
    -------
    StructuredSystem
        States named by the bus labels; weighted (branch susceptances); node table
        ``bus`` (the case's bus number or index), ``vn_kv`` (nominal voltage, kV),
        ``generation`` (an in-service generator, static generator, external grid or
        storage unit is connected), ``actuator`` (the default actuator sites: the
        generation buses), ``sensor`` (every bus may host a phasor measurement unit)
        and ``x``, ``y`` when the case has coordinates;
        :attr:`~StructuredSystem.elements` lists every in-service branch, bus and
        generator by its case ID.

    Raises
    ------
    NetworkFileError
        Duplicate bus labels, a branch or generator naming a bus the case lacks, a
        branch from a bus to itself (file and line of the row).
    """
    path = t.path
    pos: dict[str, int] = {}
    for k, lab in enumerate(t.bus_labels):
        if lab in pos:
            first = t.bus_lines[pos[lab]]
            raise file_error(path, t.bus_lines[k], f"bus {lab!r} is listed twice (first at "
                             f"{'line ' + str(first) if first else 'row ' + str(pos[lab])}); "
                             "bus numbers must be unique: renumber one of them.")
        pos[lab] = k
    nb = len(t.bus_labels)
    live_bus = np.asarray(t.bus_in_service, bool) if nb else np.zeros(0, bool)
    dropped: list[str] = []
    off_bus = [f"bus {t.bus_labels[k]}" for k in np.flatnonzero(~live_bus).tolist()]

    def locate(lab: str, line: int | None, what: str) -> int:
        k = pos.get(lab)
        if k is None:
            raise file_error(path, line, f"{what} names bus {lab!r}, which is not in the bus "
                             "table; add the bus or correct the number.")
        return k

    nbr = len(t.branch_ids)
    fa = np.empty(nbr, np.int64)
    fb = np.empty(nbr, np.int64)
    for k in range(nbr):
        what = f"{t.branch_ids[k]}"
        fa[k] = locate(t.branch_from[k], t.branch_lines[k], what)
        fb[k] = locate(t.branch_to[k], t.branch_lines[k], what)
        if fa[k] == fb[k]:
            raise file_error(path, t.branch_lines[k], f"{what} runs from bus "
                             f"{t.branch_from[k]!r} to itself; a branch joins two different "
                             "buses: correct one end or delete the row.")
    br_on = np.asarray(t.branch_in_service, bool) if nbr else np.zeros(0, bool)
    dropped += [t.branch_ids[k] for k in np.flatnonzero(~br_on).tolist()]
    ends_live = live_bus[fa] & live_bus[fb] if nbr else np.zeros(0, bool)
    dropped += [t.branch_ids[k] for k in np.flatnonzero(br_on & ~ends_live).tolist()]
    keep_br = br_on & ends_live
    ng = len(t.gen_ids)
    gb = np.array([locate(t.gen_bus[k], t.gen_lines[k], t.gen_ids[k]) for k in range(ng)],
                  np.int64)
    g_on = np.asarray(t.gen_in_service, bool) if ng else np.zeros(0, bool)
    dropped += [t.gen_ids[k] for k in np.flatnonzero(~g_on).tolist()]
    g_live = g_on & (live_bus[gb] if ng else np.zeros(0, bool))
    dropped += [t.gen_ids[k] for k in np.flatnonzero(g_on & ~g_live).tolist()]
    if off_bus or dropped:
        warnings.warn(f"{path}: out-of-service elements left out: "
                      + _listed(off_bus + dropped) + ".", stacklevel=3)
    # renumber in-service buses
    new = np.full(nb, -1, np.int64)
    live_idx = np.flatnonzero(live_bus)
    new[live_idx] = np.arange(live_idx.size)
    names = [t.bus_labels[k] for k in live_idx.tolist()]
    a, b = new[fa[keep_br]], new[fb[keep_br]]
    x = np.abs(np.asarray(t.branch_x, float)[keep_br]) if nbr else np.zeros(0)
    circuits = np.asarray(t.branch_circuits, float)[keep_br] if nbr else np.zeros(0)
    bad_x = ~np.isfinite(x) | (x < X_MIN)
    susceptance = circuits / np.where(bad_x, X_MIN, x)
    n = live_idx.size
    gen_flag = np.zeros(n, bool)
    gen_flag[new[gb[g_live]]] = True
    nodes: dict[str, np.ndarray] = {
        "bus": np.asarray(t.bus_ids, np.int64)[live_idx],
        "vn_kv": np.asarray(t.bus_kv, float)[live_idx],
        "generation": gen_flag,
        # default actuator sites: buses with generation (power enters there); phasor
        # measurement units may sit at any bus
        "actuator": gen_flag.copy(),
        "sensor": np.ones(n, bool),
    }
    nodes.update(_swing_columns(t, new[gb] if ng else np.zeros(0, np.int64), g_live, n))
    if t.coords is not None:
        nodes["x"] = np.asarray(t.coords[0], float)[live_idx]
        nodes["y"] = np.asarray(t.coords[1], float)[live_idx]
    kinds = [t.branch_kinds[k] for k in np.flatnonzero(keep_br).tolist()]
    ids = [t.branch_ids[k] for k in np.flatnonzero(keep_br).tolist()]
    e_ids, e_kinds, e_a, e_b, e_c, e_x = _merge_windings(ids, kinds, a, b, x)
    g_keep = np.flatnonzero(g_live).tolist()
    m = n + len(g_keep)
    table = ElementTable(
        node_names=tuple(names),
        ids=tuple(e_ids + [f"bus {s}" for s in names] + [t.gen_ids[k] for k in g_keep]),
        kinds=tuple(e_kinds + ["bus"] * n + ["generator"] * len(g_keep)),
        end_a=np.concatenate([e_a, np.arange(n, dtype=np.int64), new[gb[g_keep]]]),
        end_b=np.concatenate([e_b, np.full(m, -1, np.int64)]),
        end_c=np.concatenate([e_c, np.full(m, -1, np.int64)]),
        params={"x_pu": np.concatenate([e_x, np.full(m, math.nan)])})
    # parallel circuits are distinct elements but one coupling (susceptances add)
    key = np.minimum(a, b) * max(n, 1) + np.maximum(a, b)
    uniq, inv = np.unique(key, return_inverse=True)
    w = np.bincount(inv, weights=susceptance, minlength=uniq.size) if uniq.size else np.zeros(0)
    lo, hi = uniq // max(n, 1), uniq % max(n, 1)
    system = StructuredSystem.from_edges(np.concatenate([lo, hi]), np.concatenate([hi, lo]), n,
                                         weights=np.concatenate([w, w]),
                                         state_names=names, nodes=nodes, model=model)
    return system._replace(elements=table)


def _swing_columns(t: GridTables, unit_bus: np.ndarray, live: np.ndarray, n: int
                   ) -> dict[str, np.ndarray]:
    """Node columns ``inertia`` (``M = 2 H``, seconds, summed over the bus's in-service
    units) and ``damping`` (``D``, per unit, summed) from the optional generator columns;
    NaN at buses whose units give none (the swing model then uses its defaults). Empty
    when the case gives none. Swing equation ``2H d(omega)/dt = P_m - P_e - D omega``
    (P. Kundur, "Power System Stability and Control", 1994, ch. 3; from memory)."""
    out: dict[str, np.ndarray] = {}
    for key, vals, scale in (("inertia", t.gen_inertia_s, 2.0),
                             ("damping", t.gen_damping_pu, 1.0)):
        if not vals:
            continue
        v = np.asarray(vals, float)
        bad = np.flatnonzero(np.isfinite(v) & (v < 0))
        if bad.size:
            k = int(bad[0])
            raise file_error(t.path, t.gen_lines[k], f"{t.gen_ids[k]}: {key} value {v[k]!r} "
                             "is negative; give a value >= 0 (or leave it out for the "
                             "default).")
        ok = live & np.isfinite(v)
        if not ok.any():
            continue
        col = np.bincount(unit_bus[ok], weights=scale * v[ok], minlength=n)
        has = np.bincount(unit_bus[ok], minlength=n) > 0
        out[key] = np.where(has, col, math.nan)
    return out


def _merge_windings(ids: list[str], kinds: list[str], a: np.ndarray, b: np.ndarray,
                    x: np.ndarray) -> tuple[list[str], list[str], np.ndarray, np.ndarray,
                                            np.ndarray, np.ndarray]:
    """One element per ID: the legs of a three-winding transformer (rows sharing its ID,
    joining three buses) become one element with a third bus (``end_c``) and no single
    reactance (``x_pu`` NaN); every other row stays a branch of its own."""
    first: dict[str, int] = {}
    rows: list[list[int]] = []
    for k, e in enumerate(ids):
        if e in first:
            rows[first[e]].append(k)
        else:
            first[e] = len(rows)
            rows.append([k])
    if len(rows) == len(ids):
        return ids, kinds, a, b, np.full(len(ids), -1, np.int64), x
    out_a, out_b, out_c, out_x = [], [], [], []
    for grp in rows:
        k = grp[0]
        buses = list(dict.fromkeys(int(v) for j in grp for v in (a[j], b[j])))
        out_a.append(buses[0])
        out_b.append(buses[1])
        out_c.append(buses[2] if len(buses) > 2 else -1)
        out_x.append(float(x[k]) if len(grp) == 1 else math.nan)
    return ([ids[g[0]] for g in rows], [kinds[g[0]] for g in rows], np.array(out_a, np.int64),
            np.array(out_b, np.int64), np.array(out_c, np.int64), np.array(out_x, float))


def label(value: object) -> str:
    """A bus number or name as text: integral floats lose their ``.0``."""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value)
