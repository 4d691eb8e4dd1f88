"""``netctl map --out FILE.svg`` draws with netctl's own SVG writer up to the small map's
size (issue 15, goal 1): no matplotlib is loaded, and the file holds what matplotlib's map
holds: every state, the driver nodes, the trouble spots, the control paths with their
direction, the names, the title and the legend with its counts.

Checks are against things outside the SVG writer: the standard library's XML parser,
matplotlib's map of the same marks (its legend and title), networkx's maximum matching
(the control links of a minimum design are a maximum matching; Liu, Slotine & Barabási,
Nature 473:167-173 (2011)) and the published minimum-input results for a star and a
path (the same paper: a star of k leaves needs k driver nodes; a path one, its head).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from pathlib import Path

import networkx as nx
import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.cli import main
from netctl.io import read
from netctl.viz import map_marks
from netctl.viz.map_svg import map_svg
from tests._probe import exit_and_modules

ROOT = Path(__file__).resolve().parents[2]
SVG = "{http://www.w3.org/2000/svg}"


def _classed(root: ET.Element, cls: str) -> list[ET.Element]:
    return [e for e in root.iter() if (e.get("class") or "") == cls]


def _named(root: ET.Element, cls: str) -> list[str]:
    """The state names of the marks of class ``mark CLS`` (from their tooltips)."""
    return sorted(p.find(f"{SVG}title").text.split(" \u2014 ")[0]
                  for p in _classed(root, f"mark {cls}"))


def _legend(root: ET.Element) -> list[str]:
    (group,) = _classed(root, "legend")
    return [t.text for t in group.iter(f"{SVG}text")]


def _matching_size(system: StructuredSystem) -> int:
    src, dst = system.edges()
    g = nx.Graph()
    tops = [f"out{u}" for u in range(system.n_states)]
    g.add_nodes_from(tops, bipartite=0)
    g.add_nodes_from((f"in{v}" for v in range(system.n_states)), bipartite=1)
    g.add_edges_from((f"out{u}", f"in{v}") for u, v in zip(src.tolist(), dst.tolist()))
    return len(nx.bipartite.hopcroft_karp_matching(g, top_nodes=tops)) // 2


#: (file or edges, map options): a plant with roles and critical links; a failing design
#: with a dilation, unreached states, a two-state cycle and self-loops; a grid whose
#: critical links are branches (its own legend row)
CASES = [
    pytest.param("heating_loop.toml", {"show": ["roles", "critical-links"]}, id="plant"),
    pytest.param([("a", "b"), ("a", "c"), ("a", "d"), ("d", "e"), ("e", "e"), ("f", "g"),
                  ("g", "f"), ("h", "h")], {"inputs": ["e"]}, id="failing-design"),
    pytest.param("island_grid.m", {"show": ["critical-links"]}, id="grid"),
]


def _system(source):
    if isinstance(source, str):
        return read(ROOT / "networks" / source)
    return StructuredSystem.from_named_edges([u for u, _ in source], [v for _, v in source])


@pytest.mark.parametrize("source, options", CASES)
def test_same_legend_title_and_marks_as_the_matplotlib_map(source, options):
    import matplotlib

    matplotlib.use("Agg")
    from netctl.viz.network import _default_title, map_figure

    s = _system(source)
    marks = map_marks(s, **options)
    pos = np.random.default_rng(3).random((s.n_states, 2))
    root = ET.fromstring(map_svg(s, marks, positions=pos, how="fr"))
    fig = map_figure(s, marks, positions=pos, title=_default_title(s, marks, "fr"))
    (leg,) = fig.legends
    assert _legend(root)[2:-1] == [t.get_text() for t in leg.get_texts()]  # with counts
    (head,) = _classed(root, "title")
    # the same words (wrapped at other widths, so compared without white space)
    assert ("".join(t.text for t in head).replace(" ", "")
            == "".join(_default_title(s, marks, "fr").split()))
    names = s.state_names
    assert sorted(c.find(f"{SVG}title").text for g in _classed(root, "states")
                  for c in g) == sorted(names)
    assert {t.text for g in _classed(root, "labels") for t in g} == set(names)
    for cls, idx in (("driver", marks.drivers), ("suggested", marks.suggested),
                     ("unreached", marks.unreached), ("dilation", marks.dilation)):
        assert _named(root, cls) == sorted(marks.names(idx)), cls
    if marks.roles is not None:
        for k, cls in enumerate(("role_critical", "role_intermittent", "role_redundant")):
            assert _named(root, cls) == sorted(marks.names(np.flatnonzero(marks.roles == k)))


def test_control_links_of_a_minimum_design_are_a_maximum_matching_with_heads():
    """Every control path or cycle link ends in an arrowhead (its direction shows even
    between two states linked both ways), and there are as many as a maximum matching
    (networkx), self-loops drawn as rings."""
    s = _system([("a", "b"), ("b", "a"), ("b", "c"), ("c", "d"), ("d", "b"), ("e", "e"),
                 ("a", "f")])
    marks = map_marks(s)
    root = ET.fromstring(map_svg(s, marks, positions=np.random.default_rng(0).random(
        (s.n_states, 2)), how="fr"))
    heads = {m.get("id") for m in root.iter(f"{SVG}marker")}
    drawn = 0
    for cls in ("chain", "cycle"):
        for g in _classed(root, cls):
            assert g.tag == f"{SVG}g" and g.get("marker-end")[5:-1] in heads
            drawn += len(list(g))
    rings = [c for g in _classed(root, "cycle_loops") for c in g]
    assert drawn + len(rings) == _matching_size(s) == 5


STAR = "hub,x\nhub,y\nhub,z\nz,w\n"  # a star of 3 leaves and a tail: 3 drivers


def test_cli_svg_map_is_well_formed_and_marks_the_drivers(tmp_path, capsys):
    f = tmp_path / "star.csv"
    f.write_text(STAR)
    out = tmp_path / "m.svg"
    assert main(["map", str(f), "--out", str(out)]) == 0
    capsys.readouterr()
    root = ET.parse(out).getroot()  # raises when not well formed
    assert root.tag == f"{SVG}svg"
    assert sorted(t.text for t in root.iter(f"{SVG}text") if t.text in
                  {"hub", "x", "y", "z", "w"}) == ["hub", "w", "x", "y", "z"]
    drivers = _named(root, "driver")
    assert "hub" in drivers and len(drivers) == 5 - _matching_size(_system(
        [tuple(line.split(",")) for line in STAR.split()])) == 3  # Liu et al. 2011
    assert "driver node: an input acts here (3)" in _legend(root)


def test_labels_options_are_kept(tmp_path, capsys):
    f = tmp_path / "path.csv"
    f.write_text("".join(f"s{i},s{i + 1}\n" for i in range(70)))  # 71 states: no names
    for flag, expected in (([], 0), (["--labels"], 71)):
        out = tmp_path / "m.svg"
        assert main(["map", str(f), "--out", str(out), *flag]) == 0
        root = ET.parse(out).getroot()
        assert sum(len(g) for g in _classed(root, "labels")) == expected, flag
    f.write_text("a,b\nb,c\n")
    assert main(["map", str(f), "--out", str(out), "--no-labels"]) == 0
    assert not _classed(ET.parse(out).getroot(), "labels")
    capsys.readouterr()


def test_above_the_small_map_size_matplotlib_draws_the_svg(tmp_path, capsys, monkeypatch):
    import netctl.viz.small_map as small_map

    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "m.svg"
    monkeypatch.setattr(small_map, "SMALL_MAP_STATES", 2)
    assert main(["map", str(f), "--out", str(out)]) == 0
    assert "<dc:title>Matplotlib" in out.read_text(encoding="utf-8")
    monkeypatch.setattr(small_map, "SMALL_MAP_STATES", 3)
    assert main(["map", str(f), "--out", str(out)]) == 0
    assert "matplotlib" not in out.read_text(encoding="utf-8").lower()
    capsys.readouterr()


def test_a_small_svg_map_loads_no_matplotlib(tmp_path):
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "m.svg"
    assert exit_and_modules(['map', str(f), '--out', str(out)]) == (0, [])
    root = ET.parse(out).getroot()
    assert _named(root, "driver") == ["a"]  # a path: its head (Liu et al. 2011)
