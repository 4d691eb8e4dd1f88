"""The small map as a list of drawing primitives, and its SVG text.

The small map (:mod:`netctl.viz.small_map`: the notebook view, the report's inline map,
``netctl map --out FILE.svg|.png`` of a small network) is built once as a
:class:`Scene`: straight :class:`Segments` (plain, or each ending in an arrowhead),
:class:`Circles`, point marks (:class:`Shapes`: one kind of mark of
:mod:`netctl.viz.style` at many places) and :class:`Text`, in :class:`Group`\\ s, in
drawing order (later on top), in the drawing's own units (``x`` to the right, ``y``
down; 1 unit is 1 CSS pixel of the SVG). :func:`scene_svg` writes it as SVG text;
:func:`netctl.viz.scene_png.scene_png` paints the same primitives into a PNG, so the two
files show one drawing. Nothing here imports a drawing library.
"""

from __future__ import annotations

import hashlib
import html
import re
from dataclasses import dataclass, field
from typing import Union

import numpy as np

from netctl.viz.style import MARKS, Mark

__all__ = ["HEAD_TIP", "Circles", "Group", "Head", "Item", "Scene", "Segments", "Shapes",
           "Stroke", "Text", "clean_text", "head_polygons", "mark_paint", "outline",
           "scene_svg"]

#: Characters XML 1.0 forbids (a hostile name must not make the SVG unparseable).
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")
#: An arrowhead in a 10 x 10 box: the triangle, and the point put at a segment's end.
HEAD_TIP = ((0.0, 1.0), (10.0, 5.0), (0.0, 9.0))
_HEAD_REF = (9.0, 5.0)

#: Dash patterns (drawing units, on and off) of the marks' line styles.
DASHES: dict[str, tuple[float, ...]] = {"dashed": (3.0, 2.0), "dotted": (1.0, 2.0),
                                        "dashdot": (5.0, 2.0, 1.0, 2.0)}


def clean_text(value: object) -> str:
    """``str(value)`` with the characters XML forbids replaced by U+FFFD."""
    return _NOT_XML.sub("\ufffd", str(value))


def _esc(value: str) -> str:
    return html.escape(value, quote=True)


@dataclass(frozen=True)
class Stroke:
    """How a line or outline is drawn: colour, width (drawing units), opacity, dash
    pattern (on, off, ... in drawing units; ``()`` solid) and round line ends."""

    colour: str
    width: float
    opacity: float = 1.0
    dash: tuple[float, ...] = ()
    round_caps: bool = False


@dataclass(frozen=True)
class Head:
    """An arrowhead at the end of every segment: the triangle :data:`HEAD_TIP` scaled to
    ``size`` drawing units, its tip just past the segment's end."""

    size: float
    colour: str
    opacity: float


@dataclass(frozen=True)
class Segments:
    """Straight segments ``xy[k] = (x0, y0, x1, y1)``; with a ``head``, each segment is
    its own line ending in an arrowhead. ``name`` is the SVG class ("" for a legend
    sample)."""

    name: str
    xy: np.ndarray
    stroke: Stroke
    head: Head | None = None


@dataclass(frozen=True)
class Circles:
    """Circles of radius ``r`` centred on ``xy[k] = (x, y)``, filled with ``fill``
    (``"none"``: hollow), each with a tooltip ``tips[k]`` (SVG only) when given."""

    name: str
    xy: np.ndarray
    r: float
    fill: str
    stroke: Stroke
    tips: tuple[str, ...] = ()


@dataclass(frozen=True)
class Shapes:
    """The point mark ``key`` of :data:`netctl.viz.style.MARKS` (its shape, fill and
    outline, :func:`outline` and :func:`mark_paint`), of radius about ``r``, centred on
    each ``xy[k]``; ``tips`` as for :class:`Circles`; ``classed``: the SVG element says
    which mark it is (not for legend samples)."""

    key: str
    xy: np.ndarray
    r: float
    tips: tuple[str, ...] = ()
    classed: bool = True


@dataclass(frozen=True)
class Text:
    """One line of text starting at ``(x, y)`` on its baseline; ``fill`` overrides the
    group's colour."""

    x: float
    y: float
    text: str
    fill: str | None = None


Item = Union["Group", Segments, Circles, Shapes, Text]


@dataclass(frozen=True)
class Group:
    """Items drawn together, named ``name`` (the SVG class); text in it is ``size``
    drawing units high, in ``fill``, sans-serif."""

    name: str
    items: tuple[Item, ...]
    size: float | None = None
    fill: str | None = None


