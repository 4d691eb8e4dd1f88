"""The roles chart as netctl's own SVG: the same shares and styles as matplotlib's
chart of the same counts (:func:`netctl.viz.plot_role_composition`, the reference),
well-formed XML, escaped names, refused bad input."""

from __future__ import annotations

import xml.etree.ElementTree as ET

import matplotlib
import numpy as np
import pytest

from netctl.errors import OptionError
from netctl.viz import plot_role_composition
from netctl.viz.role_bars import role_bars_svg
from netctl.viz.style import MARKS

matplotlib.use("Agg")

SVG = "{http://www.w3.org/2000/svg}"
ROLES = ("critical", "intermittent", "redundant")
STYLES = ("role_critical", "role_intermittent", "role_redundant")


def _segments(svg: ET.Element) -> list[dict[str, float]]:
    rows = [g for g in svg.iter(f"{SVG}g") if g.get("class") == "row"]
    return [{r.get("class").split()[1]: float(r.get("width"))
             for r in row.iter(f"{SVG}rect") if (r.get("class") or "").startswith("share ")}
            for row in rows]


@pytest.mark.parametrize("counts", [(2, 5, 13), (1, 0, 2), (0, 0, 7), (3, 3, 3), (1, 998, 1)])
def test_shares_match_matplotlibs_chart(counts):
    """Segment widths over the bar's width equal the bar widths matplotlib draws for
    the same counts (the PNG the report embeds for Markdown)."""
    import matplotlib.pyplot as plt

    ax = plot_role_composition({"states": list(counts)})
    reference = [float(p.get_width()) for p in ax.patches]
    plt.close(ax.figure)
    svg = ET.fromstring(role_bars_svg({"states": (ROLES, counts)}))
    frame = next(r for r in svg.iter(f"{SVG}rect") if r.get("class") == "frame")
    (seg,) = _segments(svg)
    got = [seg.get(k, 0.0) / float(frame.get("width")) for k in STYLES]
    np.testing.assert_allclose(got, reference, atol=1e-4)
    # written shares: every segment of at least 6 %, as the PNG chart writes them
    written = [t.text for t in svg.iter(f"{SVG}text") if t.get("class") == "written"]
    assert written == [f"{r:.0%}" for r in reference if r >= 0.06]


def test_styles_are_the_role_marks_of_the_maps():
    svg_text = role_bars_svg({"links": (("critical", "ordinary", "redundant"), (1, 1, 1))})
    svg = ET.fromstring(svg_text)
    rects = {r.get("class"): r for r in svg.iter(f"{SVG}rect")
             if (r.get("class") or "").startswith("share ")}
    assert rects["share role_critical"].get("fill") == MARKS["role_critical"].face
    assert rects["share role_redundant"].get("fill") == MARKS["role_redundant"].face
    # the dotted fill: a pattern defined in the chart itself, dots in the mark's colour
    ref = rects["share role_intermittent"].get("fill")
    pid = ref[len("url(#"):-1]
    (pattern,) = [p for p in svg.iter(f"{SVG}pattern") if p.get("id") == pid]
    assert pattern.find(f"{SVG}circle").get("fill") == MARKS["role_intermittent"].edge
    legend = " ".join(t.text for t in svg.iter(f"{SVG}text"))
    assert "ordinary (1)" in legend and "intermittent" not in legend


def test_names_are_escaped_and_no_script():
    evil = "<script>alert(1)</script>"
    svg_text = role_bars_svg({evil: ((evil, "b\x00", 'q"&'), (1, 2, 3))})
    assert evil not in svg_text and "\x00" not in svg_text
    svg = ET.fromstring(svg_text)
    texts = [t.text for t in svg.iter(f"{SVG}text")]
    assert evil in texts and f"{evil} (1)" in texts and 'q"& (3)' in texts
    assert not any(e.tag.endswith("script") for e in svg.iter())
    ids = [e.get("id") for e in svg.iter() if e.get("id")]
    assert len(ids) == 1 and ids[0].startswith("netctl-dots-")


def test_an_empty_row_says_none():
    svg = ET.fromstring(role_bars_svg({"links": (("critical", "ordinary", "redundant"),
                                                 (0, 0, 0))}))
    assert _segments(svg) == [{}]
    assert "none" in [t.text for t in svg.iter(f"{SVG}text")]


@pytest.mark.parametrize("rows, match", [
    ({}, "at least one row"),
    ({"s": (ROLES, (1, 2))}, "needs 3 role names and 3 counts"),
    ({"s": (ROLES[:2], (1, 2, 3))}, "needs 3 role names"),
    ({"s": (ROLES, (1, -2, 3))}, "non-negative"),
    ({"s": (ROLES, (1, float("nan"), 3))}, "non-negative"),
])
def test_bad_rows_are_refused(rows, match):
    with pytest.raises(OptionError, match=match):
        role_bars_svg(rows)
