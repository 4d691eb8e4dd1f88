"""Reports: one self-contained document (HTML, Markdown or JSON) about a network.

:func:`build_report` runs the section builders of :data:`SECTIONS` (summary, minimum
inputs, why a given design fails, the map, roles, robustness, numeric confirmation,
strong structural controllability, cautions) and returns a :class:`Report`;
:func:`write_report` renders it by file suffix and writes it atomically. Sections whose
analysis module is missing are left out and listed under the cautions.
"""

from __future__ import annotations

import hashlib
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any


from netctl.errors import NetctlError, OptionError, OutputFileError
from netctl.report.document import Block, Report, Section
from netctl.report.progress import Progress
from netctl.report.sections import (
    FIGURES,
    OPTIONAL,
    SECTIONS,
    ReportContext,
    SectionBuilder,
)
from netctl.system import StructuredSystem

__all__ = ["REPORT_FORMATS", "Block", "Progress", "Report", "ReportContext", "SECTIONS",
           "Section", "build_report", "report_format", "write_report"]

#: Report formats by file suffix.
REPORT_FORMATS: dict[str, str] = {".html": "html", ".htm": "html", ".md": "markdown",
                                  ".markdown": "markdown", ".json": "json"}


def build_report(system: StructuredSystem, *, inputs: Any = None, source: str = "",
                 sections: Sequence[SectionBuilder] | None = None, seed: int = 0,
                 progress: Progress | None = None, weights: str | None = None,
                 figures: bool | str = True) -> Report:
    r"""Analyse ``system`` and assemble a report.

    Parameters
    ----------
    system : StructuredSystem
    inputs : sequence of state names or indices, optional
        A design to check (a dedicated input on each). Default: the system's own inputs
        when it has any, otherwise the minimum design.
    source : str
        The file the system came from (shown, with its SHA-256 when it exists).
    sections : sequence of callables, optional
        Section builders ``builder(ctx) -> Section | None`` (default :data:`SECTIONS`).
    seed : int
        Seed for the layout and sampled checks (the same seed gives the same bytes).
    weights : str, optional
        Numbers of the numeric confirmation (see
        :data:`netctl.numeric.realize.PARAMETERIZATIONS`); default: ``swing`` for a
        second-order model, ``independent`` otherwise.
    progress : Progress, optional
        Announces each section on a terminal.
    figures : {True, False, "svg", "png"}
        Which figures to draw. ``True``: every kind, so the report renders well in any
        format (PNG for Markdown; and for HTML inline SVG drawn by netctl where a
        section has one: the map up to :data:`netctl.viz.small_map.SMALL_MAP_STATES`
        states and the roles chart). ``"svg"``: for HTML and Markdown: SVG drawn by
        netctl where a section has one (inline in HTML; files beside the Markdown, see
        :func:`write_report`) and PNG elsewhere, so a small report loads no plotting
        library. ``"png"``: PNG only. ``False``: no figure, for a report kept only as
        JSON, which leaves figures out: the sections and their data are the same, and
        matplotlib is not loaded.

    Returns
    -------
    Report

    Notes
    -----
    A builder whose analysis module is not installed raises ImportError; the section
    is then left out and named under the cautions. A builder refusing its input
    (NetctlError, e.g. a size limit) is left out the same way, with its message.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], 3)
    >>> r = build_report(s, inputs=[1])
    >>> r.section("design").verdict[:31]
    'NOT structurally controllable: '
    >>> r.to_html().count("<script")  # only the interactive map: renderer and data
    2
    """
    from netctl._meta import __version__

    builders = list(SECTIONS if sections is None else sections)
    if not any(figures is f or (isinstance(f, str) and figures == f) for f in FIGURES):
        raise OptionError(f"figures must be one of {', '.join(map(repr, FIGURES))}, found "
                          f"{figures!r}.")
    idx = None
    if inputs is not None:
        if isinstance(inputs, str):
            raise OptionError(f"inputs must be a sequence of state names or indices, found "
                              f"the string {inputs!r}; split it, e.g. {inputs.split(',')!r}.")
        idx = system.index_of(list(inputs))
    ctx = ReportContext(system=system, inputs=idx, source=source, seed=seed, weights=weights,
                        figures=figures)
    progress = progress or Progress(len(builders), enabled=False)
    built: list[Section] = []
    for builder in builders:
        name = getattr(builder, "__name__", "section").removesuffix("_section")
        with progress.step(f"section {name}"):
            try:
                section = builder(ctx)
            except ImportError:
                ctx.missing.append(OPTIONAL.get(builder, name) + " (not installed)")
                continue
            except NetctlError as exc:
                if builder not in OPTIONAL:
                    raise
                ctx.missing.append(f"{OPTIONAL[builder]} ({exc})")
                continue
        if section is not None:
            built.append(section)
    # the cautions section (if any) was built before later failures: rebuild it last
    for i, s in enumerate(built):
        if s.key == "cautions":
            from netctl.report.sections import cautions_section

            built[i] = cautions_section(ctx)
    facts = [("file", source or "(given in memory)")]
    if source and Path(source).is_file():
        facts.append(("SHA-256 of the file", _sha256(source)))
    facts += [("states / links", f"{system.n_states} / {system.n_links}"),
              ("model", system.model),
              ("design in this report", ctx.design_words()),
              ("netctl", __version__)]
    if ctx.design_kind != "minimum":
        facts.insert(4, ("inputs", ", ".join(_short(system.names_of(
            ctx.actuated().driven_states())))))
    title = f"netctl report: {Path(source).name}" if source else "netctl report"
    return Report(title=title, facts=tuple(facts), sections=tuple(built))


