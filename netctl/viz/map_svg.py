"""The static map of ``netctl map --out FILE.svg`` / ``FILE.png`` drawn by netctl itself
(no matplotlib).

:func:`map_svg` draws what :func:`netctl.viz.network.map_figure` draws (every state, the
driver nodes, where to add inputs, unreached states, the dilation, single points of
failure, disturbances, node roles and critical links when asked, control paths and
cycles with their direction, self-loops, names, the title, and the legend with the
count of each mark, :func:`netctl.viz.network.legend_entries`), in the marks of
:mod:`netctl.viz.style`, through the small map's SVG writer
(:func:`netctl.viz.small_map.marks_map_svg`). It does so up to
:data:`~netctl.viz.small_map.SMALL_MAP_STATES` states and
:data:`~netctl.viz.small_map.SMALL_MAP_LINKS` links (:func:`fits`); above, that
writer would leave the links out, and the command draws with matplotlib instead.

The drawing is built once as primitives (:func:`map_scene`, a
:class:`~netctl.viz.scene.Scene`): :func:`map_svg` writes them as SVG and
:func:`map_png` paints them into a PNG with Pillow (:mod:`netctl.viz.scene_png`), so
the two files show the same map.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:  # pragma: no cover
    from netctl.viz.scene import Scene

__all__ = ["fits", "map_png", "map_scene", "map_svg"]

#: Up to this many states, names are written beside the states (as on the matplotlib
#: map, :mod:`netctl.viz.network`).
LABELS_UP_TO = 60
#: Up to this many states, self-loops are drawn as rings (as on the matplotlib map).
_LOOPS_UP_TO = 500

_WHERE = {
    "coordinates": "positions: the file's x and y",
    "geographic": "positions: the file's longitude and latitude",
    "coordinates+layout": "positions: the file's x and y; states without them placed "
                          "beside their neighbours",
    "geographic+layout": "positions: the file's longitude and latitude; states without "
                         "them placed beside their neighbours",
    "coordinates+fr": "positions: the file's x and y, missing ones by the layout",
    "circle": "positions: a circular layout (no coordinates)",
}


def fits(system: Any) -> bool:
    """Whether :func:`map_svg` draws everything of ``system`` (states and links)."""
    from netctl.viz.small_map import SMALL_MAP_LINKS, SMALL_MAP_STATES

    return bool(system.n_states <= SMALL_MAP_STATES and system.n_links <= SMALL_MAP_LINKS)


def map_svg(system: Any, marks: Any, *, positions: np.ndarray, how: str,
            labels: bool | None = None, title: str | None = None) -> str:
    """The map of ``system`` with ``marks`` as an SVG document, drawn by netctl.

    Parameters
    ----------
    system : StructuredSystem
    marks : MapMarks
        What to mark (:func:`netctl.viz.map_marks`).
    positions : ndarray, shape (n, 2)
        Where each state sits (``x`` to the right, ``y`` up).
    how : str
        Where the positions came from (a :class:`~netctl.viz.placement.Placement`'s
        ``how`` or a layout name), said in the title and below the legend.
    labels : bool, optional
        Write every state's name (default: up to 60 states, as the matplotlib map).
    title : str, optional
        Default: the matplotlib map's title (sizes, design, verdict, placement).

    Returns
    -------
    str
        A standalone SVG document: an XML declaration and one ``<svg>`` element
        (well-formed XML, no script, names escaped).

    Notes
    -----
    Same content as :func:`netctl.viz.network.map_figure`, drawn differently in two
    ways: a pair of states linked both ways is one line without heads (each one-way
    link ends in an arrowhead; the control path and cycle links always do), and up to
    1500 one-way links have heads (the matplotlib map draws arrows up to 400 links).
    Linear in states and links.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.viz import map_marks
    >>> s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"])
    >>> svg = map_svg(s, map_marks(s), positions=np.array([[0., 0], [1, 0], [2, 0]]),
    ...               how="given")
    >>> "driver node: an input acts here (1)" in svg and 'class="mark driver"' in svg
    True
    """
    from netctl.viz.scene import scene_svg

    svg = scene_svg(map_scene(system, marks, positions=positions, how=how, labels=labels,
                              title=title))
    return f'<?xml version="1.0" encoding="UTF-8"?>\n{svg}\n'


def map_scene(system: Any, marks: Any, *, positions: np.ndarray, how: str,
              labels: bool | None = None, title: str | None = None) -> Scene:
    """The drawing of :func:`map_svg` (same parameters) as primitives: what
    :func:`map_svg` writes as SVG and :func:`map_png` paints as PNG."""
    from netctl.viz.network import _default_title, legend_entries
    from netctl.viz.small_map import SMALL_MAP_HEADS, marks_map_scene
    from netctl.viz.small_marks import map_view

    n = int(system.n_states)
    src, dst = system.edges()
    loops = src == dst
    rows, lines = map_view(marks)
    legend = legend_entries(system, marks, n_loops=int(np.count_nonzero(loops)),
                            loops_drawn=n <= _LOOPS_UP_TO)
    s, t = src[~loops].astype(np.int64), dst[~loops].astype(np.int64)
    big = max(n, 1)
    one_way = int(np.count_nonzero(~np.isin(t * big + s, s * big + t)))
    if one_way <= SMALL_MAP_HEADS:
        note = ("Marks (links point from the influencing state to the influenced one;\n"
                "a line without heads joins two states linked both ways)")
    else:
        note = "Marks (links drawn without arrowheads)"
    if title is None:
        title = _default_title(system, marks, how, width=72)
    where = _WHERE.get(how, "positions: a seeded force-directed layout (no coordinates)"
                       if how.startswith("fr") else f"positions: {how}")
    return marks_map_scene(system, rows, lines, positions, how=how, title=title,
                           labels=labels, labels_up_to=LABELS_UP_TO, legend=legend,
                           legend_title=note, path_heads=True, roles_on_top=True,
                           where=where)


def map_png(system: Any, marks: Any, *, positions: np.ndarray, how: str,
            labels: bool | None = None, title: str | None = None,
            dpi: float = 150.0) -> bytes | None:
    """The map of :func:`map_svg` (same parameters) painted as PNG bytes, with Pillow.

    The picture is the SVG's drawing (:func:`map_scene`, painted by
    :func:`netctl.viz.scene_png.scene_png`), as wide in pixels as the matplotlib map of
    the same network at ``dpi`` (:func:`netctl.viz.network.map_figure` saved by
    :func:`netctl.viz.save_figure`), its height following the drawing; the file says
    ``dpi``. Returns ``None`` where it cannot be painted (no Pillow, no FreeType, or
    no DejaVu Sans in matplotlib's package data): draw with matplotlib instead.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.viz import map_marks
    >>> s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"])
    >>> png = map_png(s, map_marks(s), positions=np.array([[0., 0], [1, 0], [2, 0]]),
    ...               how="given")
    >>> png is None or png[:8] == b"\\x89PNG\\r\\n\\x1a\\n"
    True
    """
    from netctl.viz.network import _figure_size
    from netctl.viz.scene_png import scene_png

    pos = np.asarray(positions, dtype=np.float64).reshape(int(system.n_states), 2)
    scene = map_scene(system, marks, positions=pos, how=how, labels=labels, title=title)
    return scene_png(scene, width=max(1, round(_figure_size(pos)[0] * dpi)), dpi=dpi)
