"""Paint the small map's drawing primitives (:mod:`netctl.viz.scene`) into a PNG, with
Pillow and no matplotlib.

:func:`scene_png` draws every primitive of a :class:`~netctl.viz.scene.Scene` where its
SVG (:func:`~netctl.viz.scene.scene_svg`) puts it, in the same colours, widths, dash
patterns, opacities and arrowheads, with the text in DejaVu Sans (the font matplotlib
ships, found in its package data without importing it). Anti-aliasing: the scene is
painted at 2 to 4 times the pixel size and reduced by averaging each block of pixels
(a box filter: each pixel gets the share of it each mark covers); the text is
written at the final size, anti-aliased by FreeType. The file holds no
time stamp and no text chunk, only the size, colours and resolution: the same scene
gives the same bytes.
"""

from __future__ import annotations

import importlib.util
import os
import re
import struct
import zlib
from typing import Any

import numpy as np

from netctl.viz.scene import (Circles, Group, Item, Scene, Segments, Shapes, Stroke, Text,
                              head_polygons, mark_paint, outline)
from netctl.viz.style import MARKS

__all__ = ["can_paint", "font_file", "scene_png"]

#: The supersampled canvases are kept below this many pixels (Pillow: 4 bytes each).
_CANVAS_PIXELS = 48_000_000
#: Points on a circle drawn as a polygon (dashed rings and outlines).
_CIRCLE_POINTS = 72
#: zlib's level for the pixels: 3 is about as fast as 1 here and nearly as small as 6.
_DEFLATE_LEVEL = 3
_XML_SPACE = re.compile(r"[ \t\n\r]+")


def font_file() -> str | None:
    """DejaVu Sans from matplotlib's package data, found without importing matplotlib;
    ``None`` when it is not there."""
    try:
        spec = importlib.util.find_spec("matplotlib")
    except (ImportError, ValueError):  # pragma: no cover - a broken installation
        return None
    for base in (spec.submodule_search_locations or ()) if spec is not None else ():
        path = os.path.join(base, "mpl-data", "fonts", "ttf", "DejaVuSans.ttf")
        if os.path.isfile(path):
            return path
    return None


def _font_loader() -> Any:
    """A function ``size -> font`` (Pillow, FreeType, DejaVu Sans), or ``None`` when
    Pillow, its FreeType support or the font is missing."""
    path = font_file()
    if path is None:
        return None
    try:
        from PIL import ImageFont

        basic = ImageFont.Layout.BASIC
        ImageFont.truetype(path, 10, layout_engine=basic)
    except (ImportError, OSError, AttributeError):
        return None
    cache: dict[int, Any] = {}

    def load(size: int) -> Any:
        if size not in cache:
            cache[size] = ImageFont.truetype(path, size, layout_engine=basic)
        return cache[size]

    return load


def can_paint() -> bool:
    """Whether :func:`scene_png` can draw here (Pillow with FreeType, and the font)."""
    return _font_loader() is not None


