"""Reports: valid self-contained HTML, escaped names, pluggable sections, the CLI."""

from __future__ import annotations

import base64
import html
import json
import re
import shutil
import subprocess
import sys
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest

from netctl import StructuredSystem, controllability, minimum_inputs
from netctl.cli import CAUTION, main
from netctl.io import read
from netctl.report import SECTIONS, build_report, write_report
from netctl.report.document import Section, para
from netctl.report.sections import (
    cautions_section,
    modes_section,
    null_model_section,
    summary_section,
)

ROOT = Path(__file__).resolve().parents[2]
HEATING = ROOT / "networks" / "heating_loop.csv"
EVIL = "<script>alert(1)</script>"

# HTML living standard, section 13.1.2: elements that have no end tag
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta",
        "source", "track", "wbr"}


class StrictChecker(HTMLParser):
    """Every non-void start tag is closed by a matching end tag, in order."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.errors: list[str] = []
        self.tags: list[tuple[str, dict]] = []
        self.doctype = False

    def handle_decl(self, decl):
        self.doctype = decl.lower() == "doctype html"

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    def handle_endtag(self, tag):
        if tag in VOID:
            self.errors.append(f"end tag for void element {tag}")
        elif not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1:] or 'nothing'}")
        else:
            self.stack.pop()


def check_html(text):
    p = StrictChecker()
    p.feed(text)
    p.close()
    assert p.doctype, "missing <!DOCTYPE html>"
    assert not p.errors, p.errors[:5]
    assert not p.stack, f"unclosed: {p.stack}"
    return p


def assert_self_contained(text, parser):
    for tag, attrs in parser.tags:
        assert tag not in ("link", "iframe", "object", "embed"), tag
        if tag == "script":  # only inline: the map's renderer and its data
            assert "src" not in attrs, attrs
            assert attrs.get("type", "application/json") == "application/json", attrs
        for key in ("src", "href", "srcset", "action", "poster", "data"):
            if key in attrs:
                value = attrs[key] or ""
                assert value.startswith(("#", "data:")), (tag, key, value[:60])
    # url(#id) names an element of the page itself (an inline SVG's arrowhead or
    # pattern): nothing is fetched
    assert not re.search(r"url\(\s*['\"]?(?!data:|#)", text), "CSS fetches something"
    assert not re.search(r"(src|href)\s*=\s*['\"]?\s*(https?:)?//", text, re.I)


@pytest.fixture(scope="module")
def heating_report():
    system = read(HEATING)
    return system, build_report(system, inputs=["fuel_valve", "substation_park"],
                                source=str(HEATING))


def test_html_is_valid_and_self_contained(heating_report):
    _, report = heating_report
    text = report.to_html()
    parser = check_html(text)
    assert_self_contained(text, parser)
    imgs = [a for t, a in parser.tags if t == "img"]
    assert imgs, "the static map is embedded"
    assert ("div", "netctl-report-map") in [(t, a.get("id")) for t, a in parser.tags], \
        "the interactive map is embedded"
    for a in imgs:
        head, data = a["src"].split(",", 1)
        assert head == "data:image/png;base64"
        assert base64.b64decode(data)[:8] == b"\x89PNG\r\n\x1a\n"


def test_report_carries_the_analyses(heating_report):
    system, report = heating_report
    keys = [s.key for s in report.sections]
    assert keys[:4] == ["summary", "minimum-inputs", "design", "map"]
    assert keys[-1] == "cautions"
    # the reasons are those of Lin's test on the same design, word for word
    r = controllability(system.with_inputs(["fuel_valve", "substation_park"]))
    design = report.section("design")
    assert design.status == "fail" and design.data["reasons"] == r.reasons()
    text = report.to_html()
    for reason in r.reasons():
        assert html.escape(reason, quote=True) in text
    assert html.escape(CAUTION, quote=True) in text
    assert report.section("minimum-inputs").data["shared"]["drivers"] == \
        minimum_inputs(system).driver_names


def test_names_are_escaped_everywhere(tmp_path):
    names = [EVIL, 'quote"&amp', "plain", "x*y_[z]|w"]
    # both odd names are source states, so every minimum design lists them
    s = StructuredSystem.from_named_edges([EVIL, 'quote"&amp', "plain"],
                                          ["plain", "plain", "x*y_[z]|w"])
    report = build_report(s, inputs=["plain"], source=str(tmp_path / "evil.csv"))
    html_text = report.to_html()
    # only the map's own two inline scripts (renderer and JSON data); names never raw
    assert html_text.lower().count("<script") == 2 and EVIL not in html_text
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html_text
    assert 'quote"&amp' not in html_text and "quote&quot;&amp;amp" in html_text
    check_html(html_text)
    md = report.to_markdown()
    assert "<script" not in md.lower()
    assert "&lt;script&gt;alert\\(1\\)&lt;/script&gt;" in md
    data = json.loads(report.to_json())
    found = json.dumps(data)
    assert all(json.dumps(n)[1:-1] in found for n in names)  # JSON keeps names intact


def test_reports_are_reproducible():
    s = read(HEATING)
    a = build_report(s, source=str(HEATING)).to_html()
    b = build_report(s, source=str(HEATING)).to_html()
    assert a == b


def test_sections_are_pluggable_and_missing_modules_are_named(monkeypatch):
    s = read(HEATING)

    def custom(ctx):
        return Section("custom", "Custom", (para(f"{ctx.system.n_states} states"),))

    report = build_report(s, sections=[summary_section, custom, cautions_section])
    assert [x.key for x in report.sections] == ["summary", "custom", "cautions"]
    # a module that is not installed: its section is left out and named in the cautions
    monkeypatch.setitem(sys.modules, "netctl.numeric", None)
    report = build_report(s)
    assert "numeric" not in [x.key for x in report.sections]
    assert any("numeric confirmation (not installed)" in m
               for m in report.section("cautions").data["not_included"])
    check_html(report.to_html())


def test_markdown_and_json_formats(tmp_path, heating_report):
    _, report = heating_report
    write_report(report, tmp_path / "r.md")
    write_report(report, tmp_path / "r.json")
    md = (tmp_path / "r.md").read_text()
    assert md.startswith("# netctl report: heating\\_loop\\.csv")
    assert "](data:image/png;base64," in md and "http" not in md
    data = json.loads((tmp_path / "r.json").read_text())
    assert [x["key"] for x in data["sections"]] == [x.key for x in report.sections]
    # apostrophes and quotes are plain text in Markdown (CommonMark spec, "Entity and
    # numeric character references"): no HTML entity for them, "<" and "&" still escaped
    assert "operator's" in md and "&#x27;" not in md and "&quot;" not in md


def test_empty_and_isolated_systems_report(tmp_path):
    s = StructuredSystem.from_edges([0], [1], 4)  # two isolated states
    report = build_report(s)
    check_html(report.to_html())
    assert report.section("summary").data["n_isolated"] == 2


# ---------------------------------------------------------------------- command line
def test_cli_report_exit_codes(tmp_path, capsys):
    out = tmp_path / "r.html"
    assert main(["report", str(HEATING), "--out", str(out)]) == 0
    assert "sections: summary, minimum-inputs, map" in capsys.readouterr().out
    check_html(out.read_text())
    out2 = tmp_path / "r2.json"
    assert main(["report", str(HEATING), "--inputs", "fuel_valve", "--out", str(out2)]) == 1
    assert json.loads(out2.read_text())["sections"][2]["key"] == "design"


@pytest.mark.parametrize("args, message", [
    (["--out", "r.pdf"], "the file name must end in .html, .htm, .md"),
    ([], "report needs --out FILE"),
    (["--out", "r.html", "--inputs", "nowhere"], "unknown state name 'nowhere'"),
])
def test_cli_report_bad_usage(args, message, tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(["report", str(HEATING), *args]) == 2
    assert message in capsys.readouterr().err
    assert not list(tmp_path.iterdir())


CHROMIUM = shutil.which("chromium") or ("/usr/bin/chromium"
                                        if Path("/usr/bin/chromium").exists() else None)


@pytest.mark.skipif(CHROMIUM is None, reason="Chromium is not installed (apt-get install "
                    "chromium); the HTML is still checked by the strict parser above")
def test_report_renders_in_headless_chromium(tmp_path, heating_report):
    _, report = heating_report
    page = tmp_path / "r.html"
    write_report(report, page)
    shot = tmp_path / "r.png"
    proc = subprocess.run(
        [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu",
         "--disable-background-networking", "--window-size=1200,2400",
         f"--screenshot={shot}", page.as_uri()],
        capture_output=True, timeout=120, check=False)
    if proc.returncode != 0 and not shot.exists():
        pytest.skip(f"Chromium could not start here: {proc.stderr.decode()[-200:]}")
    from PIL import Image

    img = np.asarray(Image.open(shot).convert("RGB")).astype(int)
    assert img.shape[:2] == (2400, 1200)
    dark = np.mean(img.sum(axis=2) < 200)  # text was laid out
    # the map's driver triangles (#C44E0E) are on the page
    driver = np.mean((abs(img[..., 0] - 0xC4) < 30) & (abs(img[..., 1] - 0x4E) < 30)
                     & (abs(img[..., 2] - 0x0E) < 30))
    assert dark > 0.005 and driver > 0


def test_weakest_modes_section_matches_pbh():
    # weighted chain 0 -> 1 -> 2 plus a decoupled state 3 with its own dynamics; the
    # input acts on 0. PBH (Hautus 1969): lambda is uncontrollable iff
    # rank [A - lambda I, B] < n; recomputed here with numpy.
    s = StructuredSystem.from_edges([0, 1, 3, 0], [1, 2, 3, 0], 4,
                                    weights=[1.5, -0.7, -2.0, -1.0])
    report = build_report(s, inputs=[0], sections=[modes_section, cautions_section])
    modes = report.section("modes")
    A = s.A.toarray()
    B = np.zeros((4, 1))
    B[0, 0] = 1
    lost = sum(np.linalg.matrix_rank(np.hstack([A - lam * np.eye(4), B])) < 4
               for lam in np.unique(np.round(np.linalg.eigvals(A), 9)))
    assert modes.data["n_unreached"] == lost >= 1
    assert modes.status == "warning"
    check_html(report.to_html())
    # pattern only: modes need numbers, so the section is left out
    assert "modes" not in [x.key for x in build_report(
        read(HEATING), sections=[modes_section]).sections]


def test_null_model_section_reports_the_ensemble():
    pytest.importorskip("netctl.ensemble")
    s = read(ROOT / "networks" / "water_network.graphml") \
        if (ROOT / "networks" / "water_network.graphml").exists() else read(HEATING)
    report = build_report(s, sections=[null_model_section])
    sec = report.section("null-model")
    samples = np.array(sec.data["samples"])
    # the text quotes the ensemble's mean and spread (numpy, ddof=1)
    assert f"need {samples.mean():.1f} ± {samples.std(ddof=1):.1f}" in sec.blocks[0].text
    # the observed count is the minimum number of inputs (Liu, Slotine, Barabasi 2011)
    assert sec.data["observed_n_inputs"] == max(minimum_inputs(s).n_inputs, 1)
