"""The Markdown report writes the figures netctl draws as SVG files beside it (issue 15,
goal 1): ``netctl report FILE --out r.md`` on a small network writes ``r.md``,
``r.map.svg`` and ``r.roles.svg`` (linked from the Markdown and listed below its facts),
loads no matplotlib, and writes all of them or none.

Checks are against things outside the drawing code: the standard library's XML parser,
networkx's maximum matching (the number of driver nodes is ``n - |M*|``, Liu, Slotine &
Barabási, Nature 473:167-173 (2011)), and the report's own JSON (the driver set the map
must mark).
"""

from __future__ import annotations

import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path
from urllib.parse import unquote

import networkx as nx

from netctl.cli import main
from tests._probe import exit_and_modules

ROOT = Path(__file__).resolve().parents[2]
SVG = "{http://www.w3.org/2000/svg}"
#: an out-star a -> b, c, d with a tail d -> e -> f and names a Markdown or XML writer
#: could mangle (Liu et al. 2011: a star of k leaves needs k driver nodes)
EDGES = [("hub&co", "b<1>"), ("hub&co", "c_[x]"), ("hub&co", "d"), ("d", "e*"),
         ("e*", "f|end")]


def _network(tmp_path: Path) -> Path:
    f = tmp_path / "net.csv"
    f.write_text("".join(f"{u},{v}\n" for u, v in EDGES), encoding="utf-8")
    return f


def _max_matching(edges: list[tuple[str, str]]) -> int:
    g = nx.Graph()
    tops = [f"out:{u}" for u, _ in edges]
    g.add_nodes_from(tops, bipartite=0)
    g.add_edges_from((f"out:{u}", f"in:{v}") for u, v in edges)
    return len(nx.bipartite.hopcroft_karp_matching(g, top_nodes=tops)) // 2


def _report(tmp_path: Path, capsys) -> tuple[Path, dict]:
    f = _network(tmp_path)
    out = tmp_path / "r p.md"  # a space: the links must be percent-encoded
    assert main(["report", str(f), "--out", str(out)]) == 0
    capsys.readouterr()
    assert main(["report", str(f), "--out", str(tmp_path / "r.json")]) == 0
    capsys.readouterr()
    return out, json.loads((tmp_path / "r.json").read_text(encoding="utf-8"))


def test_markdown_report_links_well_formed_svg_files_beside_it(tmp_path, capsys):
    out, js = _report(tmp_path, capsys)
    text = out.read_text(encoding="utf-8")
    links = re.findall(r"!\[[^\]]*\]\(([^)]+)\)", text)
    assert [unquote(t) for t in links] == ["r p.map.svg", "r p.roles.svg"]
    assert "data:image" not in text  # no figure left as a PNG
    listed = re.search(r"^- \*\*figure files \(beside this file\):\*\* (.*)$", text, re.M)
    assert listed is not None and [unquote(t) for t in re.findall(r"\]\(([^)]+)\)",
                                                                  listed.group(1))] == [
        "r p.map.svg", "r p.roles.svg"]
    assert sorted(p.name for p in tmp_path.iterdir()) == [
        "net.csv", "r p.map.svg", "r p.md", "r p.roles.svg", "r.json"]
    mapped = ET.parse(tmp_path / "r p.map.svg").getroot()  # raises when not well formed
    ET.parse(tmp_path / "r p.roles.svg")
    assert mapped.tag == f"{SVG}svg"
    names = {u for e in EDGES for u in e}
    states = [c.find(f"{SVG}title").text for g in mapped.iter(f"{SVG}g")
              if g.get("class") == "states" for c in g]
    assert sorted(states) == sorted(names)  # every state drawn once, its name intact
    labels = {t.text for g in mapped.iter(f"{SVG}g") if g.get("class") == "labels"
              for t in g}
    assert labels == names
    drivers = sorted(p.find(f"{SVG}title").text.split(" \u2014 ")[0]
                     for p in mapped.iter(f"{SVG}path")
                     if p.get("class") == "mark driver")
    minimum = next(s for s in js["sections"] if s["key"] == "minimum-inputs")["data"]
    assert drivers == sorted(minimum["dedicated"]["drivers"])
    assert len(drivers) == len(names) - _max_matching(EDGES) == 3  # Liu et al. 2011


def test_no_partial_output_when_a_figure_cannot_be_written(tmp_path, capsys):
    f = _network(tmp_path)
    (tmp_path / "r.roles.svg").mkdir()  # a folder where the roles chart would go
    assert main(["report", str(f), "--out", str(tmp_path / "r.md")]) == 2
    err = capsys.readouterr().err
    assert "r.roles.svg" in err and "figure of the Markdown report" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["net.csv", "r.roles.svg"]


def test_a_small_markdown_report_loads_no_matplotlib(tmp_path):
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "r.md"
    assert exit_and_modules(['report', str(f), '--out', str(out)]) == (0, [])
    assert (tmp_path / "r.map.svg").is_file() and (tmp_path / "r.roles.svg").is_file()


def test_a_report_with_png_figures_stays_one_markdown_file(tmp_path):
    """From Python, a report built with every kind of figure (the default) embeds its
    PNGs in the Markdown, as before: nothing is written beside it."""
    from netctl import StructuredSystem
    from netctl.report import build_report, write_report
    from netctl.report.sections import map_section, roles_section

    s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"])
    report = build_report(s, sections=[map_section, roles_section])
    assert write_report(report, tmp_path / "r.md") == []
    assert [p.name for p in tmp_path.iterdir()] == ["r.md"]
    assert (tmp_path / "r.md").read_text(encoding="utf-8").count(
        "](data:image/png;base64,") == 2