def scene_png(scene: Scene, *, width: int, dpi: float) -> bytes | None:
    """``scene`` as PNG bytes ``width`` pixels wide (the height keeps the scene's aspect),
    with ``dpi`` as its resolution; ``None`` when it cannot be drawn here (no Pillow,
    no FreeType, no font: the caller draws another way).

    Notes
    -----
    The drawing (all but the text) is painted at ``k`` times the size (``k`` = 4 up to
    1000 pixels wide, 3 up to 1400, else 2; less where the canvases would pass 48
    million pixels), only over the boxes it covers (the map, the legend's samples), and
    reduced by box averaging; text is written afterwards at the final size (FreeType
    anti-aliases it). Opacities are those of the SVG; each straight piece of a line is
    blended on its own, so where two see-through links cross the crossing is darker (in
    the SVG too, except for links of one ``<path>``). Cost: linear in the primitives
    and the pixels.
    """
    fonts = _font_loader()
    if fonts is None:
        return None
    from PIL import Image, ImageDraw

    w_units, h_units = float(f"{scene.width:.0f}"), float(f"{scene.height:.0f}")
    height = max(1, round(h_units * width / w_units))
    s = width / w_units  # pixels per drawing unit
    boxes = _boxes(scene.items, s, width, height)
    area = sum((x1 - x0) * (y1 - y0) for (x0, y0, x1, y1), _ in boxes)
    k = 4 if width <= 1000 else 3 if width <= 1400 else 2
    while k > 1 and area * k * k > _CANVAS_PIXELS:
        k -= 1
    background = _rgb(scene.background)
    im = Image.new("RGB", (width, height), background)
    # the drawing (not the text) at k times the size, box by box, averaged down
    for (x0, y0, x1, y1), items in boxes:
        canvas = Image.new("RGB", ((x1 - x0) * k, (y1 - y0) * k), background)
        painter = _Painter(canvas, ImageDraw, s * k, (x0 * k, y0 * k))
        for item in items:
            painter.item(item)
        im.paste(canvas.reduce(k) if k > 1 else canvas, (x0, y0))
    # text last, at the final size (FreeType anti-aliases it): in the scene, nothing is
    # drawn over a title, a name or the legend's text
    draw = ImageDraw.Draw(im)
    texts: list[tuple[float, float, str, float, str]] = []
    for item in scene.items:
        _texts(item, 10.0, "#000000", texts)
    for x, y, text, size, colour in texts:
        draw.text((x * s, y * s), text, fill=_rgb(colour),
                  font=fonts(max(1, round(size * s))), anchor="ls")
    return _png(im.tobytes(), im.width, im.height, dpi)


def _texts(item: Item, size: float, fill: str,
           out: list[tuple[float, float, str, float, str]]) -> None:
    """Collect the text of ``item``: (x, y, text, size, colour), white space folded as
    XML folds it."""
    if isinstance(item, Group):
        for sub in item.items:
            _texts(sub, item.size or size, item.fill or fill, out)
    elif isinstance(item, Text):
        text = _XML_SPACE.sub(" ", item.text).strip()
        if text:
            out.append((item.x, item.y, text, size, item.fill or fill))


def _extent(item: Item) -> tuple[np.ndarray, np.ndarray] | None:
    """The box (drawing units) the drawing of ``item`` (its text left out) stays in."""
    if isinstance(item, Group):
        boxes = [b for b in (_extent(i) for i in item.items) if b is not None]
        if not boxes:
            return None
        return (np.min([b[0] for b in boxes], axis=0), np.max([b[1] for b in boxes], axis=0))
    if isinstance(item, Text):
        return None
    xy = np.asarray(item.xy, np.float64)
    if not xy.size:
        return None
    if isinstance(item, Segments):
        pts = xy.reshape(-1, 2)
        pad = item.stroke.width + (item.head.size if item.head is not None else 0.0)
    elif isinstance(item, Circles):
        pts, pad = xy.reshape(-1, 2), item.r + item.stroke.width
    else:  # Shapes
        pts, pad = xy.reshape(-1, 2), 1.2 * item.r + mark_paint(MARKS[item.key])[1].width
    return pts.min(axis=0) - pad, pts.max(axis=0) + pad


def _boxes(items: tuple[Item, ...], s: float, width: int, height: int
           ) -> list[tuple[tuple[int, int, int, int], list[Item]]]:
    """Pixel boxes of the final picture that hold the drawing (text left out), each with
    the items drawn in it; overlapping boxes merged."""
    found: list[tuple[list[int], list[Item]]] = []
    for item in items:
        ext = _extent(item)
        if ext is None:
            continue
        lo, hi = ext
        box = [max(int(np.floor(lo[0] * s)) - 2, 0), max(int(np.floor(lo[1] * s)) - 2, 0),
               min(int(np.ceil(hi[0] * s)) + 2, width), min(int(np.ceil(hi[1] * s)) + 2,
                                                            height)]
        if box[2] > box[0] and box[3] > box[1]:
            found.append((box, [item]))
    merged = True
    while merged:
        merged = False
        for i in range(len(found)):
            for j in range(i + 1, len(found)):
                a, b = found[i][0], found[j][0]
                if a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]:
                    box = [min(a[0], b[0]), min(a[1], b[1]), max(a[2], b[2]), max(a[3], b[3])]
                    # keep the drawing order of the scene
                    found[i] = (box, sorted(found[i][1] + found[j][1], key=items.index))
                    del found[j]
                    merged = True
                    break
            if merged:
                break
    return [((a[0], a[1], a[2], a[3]), its) for a, its in found]


