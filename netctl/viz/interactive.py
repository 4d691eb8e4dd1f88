"""Interactive network maps: one self-contained HTML file (or fragment for a report).

The page carries the map data as JSON inside ``<script type="application/json">`` and
netctl's own small canvas renderer (``netctl/viz/assets/netmap.js``, shipped in the
wheel); nothing is fetched when it is opened. Names from the input file reach the page
only as JSON strings read with ``textContent``; the JSON is escaped so that no name can
close its script element.
"""

from __future__ import annotations

import html
import json
from dataclasses import dataclass
from importlib import resources
from typing import Any

import numpy as np

from netctl.errors import OptionError
from netctl.system import StructuredSystem
from netctl.viz.marks import ROLE_NAMES, MapMarks
from netctl.viz.placement import Placement

__all__ = ["MAP_STATE_LIMIT", "MapTooLargeError", "check_map_size", "map_fragment",
           "map_html", "map_payload", "script_json"]

#: Default largest map drawn (states); ``max_states`` raises it. At about 80 bytes a
#: state and 30 a link, :math:`10^6` states make a page of roughly 150 MB, more than a
#: browser tab handles comfortably.
MAP_STATE_LIMIT = 1_000_000

#: Coordinates are stored as integers on a grid of this many steps over the bounding box
#: (finer than any screen at any zoom the map allows, and short in JSON).
_GRID_STEPS = 1_000_000


class MapTooLargeError(OptionError):
    """The network has more states than the map is allowed to draw."""


def check_map_size(n_states: int, max_states: int = MAP_STATE_LIMIT) -> None:
    """Refuse, before any work, a map with more than ``max_states`` states.

    Raises
    ------
    MapTooLargeError
        With the limit and the option that raises it.

    Examples
    --------
    >>> check_map_size(10**7)
    Traceback (most recent call last):
    ...
    netctl.viz.interactive.MapTooLargeError: the network has 10000000 states; an interactive map draws at most 1000000 (a page of about 150 MB at that size). Raise the limit with --max-states 10000000 (the page grows with the network), or map a part of the network.
    """
    if n_states > max_states:
        raise MapTooLargeError(
            f"the network has {n_states} states; an interactive map draws at most "
            f"{max_states} (a page of about {max(1, max_states * 150 // 10**6)} MB at "
            f"that size). Raise the limit with --max-states {n_states} (the page grows "
            "with the network), or map a part of the network.")


def script_json(data: Any) -> str:
    """JSON that is safe inside ``<script type="application/json">``.

    ``<``, ``>`` and ``&`` become ``\\u003c``, ``\\u003e``, ``\\u0026`` (so no string can
    write ``</script>`` or ``<!--``), and U+2028/U+2029 become escapes (line breaks in
    older JavaScript). ``JSON.parse`` reads the same values back.

    Examples
    --------
    >>> script_json({"name": "</script><b>"})
    '{"name":"\\\\u003c/script\\\\u003e\\\\u003cb\\\\u003e"}'
    """
    text = json.dumps(data, ensure_ascii=False, separators=(",", ":"), allow_nan=False)
    return (text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
            .replace("\u2028", "\\u2028").replace("\u2029", "\\u2029"))


@dataclass(frozen=True)
class _Layer:
    key: str
    label: str
    count: int
    on: bool


