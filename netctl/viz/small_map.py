"""The small map a result shows in a notebook: inline SVG, no script, capped in size.

:func:`result_map_html` draws the system a result was computed on, with the roles the
result found (driver nodes or sensor sites of a design, states no input reaches, the
smallest fix, a dilation, node roles, critical links, a placement's chosen and candidate
sites, a decoupling bottleneck, the losses a contingency sweep found costly...) and the
system's own inputs, outputs and disturbances, in the marks of the static maps
(:mod:`netctl.viz.style`: same shapes, fills and colours; which result marks what is
:mod:`netctl.viz.small_marks`). A before/after comparison (:func:`netctl.what_if`) is
drawn on the union of the two networks, with the added and removed links and states and
the driver nodes before and after. States sit at the node table's ``x``/``y`` when the
system has them, else on a quick force-directed layout. A link ``u -> v`` (``u``
influences ``v``) that has no partner ``v -> u`` ends in an arrowhead at ``v``; a pair of
links both ways is one line without heads.

The SVG is self-contained (no script, no external reference) and well-formed XML. Its
only element id is the arrowhead's ``<marker>`` (one definition, used by every
one-way link), named after a hash of what the map draws: maps on one page never clash,
and identical maps share an identical definition. Every name is escaped and shown as
text (a ``<title>`` tooltip, and a label on small maps), never as markup. Above
:data:`SMALL_MAP_STATES` states nothing is drawn: a note gives the counts of each mark
instead, so showing a result never stalls a notebook.
"""

from __future__ import annotations

import html
import textwrap
import warnings
from collections.abc import Sequence
from typing import Any

import numpy as np

from netctl.viz.small_marks import Lines, Rows, change_view, result_lines, result_marks
from netctl.viz.scene import (DASHES, Circles, Group, Head, Item, Scene, Segments, Shapes,
                              Stroke, Text, clean_text, scene_svg)
from netctl.viz.style import INK, MARKS, PAPER

__all__ = ["SMALL_MAP_HEADS", "SMALL_MAP_LINKS", "SMALL_MAP_STATES", "marks_map_scene",
           "marks_map_svg", "result_map_html", "result_marks"]

#: Above this many states the notebook view gives counts instead of a map.
SMALL_MAP_STATES = 2000
#: Above this many (undirected) links the map shows the states and marks only.
SMALL_MAP_LINKS = 8000
#: Above this many one-way links they are drawn without arrowheads (heads would hide
#: the map; directions are in netctl.viz.draw_map and ``netctl map``).
SMALL_MAP_HEADS = 1500
#: Up to this many states, names are written beside the states.
_LABELS_UP_TO = 40
#: Width of the drawing area (px); the height follows the aspect of the positions.
_WIDTH = 440.0
_PAD = 16.0
#: Longest line of a title (characters, at 11 px: the drawing's width); longer ones wrap.
_TITLE_CHARS = 74
#: Room (px) kept right of the map for the names of small maps.
_LABEL_ROOM = 90.0
_CACHE_ATTR = "_netctl_map_cache"

#: Drawing order of point marks (later on top), as in :func:`netctl.viz.draw_map`.
_POINT_ORDER = ("role_critical", "role_intermittent", "role_redundant", "disturbed",
                "unreached", "dilation", "bottleneck", "costly", "fragile", "candidate",
                "candidate_sensor", "removed_state", "former_driver", "driver", "sensor",
                "suggested", "suggested_sensor")
#: Drawing order of highlighted links (later on top); control paths and cycles (the
#: matched links of a map's design) over critical links, as on the static maps.
_LINE_ORDER = ("critical_link", "chain", "cycle", "costly_link", "fragile_link",
               "removed_link", "added_link")
#: Up to this many states, self-loops are drawn (a small ring beside the state), as on
#: the static maps.
_LOOPS_UP_TO = 500


def _text(value: object) -> str:
    """``value`` as XML-safe escaped text (markup characters and quotes escaped)."""
    return html.escape(clean_text(value), quote=True)


def _positions(result: Any, system: Any, key: Any) -> tuple[np.ndarray, str]:
    """Positions of ``system``'s states, cached on ``result`` under ``key`` (a system)."""
    cache = getattr(result, "__dict__", {}).get(_CACHE_ATTR)
    if cache is not None and cache[0] is key:
        return cache[1], cache[2]
    from netctl.viz.layout import node_positions

    with warnings.catch_warnings():  # a preview: say it in the caption, not as a warning
        warnings.simplefilter("ignore")
        pos, how = node_positions(system, quick=True)
    pos = np.asarray(pos, dtype=np.float64).reshape(system.n_states, 2)
    try:
        object.__setattr__(result, _CACHE_ATTR, (key, pos, how))
    except (AttributeError, TypeError):  # a result without __dict__: no cache
        pass
    return pos, how


