"""``netctl map --out FILE.png`` paints the small map with Pillow up to the small map's
size (issue 15, goal 1): no matplotlib is loaded, and the picture is the SVG map's
drawing (the same primitives), so each mark sits where the SVG writer puts it, in its
colour of :mod:`netctl.viz.style`.

Checks are against things outside the PNG painter: two independent PNG readers (Pillow
and matplotlib's ``imread``), the SVG writer's own placement of every mark (read back
with the standard library's XML parser), the mark colours of style.py, and the width of
matplotlib's PNG of the same map at the same resolution. The driver of a path is its
head and the unreached states of a design are those no input reaches (Liu, Slotine &
Barabasi, Nature 473:167-173 (2011); Lin, IEEE TAC 19(3):201-208 (1974)).
"""

from __future__ import annotations

import io
import re
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from PIL import Image

from netctl import StructuredSystem
from netctl.cli import main
from netctl.viz import map_marks
from netctl.viz.map_svg import map_png, map_svg
from netctl.viz.style import INK, MARKS
from tests._probe import exit_and_modules

SVG = "{http://www.w3.org/2000/svg}"
DPI = 100.0


def _rgb(colour: str) -> np.ndarray:
    return np.array([int(colour[i:i + 2], 16) for i in (1, 3, 5)], dtype=int)


def _img(path) -> Image.Image:
    """The image in ``path``, read from its bytes (no file left open)."""
    return Image.open(io.BytesIO(path.read_bytes()))


def _pair(system, marks, pos, **kw):
    """The SVG map (parsed) and the PNG map (pixels) of the same drawing."""
    root = ET.fromstring(map_svg(system, marks, positions=pos, how="fr", **kw))
    png = map_png(system, marks, positions=pos, how="fr", dpi=DPI, **kw)
    assert png is not None, "Pillow with FreeType and DejaVu Sans are installed here"
    pixels = np.asarray(Image.open(io.BytesIO(png)).convert("RGB"), dtype=int)
    return root, pixels


def _scale(root: ET.Element, pixels: np.ndarray) -> float:
    return pixels.shape[1] / float(root.get("width"))


def _at(pixels: np.ndarray, f: float, x: float, y: float) -> np.ndarray:
    return pixels[int(round(y * f - 0.5)), int(round(x * f - 0.5))]


def _near(pixels: np.ndarray, f: float, x: float, y: float, r: float, colour: str,
          tol: int = 10) -> int:
    """How many pixels within ``r`` drawing units of ``(x, y)`` have ``colour``."""
    h, w = pixels.shape[:2]
    yy, xx = np.mgrid[0:h, 0:w]
    disc = np.hypot((xx + 0.5) / f - x, (yy + 0.5) / f - y) <= r
    diff = np.abs(pixels[disc] - _rgb(colour)).max(axis=1)
    return int(np.count_nonzero(diff <= tol))


def _placed_marks(root: ET.Element) -> list[tuple[str, float, float]]:
    """``(mark, x, y)`` of every point mark, in drawing order, as the SVG writer put it."""
    out = []
    for el in root.iter(f"{SVG}path"):
        cls = el.get("class") or ""
        if cls.startswith("mark "):
            x, y = map(float, re.fullmatch(r"translate\((\S+) (\S+)\)",
                                           el.get("transform")).groups())
            out.append((cls[5:], x, y))
    return out


#: a path with a driver at its head; a second path no input reaches (its head is the
#: smallest fix); a two-state cycle with a self-loop; node roles on
FAILING = [("a", "b"), ("b", "c"), ("d", "e"), ("f", "g"), ("g", "f"), ("g", "g")]


@pytest.mark.parametrize("options", [{"inputs": ["a"]}, {"show": ["roles"]}],
                         ids=["given-inputs", "roles"])
