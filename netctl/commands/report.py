"""``netctl report``: one self-contained document about a network (HTML, Markdown, JSON)."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from netctl.commands._load import load_system, parse_names
from netctl.commands._options import UsageError, add_inputs, add_seed, progress_enabled
from netctl.commands._words import wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``report`` verb."""
    p = subparsers.add_parser(
        name, parents=[common], help=help,
        description="Write one self-contained report about the network: summary, minimum "
                    "inputs and where, why a given design fails, the map, and the further "
                    "analyses installed (roles, robustness, numeric confirmation, strong "
                    "structural controllability), with the cautions. --out names the file; "
                    "its suffix picks HTML, Markdown or JSON. HTML embeds its figures; "
                    "Markdown embeds PNG figures and writes the figures netctl draws as SVG "
                    "(the map of a small network, the roles chart) as files beside it, "
                    "named after it (report.md: report.map.svg, ...). Nothing is fetched "
                    "when the report is opened. Exit status 0 when the design in the "
                    "report is structurally controllable, 1 when not.")
    add_inputs(p, default="the file's inputs, else the minimum design",
               what="a design to check: states with a dedicated input")
    add_seed(p, help="seed of the layout and sampled checks (default 0)")
    from netctl.numeric.realize import PARAMETERIZATIONS

    p.add_argument("--weights", choices=list(PARAMETERIZATIONS), default=None,
                   help="numbers of the numeric confirmation (default: swing for a "
                        "second-order model, e.g. a grid; independent otherwise)")
    for action in p._actions:  # the shared --out help says JSON; this verb differs
        if action.dest == "out":
            action.help = 'the report file; its suffix picks the format: .html, .md or .json'
    p.set_defaults(func=_cmd_report)


def _cmd_report(args: argparse.Namespace) -> int:
    from netctl.report import SECTIONS, Progress, build_report, report_format, write_report

    if not args.out:
        raise UsageError("report needs --out FILE ending in .html, .md or .json.")
    fmt = report_format(args.out)  # reject a bad suffix before any work
    progress = Progress(len(SECTIONS) + 2, enabled=progress_enabled(args))
    with progress.step(f"reading {args.file}"):
        system = load_system(args)
        inputs = None
        if args.inputs is not None:
            inputs = system.names_of(parse_names(system, args.inputs))
    # JSON leaves figures out; HTML and Markdown draw netctl's own SVG where it can (no
    # plotting library): inline in HTML, as files beside the Markdown
    kinds: dict[str, bool | str] = {"json": False, "html": "svg", "markdown": "svg"}
    figures = kinds[fmt]
    report = build_report(system, inputs=inputs, source=args.file, seed=args.seed,
                          progress=progress, weights=args.weights, figures=figures)
    with progress.step(f"writing {args.out}"):
        # a grid's states in a planner's words for people (HTML, Markdown); JSON keeps
        # the state names
        said = wording(system)
        beside = write_report(report.reworded(said.text) if said.grid and fmt != "json"
                              else report, args.out)
    verdict = _verdict(report)
    if args.json:
        sys.stdout.write(report.to_json())
    else:
        keys = ", ".join(s.key for s in report.sections)
        sys.stdout.write(f"{args.out}: {fmt} report on {args.file} ({system.n_states} "
                         f"states); sections: {keys}\n"
                         + (f"  figures beside it: {', '.join(str(b) for b in beside)}\n"
                            if beside else "")
                         + f"  design: {verdict[1]}\n")
        grid = getattr(args, "_grid", None)
        if grid is not None:  # a grid: buses and branches, and its caution
            from netctl.commands._emit import _GRID_CAUTION, _grid_text

            sys.stdout.write(_grid_text(grid) + "\n  Grid: " + _GRID_CAUTION + ".\n")
    return 0 if verdict[0] else 1


def _verdict(report: Any) -> tuple[bool, str]:
    for s in report.sections:
        if s.key == "design":
            return s.status == "ok", s.verdict
    return True, "minimum design (structurally controllable by construction)"