def _counts_note(rows: Sequence[tuple[str, str, np.ndarray]], n: int, limit: int) -> str:
    parts = [f"{_text(label)}: {idx.size:,}" for _, label, idx in rows]
    listed = "; ".join(parts) if parts else "nothing marked"
    return (f"<p class=\"netctl-map-note\"><small>Map not drawn: {n:,} states (more than "
            f"{limit:,}). {listed}. For the full map use netctl.viz.draw_map or the "
            f"<code>netctl map</code> command.</small></p>")


def _radius(key: str, n: int) -> float:
    """Mark radius (px): flagged marks a fixed size, plain and role circles shrink with n."""
    if key == "fragile":
        return 8.5
    if key.startswith("candidate"):
        return 4.5
    if MARKS[key].size > 2.0:  # drivers, sensors, trouble spots: readable on any map
        return 6.5
    base = float(np.clip(60.0 / np.sqrt(max(n, 1)), 1.5, 5.0))
    return base * (1.3 if key.startswith("role_") else 1.0)


def result_map_html(result: Any, system: Any, *, max_states: int = SMALL_MAP_STATES,
                    max_links: int = SMALL_MAP_LINKS, max_heads: int = SMALL_MAP_HEADS) -> str:
    """A small inline SVG map of ``system`` with the roles ``result`` found.

    Parameters
    ----------
    result : a result object (any of netctl's result classes)
    system : StructuredSystem
        The system the result was computed on (a before/after comparison carries its
        own two systems and draws their union instead).
    max_states : int
        Above this many states, a note with the counts of each mark instead of a map.
    max_links : int
        Above this many links, the links are not drawn (the states and marks are).
    max_heads : int
        Above this many one-way links, they are drawn without arrowheads.

    Returns
    -------
    str
        An ``<svg>`` element (well-formed XML, no script, one id: the arrowhead marker)
        followed by nothing else, or a ``<p>`` note.

    Notes
    -----
    Marks follow :mod:`netctl.viz.style`. Every mark is one ``<path>`` with class
    ``mark <name>`` placed by ``transform="translate(x y)"`` and holding a ``<title>``
    with the state's name; the legend is the ``<g class="legend">`` group. Links: pairs
    of states linked both ways are one ``<path class="links">`` without heads; each
    one-way link ``u -> v`` is a ``<path>`` from ``u`` to the edge of ``v``'s mark in the
    group ``<g class="arrows">``, whose ``marker-end`` is the one arrowhead definition;
    highlighted links are one ``<path class="NAME">`` a kind (``critical_link``,
    ``fragile_link``, ``costly_link``, ``added_link``, ``removed_link``). Positions:
    the node table's coordinates (x to the right, y up), else a force-directed layout of
    at most 50 iterations (Fruchterman & Reingold 1991), cached on the result. Cost:
    linear in states and links.
    """
    key = system
    rows: Rows
    lines: Lines
    if hasattr(result, "added_links") and hasattr(result, "before"):  # what_if
        key = result.before
        total = int(key.n_states) + len(getattr(result, "new_states", ()))
        if total > max_states:  # no union built: the counts of the change instead
            change = [(k, MARKS[k].label, np.zeros(len(getattr(result, f)), np.int64))
                      for k, f in (("removed_link", "removed_links"),
                                   ("added_link", "added_links"),
                                   ("removed_state", "removed_nodes"))
                      if len(getattr(result, f))]
            return _counts_note(change, total, max_states)
        system, rows, lines = change_view(result)
    else:
        rows, lines = result_marks(result, system), result_lines(result, system)
    n = int(system.n_states)
    if n > max_states:
        return _counts_note(rows, n, max_states)
    pos, how = _positions(result, system, key)
    return scene_svg(_scene(system, rows, lines, pos, how, max_links, max_heads))