def test_every_mark_has_its_colour_where_the_svg_puts_it(options):
    s = StructuredSystem.from_named_edges([u for u, _ in FAILING], [v for _, v in FAILING])
    marks = map_marks(s, **options)
    pos = np.random.default_rng(5).random((s.n_states, 2))
    root, pixels = _pair(s, marks, pos)
    f = _scale(root, pixels)
    placed = _placed_marks(root)
    kinds = {k for k, _, _ in placed}
    if "inputs" in options:  # Lin (1974): d and e are not reached from the input on a
        assert {"driver", "unreached", "suggested"} <= kinds
    else:
        assert {"driver", "role_critical"} <= kinds or {"driver", "role_intermittent"} <= kinds
    top = {}
    for key, x, y in placed:
        top[(x, y)] = key  # the last mark drawn at a place is on top
        mk = MARKS[key]
        colour = mk.face if mk.face != "none" else mk.edge
        assert _near(pixels, f, x, y, 9.0, colour) >= 4, (key, x, y)
    for (x, y), key in top.items():
        mk = MARKS[key]
        if key == "unreached":  # its cross hatch crosses the centre, its fill beside it
            assert np.abs(_at(pixels, f, x, y) - _rgb(mk.edge)).max() <= 3
            assert np.abs(_at(pixels, f, x, y - 2.5) - _rgb(mk.face)).max() <= 3
        elif mk.face != "none":
            assert np.abs(_at(pixels, f, x, y) - _rgb(mk.face)).max() <= 3, key
    # plain states: the state circle's fill at its centre
    for c in next(g for g in root.iter(f"{SVG}g") if g.get("class") == "states"):
        x, y = float(c.get("cx")), float(c.get("cy"))
        if all(np.hypot(x - a, y - b) > 0.2 for a, b in top):
            assert np.abs(_at(pixels, f, x, y) - _rgb(MARKS["state"].face)).max() <= 3


def test_title_legend_and_names_are_written_and_the_rest_is_paper():
    s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"])
    marks = map_marks(s)
    root, pixels = _pair(s, marks, np.array([[0.0, 0], [1, 0.5], [2, 0]]))
    f = _scale(root, pixels)
    dark = np.abs(pixels - _rgb(INK)).max(axis=2) <= 40
    lines = [(g.get("class"), float(t.get("x")), float(t.get("y")))
             for g in root.iter(f"{SVG}g") if g.get("class") in ("title", "legend", "labels")
             for t in g.iter(f"{SVG}text") if t.get("fill") is None]
    assert {c for c, _, _ in lines} == {"title", "legend", "labels"}
    for cls, x, y in lines:  # ink on the line's baseline band, just right of its start
        band = dark[int((y - 7) * f):int((y + 1) * f), int(x * f):int((x + 40) * f)]
        assert band.sum() >= 20, (cls, x, y)
    # between the title and the map, right of the last state, nothing is drawn
    (title,) = [g for g in root.iter(f"{SVG}g") if g.get("class") == "title"]
    below = max(float(t.get("y")) for t in title) + 4
    assert (pixels[int(below * f):int((below + 8) * f), int(300 * f):] == 255).all()


