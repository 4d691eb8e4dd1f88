"""``netctl map``: draw the network with its driver nodes and control paths: an
interactive HTML map, a static figure (PNG/SVG/PDF), or an export (GeoJSON, GraphML)."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from netctl.commands._load import load_system, parse_names
from netctl.commands._options import UsageError, add_inputs, add_seed, links_text, progress_enabled

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``map`` verb."""
    p = subparsers.add_parser(
        name, parents=[common], help=help,
        description="Map the network with its driver nodes, the control paths (matched "
                    "links: chains and cycles), the states no input reaches and the "
                    "dilation sets. --out names the result by its suffix: .html an "
                    "interactive map in one self-contained file (pan, zoom, search, "
                    "details, layers; nothing is fetched when it is opened); .png, .svg "
                    ".pdf a static figure (.svg and .png of up to 2000 states drawn by "
                    "netctl itself, the same marks and legend); .geojson the states and "
                    "links with their roles for GIS (RFC 7946); .graphml the network with role attributes. "
                    "Positions: the file's x/y or lat/lon, else a layout. Exit status 0 "
                    "when the mapped design is structurally controllable, 1 when not.")
    group = p.add_mutually_exclusive_group()
    add_inputs(group, default="the file's inputs, else --auto")
    group.add_argument("--auto", action="store_true",
                       help="draw a minimum input design (one of possibly many)")
    p.add_argument("--show", metavar="LAYERS", default="",
                   help="extra layers, comma-separated: roles, critical-links")
    p.add_argument("--layout", default="auto",
                   choices=("auto", "coordinates", "fr", "fr-grid", "circle"),
                   help="where states go (default: the file's x/y coordinates, else a "
                        "seeded force-directed layout)")
    add_seed(p, help="layout seed (default 0)")
    labels = p.add_mutually_exclusive_group()
    labels.add_argument("--labels", dest="labels", action="store_true", default=None,
                        help="write every state's name (default: up to 60 states)")
    labels.add_argument("--no-labels", dest="labels", action="store_false",
                        help="write no names")
    p.add_argument("--dpi", type=float, default=150.0, help="resolution of PNG output")
    p.add_argument("--max-states", type=int, default=None, metavar="N",
                   help="largest network mapped (default 1000000); a larger one is "
                        "refused before any work")
    for action in p._actions:  # the shared --out help says JSON; this verb differs
        if action.dest == "out":
            action.help = 'the file to write; its suffix picks what: .html (interactive map), .png/.svg/.pdf (figure), .geojson, .graphml (JSON is not written; use --json for the result)'
    p.set_defaults(func=_cmd_map)


_SUFFIXES = ("html", "htm", "png", "svg", "pdf", "geojson", "graphml")


def _kind(path: str) -> str:
    from pathlib import Path

    suffix = Path(path).suffix.lower().lstrip(".")
    if suffix not in _SUFFIXES:
        raise UsageError(f"cannot tell what to write from {path!r}: the file name must end "
                         f"in one of {', '.join('.' + x for x in _SUFFIXES)}.")
    return {"htm": "html"}.get(suffix, suffix)


def _cmd_map(args: argparse.Namespace) -> int:
    if not args.out:
        raise UsageError("map needs --out FILE: grid.html (interactive), a figure ending in "
                         ".png, .svg or .pdf, or an export ending in .geojson or .graphml.")
    kind = _kind(args.out)  # reject a bad suffix before any work
    if not (args.dpi > 0):
        raise UsageError(f"--dpi must be positive, found {args.dpi!r}.")
    from netctl.report.progress import Progress
    from netctl.viz.interactive import MAP_STATE_LIMIT, check_map_size

    limit = MAP_STATE_LIMIT if args.max_states is None else args.max_states
    if limit < 1:
        raise UsageError(f"--max-states must be at least 1, found {limit!r}.")

    show = [s.strip() for s in args.show.split(",") if s.strip()]
    progress = Progress(4, enabled=progress_enabled(args))
    from netctl.viz import map_marks

    with progress.step(f"reading {args.file}"):
        system = load_system(args)
        check_map_size(system.n_states, limit)
        inputs: Any = None
        if args.inputs is not None:
            inputs = system.names_of(parse_names(system, args.inputs))
        elif args.auto:
            inputs = "minimum"
    with progress.step("finding drivers and control paths"):
        marks = map_marks(system, inputs=inputs, show=show)
    with progress.step(f"placing {system.n_states} states"):
        from netctl.viz.placement import CoordinateError

        try:
            pos, how, placement = _place(args, system)
        except CoordinateError as exc:
            raise CoordinateError(f"{args.file}: {exc}") from None
    if placement is not None and placement.n_laid_out and placement.from_file.any():
        sys.stderr.write(f"netctl: note: {args.file}: {placement.note()}.\n")
    with progress.step(f"writing {args.out}"):
        if kind in ("png", "svg", "pdf"):
            _figure(args, system, marks, pos, how)
        else:
            _document(args, kind, system, marks, placement, how)
    d = marks.to_dict()
    d.update(file=args.file, output=args.out, layout=how)
    if kind in ("png", "svg", "pdf"):
        d["figure"] = args.out
    if args.json:
        from netctl.commands._json import encode, tagged

        sys.stdout.write(encode(tagged(d, "map"), pretty=sys.stdout.isatty()))
    else:
        verdict = "yes" if marks.controllable else (
            f"NO ({marks.suggested.size} more dedicated input(s) needed; drawn as dashed "
            "triangles)")
        design = {"minimum": "minimum design", "given": "the file's inputs",
                  "chosen": "--inputs"}[marks.design]
        what = {"html": "interactive map", "geojson": "GeoJSON export",
                "graphml": "GraphML export"}.get(kind, "map")
        sys.stdout.write(
            f"{args.out}: {what} of {args.file} ({system.n_states} states, "
            f"{links_text(system.n_links)}, {how} layout)\n"
            f"  {marks.n_inputs} input(s) on {marks.drivers.size} driver node(s) "
            f"({design}); structurally controllable: {verdict}\n" + _grid_lines(args, marks))
    return 0 if marks.controllable else 1


