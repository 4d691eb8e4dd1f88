"""A report as plain data (sections of blocks) and its three renderings.

HTML is self-contained: no script, no style sheet, font or image is fetched from
anywhere (figures are inline SVG written by netctl where a block has one, else PNG data
URIs; the interactive map's renderer and data are inline), and every piece of text that
can come from an input file is escaped. Markdown shows a figure's PNG where the block
has one (common Markdown renderers pass PNG data URIs but drop SVG ones); a figure that
is only netctl's SVG is, from :meth:`Report.to_markdown_files`, a file beside the
Markdown (a relative link, which those renderers show), and from
:meth:`Report.to_markdown` an SVG data URI. JSON carries the sections' data, not the
figures.
"""

from __future__ import annotations

import base64
import html
import json
import re
import urllib.parse
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

__all__ = ["Block", "Report", "Section", "figure", "items", "note", "para", "table"]

#: Block kinds a section may hold.
BLOCK_KINDS: tuple[str, ...] = ("para", "items", "table", "figure", "note", "map")
#: Section states, shown as a badge.
STATUSES: tuple[str, ...] = ("info", "ok", "warning", "fail")


@dataclass(frozen=True)
class Block:
    """One piece of a section. Text is plain (escaped by every renderer).

    ``para``: ``text``. ``items``: ``rows`` (list of str), optional ``more`` (how many
    were left out). ``table``: ``header`` and ``rows`` (lists of cells). ``figure``:
    ``png`` (bytes) and/or ``svg`` (an ``<svg>`` element drawn by netctl: well-formed
    XML, no script, names escaped) and ``text`` (the caption); HTML shows the SVG when
    there is one, Markdown the PNG. ``note``: ``text``, shown set apart. ``map``:
    ``html``, an interactive map fragment built by
    :func:`netctl.viz.interactive.map_fragment` (its names are already escaped inside
    JSON), and ``png``/``svg``/``text``, the static figure shown where HTML is not
    rendered.
    """

    kind: str
    text: str = ""
    rows: tuple[Any, ...] = ()
    header: tuple[str, ...] = ()
    png: bytes = b""
    more: int = 0
    html: str = ""
    svg: str = ""


def para(text: str) -> Block:
    """A paragraph of plain text."""
    return Block("para", text=text)


def note(text: str) -> Block:
    """A note set apart from the text (cautions, limits)."""
    return Block("note", text=text)


def items(rows: Sequence[str], *, limit: int = 200, total: int | None = None) -> Block:
    """A bullet list; at most ``limit`` rows are kept, the rest counted in ``more``."""
    rows = list(rows)
    total = len(rows) if total is None else total
    kept = rows[:limit]
    return Block("items", rows=tuple(str(r) for r in kept), more=total - len(kept))


def table(header: Sequence[str], rows: Sequence[Sequence[Any]], *, limit: int = 200,
          total: int | None = None) -> Block:
    """A table of plain cells; at most ``limit`` rows."""
    rows = [tuple(_cell(c) for c in r) for r in rows]
    total = len(rows) if total is None else total
    return Block("table", header=tuple(header), rows=tuple(rows[:limit]),
                 more=total - min(len(rows), limit))


def figure(png: bytes, caption: str, *, svg: str = "") -> Block:
    """A figure with its caption: a PNG (embedded as a data URI) and/or an inline
    ``<svg>`` element drawn by netctl (HTML shows the SVG, Markdown the PNG)."""
    return Block("figure", png=png, text=caption, svg=svg)


def _cell(c: Any) -> str:
    if isinstance(c, (bool, np.bool_)):
        return "yes" if c else "no"
    if isinstance(c, (float, np.floating)):
        return f"{float(c):.6g}"
    return str(c)


@dataclass(frozen=True)
class Section:
    """A titled part of a report: blocks for people, ``data`` for programs."""

    key: str
    title: str
    blocks: tuple[Block, ...]
    data: dict[str, Any] = field(default_factory=dict)
    status: str = "info"
    verdict: str = ""
    badge: str = ""

    @property
    def badge_text(self) -> str:
        """Short word shown beside the title (default from ``status``)."""
        return self.badge or _BADGE[self.status]