def map_payload(system: StructuredSystem, marks: MapMarks, placement: Placement, *,
                title: str = "") -> dict[str, Any]:
    r"""The data an interactive map draws, as plain JSON-able values.

    Parameters
    ----------
    system : StructuredSystem
        The network as read (before any design's inputs are added).
    marks : MapMarks
        What to mark (:func:`netctl.viz.map_marks`).
    placement : Placement
        Positions (:func:`netctl.viz.placement.map_placement`).
    title : str
        Shown above the map.

    Returns
    -------
    dict
        ``x``, ``y`` (integers on a grid over ``box``), ``names``; links as flat
        ``[source, target, ...]`` lists by kind (``links``, ``paths``, ``cycles``,
        ``critical``); the flagged states; ``mpred`` (matched predecessor of each state:
        its control path, -1 at a path's start) and ``bpred`` (predecessor on a shortest
        way from the nearest driver, -1 at drivers and unreached states); ``inputs``
        (which inputs act on each driver); ``disturbances`` when the system has them;
        ``fragile`` (states where a single point of failure sits) and ``fragile_notes``
        (``[state, why]`` pairs); ``elements`` for a grid (the system has an element
        table): ``bus`` (the bus of each state, -1 for none), the branches' case ``ids``,
        their ``kinds`` as codes into ``kind_names`` and ``ends`` (flat ``[a, b, c]``
        bus triples, ``c`` the third bus of a three-winding transformer or -1), so a
        click on a link names the branch(es) joining its buses; ``layers`` (key, label, count, shown at start) and the
        summary lines.

    Notes
    -----
    The nearest driver of every state comes from one breadth-first search from all
    drivers at once (a virtual source joined to every driver), so the cost is linear in
    states and links.
    """
    n = system.n_states
    xy = np.asarray(placement.xy, np.float64).reshape(n, 2)
    lo = xy.min(axis=0) if n else np.zeros(2)
    hi = xy.max(axis=0) if n else np.ones(2)
    span = np.where(hi - lo > 0, hi - lo, 1.0)
    grid = np.rint((xy - lo) / span * _GRID_STEPS).astype(np.int64) if n else np.zeros((0, 2),
                                                                                       np.int64)
    src, dst = system.edges()
    loops = src == dst
    key = dst.astype(np.int64) * max(n, 1) + src
    m_src, m_dst = marks.matched_sources, marks.matched_targets
    mkey = m_dst.astype(np.int64) * max(n, 1) + m_src
    matched = np.isin(key, mkey)
    plain = ~matched & ~loops
    cyc = marks.on_cycle
    # matched links that are self-loops are one-state control cycles: kept as loops
    paths = np.column_stack([m_src[~cyc], m_dst[~cyc]])
    cycles = np.column_stack([m_src[cyc], m_dst[cyc]])
    cycles = cycles[cycles[:, 0] != cycles[:, 1]] if cycles.size else cycles
    mpred = np.full(n, -1, np.int64)
    mpred[m_dst] = m_src
    drivers = np.asarray(marks.drivers, np.int64)
    bpred = _nearest_driver_tree(system, drivers)

    def flat(a: np.ndarray) -> list[int]:
        return np.asarray(a, np.int64).reshape(-1).tolist()

    roles: list[int] | None = None
    role_all: str | None = None
    if marks.roles is not None and n:
        codes = np.unique(marks.roles)
        if codes.size == 1:  # the same role everywhere tells nothing on the map
            role_all = ROLE_NAMES[int(codes[0])]
        else:
            roles = marks.roles.astype(np.int64).tolist()
    crit: list[int] | None = None
    if marks.critical_sources is not None and marks.critical_targets is not None:
        ok = marks.critical_sources != marks.critical_targets
        crit = flat(np.column_stack([marks.critical_sources[ok], marks.critical_targets[ok]]))
    dist = _disturbances(system)
    inputs = _inputs_at(system, marks)
    layers = [
        _Layer("links", "other links", int(plain.sum()), True),
        _Layer("states", "states", n, True),
        _Layer("paths", "control paths (matched links)", int(paths.shape[0]), True),
        _Layer("cycles", "control cycles (matched links)", int(cycles.shape[0]), True),
    ]
    if roles is not None:
        layers.append(_Layer("roles", "roles: critical / intermittent / redundant", n, True))
    if crit is not None:
        if marks.grid:
            ids = marks.critical_elements
            label = ("critical branches (an outage raises the minimum inputs or breaks the "
                     "design): " + (", ".join(ids[:12]) + (f", ... ({len(ids) - 12} more)"
                                                          if len(ids) > 12 else "")
                                    if ids else "none"))
        else:
            label = "critical links (in every maximum matching)"
        layers.append(_Layer("critical", label, len(crit) // 2, True))
    if dist is not None:
        layers.append(_Layer("disturbances", "states a disturbance acts on",
                             len({s for s in dist["hits"][1::2]}), True))
    if marks.failures_note:
        layers.append(_Layer("fragile", "single point of failure: losing this actuator "
                             "or sensor alone breaks the design", int(marks.fragile.size),
                             True))
    layers += [
        _Layer("dilations", "dilation: fed by fewer states than they number",
               int(marks.dilation.size), True),
        _Layer("unreached", "no input reaches this state", int(marks.unreached.size), True),
        _Layer("fixes", "proposed input (smallest fix)", int(marks.suggested.size), True),
        _Layer("drivers", "driver node: an input acts here", int(drivers.size), True),
    ]
    design = {"minimum": "a minimum input design (one of possibly many)",
              "given": "the inputs in the file", "chosen": "the chosen inputs"}[marks.design]
    verdict = ("structurally controllable" if marks.controllable
               else f"NOT structurally controllable: {marks.suggested.size} more dedicated "
                    "input(s) needed")
    notes = [placement.note() + "."]
    if role_all is not None:
        notes.append(f"Every state is {role_all}, so roles are not drawn.")
    if loops.any():
        notes.append(f"{int(loops.sum())} state(s) have a self-loop (self-dynamics); "
                     "shown in their details, not drawn.")
    if marks.failures_note:
        notes.append(f"Single points of failure: {marks.failures_note}.")
    notes.append("Results are about a linear(ized) model; decisions on a real plant rest "
                 "with its operators' procedures, applicable codes and licensed engineers.")
    return {
        "v": 1, "title": title, "n": n, "names": [str(s) for s in system.state_names],
        "x": grid[:, 0].tolist(), "y": grid[:, 1].tolist(),
        "box": [float(lo[0]), float(lo[1]), float(lo[0] + span[0]), float(lo[1] + span[1])],
        "q": _GRID_STEPS, "geo": bool(placement.geographic),
        "placed": placement.from_file.astype(np.int8).tolist()
        if placement.how.endswith("+layout") else None,
        "links": flat(np.column_stack([src[plain], dst[plain]])),
        "paths": flat(paths), "cycles": flat(cycles), "critical": crit,
        "loops": src[loops].astype(np.int64).tolist(),
        "drivers": drivers.tolist(), "fixes": flat(marks.suggested),
        "unreached": flat(marks.unreached), "dilations": flat(marks.dilation),
        "roles": roles, "role_all": role_all,
        "mpred": mpred.tolist(), "bpred": bpred.tolist(),
        "inputs": inputs, "disturbances": dist,
        "fragile": flat(marks.fragile),
        "fragile_notes": [[int(i), str(t)] for i, t in marks.fragile_notes],
        "elements": _link_owners(system),
        "layers": [{"key": L.key, "label": L.label, "count": L.count, "on": L.on}
                   for L in layers],
        "notes": notes,
        "summary": [
            f"{n} states, {system.n_links} link{'' if system.n_links == 1 else 's'}, model {marks.model}; {marks.n_inputs} "
            f"input(s) on {drivers.size} driver node(s) from {design}.",
            f"Verdict: {verdict}.",
        ],
    }


def _link_owners(system: StructuredSystem) -> dict[str, Any] | None:
    """The grid's branches in the map's terms: the bus of every state and the buses each
    branch joins, so a click on a link can name the branch(es) joining its two buses.

    ``None`` without an element table. Only branches (lines, transformers, impedances,
    switches) travel; the third bus of a three-winding transformer is kept. Linear cost.
    """
    from netctl.records import BRANCH_KINDS
    from netctl.structural.branches import state_buses

    table = system.elements
    if table is None:
        return None
    br = [k for k, t in enumerate(table.kinds) if t in BRANCH_KINDS]
    kinds = sorted({table.kinds[k] for k in br})
    idx = np.asarray(br, np.int64)
    ends = np.column_stack([table.end_a[idx], table.end_b[idx], table.end_c[idx]]) \
        if idx.size else np.zeros((0, 3), np.int64)
    return {"bus": state_buses(system).tolist(), "n_buses": len(table.node_names),
            "ids": [str(table.ids[k]) for k in br], "kind_names": kinds,
            "kinds": [kinds.index(table.kinds[k]) for k in br],
            "ends": ends.astype(np.int64).reshape(-1).tolist()}


def _nearest_driver_tree(system: StructuredSystem, drivers: np.ndarray) -> np.ndarray:
    """Breadth-first predecessors from all drivers at once (-1: a driver or unreached).

    Neighbours are visited in increasing index order from a virtual source joined to
    the drivers in increasing order, as scipy's ``breadth_first_order`` does on the
    same graph; up to :data:`_SMALL_WALK` states and links in plain Python (no scipy
    import on a small map), above it with scipy's compiled walk, as before.
    """
    n = system.n_states
    pred = np.full(n, -1, np.int64)
    if n == 0 or drivers.size == 0:
        return pred
    src, dst = system.edges()
    if n + src.size <= _SMALL_WALK:
        from collections import deque

        from netctl._csr import coo_pattern

        out, _ = coo_pattern(np.asarray(src, np.int64), np.asarray(dst, np.int64), None,
                             (n, n), count=False)
        indptr, indices = out.indptr.tolist(), out.indices.tolist()
        seen = [False] * n
        p_list = [-1] * n
        queue: deque[int] = deque()
        for d in np.unique(drivers).tolist():
            seen[d] = True
            queue.append(d)
        while queue:
            v = queue.popleft()
            for w in indices[indptr[v]:indptr[v + 1]]:
                if not seen[w]:
                    seen[w] = True
                    p_list[w] = v
                    queue.append(w)
        return np.asarray(p_list, np.int64)
    import scipy.sparse as sp
    from scipy.sparse.csgraph import breadth_first_order

    # csgraph[i, j] is the link i -> j; netctl's A[v, u] is u -> v, so A.T, plus a
    # virtual source n linked to every driver
    rows = np.concatenate([src, np.full(drivers.size, n)])
    cols = np.concatenate([dst, drivers])
    g = sp.csr_matrix((np.ones(rows.size, np.int8), (rows, cols)), shape=(n + 1, n + 1))
    _, p = breadth_first_order(g, n, directed=True, return_predecessors=True)
    p = p[:n].astype(np.int64)
    p[(p < 0) | (p == n)] = -1
    return p


#: Up to this many states plus links the nearest-driver walk runs in plain Python
#: (common practice, no source: a few milliseconds here, against about 0.2 s for the
#: import of scipy.sparse and csgraph).
_SMALL_WALK = 20_000


def _inputs_at(system: StructuredSystem, marks: MapMarks) -> list[list[Any]]:
    """``[driver, [input names]]`` pairs: which inputs act on each driver node."""
    if marks.design != "given":
        return [[int(d), [f"dedicated input at {system.state_names[int(d)]}"]]
                for d in marks.drivers]
    from netctl._csr import transpose_pattern

    Bt = transpose_pattern(system.pattern("B"))  # row k: the states input k acts on
    names = list(system.input_names)
    acting: dict[int, list[str]] = {}
    for k in range(Bt.shape[0]):
        for i in Bt.indices[Bt.indptr[k]:Bt.indptr[k + 1]].tolist():
            acting.setdefault(int(i), []).append(str(names[k]))
    return [[i, acting[i]] for i in sorted(acting)]


def _disturbances(system: StructuredSystem) -> dict[str, Any] | None:
    """Where disturbances act (``E`` pattern), when the system carries them.

    Looks for a disturbance matrix ``E`` (n x q) with ``disturbance_names``, on the
    system itself or on a ``disturbances`` attribute; ``None`` when there is none.
    """
    if isinstance(system, StructuredSystem):  # its stored pattern: no scipy needed
        if system.n_disturbances == 0:
            return None
        P = system.pattern("E")
        rows = np.repeat(np.arange(P.shape[0], dtype=np.int64), np.diff(P.indptr))
        order = np.lexsort((rows, P.indices))
        hits = np.column_stack([P.indices[order], rows[order]]).astype(np.int64)
        return {"names": [str(x) for x in system.disturbance_names],
                "hits": hits.reshape(-1).tolist()}
    import scipy.sparse as sp

    holder: Any = system
    E = getattr(system, "E", None)
    if E is None:
        holder = getattr(system, "disturbances", None)
        E = getattr(holder, "E", None) if holder is not None else None
    if E is None:
        return None
    E = sp.coo_array(E)
    if E.shape[1] == 0:
        return None
    names = list(getattr(holder, "disturbance_names", None) or getattr(holder, "names", None)
                 or [f"w{k + 1}" for k in range(E.shape[1])])
    order = np.lexsort((E.row, E.col))
    hits = np.column_stack([E.col[order], E.row[order]]).astype(np.int64)
    return {"names": [str(x) for x in names], "hits": hits.reshape(-1).tolist()}


def _asset(name: str) -> str:
    return resources.files("netctl.viz").joinpath("assets").joinpath(name).read_text("utf-8")


def map_fragment(payload: dict[str, Any], *, element_id: str = "netctl-map",
                 height_px: int = 640) -> str:
    """The map as an HTML fragment (style, container, data, renderer) for a page.

    Everything is inline; the data element's id is ``element_id + "-data"``.
    """
    if not element_id.replace("-", "").isalnum():
        raise OptionError(f"element_id must be letters, digits and '-', found "
                          f"{element_id!r}.")
    js = _asset("netmap.js").replace("</", "<\\/")  # cannot end its script element
    css = _asset("netmap.css").replace("</", "")
    return "\n".join([
        f"<style>{css}</style>",
        f'<div class="ncm" id="{element_id}" data-netctl-map="{element_id}-data" '
        f'style="--ncm-height:{int(height_px)}px">'
        "<noscript>The interactive map needs JavaScript; the static figure and the "
        "tables list the same marks.</noscript></div>",
        f'<script type="application/json" id="{element_id}-data">{script_json(payload)}'
        "</script>",
        f"<script>{js}</script>",
    ])


def map_html(payload: dict[str, Any], *, title: str | None = None) -> str:
    """One self-contained HTML page holding the interactive map.

    Examples
    --------
    >>> from netctl.viz import map_marks
    >>> from netctl.viz.placement import map_placement
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], 3)
    >>> page = map_html(map_payload(s, map_marks(s), map_placement(s)))
    >>> page.startswith("<!DOCTYPE html>"), "http" in page.split("<script>")[0]
    (True, False)
    """
    t = html.escape(title if title is not None else payload.get("title") or "network map")
    return "\n".join([
        "<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{t}</title>",
        "<style>body{margin:0;padding:.6em 1em;background:#fff}"
        "h1{font:600 1.15em system-ui,sans-serif;margin:.2em 0}</style>",
        "</head>", "<body>", f"<h1>{t}</h1>",
        map_fragment(payload, height_px=720), "</body>", "</html>", ""])
