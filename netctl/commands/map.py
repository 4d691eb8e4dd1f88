"""``netctl map``: draw the network with its driver nodes and control paths."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any, cast

from netctl.commands._options import (
    UsageError,
    add_inputs,
    add_seed,
    load_system,
    parse_names,
    progress_enabled,
)

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``map`` verb."""
    p = subparsers.add_parser(
        name, parents=[common], help=help,
        description="Draw the network with its driver nodes, the control paths (matched "
                    "links: chains and cycles), the states no input reaches and the "
                    "dilation sets; --out names the figure (PNG, SVG or PDF). Exit status "
                    "0 when the drawn design is structurally controllable, 1 when not.")
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
    p.set_defaults(func=_cmd_map)


def _cmd_map(args: argparse.Namespace) -> int:
    from netctl.report.progress import Progress
    from netctl.viz.output import figure_format

    if not args.out:
        raise UsageError("map needs --out FILE: the figure to write, ending in .png, .svg "
                         "or .pdf.")
    figure_format(args.out)  # reject a bad suffix before any work
    if not (args.dpi > 0):
        raise UsageError(f"--dpi must be positive, found {args.dpi!r}.")
    show = [s.strip() for s in args.show.split(",") if s.strip()]
    progress = Progress(4, enabled=progress_enabled(args))

    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from netctl.viz import draw_map, map_marks, node_positions, save_figure

    with progress.step(f"reading {args.file}"):
        system = load_system(args)
        inputs: Any = None
        if args.inputs is not None:
            inputs = system.names_of(parse_names(system, args.inputs))
        elif args.auto:
            inputs = "minimum"
    with progress.step("finding drivers and control paths"):
        marks = map_marks(system, inputs=inputs, show=show)
    with progress.step(f"placing {system.n_states} states"):
        pos, how = node_positions(system, layout=args.layout, seed=args.seed)
    with progress.step(f"drawing and writing {args.out}"):
        ax = draw_map(system, marks, positions=pos, labels=args.labels)
        try:
            from netctl.viz.network import _default_title

            ax.set_title(_default_title(system, marks, how), loc="left", fontsize=10)
            save_figure(ax.figure, args.out, dpi=args.dpi)
        finally:
            plt.close(cast(Any, ax.figure))
    d = marks.to_dict()
    d.update(file=args.file, figure=args.out, layout=how)
    if args.json:
        sys.stdout.write(json.dumps(d, indent=2) + "\n")
    else:
        verdict = "yes" if marks.controllable else (
            f"NO ({marks.suggested.size} more dedicated input(s) needed; drawn as dashed "
            "triangles)")
        design = {"minimum": "minimum design", "given": "the file's inputs",
                  "chosen": "--inputs"}[marks.design]
        sys.stdout.write(
            f"{args.out}: map of {args.file} ({system.n_states} states, {system.n_links} "
            f"links, {how} layout)\n"
            f"  {marks.n_inputs} input(s) on {marks.drivers.size} driver node(s) "
            f"({design}); structurally controllable: {verdict}\n")
    return 0 if marks.controllable else 1