@dataclass(frozen=True)
class Scene:
    """A whole drawing: ``width`` x ``height`` drawing units on ``background``; ``title``
    names it (the SVG's tooltip)."""

    width: float
    height: float
    background: str
    title: str
    items: tuple[Item, ...] = field(default_factory=tuple)


# ------------------------------------------------------------------------ shared geometry
def outline(marker: str | None, r: float) -> list[tuple[np.ndarray, bool]] | None:
    """The subpaths of a point mark's shape centred on the origin, radius about ``r``:
    ``(points (k, 2), closed)``; ``None`` for a circle (of radius ``r``)."""
    if marker == "^":
        return [(np.array([[0, -r], [0.87 * r, 0.5 * r], [-0.87 * r, 0.5 * r]]), True)]
    if marker == "v":
        return [(np.array([[0, r], [0.87 * r, -0.5 * r], [-0.87 * r, -0.5 * r]]), True)]
    if marker == "s":  # a square with its cross hatch drawn in
        h = 0.8 * r
        return [(np.array([[-h, -h], [h, -h], [h, h], [-h, h]]), True),
                (np.array([[-h, -h], [h, h]]), False), (np.array([[h, -h], [-h, h]]), False)]
    if marker == "D":
        return [(np.array([[0, -r], [r, 0], [0, r], [-r, 0]]), True)]
    if marker in ("h", "p"):  # hexagon (pointy top), pentagon
        k = 6 if marker == "h" else 5
        a = np.arange(k) * 2 * np.pi / k
        return [(np.c_[r * np.sin(a), -r * np.cos(a)], True)]
    if marker == "X":  # a cross drawn as two strokes
        h = 0.75 * r
        return [(np.array([[-h, -h], [h, h]]), False), (np.array([[h, -h], [-h, h]]), False)]
    if marker == "8":  # octagon
        a = np.pi / 8 + np.arange(8) * np.pi / 4
        return [(np.c_[r * np.cos(a), r * np.sin(a)], True)]
    return None


def mark_paint(mk: Mark) -> tuple[str, Stroke]:
    """Fill and outline of a point mark. Hatches become outlines: a dotted hatch a
    dotted outline (half again as wide), the cross hatch of a square is in its
    :func:`outline`."""
    dotted = mk.hatch.startswith(".")
    dash = (1.0, 1.0) if dotted else DASHES.get(mk.linestyle, ())
    width = round(max(mk.linewidth, 0.6) * (1.5 if dotted else 1.0), 1)
    return mk.face, Stroke(mk.edge, width, dash=dash)


def head_polygons(xy: np.ndarray, size: float) -> np.ndarray:
    """The arrowheads of segments ``xy`` (k, 4) as triangles (k, 3, 2), as an SVG
    ``<marker>`` of :data:`HEAD_TIP` with ``orient="auto"`` places them (a zero-length
    segment points right)."""
    d = xy[:, 2:] - xy[:, :2]
    length = np.hypot(d[:, 0], d[:, 1])
    u = np.where(length[:, None] > 0, d / np.maximum(length, 1e-12)[:, None], [1.0, 0.0])
    w = np.c_[-u[:, 1], u[:, 0]]
    tip = np.asarray(HEAD_TIP) - _HEAD_REF  # along the segment, across it
    scale = size / 10.0
    return (xy[:, None, 2:] + scale * (tip[None, :, 0, None] * u[:, None, :]
                                       + tip[None, :, 1, None] * w[:, None, :]))


# ------------------------------------------------------------------------------- to SVG
def _pen(s: Stroke, fill: str | None = "none") -> str:
    out = f'fill="{fill}" ' if fill is not None else ""
    out += f'stroke="{s.colour}" stroke-width="{s.width:.1f}"'
    if s.opacity != 1.0:
        out += f' stroke-opacity="{s.opacity:.2f}"'
    if s.round_caps:
        out += ' stroke-linecap="round"'
    if s.dash:
        out += ' stroke-dasharray="' + " ".join(f"{d:g}" for d in s.dash) + '"'
    return out


def _shape_d(key: str, r: float) -> str:
    paths = outline(MARKS[key].marker, r)
    if paths is None:  # a circle as two arcs (one path syntax for every mark)
        return (f"M{-r:.1f} 0A{r:.1f} {r:.1f} 0 1 0 {r:.1f} 0"
                f"A{r:.1f} {r:.1f} 0 1 0 {-r:.1f} 0Z")
    return "".join("M" + "L".join(f"{x:.1f} {y:.1f}" for x, y in pts.tolist())
                   + ("Z" if closed else "") for pts, closed in paths)


