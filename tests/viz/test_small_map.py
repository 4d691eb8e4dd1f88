"""The small map of the notebook view (``_repr_html_``): well-formed, in the right place,
safe with hostile names, capped in size, and absent (not broken) without a system.

Checks are against the inputs themselves: the node table's coordinates, the result's own
index arrays, and the XML parser of the standard library (``xml.etree``).
"""

from __future__ import annotations

import pickle
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

import netctl
import netctl.io as nio
from netctl import StructuredSystem
from netctl._hooks import RENDERERS
from netctl.structural import minimum_inputs as bare_minimum_inputs
from netctl.viz.small_map import SMALL_MAP_STATES, result_map_html

ROOT = Path(__file__).resolve().parents[2]
SVG = "{http://www.w3.org/2000/svg}"
HOSTILE = "<script>alert(1)</script>"


def _svg(text: str) -> ET.Element:
    """The one ``<svg>`` element of an HTML fragment, parsed as XML."""
    assert text.count("<svg") == 1, text[:300]
    start, end = text.index("<svg"), text.index("</svg>") + len("</svg>")
    return ET.fromstring(text[start:end])


def _marks(svg: ET.Element, key: str) -> list[ET.Element]:
    group = svg.find(f"{SVG}g[@class='marks']")
    assert group is not None
    return [p for p in group.iter(f"{SVG}path") if p.get("class") == f"mark {key}"]


def _where(el: ET.Element) -> tuple[float, float]:
    t = el.get("transform", "")
    assert t.startswith("translate(") and t.endswith(")"), t
    x, y = t[len("translate("):-1].split()
    return float(x), float(y)


def _title(el: ET.Element) -> str:
    t = el.find(f"{SVG}title")
    assert t is not None and t.text is not None
    return t.text


@pytest.fixture(scope="module")
def loop():
    """networks/heating_loop.csv: 12 states, 16 links, 2 disturbances (invented)."""
    return nio.read(ROOT / "networks" / "heating_loop.csv")


@pytest.fixture(scope="module")
def placed():
    """A random directed network of 60 states with random map coordinates."""
    rng = np.random.default_rng(7)
    n = 60
    pairs = np.unique(rng.integers(0, n, (150, 2)), axis=0)
    src, dst = pairs[:, 0], pairs[:, 1]
    x = rng.uniform(-3.0, 11.0, n)
    y = rng.uniform(40.0, 47.0, n)
    return StructuredSystem.from_edges(src, dst, n, nodes={"x": x, "y": y})


def test_every_result_of_the_package_root_draws_a_parseable_map(loop):
    from tests.test_tables import PRODUCERS

    for name, make in PRODUCERS.items():
        result = make(loop)
        if name == "RankTest":  # a sample inside a Verification: it keeps no system
            assert "<svg" not in result._repr_html_()
            continue
        page = result._repr_html_()
        svg = _svg(page)  # raises on malformed XML
        assert svg.tag == f"{SVG}svg", name
        states = svg.find(f"{SVG}g[@class='states']")
        assert states is not None and len(states) == result_system(result).n_states, name
        assert "<script" not in page.lower(), name


def result_system(result):
    from netctl.tables import system_of

    system = system_of(result)
    assert system is not None
    return system


def test_one_driver_mark_per_driver_at_the_coordinates(placed):
    result = netctl.minimum_inputs(placed)
    svg = _svg(result._repr_html_())
    names = placed.state_names
    x = np.asarray(placed.nodes["x"], float)
    y = np.asarray(placed.nodes["y"], float)
    # the plain state circles fix the map's scale and offset: px = a + k x, py = b - k y
    circles = list(svg.find(f"{SVG}g[@class='states']"))
    assert [_title(c) for c in circles] == list(names)
    cx = np.array([float(c.get("cx")) for c in circles])
    cy = np.array([float(c.get("cy")) for c in circles])
    k, a = np.polyfit(x, cx, 1)
    k2, b = np.polyfit(-y, cy, 1)
    assert k > 0 and k2 == pytest.approx(k, rel=1e-3)  # same scale both ways, y up
    np.testing.assert_allclose(cx, a + k * x, atol=0.06)
    np.testing.assert_allclose(cy, b - k2 * y, atol=0.06)
    marks = _marks(svg, "driver")
    assert len(marks) == result.drivers.size
    seen = {}
    for m in marks:
        name = _title(m).split(" \u2014 ")[0]
        seen[name] = _where(m)
    assert sorted(seen) == sorted(result.driver_names)
    for name, (px, py) in seen.items():
        i = names.index(name)
        assert px == pytest.approx(a + k * x[i], abs=0.06)
        assert py == pytest.approx(b - k2 * y[i], abs=0.06)