def _grid_lines(args: argparse.Namespace, marks: Any) -> str:
    """For a grid: buses and branches, the critical branches by ID, the grid caution."""
    from netctl.commands._emit import _GRID_CAUTION, _grid_text

    grid = getattr(args, "_grid", None)
    if grid is None:
        return ""
    out = _grid_text(grid) + "\n"
    if marks.critical_sources is not None:
        ids = list(marks.critical_elements)
        out += ("  critical branches (an outage raises the minimum inputs or breaks the "
                f"design; links inside buses never drawn as such): {len(ids)}"
                + (": " + ", ".join(ids[:20]) + (f", ... ({len(ids) - 20} more; --json "
                                                 "lists all)" if len(ids) > 20 else "")
                   if ids else "") + "\n")
    return out + "  Grid: " + _GRID_CAUTION + ".\n"


def _place(args: argparse.Namespace, system: Any) -> tuple[Any, str, Any]:
    from netctl.viz import node_positions
    from netctl.viz.placement import Placement, map_placement

    if args.layout == "auto":
        p = map_placement(system, seed=args.seed)
        return p.xy, p.how, p
    import numpy as np

    pos, how = node_positions(system, layout=args.layout, seed=args.seed)
    known = np.full(system.n_states, how == "coordinates")
    return pos, how, Placement(np.asarray(pos, float), how, False, known)


def _figure(args: argparse.Namespace, system: Any, marks: Any, pos: Any, how: str) -> None:
    kind = _kind(args.out)
    if kind in ("svg", "png"):
        from netctl.viz.map_svg import fits, map_png, map_svg

        # a small map: netctl's own drawing, the same content, no matplotlib (issue 15);
        # a PNG needs Pillow with FreeType and the font, else matplotlib draws it
        if fits(system):
            from netctl.io import atomic_write
            from netctl.viz.output import usual_mode

            if kind == "svg":
                text = map_svg(system, marks, positions=pos, how=how, labels=args.labels)
                with atomic_write(args.out) as fh:
                    fh.write(text)
                usual_mode(args.out)
                return
            data = map_png(system, marks, positions=pos, how=how, labels=args.labels,
                           dpi=args.dpi)
            if data is not None:
                with atomic_write(args.out, "wb") as fh:
                    fh.write(data)
                usual_mode(args.out)
                return
    # matplotlib's object API on the Agg canvas: no pyplot (netctl.viz.network.map_figure)
    from netctl.viz import save_figure
    from netctl.viz.network import _default_title, map_figure

    fig = map_figure(system, marks, positions=pos, labels=args.labels,
                     title=_default_title(system, marks, how))
    save_figure(fig, args.out, dpi=args.dpi)


def _document(args: argparse.Namespace, kind: str, system: Any, marks: Any,
              placement: Any, how: str) -> None:
    from netctl.io import atomic_write
    from netctl.viz.output import usual_mode

    if kind == "html":
        from netctl.viz.interactive import map_html, map_payload

        title = f"netctl map of {args.file}"
        text = map_html(map_payload(system, marks, placement, title=title))
    elif kind == "geojson":
        from netctl.viz.export import geojson_text

        if not placement.geographic:
            sys.stderr.write(f"netctl: note: {args.file} has no lat/lon coordinates; the "
                             "GeoJSON positions are planar map positions, not WGS 84 "
                             "degrees (marked so in the file's 'netctl' member).\n")
        text = geojson_text(system, marks, placement)
    else:
        from netctl.viz.export import graphml_text

        text = graphml_text(system, marks, placement)
    with atomic_write(args.out) as fh:
        fh.write(text)
    usual_mode(args.out)