def marks_map_svg(system: Any, rows: Rows, lines: Lines, positions: np.ndarray, *,
                  how: str = "given", title: str = "", max_links: int = SMALL_MAP_LINKS,
                  max_heads: int = SMALL_MAP_HEADS, labels: bool | None = None,
                  labels_up_to: int = _LABELS_UP_TO,
                  legend: Sequence[tuple[str, str]] | None = None, legend_title: str = "",
                  path_heads: bool = False, roles_on_top: bool = False,
                  where: str = "") -> str:
    """The small SVG map of ``system`` with the given marks at the given positions.

    For a page that has already worked out what to mark and where the states sit (the
    report's static map: :func:`netctl.viz.small_marks.map_view` of its
    :class:`~netctl.viz.MapMarks`, at its placement), drawn like
    :func:`result_map_html` and with no matplotlib.

    Parameters
    ----------
    system : StructuredSystem
    rows : list of (mark, legend text, state indices)
        Point marks (:data:`netctl.viz.small_marks.Rows`).
    lines : list of (mark, legend text, sources, targets)
        Highlighted links (:data:`netctl.viz.small_marks.Lines`), e.g. ``chain`` and
        ``cycle`` (control paths and cycles).
    positions : ndarray, shape (n, 2)
        ``x`` to the right, ``y`` up.
    how : str
        Where the positions came from (``"coordinates"``, ``"coordinates+fr"``, or a
        layout), said below the legend.
    title : str
        Written above the map (escaped; its lines kept, each wrapped at 74 characters).
    labels : bool, optional
        Write every state's name (``True``), none (``False``), or, by default, those of
        maps of up to ``labels_up_to`` states.
    legend : sequence of (mark, text), optional
        The legend's rows in order (a mark of :data:`netctl.viz.style.MARKS` or
        ``"self_loop"``), e.g. with counts; default: one row per highlighted link kind
        and point mark drawn.
    legend_title : str
        Lines above the legend (e.g. how to read the links).
    path_heads : bool
        End each control path and cycle link (``chain``, ``cycle``) in an arrowhead of
        its colour, so its direction shows even where a pair of states is linked both
        ways (one more ``<marker>`` per kind; up to ``max_heads`` such links).
    roles_on_top : bool
        Draw the node roles (``role_*``) small, over the other marks, so a driver's role
        shows (as on the static maps); default: under them.
    where : str
        The line below the legend on where the positions come from (default: from
        ``how``).

    Returns
    -------
    str
        An ``<svg>`` element (well-formed XML, no script), whatever the size: the caller
        decides up to how many states an inline map is worth it
        (:data:`SMALL_MAP_STATES`).
    """
    return scene_svg(marks_map_scene(
        system, rows, lines, positions, how=how, title=title, max_links=max_links,
        max_heads=max_heads, labels=labels, labels_up_to=labels_up_to, legend=legend,
        legend_title=legend_title, path_heads=path_heads, roles_on_top=roles_on_top,
        where=where))


def marks_map_scene(system: Any, rows: Rows, lines: Lines, positions: np.ndarray, *,
                    how: str = "given", title: str = "", max_links: int = SMALL_MAP_LINKS,
                    max_heads: int = SMALL_MAP_HEADS, labels: bool | None = None,
                    labels_up_to: int = _LABELS_UP_TO,
                    legend: Sequence[tuple[str, str]] | None = None,
                    legend_title: str = "", path_heads: bool = False,
                    roles_on_top: bool = False, where: str = "") -> Scene:
    """The drawing of :func:`marks_map_svg` as primitives (:class:`~netctl.viz.scene.Scene`):
    what :func:`~netctl.viz.scene.scene_svg` writes as SVG and
    :func:`netctl.viz.scene_png.scene_png` paints as PNG. Same parameters."""
    pos = np.asarray(positions, dtype=np.float64).reshape(int(system.n_states), 2)
    return _scene(system, rows, lines, pos, how, max_links, max_heads, title=title,
                  labels=labels, labels_up_to=labels_up_to, legend=legend,
                  legend_title=legend_title, path_heads=path_heads,
                  roles_on_top=roles_on_top, where=where)