def _png(data: bytes, w: int, h: int, dpi: float) -> bytes:
    """RGB pixels (``h`` rows of ``w``, 3 bytes each) as PNG bytes (ISO/IEC 15948):
    8-bit truecolour, the resolution ``dpi`` (pHYs), no time stamp, no text; rows
    unfiltered (filter type 0) and deflated by zlib. Pillow's encoder tries every row filter on each row, which
    took about twice as long on these mostly-white pictures."""
    pack = zlib.compressobj(_DEFLATE_LEVEL)
    stride = 3 * w
    idat = [pack.compress(b"\x00" + data[r * stride:(r + 1) * stride])  # 0: no filter
            for r in range(h)]
    idat.append(pack.flush())
    per_metre = max(1, round(dpi / 0.0254))

    def chunk(tag: bytes, data: bytes) -> bytes:
        return (struct.pack(">I", len(data)) + tag + data
                + struct.pack(">I", zlib.crc32(tag + data) & 0xFFFFFFFF))

    return (b"\x89PNG\r\n\x1a\n"
            + chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, 8, 2, 0, 0, 0))
            + chunk(b"pHYs", struct.pack(">IIB", per_metre, per_metre, 1))
            + chunk(b"IDAT", b"".join(idat))
            + chunk(b"IEND", b""))


def _rgb(colour: str) -> tuple[int, int, int]:
    c = colour.lstrip("#")
    return int(c[0:2], 16), int(c[2:4], 16), int(c[4:6], 16)


def _dashes(pts: np.ndarray, pattern: tuple[float, ...]) -> list[np.ndarray]:
    """The dashes of the polyline ``pts`` (m, 2) under ``pattern`` (on, off, ...), the
    pattern starting at its first point, as SVG's ``stroke-dasharray`` does."""
    if not pattern or sum(pattern) <= 0:
        return [pts]
    step = np.hypot(*np.diff(pts, axis=0).T)
    along = np.r_[0.0, np.cumsum(step)]
    total = float(along[-1])
    out: list[np.ndarray] = []
    pos, j = 0.0, 0
    while pos < total:
        length = pattern[j % len(pattern)]
        if j % 2 == 0 and length > 0:
            a, b = pos, min(pos + length, total)
            inner = (along > a) & (along < b)
            ends = np.array([np.interp(a, along, pts[:, 0]), np.interp(a, along, pts[:, 1]),
                             np.interp(b, along, pts[:, 0]), np.interp(b, along, pts[:, 1])])
            out.append(np.vstack([ends[:2], pts[inner], ends[2:]]))
        pos += length
        j += 1
    return out


def _thick(piece: np.ndarray, width: float, round_caps: bool) -> list[tuple[float, float]]:
    """The outline of the straight piece ``piece`` (2, 2) stroked ``width`` wide: a
    rectangle, or with round caps a rectangle with a half disc at each end."""
    (x0, y0), (x1, y1) = piece.tolist()
    dx, dy = x1 - x0, y1 - y0
    length = float(np.hypot(dx, dy))
    ux, uy = (dx / length, dy / length) if length > 0 else (1.0, 0.0)
    h = width / 2
    if not round_caps:
        nx, ny = -uy * h, ux * h
        return [(x0 + nx, y0 + ny), (x1 + nx, y1 + ny), (x1 - nx, y1 - ny), (x0 - nx, y0 - ny)]
    a0 = np.arctan2(uy, ux) + np.pi / 2
    half = a0 + np.linspace(0.0, np.pi, 9)  # from the left side round the start
    start = [(x0 + h * np.cos(t), y0 + h * np.sin(t)) for t in half.tolist()]
    end = [(x1 + h * np.cos(t + np.pi), y1 + h * np.sin(t + np.pi)) for t in half.tolist()]
    return start + end


def _ring(x: float, y: float, r: float) -> np.ndarray:
    """A circle as a closed polygon, starting (as the SVG's arcs do) at its left."""
    a = np.pi + np.linspace(0.0, 2 * np.pi, _CIRCLE_POINTS + 1)
    return np.c_[x + r * np.cos(a), y - r * np.sin(a)]