def test_cli_png_decodes_with_two_readers_at_matplotlibs_width(tmp_path, capsys):
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.image import imread

    from netctl.io import read
    from netctl.viz import save_figure
    from netctl.viz.network import _default_title, map_figure

    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out, svg = tmp_path / "m.png", tmp_path / "m.svg"
    assert main(["map", str(f), "--out", str(out), "--dpi", "80"]) == 0
    assert main(["map", str(f), "--out", str(svg)]) == 0
    capsys.readouterr()
    im = _img(out)
    im.load()  # decodes every pixel (checks the CRCs and the deflate stream)
    assert im.format == "PNG" and im.mode == "RGB"
    assert im.info["dpi"] == pytest.approx((80, 80), abs=0.01)
    arr = imread(str(out))  # matplotlib's reader
    assert arr.shape == (im.height, im.width, 3)
    # as wide as matplotlib's map of the same network at the same resolution
    s = read(f)
    marks = map_marks(s)
    pos = np.random.default_rng(0).random((3, 2))
    ref = tmp_path / "ref.png"
    save_figure(map_figure(s, marks, positions=pos, title=_default_title(s, marks, "fr")),
                ref, dpi=80)
    assert im.width == _img(ref).width
    # as high as the SVG's drawing, at that width
    root = ET.parse(svg).getroot()
    w, h = float(root.get("width")), float(root.get("height"))
    assert im.height == round(h * im.width / w)
    # the driver of a path is its head (Liu et al. 2011): vermilion where the SVG puts it
    ((_, x, y),) = [m for m in _placed_marks(root) if m[0] == "driver"]
    px = np.asarray(im, dtype=int)
    assert np.abs(_at(px, im.width / w, x, y) - _rgb(MARKS["driver"].face)).max() <= 3


def test_the_same_map_gives_the_same_bytes(tmp_path, capsys):
    f = tmp_path / "loop.csv"
    f.write_text("a,b\nb,c\nc,a\nc,d\nd,d\n")
    outs = [tmp_path / "1.png", tmp_path / "2.png"]
    for out in outs:
        assert main(["map", str(f), "--out", str(out)]) == 0
    capsys.readouterr()
    first, second = (o.read_bytes() for o in outs)
    assert first == second
    chunks = set(re.findall(rb"[a-zA-Z]{4}", first[8:40]))  # no tIME, no text chunks
    assert b"tIME" not in first and b"tEXt" not in first and b"IHDR" in chunks


@pytest.mark.parametrize("names", [
    ["<script>&amp;", "na\u00efve \u2603 \u6771\u4eac", "tab\there"],
    ["line\nbreak", "nul\x00byte", "\ud800lone", "   "],
], ids=["markup-and-unicode", "control-characters"])
def test_odd_names_are_painted_on_one_line_without_error(names):
    """Names are text on one line, white space folded as in the SVG (XML's rule)."""
    s = StructuredSystem.from_named_edges(names[:-1], names[1:])
    pos = np.c_[np.zeros(s.n_states), -np.arange(s.n_states, dtype=float)]  # a column
    root, pixels = _pair(s, map_marks(s), pos, labels=True)
    f = _scale(root, pixels)
    assert pixels.shape[1] == round(12.2 * DPI)
    ink = np.abs(pixels - _rgb(INK)).max(axis=2) <= 60
    (labels,) = [g for g in root.iter(f"{SVG}g") if g.get("class") == "labels"]
    for t in labels:
        x, y = float(t.get("x")), float(t.get("y"))
        if (t.text or "").strip():
            assert ink[int((y - 7) * f):int((y + 1) * f), int(x * f):int((x + 40) * f)].any()
        # nothing on a second line below it
        assert not ink[int((y + 4) * f):int((y + 12) * f),
                       int((x + 2) * f):int((x + 60) * f)].any(), t.text