def _segs(px: np.ndarray, py: np.ndarray, u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Segments ``(x0, y0, x1, y1)`` from states ``u`` to ``v`` (a state to itself left
    out)."""
    keep = u != v
    u, v = u[keep], v[keep]
    return np.c_[px[u], py[u], px[v], py[v]].reshape(-1, 4)


def _heads_at(px: np.ndarray, py: np.ndarray, u: np.ndarray, v: np.ndarray,
              reach: np.ndarray) -> np.ndarray:
    """Segments from ``u`` stopping short of ``v``'s mark (at most halfway), for a head."""
    dx, dy = px[v] - px[u], py[v] - py[u]
    length = np.hypot(dx, dy)
    cut = np.where(length > 0, np.minimum(reach[v], 0.5 * length) / np.maximum(
        length, 1e-9), 0.0)
    return np.c_[px[u], py[u], px[v] - dx * cut, py[v] - dy * cut].reshape(-1, 4)


def _scene(system: Any, rows: Rows, lines: Lines, pos: np.ndarray, how: str,
           max_links: int, max_heads: int, *, title: str = "", labels: bool | None = None,
           labels_up_to: int = _LABELS_UP_TO,
           legend: Sequence[tuple[str, str]] | None = None, legend_title: str = "",
           path_heads: bool = False, roles_on_top: bool = False, where: str = "") -> Scene:
    n = int(system.n_states)
    heading = [w for t in title.splitlines() for w in textwrap.wrap(t, _TITLE_CHARS)]
    # fit into the drawing box, y up (as on a map), aspect kept
    if n:
        lo, hi = pos.min(axis=0), pos.max(axis=0)
    else:
        lo, hi = np.zeros(2), np.ones(2)
    span = np.where(hi - lo > 0, hi - lo, 0.0)
    with_labels = n > 0 and (labels if labels is not None else n <= labels_up_to)
    inner_w = _WIDTH - 2 * _PAD - (_LABEL_ROOM if with_labels else 0.0)
    scale = inner_w / float(span.max()) if span.max() > 0 else 0.0
    inner_h = min(max(float(span[1]) * scale, 2 * _PAD), 1.5 * _WIDTH - 2 * _PAD)
    if span[1] * scale > inner_h:  # very tall: fit the height instead
        scale = inner_h / float(span[1])
    # room for the title, and for the names above the top states
    top = _PAD + (_PAD if with_labels else 0.0) + 13.0 * len(heading)
    height = inner_h + top + _PAD
    px = _PAD + (pos[:, 0] - lo[0]) * scale + (inner_w - span[0] * scale) / 2
    py = top + (hi[1] - pos[:, 1]) * scale + (inner_h - span[1] * scale) / 2
    names = [clean_text(x) for x in system.state_names]
    parts: list[Item] = []
    r0 = _radius("state", n)

    def radius(key: str) -> float:
        r = _radius(key, n)
        return min(r, 2.6) if roles_on_top and key.startswith("role_") else r

    # how far a head stops short of its target's centre: the largest mark drawn there
    reach = np.full(n, r0 + 1.0)
    for key, _, idx in rows:
        if MARKS[key].marker is not None and key not in ("fragile", "bottleneck", "costly"):
            reach[idx] = np.maximum(reach[idx], radius(key) + 1.0)

    # links: pairs linked both ways once, plain; one-way links with an arrowhead
    src, dst = system.edges()
    keep = src != dst
    src, dst = src[keep].astype(np.int64), dst[keep].astype(np.int64)
    N = max(n, 1)
    fwd = src * N + dst
    both = np.isin(dst * N + src, fwd)
    a, b = np.minimum(src, dst), np.maximum(src, dst)
    pairs = np.unique(a * N + b) if a.size else np.zeros(0, np.int64)
    links_note = ""
    links_drawn = pairs.size <= max_links
    if not links_drawn:
        links_note = f"; {pairs.size:,} links not drawn (more than {max_links:,})"
    elif pairs.size:
        mk = MARKS["link"]
        alpha = round(float(np.clip(12.0 / np.sqrt(pairs.size), 0.2, 0.9)), 2)
        pen = Stroke(mk.edge, mk.linewidth, alpha)
        one = np.flatnonzero(~both)
        heads = 0 < one.size <= max_heads
        plain = np.unique(a[both] * N + b[both]) if heads else pairs
        if plain.size:
            parts.append(Segments("links", _segs(px, py, plain // N, plain % N), pen))
        if heads:
            head = Head(6.0 if n <= 200 else 4.5, MARKS["state"].edge, max(alpha, 0.5))
            parts.append(Segments("arrows", _heads_at(px, py, src[one], dst[one], reach),
                                  pen, head))
        elif one.size:
            links_note = (f"; {one.size:,} one-way links drawn without arrowheads (more "
                          f"than {max_heads:,})")
    legend_keys: list[tuple[str, str]] = []
    if links_drawn:
        by_line = {key: (label, s, t) for key, label, s, t in lines}
        for key in _LINE_ORDER:
            if key not in by_line:
                continue
            label, s, t = by_line[key]
            mk = MARKS[key]
            width = 2.5 if key == "critical_link" else mk.linewidth
            pen = Stroke(mk.edge, width, 0.8, DASHES.get(mk.linestyle, ()), round_caps=True)
            s, t = np.asarray(s, np.int64), np.asarray(t, np.int64)
            if path_heads and key in ("chain", "cycle") and 0 < s.size <= max_heads:
                # one line per link, stopping at the target's mark, with a head
                head = Head(8.0 if n <= 200 else 6.0, mk.edge, 0.9)
                parts.append(Segments(key, _heads_at(px, py, s[s != t], t[s != t], reach),
                                      pen, head))
            else:
                parts.append(Segments(key, _segs(px, py, s, t), pen))
            legend_keys.append((key, label))

    # self-loops (self-dynamics): a ring around the state, as on the static maps; a
    # matched self-loop is a control cycle of one state
    loop_at = np.unique(system.edges()[0][~keep]).astype(np.int64)
    if loop_at.size and links_drawn and n <= _LOOPS_UP_TO:
        on_cycle = np.zeros(n, bool)
        for key, _, s, t in lines:
            if key == "cycle":
                on_cycle[np.asarray(s, np.int64)[np.asarray(s) == np.asarray(t)]] = True
        for key, sel in (("link", ~on_cycle[loop_at]), ("cycle", on_cycle[loop_at])):
            if not sel.any():
                continue
            mk = MARKS[key]
            at = loop_at[sel]
            parts.append(Circles(
                "self_loops" if key == "link" else "cycle_loops", np.c_[px[at], py[at]],
                round(2 * r0, 1), "none",
                Stroke(mk.edge, round(max(mk.linewidth * 0.8, 0.8), 1),
                       dash=DASHES.get(mk.linestyle, ())),
                tuple(f"{names[i]} \u2014 self-loop" for i in at.tolist())))
        legend_keys.append(("self_loop", f"self-loop (self-dynamics) ({loop_at.size:,})"))
    elif loop_at.size:
        links_note += f"; {loop_at.size:,} self-loops not drawn"

    # plain states, then the marks in the static maps' order
    st = MARKS["state"]
    parts.append(Circles("states", np.c_[px, py], round(r0, 1), st.face,
                         Stroke(st.edge, 0.6), tuple(names)))
    by_key: dict[str, list[tuple[str, np.ndarray]]] = {}
    for key, label, idx in rows:
        by_key.setdefault(key, []).append((label, idx))
    marked: list[Item] = []
    legend_keys += [(key, label) for key, label, _ in rows]
    order: tuple[str, ...] = _POINT_ORDER
    if roles_on_top:  # as on the static maps: the role sits inside every other mark
        order = tuple(k for k in order if not k.startswith("role_")) + _POINT_ORDER[:3]
    for key in order:
        for label, idx in by_key.get(key, ()):
            text = clean_text(label)
            marked.append(Shapes(key, np.c_[px[idx], py[idx]], radius(key),
                                 tuple(f"{names[i]} \u2014 {text}" for i in idx.tolist())))
    parts.append(Group("marks", tuple(marked)))
    if with_labels:
        parts.append(Group("labels", tuple(Text(px[i] + 6, py[i] - 6, names[i])
                                           for i in range(n)), 9.0, INK))

    # legend below the map: one row per marked meaning, then where positions came from
    keyed: list[Item] = []
    y = height + 6.0
    if legend is not None:
        legend_keys = list(legend)
    for line in legend_title.splitlines():
        keyed.append(Text(_PAD - 6, y + 9.5, clean_text(line)))
        y += 13.0
    for key, label in legend_keys:
        mk = MARKS["link" if key == "self_loop" else key]
        at = np.array([[_PAD, y + 6]])
        if key == "self_loop":
            keyed.append(Circles("", at, 5.0, "none", Stroke(mk.edge, 0.8)))
        elif mk.marker is None:
            keyed.append(Segments("", np.array([[_PAD - 6, y + 6, _PAD + 6, y + 6]]),
                                  Stroke(mk.edge, 2.5, dash=DASHES.get(mk.linestyle, ()))))
        else:
            keyed.append(Shapes(key, at, 5.0, classed=False))
        keyed.append(Text(_PAD + 12, y + 9.5, clean_text(label)))
        y += 15.0
    where = where or {"coordinates": "positions: the node table's x and y",
             "coordinates+fr": "positions: x and y, missing ones by a quick layout"}.get(
                 how, "positions: a quick force-directed layout (no coordinates)")
    keyed.append(Text(_PAD - 6, y + 9.5, clean_text(f"{n:,} states; {where}{links_note}"),
                      "#5C5C5C"))
    y += 15.0
    parts.append(Group("legend", tuple(keyed), 10.0, INK))
    if heading:
        parts.insert(0, Group("title", tuple(Text(_PAD - 6, _PAD + 13.0 * k, clean_text(t))
                                             for k, t in enumerate(heading)), 11.0, INK))
    return Scene(_WIDTH, float(round(y + 4.0)), PAPER, f"network map ({n:,} states)",
                 tuple(parts))