def _marker(mid: str, head: Head) -> str:
    """An arrowhead ``<marker>`` named ``mid``: its tip at the end of a path."""
    tip = "L".join(f"{x:g} {y:g}" for x, y in HEAD_TIP)
    return (f'<marker id="{mid}" viewBox="0 0 10 10" refX="{_HEAD_REF[0]:g}" '
            f'refY="{_HEAD_REF[1]:g}" markerWidth="{head.size:.1f}" '
            f'markerHeight="{head.size:.1f}" markerUnits="userSpaceOnUse" orient="auto">'
            f'<path d="M{tip}Z" fill="{head.colour}" fill-opacity="{head.opacity:.2f}"/>'
            "</marker>")


def _tip(tips: tuple[str, ...], k: int) -> str:
    return f"<title>{_esc(tips[k])}</title>" if tips else ""


def _svg_item(item: Item, markers: list[str]) -> str:
    if isinstance(item, Group):
        font = ""
        if item.size is not None:
            font = (f' font-size="{item.size:g}" fill="{item.fill}" '
                    'font-family="sans-serif"')
        return (f'<g class="{item.name}"{font}>'
                + "".join(_svg_item(i, markers) for i in item.items) + "</g>")
    if isinstance(item, Text):
        fill = f' fill="{item.fill}"' if item.fill else ""
        return f'<text x="{item.x:.1f}" y="{item.y:.1f}"{fill}>{_esc(item.text)}</text>'
    if isinstance(item, Segments):
        segs = item.xy.tolist()
        if item.head is not None:  # one path per segment, one marker for the group
            each = "".join(f'<path d="M{a:.1f} {b:.1f}L{c:.1f} {d:.1f}"/>'
                           for a, b, c, d in segs)
            kind = "netctl-head-" if item.name == "arrows" else f"netctl-{item.name}-head-"
            mid = kind + hashlib.sha1(each.encode("utf-8")).hexdigest()[:12]
            markers.append(_marker(mid, item.head))
            return (f'<g class="{item.name}" {_pen(item.stroke)} marker-end="url(#{mid})">'
                    f"{each}</g>")
        d = "".join(f"M{a:.1f} {b:.1f}L{c:.1f} {d:.1f}" for a, b, c, d in segs)
        cls = f'class="{item.name}" ' if item.name else ""
        return f'<path {cls}d="{d}" {_pen(item.stroke)}/>'
    if isinstance(item, Circles):
        if not item.name:  # a legend sample
            return "".join(f'<circle cx="{x:.1f}" cy="{y:.1f}" r="{item.r:.1f}" '
                           f"{_pen(item.stroke, item.fill)}/>" for x, y in item.xy.tolist())
        return (f'<g class="{item.name}" {_pen(item.stroke, item.fill)}>' + "".join(
            f'<circle cx="{x:.1f}" cy="{y:.1f}" r="{item.r:.1f}">{_tip(item.tips, k)}'
            "</circle>" for k, (x, y) in enumerate(item.xy.tolist())) + "</g>")
    # Shapes
    fill, stroke = mark_paint(MARKS[item.key])
    d = _shape_d(item.key, item.r)
    cls = f'class="mark {item.key}" ' if item.classed else ""
    return "".join(f'<path {cls}transform="translate({x:.2f} {y:.2f})" d="{d}" '
                   f"{_pen(stroke, fill)}" + (f">{_tip(item.tips, k)}</path>" if item.tips
                                               else "/>")
                   for k, (x, y) in enumerate(item.xy.tolist()))


def scene_svg(scene: Scene, *, css_class: str = "netctl-small-map") -> str:
    """``scene`` as one ``<svg>`` element (well-formed XML, no script; its only ids are
    the arrowheads' ``<marker>``\\ s, named after a hash of the links that use them)."""
    markers: list[str] = []
    body = "".join(_svg_item(i, markers) for i in scene.items)
    defs = "<defs>" + "".join(markers) + "</defs>" if markers else ""
    return (f'<svg xmlns="http://www.w3.org/2000/svg" class="{css_class}" '
            f'width="{scene.width:.0f}" height="{scene.height:.0f}" '
            f'viewBox="0 0 {scene.width:.0f} {scene.height:.0f}" role="img" '
            f'style="background:{scene.background}"><title>{_esc(scene.title)}</title>'
            f"{defs}{body}</svg>")