def test_links_and_their_arrowheads_are_painted_where_the_svg_draws_them():
    """The control path a -> b -> c (a maximum matching; Liu et al. 2011) and the
    unmatched link a -> c: each line at its midpoint in its colour at the SVG's
    opacity over what is under it (the paper; a control link is drawn over its plain
    link), each head near its tip in its colour at its opacity (SVG
    compositing: a over b is a * colour + (1 - a) * b)."""
    s = StructuredSystem.from_named_edges(["a", "b", "a"], ["b", "c", "c"])
    pos = np.array([[0.0, 0.0], [1.0, 1.0], [2.0, 0.0]])
    root, pixels = _pair(s, map_marks(s), pos)
    f = _scale(root, pixels)
    white = _rgb("#FFFFFF")
    groups = [g for g in root.iter(f"{SVG}g") if g.get("class") in ("chain", "arrows")]
    matched = {p.get("d") for g in groups if g.get("class") == "chain" for p in g}
    (plain,) = [g for g in groups if g.get("class") == "arrows"]
    a = float(plain.get("stroke-opacity"))
    link = a * _rgb(plain.get("stroke")) + (1 - a) * white  # under every control link
    seen = 0
    for g in groups:
        colour, alpha = _rgb(g.get("stroke")), float(g.get("stroke-opacity"))
        mid = g.get("marker-end")[5:-1]
        (marker,) = [m for m in root.iter(f"{SVG}marker") if m.get("id") == mid]
        head = next(iter(marker))
        size = float(marker.get("markerWidth"))
        for p in g:
            if g.get("class") == "arrows" and p.get("d") in matched:
                continue  # drawn over by the control path
            x0, y0, x1, y1 = map(float, re.findall(r"-?[\d.]+", p.get("d")))
            under = link if g.get("class") == "chain" else white
            line = alpha * colour + (1 - alpha) * under
            got = _at(pixels, f, (x0 + x1) / 2, (y0 + y1) / 2)
            assert np.abs(got - line).max() <= 6, (g.get("class"), got, line)
            u = np.array([x1 - x0, y1 - y0]) / np.hypot(x1 - x0, y1 - y0)
            hx, hy = np.array([x1, y1]) - 0.3 * size * u  # inside the head
            a = float(head.get("fill-opacity"))
            tip = a * _rgb(head.get("fill")) + (1 - a) * line
            assert np.abs(_at(pixels, f, hx, hy) - tip).max() <= 6, g.get("class")
            seen += 1
    assert seen == 3


def _count_matplotlib_maps(monkeypatch) -> list[int]:
    import netctl.viz.network as network

    calls: list[int] = []
    real = network.map_figure

    def counted(*args, **kwargs):
        calls.append(1)
        return real(*args, **kwargs)

    monkeypatch.setattr(network, "map_figure", counted)
    return calls


def test_above_the_small_map_size_matplotlib_draws_the_png(tmp_path, capsys, monkeypatch):
    import netctl.viz.small_map as small_map

    calls = _count_matplotlib_maps(monkeypatch)
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "m.png"
    monkeypatch.setattr(small_map, "SMALL_MAP_STATES", 2)
    assert main(["map", str(f), "--out", str(out)]) == 0
    assert calls == [1] and _img(out).mode == "RGBA"  # matplotlib's Agg canvas
    monkeypatch.setattr(small_map, "SMALL_MAP_STATES", 3)
    assert main(["map", str(f), "--out", str(out)]) == 0
    assert calls == [1] and _img(out).mode == "RGB"
    capsys.readouterr()


def test_without_the_font_matplotlib_draws_the_png(tmp_path, capsys, monkeypatch):
    import netctl.viz.scene_png as scene_png

    calls = _count_matplotlib_maps(monkeypatch)
    monkeypatch.setattr(scene_png, "font_file", lambda: None)
    assert not scene_png.can_paint()
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "m.png"
    assert main(["map", str(f), "--out", str(out)]) == 0
    capsys.readouterr()
    assert calls == [1] and _img(out).format == "PNG"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.png", "two.csv"]


def test_the_font_is_found_without_importing_matplotlib():
    code = ("import sys\nfrom netctl.viz.scene_png import font_file, can_paint\n"
            "print(font_file() is not None, can_paint(), 'matplotlib' in sys.modules)")
    import subprocess
    import sys

    from tests._probe import ROOT

    r = subprocess.run([sys.executable, "-c", f"import sys; sys.path.insert(0, "
                        f"{str(ROOT)!r})\n{code}"], capture_output=True, text=True,
                       timeout=120, cwd=ROOT)
    assert r.stdout.split() == ["True", "True", "False"], r.stderr


def test_a_small_png_map_loads_no_matplotlib(tmp_path):
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "m.png"
    assert exit_and_modules(["map", str(f), "--out", str(out)], ("matplotlib",)) == (0, [])
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
