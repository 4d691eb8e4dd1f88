"""The report's own inline SVG figures (issue 15): the map and the roles chart of a small
system are SVG written by netctl, well-formed XML with escaped names and no script; a
system above the inline limit keeps its PNG; Markdown keeps its PNG; JSON is unchanged.

Checks are against things outside the drawing code: the XML parser of the standard
library, the published minimum-input and link-role results for a directed path (Liu,
Slotine & Barabási, Nature 473:167-173 (2011)), networkx's maximum matching, and
matplotlib's own PNG of the same map.
"""

from __future__ import annotations

import base64
import re
import xml.etree.ElementTree as ET

import networkx as nx
import pytest

from netctl import StructuredSystem
from netctl.errors import OptionError
from netctl.report import build_report
from netctl.report.sections import map_section, roles_section

SVG = "{http://www.w3.org/2000/svg}"
EVIL = "<script>alert(1)</script>"


def _svgs(html_text: str) -> list[ET.Element]:
    """Every ``<svg>`` element of the page, parsed as XML (raises when one is not)."""
    return [ET.fromstring(m) for m in re.findall(r"<svg\b.*?</svg>", html_text, re.S)]


def _classed(svg: ET.Element, cls: str) -> list[ET.Element]:
    return [e for e in svg.iter() if (e.get("class") or "") == cls]


def path(n: int) -> StructuredSystem:
    return StructuredSystem.from_named_edges([f"s{i}" for i in range(n - 1)],
                                             [f"s{i}" for i in range(1, n)])


def test_small_html_report_has_both_figures_as_inline_svg():
    """A directed path a -> b -> c: one driver node, its head (Liu, Slotine & Barabási
    2011: a path is matched by all its links, so only the head is unmatched); the
    control path is the path's two links; the head is critical (in every minimum
    driver set), b and c redundant; both links are in the one maximum matching, so both
    are critical (Liu et al. 2011, link classes)."""
    s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"])
    report = build_report(s, figures="svg")
    text = report.to_html()
    assert "data:image/png" not in text
    svgs = _svgs(text)
    assert len(svgs) == 2
    mapped, bars = svgs
    drivers = _classed(mapped, "mark driver")
    assert [d.find(f"{SVG}title").text.split(" \u2014 ")[0] for d in drivers] == ["a"]
    chain = _classed(mapped, "chain")
    assert len(chain) == 1 and chain[0].get("d").count("M") == 2  # two matched links
    assert not _classed(mapped, "cycle")
    # the roles chart: states 1 critical / 0 / 2 redundant; links 2 critical / 0 / 0
    rows = _classed(bars, "row")
    assert len(rows) == 2
    widths = [{e.get("class"): float(e.get("width")) for e in row.iter(f"{SVG}rect")
               if (e.get("class") or "").startswith("share ")} for row in rows]
    states, links = widths
    assert set(states) == {"share role_critical", "share role_redundant"}
    assert states["share role_redundant"] == pytest.approx(2 * states["share role_critical"],
                                                           abs=0.02)
    assert set(links) == {"share role_critical"}
    written = [t.text for t in bars.iter(f"{SVG}text") if t.get("class") == "written"]
    assert written == ["33%", "67%", "100%"]


def test_the_drawn_control_links_are_a_maximum_matching():
    """The chain and cycle links of the inline map are as many as a maximum matching of
    the network's bipartite graph (networkx's Hopcroft-Karp), and a self-loop that is
    matched is drawn as a cycle ring (a control cycle of one state)."""
    src = ["a", "b", "c", "d", "e"]  # a cycle, a state with only its self-loop, a link
    dst = ["b", "c", "a", "d", "f"]
    s = StructuredSystem.from_named_edges(src, dst)
    g = nx.Graph()
    g.add_nodes_from((f"out:{u}" for u in set(src)), bipartite=0)
    g.add_nodes_from((f"in:{v}" for v in set(dst)), bipartite=1)
    g.add_edges_from((f"out:{u}", f"in:{v}") for u, v in zip(src, dst))
    size = len(nx.bipartite.hopcroft_karp_matching(
        g, top_nodes=[f"out:{u}" for u in set(src)])) // 2
    (mapped, _) = _svgs(build_report(s, figures="svg").to_html())
    drawn = sum(p.get("d").count("M") for key in ("chain", "cycle")
                for p in _classed(mapped, key))
    rings = [c for g_ in _classed(mapped, "cycle_loops") for c in g_]
    assert size == 5 and drawn + len(rings) == size
    assert [r.find(f"{SVG}title").text for r in rings] == ["d \u2014 self-loop"]
    assert _classed(mapped, "cycle")[0].get("d").count("M") == 3  # a -> b -> c -> a