@dataclass(frozen=True)
class Report:
    """A whole report: title, facts about the input, sections (in order).

    Render it with :meth:`to_html`, :meth:`to_markdown` or :meth:`to_dict`
    (:func:`netctl.report.write_report` picks one from the file name).
    """

    title: str
    facts: tuple[tuple[str, str], ...]
    sections: tuple[Section, ...]

    def section(self, key: str) -> Section:
        """The section with this key (KeyError when the report has none)."""
        for s in self.sections:
            if s.key == key:
                return s
        raise KeyError(f"no section {key!r}; the report has "
                       f"{', '.join(s.key for s in self.sections)}.")

    def reworded(self, word: Callable[[str], str]) -> Report:
        """The same report with every piece of text for people passed through ``word``
        (facts, verdicts, paragraphs, notes, list items, table cells, captions), e.g. a
        grid's states in a planner's words; each section's ``data`` (the JSON) and the
        interactive map's data are kept as they are."""
        def block(b: Block) -> Block:
            rows = tuple(word(r) if isinstance(r, str) else tuple(word(str(c)) for c in r)
                         for r in b.rows)
            return replace(b, text=word(b.text) if b.text else b.text, rows=rows)

        return replace(self, facts=tuple((k, word(v)) for k, v in self.facts),
                       sections=tuple(replace(sec, verdict=word(sec.verdict),
                                              blocks=tuple(block(b) for b in sec.blocks))
                                      for sec in self.sections))

    # ------------------------------------------------------------------ JSON
    def to_dict(self) -> dict[str, Any]:
        """JSON-ready: the facts and every section's data (figures are left out)."""
        return {
            "report": self.title,
            "facts": dict(self.facts),
            "sections": [{"key": s.key, "title": s.title, "status": s.status,
                          "verdict": s.verdict, "badge": s.badge_text, "data": s.data}
                         for s in self.sections],
        }

    def to_json(self) -> str:
        return json.dumps(self.to_dict(), indent=2, default=_json_default,
                          ensure_ascii=False) + "\n"

    # ------------------------------------------------------------------ HTML
    def to_html(self) -> str:
        """One self-contained HTML5 page (inline style; figures as inline SVG or PNG
        data URIs)."""
        e = _esc
        out = ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
               '<meta name="viewport" content="width=device-width, initial-scale=1">',
               f"<title>{e(self.title)}</title>", f"<style>{_CSS}</style>", "</head>",
               "<body>", "<header>", f"<h1>{e(self.title)}</h1>", '<dl class="facts">']
        for k, v in self.facts:
            out.append(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>")
        out += ["</dl>", '<nav><ol>']
        for s in self.sections:
            out.append(f'<li><a href="#{e(s.key)}">{e(s.title)}</a>'
                       + (f' <span class="badge {e(s.status)}">{e(s.badge_text)}</span>'
                          if s.badge_text else "") + "</li>")
        out += ["</ol></nav>", "</header>", "<main>"]
        for s in self.sections:
            out.append(f'<section id="{e(s.key)}">')
            out.append(f"<h2>{e(s.title)}"
                       + (f' <span class="badge {e(s.status)}">{e(s.badge_text)}</span>'
                          if s.badge_text else "") + "</h2>")
            if s.verdict:
                out.append(f'<p class="verdict {e(s.status)}">{e(s.verdict)}</p>')
            for b in s.blocks:
                out.append(_html_block(b))
            out.append("</section>")
        out += ["</main>", "</body>", "</html>", ""]
        return "\n".join(out)

    # ------------------------------------------------------------------ Markdown
    def to_markdown(self) -> str:
        """Markdown (GitHub flavour); figures as data URIs, text escaped."""
        return self._markdown(None)[0]

    def to_markdown_files(self, stem: str) -> tuple[str, dict[str, str]]:
        """Markdown whose SVG-only figures are files beside it, and those files.

        A figure block with a PNG is embedded as a PNG data URI, as in
        :meth:`to_markdown`; one that has only netctl's own SVG (a report built with
        ``figures="svg"``) is linked as the file ``STEM.KEY.svg`` (``KEY``: the
        section's key, numbered when a section has several), a relative link that common
        Markdown previews show (most drop SVG data URIs), and the files are listed
        below the facts.

        Parameters
        ----------
        stem : str
            The Markdown file's name without its suffix (``"report"`` for
            ``report.md``).

        Returns
        -------
        text : str
            The Markdown.
        files : dict
            File name (in the Markdown's folder) -> the ``<svg>`` document, in the order
            the figures appear; empty when every figure has a PNG.

        Examples
        --------
        >>> r = Report("r", (), (Section("map", "Map", (figure(b"", "a map",
        ...                                                    svg="<svg/>"),)),))
        >>> text, files = r.to_markdown_files("out")
        >>> files
        {'out.map.svg': '<svg/>'}
        >>> "![a map](out.map.svg)" in text
        True
        """
        return self._markdown(stem)

    def _markdown(self, stem: str | None) -> tuple[str, dict[str, str]]:
        m = _md
        files: dict[str, str] = {}
        bodies: list[str] = []
        for s in self.sections:
            badge = f" \\[{m(s.badge_text)}\\]" if s.badge_text else ""
            bodies += [f"## {m(s.title)}{badge}", ""]
            if s.verdict:
                bodies += [f"**{m(s.verdict)}**", ""]
            own = [stem is not None and b.kind in ("figure", "map") and bool(b.svg)
                   and not b.png for b in s.blocks]
            nth = 0
            for b, to_file in zip(s.blocks, own):
                target = None
                if to_file:
                    nth += 1
                    key = re.sub(r"[^A-Za-z0-9_-]", "_", s.key)  # a file name's part
                    target = f"{stem}.{key}{f'-{nth}' if sum(own) > 1 else ''}.svg"
                    files[target] = b.svg
                bodies += _md_block(b, target) + [""]
        out = [f"# {m(self.title)}", ""]
        for k, v in self.facts:
            out.append(f"- **{m(k)}:** {m(v)}")
        if files:
            out.append("- **figure files (beside this file):** "
                       + ", ".join(f"[{m(name)}]({_md_link(name)})" for name in files))
        out.append("")
        return "\n".join(out + bodies).rstrip("\n") + "\n", files


_BADGE = {"info": "", "ok": "holds", "warning": "attention", "fail": "fails"}

_CSS = (
    "body{font:15px/1.5 system-ui,-apple-system,'Segoe UI',Roboto,sans-serif;color:#262626;"
    "max-width:1100px;margin:0 auto;padding:1.5em 1.2em 4em;background:#fff}"
    "h1{font-size:1.6em;margin:.2em 0 .4em}h2{font-size:1.25em;margin:1.8em 0 .5em;"
    "padding-bottom:.2em;border-bottom:2px solid #262626}"
    "dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:.15em 1em;margin:0}"
    "dl.facts dt{font-weight:600}dl.facts dd{margin:0;overflow-wrap:anywhere}"
    "nav ol{columns:2;margin:.8em 0;padding-left:1.4em}"
    "table{border-collapse:collapse;margin:.6em 0;font-size:.93em}"
    "th,td{border:1px solid #bdbdbd;padding:.25em .6em;text-align:left;vertical-align:top;"
    "overflow-wrap:anywhere}th{background:#efefef}"
    "td.num{text-align:right;font-variant-numeric:tabular-nums}"
    "figure{margin:1em 0}figure img,figure svg{max-width:100%;height:auto;"
    "border:1px solid #e0e0e0}"
    "figcaption{font-size:.9em;color:#444;margin-top:.3em}"
    ".note{border-left:4px solid #262626;background:#f4f4f4;padding:.5em .9em;margin:.8em 0}"
    ".verdict{font-weight:600;padding:.4em .8em;border:2px solid;display:inline-block}"
    ".verdict.ok{border-color:#2464A8}.verdict.fail{border-color:#C44E0E;"
    "border-style:double;border-width:4px}.verdict.warning{border-color:#D99A1E;"
    "border-style:dashed}.verdict.info{border-color:#8a8a8a}"
    ".badge{font-size:.7em;font-weight:600;padding:.05em .5em;border-radius:.6em;"
    "vertical-align:middle;border:1.5px solid}.badge.ok{color:#2464A8}"
    ".badge.fail{color:#fff;background:#C44E0E;border-color:#C44E0E}"
    ".badge.warning{color:#262626;border-style:dashed}"
    "ul.names{columns:3;padding-left:1.4em}li{overflow-wrap:anywhere}"
    "p.more{font-style:italic;color:#555}"
    "@media print{nav{display:none}h2{break-after:avoid}figure{break-inside:avoid}}"
)


def _esc(text: object) -> str:
    return html.escape(str(text), quote=True)


def _is_number(c: str) -> bool:
    return bool(re.fullmatch(r"-?\d+(\.\d+)?(e-?\d+)?%?", c))


def _html_block(b: Block) -> str:
    e = _esc
    if b.kind == "para":
        return f"<p>{e(b.text)}</p>"
    if b.kind == "note":
        return f'<p class="note">{e(b.text)}</p>'
    if b.kind == "items":
        cls = ' class="names"' if b.rows and max(len(r) for r in b.rows) <= 40 else ""
        body = "".join(f"<li>{e(r)}</li>" for r in b.rows)
        more = (f'<p class="more">… and {b.more} more (the JSON report lists all).</p>'
                if b.more > 0 else "")
        return f"<ul{cls}>{body}</ul>{more}"
    if b.kind == "table":
        head = "".join(f"<th>{e(h)}</th>" for h in b.header)
        rows = "".join(
            "<tr>" + "".join(f'<td class="num">{e(c)}</td>' if _is_number(c)
                             else f"<td>{e(c)}</td>" for c in r) + "</tr>" for r in b.rows)
        more = (f'<p class="more">… and {b.more} more rows (the JSON report lists all).</p>'
                if b.more > 0 else "")
        return f"<table><thead><tr>{head}</tr></thead><tbody>{rows}</tbody></table>{more}"
    if b.kind == "figure":
        return f"<figure>{_html_picture(b)}<figcaption>{e(b.text)}</figcaption></figure>"
    if b.kind == "map":
        return (f"{b.html}<details><summary>static figure (for print)</summary><figure>"
                f"{_html_picture(b)}<figcaption>{e(b.text)}</figcaption></figure></details>")
    raise ValueError(f"unknown block kind {b.kind!r}; expected one of {BLOCK_KINDS}")


def _html_picture(b: Block) -> str:
    """The figure itself: the inline SVG when the block has one, else the PNG."""
    if b.svg:
        return b.svg
    data = base64.b64encode(b.png).decode("ascii")
    return f'<img alt="{_esc(b.text)}" src="data:image/png;base64,{data}">'


def _md_picture(b: Block) -> str:
    """The figure as a Markdown image: the PNG when the block has one (the data URIs
    common renderers pass), else the SVG as a data URI (no figure is lost)."""
    if b.png or not b.svg:
        return f"data:image/png;base64,{base64.b64encode(b.png).decode('ascii')}"
    svg = base64.b64encode(b.svg.encode("utf-8")).decode("ascii")
    return f"data:image/svg+xml;base64,{svg}"


_MD_SPECIAL = re.compile(r"([\\`*_{}\[\]()#+\-.!|~>])")


def _md(text: object) -> str:
    """Markdown-safe text: HTML escaped (renderers pass raw HTML through) and Markdown
    punctuation backslash-escaped."""
    return _MD_SPECIAL.sub(r"\\\1", html.escape(str(text), quote=False)).replace("\n", " ")


def _md_link(name: str) -> str:
    """A file name as a relative Markdown link target (spaces, brackets, ``%`` and other
    characters outside a URL path percent-encoded)."""
    return urllib.parse.quote(name, safe="")


def _md_block(b: Block, target: str | None = None) -> list[str]:
    """The Markdown lines of one block; a figure goes to the file ``target`` when
    given (else a data URI)."""
    m = _md
    if b.kind == "para":
        return [m(b.text)]
    if b.kind == "note":
        return [f"> {m(b.text)}"]
    if b.kind == "items":
        out = [f"- {m(r)}" for r in b.rows]
        if b.more > 0:
            out.append(f"- *… and {b.more} more (the JSON report lists all)*")
        return out
    if b.kind == "table":
        out = ["| " + " | ".join(m(h) for h in b.header) + " |",
               "|" + "|".join("---" for _ in b.header) + "|"]
        out += ["| " + " | ".join(m(c) for c in r) + " |" for r in b.rows]
        if b.more > 0:
            out.append(f"\n*… and {b.more} more rows (the JSON report lists all)*")
        return out
    if b.kind in ("figure", "map"):  # a map: renderers drop scripts, the static figure
        where = _md_link(target) if target is not None else _md_picture(b)
        return [f"![{m(b.text)}]({where})", "", f"*{m(b.text)}*"]
    raise ValueError(f"unknown block kind {b.kind!r}; expected one of {BLOCK_KINDS}")


def _json_default(o: Any) -> Any:
    if isinstance(o, np.generic):
        return o.item()
    if isinstance(o, np.ndarray):
        return o.tolist()
    if isinstance(o, (set, frozenset, tuple)):
        return list(o)
    raise TypeError(f"not JSON serialisable: {type(o).__name__}")