def test_marks_follow_the_result(loop):
    # sensors of a minimum sensor design point down; the controllability certificate's
    # inaccessible states, smallest fix and dilation each get their mark
    sensors = netctl.minimum_sensors(loop)
    svg = _svg(sensors._repr_html_())
    assert len(_marks(svg, "sensor")) == sensors.drivers.size
    assert not _marks(svg, "driver")
    report = netctl.controllability(loop.with_inputs(["fuel_valve"]))
    svg = _svg(report._repr_html_())
    assert {_title(m).split(" \u2014 ")[0] for m in _marks(svg, "unreached")} == set(
        report.names(report.inaccessible))
    assert len(_marks(svg, "suggested")) == report.fix.size
    assert report.dilation is not None
    assert len(_marks(svg, "dilation")) == report.dilation.states.size
    assert len(_marks(svg, "driver")) == 1  # the system's own input
    assert len(_marks(svg, "disturbed")) == loop.disturbed_states().size
    roles = netctl.link_roles(loop)
    svg = _svg(roles._repr_html_())
    crit = svg.find(f"{SVG}path[@class='critical_link']")
    assert (crit is not None) == bool(roles.critical.size)
    if crit is not None:
        assert crit.get("d").count("M") == roles.critical.size


def test_hostile_names_are_text_never_markup():
    names = [HOSTILE, 'a"b&c', "x\x01y", "plain"]
    s = StructuredSystem.from_edges([0, 1, 2], [1, 2, 3], 4, state_names=names)
    result = netctl.minimum_inputs(s)
    page = result._repr_html_()
    assert "<script" not in page.lower()
    svg = _svg(page)
    assert not [el for el in svg.iter() if el.tag.split("}")[-1].lower() == "script"]
    texts = [t.text for t in svg.iter(f"{SVG}text")]
    assert HOSTILE in texts and 'a"b&c' in texts
    assert "x\ufffdy" in texts  # a character XML forbids is replaced, not passed on
    driver = _marks(svg, "driver")
    assert _title(driver[0]).startswith(HOSTILE)


def test_large_systems_get_counts_not_a_drawing():
    n = SMALL_MAP_STATES + 1
    s = StructuredSystem.from_edges(np.arange(n - 1), np.arange(1, n), n)
    result = netctl.minimum_inputs(s)
    page = result._repr_html_()
    assert "<svg" not in page
    assert f"Map not drawn: {n:,} states" in page
    assert "driver node of this design: 1" in page
    # the caps are options of the renderer
    small = StructuredSystem.from_edges([0, 1, 2], [1, 2, 3], 4)
    r = netctl.minimum_inputs(small)
    assert "<svg" not in result_map_html(r, small, max_states=3)
    svg = _svg(result_map_html(r, small, max_links=2))
    assert svg.find(f"{SVG}path[@class='links']") is None
    assert svg.find(f"{SVG}g[@class='arrows']") is None
    assert len(_marks(svg, "driver")) == 1
    svg = _svg(result_map_html(r, small))  # a one-way path: every link has its head
    assert len(svg.find(f"{SVG}g[@class='arrows']")) == 3


def test_results_without_a_system_still_render(loop):
    bare = bare_minimum_inputs(loop)  # a subpackage function: no system kept
    page = bare._repr_html_()
    assert "<svg" not in page and "drivers" in page
    assert bare.with_system(loop) is bare
    _svg(bare._repr_html_())


def test_no_renderer_no_map(loop, monkeypatch):
    monkeypatch.delitem(RENDERERS, "result_map")
    page = netctl.minimum_inputs(loop)._repr_html_()
    assert "<svg" not in page and "netctl-map" not in page and "n_inputs" in page


def test_the_system_is_not_part_of_the_result(loop):
    from netctl.structural import summarize

    # NetworkSummary holds scalars only, so its dataclass == is usable
    assert netctl.summarize(loop) == summarize(loop)
    assert "<svg" in netctl.summarize(loop)._repr_html_()
    kept = netctl.minimum_inputs(loop)
    bare = bare_minimum_inputs(loop)
    assert kept.to_dict() == bare.to_dict()
    assert repr(kept) == repr(bare)
    back = pickle.loads(pickle.dumps(kept))
    assert back.to_dict() == kept.to_dict() and "<svg" not in back._repr_html_()
    assert len(pickle.dumps(kept)) == len(pickle.dumps(bare))
    # the wrapped public function still pickles by name (the executor sends it)
    assert pickle.loads(pickle.dumps(netctl.minimum_inputs)) is netctl.minimum_inputs


def test_self_loops_are_drawn_as_rings():
    """Self-dynamics are part of the model (DESIGN.md): the notebook map draws each
    self-loop as a ring around its state, as the static maps do, and names it in the
    legend; none is dropped silently."""
    s = StructuredSystem.from_named_edges(["a", "a", "b", "c"], ["a", "b", "c", "c"])
    svg = _svg(result_map_html(netctl.minimum_inputs(s), s))
    rings = [c for g in svg.iter(f"{SVG}g") if g.get("class") == "self_loops" for c in g]
    assert sorted(_title(c) for c in rings) == ["a \u2014 self-loop", "c \u2014 self-loop"]
    legend = svg.find(f"{SVG}g[@class='legend']")
    assert any((t.text or "").startswith("self-loop (self-dynamics) (2)")
               for t in legend.iter(f"{SVG}text"))