def test_names_in_the_inline_figures_are_escaped():
    names = [EVIL, 'quote"&amp', "plain", "x*y_[z]|w"]
    s = StructuredSystem.from_named_edges(names[:3], ["plain", "plain", names[3]])
    text = build_report(s, figures="svg").to_html()
    assert EVIL not in text and 'quote"&amp' not in text
    svgs = _svgs(text)  # parses: no raw markup from a name
    assert len(svgs) == 2
    titles = {t.text.split(" \u2014 ")[0] for svg in svgs for t in svg.iter(f"{SVG}title")}
    labels = {t.text for svg in svgs for t in svg.iter(f"{SVG}text")}
    assert set(names) <= titles and set(names) <= labels  # read back intact
    for svg in svgs:
        assert not any(e.tag.endswith("script") or e.tag.endswith("foreignObject")
                       for e in svg.iter())
        assert not any(k.lower().startswith("on") for e in svg.iter() for k in e.attrib)


def test_above_the_inline_limit_the_map_keeps_its_png(monkeypatch):
    """The inline map is capped (``SMALL_MAP_STATES``); above it the HTML embeds the
    PNG drawn by matplotlib, as before. The cap is lowered here so that a small system
    crosses it."""
    import netctl.viz.small_map as small_map

    s = path(6)
    monkeypatch.setattr(small_map, "SMALL_MAP_STATES", 5)
    report = build_report(s, figures="svg", sections=[map_section, roles_section])
    block = report.section("map").blocks[-1]
    assert block.svg == "" and block.png.startswith(b"\x89PNG\r\n\x1a\n")
    text = report.to_html()
    assert 'src="data:image/png;base64,' in text
    assert len(_svgs(text)) == 1  # the roles chart stays SVG at any size
    monkeypatch.setattr(small_map, "SMALL_MAP_STATES", 6)
    block = build_report(s, figures="svg", sections=[map_section]).section("map").blocks[-1]
    assert block.svg.startswith("<svg") and block.png == b""
    # above SMALL_MAP_LINKS the small map would leave the links out: the PNG instead
    monkeypatch.setattr(small_map, "SMALL_MAP_LINKS", 4)
    block = build_report(s, figures="svg", sections=[map_section]).section("map").blocks[-1]
    assert block.svg == "" and block.png.startswith(b"\x89PNG\r\n\x1a\n")


def test_markdown_keeps_the_png_and_loses_no_figure():
    s = path(4)
    every = build_report(s)  # figures=True: PNG and SVG, any format renders well
    for sec in every.sections:
        for b in sec.blocks:
            if b.kind in ("figure", "map"):
                assert b.png.startswith(b"\x89PNG")
    n_figures = sum(b.kind in ("figure", "map") for sec in every.sections for b in sec.blocks)
    md = every.to_markdown()
    assert md.count("](data:image/png;base64,") == n_figures
    assert "data:image/svg+xml" not in md
    assert len(_svgs(every.to_html())) == 2
    # a report built for HTML only, rendered as Markdown after all: the SVG as a data
    # URI, no figure lost
    md = build_report(s, figures="svg").to_markdown()
    uris = re.findall(r"\]\(data:image/svg\+xml;base64,([A-Za-z0-9+/=]+)\)", md)
    assert len(uris) == n_figures
    for u in uris:
        ET.fromstring(base64.b64decode(u).decode("utf-8"))


def test_json_does_not_depend_on_the_figures():
    s = path(5)
    plain = build_report(s, figures=False).to_json()
    assert build_report(s, figures="svg").to_json() == plain
    assert build_report(s, figures="png").to_json() == plain


@pytest.mark.parametrize("bad", ["html", "SVG", 1, None])
def test_unknown_figures_option_is_refused(bad):
    with pytest.raises(OptionError, match="figures must be one of"):
        build_report(path(3), figures=bad)
