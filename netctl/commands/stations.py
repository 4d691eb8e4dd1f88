"""``netctl stations FILE [--stations FILE]``: structurally fixed modes of an arrangement of
control stations (decentralized control), which condition fails, and the smallest change."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import load_system
from netctl.commands._options import CAUTION, UsageError
from netctl.commands._words import wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``stations`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    p.add_argument("--stations", metavar="FILE", default=None,
                   help="TOML file with a [stations] section (default: the system file's own "
                        "[stations])")
    p.add_argument("--no-fix", action="store_true",
                   help="do not search for the smallest change")
    p.add_argument("--max-loop-stations", type=int, default=None, metavar="L",
                   help="refuse more than L stations with both inputs and outputs (the rank "
                        "condition visits 2**L subsets; default 20)")
    p.set_defaults(func=_cmd_stations)


def _cmd_stations(args: argparse.Namespace) -> int:
    from netctl.errors import NetctlError, OptionError
    from netctl.io.stations import read_stations
    from netctl.structural.fixed_modes import MAX_LOOP_STATIONS, fixed_modes

    bound = MAX_LOOP_STATIONS if args.max_loop_stations is None else args.max_loop_stations
    if bound < 0:
        raise OptionError(f"--max-loop-stations must be >= 0, found {bound}.")
    system = load_system(args)
    source = args.stations or args.file
    if args.stations is None and not str(args.file).lower().endswith(".toml"):
        raise UsageError(f"{args.file}: give the control stations with --stations FILE (a TOML "
                         "file with a [stations] section).")
    try:
        stations = read_stations(source, system)
    except NetctlError:
        raise
    if not stations:
        raise UsageError(f"{source}: the [stations] section lists no station.")
    try:
        r = fixed_modes(system, stations, fixes=not args.no_fix, max_loop_stations=bound)
    except ValueError as exc:
        if isinstance(exc, NetctlError):
            raise
        raise OptionError(f"{source}: {exc}") from None
    d = r.to_dict()
    d["file"] = args.file
    d["stations_from"] = source
    d["caution"] = CAUTION
    lines = [f"{args.file}: {r.n_states} states, {len(r.stations)} station(s) from {source}",
             "  structurally fixed modes: " + ("YES" if r.has_fixed_modes else "none"),
             "  condition (i), every state on a station's loop: "
             + ("holds" if not r.unclosed else "FAILS"),
             f"  condition (ii), rank over all {r.subsets_visited} subsets of loop stations: "
             + ("holds" if r.rank_ok else "FAILS")]
    if r.unassigned_inputs.size or r.unassigned_outputs.size:
        lines.append("  in no station (used by no controller): "
                     + ", ".join([r.input_names[int(i)] for i in r.unassigned_inputs]
                                 + [r.output_names[int(i)] for i in r.unassigned_outputs]))
    lines += [f"  - {line}" for line in r.reasons()]
    lines.append(f"  {CAUTION}")
    emit(args, d, wording(system).text("\n".join(lines)))  # a grid: bus words
    return 1 if r.has_fixed_modes else 0