def _short(names: list[str], limit: int = 30) -> list[str]:
    return names if len(names) <= limit else names[:limit] + [f"... ({len(names) - limit} more)"]


def _sha256(path: str | os.PathLike[str]) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def report_format(path: str | os.PathLike[str]) -> str:
    """``"html"``, ``"markdown"`` or ``"json"`` from the suffix of ``path``."""
    suffix = Path(path).suffix.lower()
    if suffix not in REPORT_FORMATS:
        raise OptionError(f"cannot tell the report format of {str(path)!r}: the file name "
                          f"must end in {', '.join(REPORT_FORMATS)}.")
    return REPORT_FORMATS[suffix]


def write_report(report: Report, path: str | os.PathLike[str]) -> list[Path]:
    """Render ``report`` in the format named by the suffix of ``path``; write atomically.

    HTML and JSON are one file. Markdown embeds PNG figures as data URIs and writes each
    figure that is only netctl's own SVG (a report built with ``figures="svg"``) as a
    file beside it, ``STEM.KEY.svg``, linked from the Markdown
    (:meth:`Report.to_markdown_files`). All files appear together or none does (an
    error leaves no partial output).

    Returns
    -------
    list of Path
        The figure files written beside ``path`` (empty for HTML, JSON, and Markdown
        whose figures are all PNG).
    """
    from netctl.io import atomic_group, atomic_write

    fmt = report_format(path)
    files: dict[str, str] = {}
    if fmt == "markdown":
        text, files = report.to_markdown_files(Path(path).stem)
    else:
        text = {"html": report.to_html, "json": report.to_json}[fmt]()
    beside = [Path(path).with_name(name) for name in files]
    with atomic_group():  # the figures and the Markdown appear together or not at all
        for where, svg in zip(beside, files.values()):
            try:
                with atomic_write(where) as fh:  # a standalone SVG document
                    fh.write(f'<?xml version="1.0" encoding="UTF-8"?>\n{svg}\n')
            except OutputFileError as exc:  # a name the user did not type: say whose
                raise OutputFileError(
                    f"{exc} ({where.name} is a figure of the Markdown report {path}, "
                    "named after it; choose another report name or move that one "
                    "away.)") from None
        with atomic_write(path) as fh:
            fh.write(text)
    from netctl.viz.output import usual_mode

    for written in [*beside, Path(path)]:
        usual_mode(written)
    return beside