class _Painter:
    """Paints primitives (not their text) on ``im`` at ``scale`` pixels per drawing
    unit, ``origin`` (pixels) at its top left."""

    def __init__(self, im: Any, draw_module: Any, scale: float,
                 origin: tuple[float, float]) -> None:
        self.draw = draw_module.Draw(im)
        self.blend = draw_module.Draw(im, "RGBA")  # blends see-through ink
        self.s = scale
        self.o = np.array(origin, np.float64)  # the canvas's top left, in pixels

    # -- lines: straight pieces as polygons, blended when see-through
    def _lines(self, lines: list[np.ndarray], stroke: Stroke, colour: str | None = None,
               opacity: float | None = None) -> None:
        """Stroke ``lines`` (pixel polylines: straight pieces, or closed outlines drawn
        opaque) in ``colour`` at ``opacity`` (default: the stroke's)."""
        colour = colour or stroke.colour
        opacity = stroke.opacity if opacity is None else opacity
        if colour == "none" or opacity <= 0:
            return
        draw, ink = self._ink(colour, opacity)
        width = max(stroke.width * self.s, 1.0)
        dash = tuple(d * self.s for d in stroke.dash)
        for line in lines:
            for piece in _dashes(line, dash):
                if len(piece) == 2:
                    draw.polygon(_thick(piece, width, stroke.round_caps), fill=ink)
                elif len(piece) > 2:
                    draw.line([tuple(p) for p in piece.tolist()], fill=ink,
                              width=round(width), joint="curve")

    def _ink(self, colour: str, opacity: float) -> tuple[Any, Any]:
        """The draw object and ink for ``colour`` at ``opacity`` (blended below 1)."""
        if opacity >= 1.0:
            return self.draw, _rgb(colour)
        return self.blend, _rgb(colour) + (round(255 * opacity),)

    # -- one primitive
    def item(self, item: Item) -> None:
        s, o = self.s, self.o
        if isinstance(item, Group):
            for sub in item.items:
                self.item(sub)
        elif isinstance(item, Text):  # written afterwards, at the final size
            pass
        elif isinstance(item, Segments):
            xy = np.asarray(item.xy, np.float64).reshape(-1, 4)
            self._lines([seg.reshape(2, 2) * s - o for seg in xy], item.stroke)
            if item.head is not None and xy.size:
                draw, ink = self._ink(item.head.colour, item.head.opacity)
                for tri in (head_polygons(xy, item.head.size) * s - o).tolist():
                    draw.polygon([tuple(p) for p in tri], fill=ink)
        elif isinstance(item, Circles):
            for x, y in np.asarray(item.xy, np.float64).reshape(-1, 2).tolist():
                self._circle(x, y, item.r, item.fill, item.stroke)
        else:  # Shapes
            fill_c, stroke = mark_paint(MARKS[item.key])
            paths = outline(MARKS[item.key].marker, item.r)
            for x, y in np.asarray(item.xy, np.float64).reshape(-1, 2).tolist():
                if paths is None:
                    self._circle(x, y, item.r, fill_c, stroke)
                    continue
                placed = [((pts + (x, y)) * s - o, closed) for pts, closed in paths]
                if fill_c != "none":
                    for pts, closed in placed:
                        if closed:
                            self.draw.polygon([tuple(p) for p in pts.tolist()],
                                              fill=_rgb(fill_c))
                self._lines([np.vstack([pts, pts[:1]]) if closed else pts
                             for pts, closed in placed], stroke)

    def _circle(self, x: float, y: float, r: float, fill: str, stroke: Stroke) -> None:
        s = self.s
        cx, cy, rr = x * s - self.o[0], y * s - self.o[1], r * s
        if fill != "none":
            self.draw.ellipse((cx - rr, cy - rr, cx + rr, cy + rr), fill=_rgb(fill))
        if stroke.colour == "none" or stroke.width <= 0:
            return
        if stroke.dash or stroke.opacity < 1.0:
            self._lines([_ring(x, y, r) * s - self.o], stroke)
            return
        h = stroke.width * s / 2  # Pillow strokes inside the box: centre it on the circle
        self.draw.ellipse((cx - rr - h, cy - rr - h, cx + rr + h, cy + rr + h),
                          outline=_rgb(stroke.colour), width=max(1, round(2 * h)))
