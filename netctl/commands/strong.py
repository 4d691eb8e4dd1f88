"""``netctl strong FILE [--inputs ...] [--diagonal ...]``: strong structural controllability.

With ``--inputs`` the dedicated inputs on those states are checked: are they enough for
*every* nonzero value of every weight (exit 0), or do some weights make the design
uncontrollable (exit 1; the states left unforced are listed)? Without ``--inputs`` a
smallest set is searched for (exact branch and bound on small networks, greedy with a
lower bound on large ones; the method and the gap are always reported).
"""

from __future__ import annotations

import argparse
import warnings
from typing import Any

from netctl.commands._emit import emit, names_line
from netctl.commands._load import load_system, parse_names
from netctl.commands._options import CAUTION, add_inputs, add_sites, links_text
from netctl.commands._words import wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``strong`` verb."""
    from netctl.structural.strong import DIAGONALS, EXACT_AUTO_LIMIT, METHODS

    p = subparsers.add_parser(name, parents=[common], help=help)
    add_inputs(p, default="the inputs the file declares; if none, search for a smallest set")
    add_sites(p)
    p.add_argument("--search", action="store_true",
                   help="search for a smallest set even when the file declares inputs")
    p.add_argument("--diagonal", choices=list(DIAGONALS), default="as-given",
                   help="what is assumed about the self-dynamics a_ii: " + "; ".join(
                       f"{k} = {v}" for k, v in DIAGONALS.items()) + " (default: as-given)")
    p.add_argument("--method", choices=list(METHODS), default="auto",
                   help="search without --inputs: exact (branch and bound over forts), "
                        "greedy (fast, with a lower bound), auto (exact up to "
                        f"{EXACT_AUTO_LIMIT} states)")
    p.add_argument("--time-limit", type=float, default=60.0, metavar="SECONDS",
                   help="time for the exact search (default 60); when it runs out the best "
                        "set found and a proven lower bound are reported")
    p.set_defaults(func=_cmd_strong)


def _cmd_strong(args: argparse.Namespace) -> int:
    from netctl.structural.strong import (
        DIAGONALS,
        minimum_strong_inputs,
        strong_controllability,
    )

    system = load_system(args)
    head = [f"{args.file}: {system.n_states} states, {links_text(system.n_links)} "
            f"({system.n_self_loops} self-loops), model {system.model}",
            f"  diagonal: {args.diagonal} ({DIAGONALS[args.diagonal]})"]
    notes = []
    if system.weighted:
        notes.append("the file's weights are not used: the answer covers every nonzero "
                     "value of every link")
    if args.inputs is not None or (system.n_inputs and not args.search):
        # check the given design, or the one a system description declares (as `check`)
        if args.inputs is not None:
            system = system.with_inputs(parse_names(system, args.inputs))
        rep = strong_controllability(system, diagonal=args.diagonal)
        d: dict[str, Any] = {"file": args.file, "mode": "check", **rep.to_dict(),
                             "notes": notes, "caution": CAUTION}
        driven = names_line(wording(system).words(rep.names(system.driven_states())))
        lines = head + [f"  inputs ({rep.n_inputs}): {driven}",
                        "  strongly structurally controllable: "
                        + ("yes" if rep.strongly_controllable else "NO")]
        for reason in rep.reasons():
            lines.append(f"    - {reason}")
        if not rep.strongly_controllable:
            lines.append("  unforced states: " + names_line(wording(system).words(rep.unforced_names)))
        lines += [f"  note: {x}" for x in notes] + ["  " + CAUTION]
        emit(args, d, wording(system).text("\n".join(lines)))  # a grid: bus words
        return 0 if rep.strongly_controllable else 1

    if system.n_inputs:
        notes.append(f"the file's {system.n_inputs} input(s) are not used by the search "
                     "(--search); without --search they are checked")
    sites: Any = "node table"
    if args.sites:
        from netctl.io.sites import read_sites

        sites = read_sites(args.sites, system, kind="actuator").eligible  # overrides the table
    design = minimum_strong_inputs(system, diagonal=args.diagonal, method=args.method,
                                   time_limit=args.time_limit, sites=sites)
    with warnings.catch_warnings():  # the search has already warned about the diagonal
        warnings.simplefilter("ignore")
        check = strong_controllability(design.apply(system), diagonal=args.diagonal)
    if not design.feasible:
        d = {"file": args.file, "mode": "minimum", **design.to_dict(),
             "strongly_controllable": False, "unforced": design.names(design.unreachable),
             "notes": notes, "caution": CAUTION}
        lines = head + [
            f"  !! no set of dedicated inputs on the actuator sites ({design.sites}, "
            f"{design.n_eligible} state(s)) makes the network strongly structurally "
            "controllable",
            "  never forced even with an input on every site: "
            + names_line(wording(system).words(design.names(design.unreachable))),
            "  mark more states as actuator sites in the node table, or check a design of "
            "your own with --inputs"]
        lines += [f"  note: {x}" for x in notes] + ["  " + CAUTION]
        emit(args, d, wording(system).text("\n".join(lines)))
        return 1
    d = {"file": args.file, "mode": "minimum", **design.to_dict(),
         "strongly_controllable": check.strongly_controllable,
         "unforced": check.unforced_names, "notes": notes, "caution": CAUTION}
    quality = ("proven minimum" if design.optimal else
               f"best found; at least {design.lower_bound} needed (gap {design.gap})")
    lines = head + [
        f"  fewest dedicated inputs for strong structural controllability: "
        f"{design.n_inputs} ({quality})",
        f"  method: {design.method}; lower bound {design.lower_bound} from "
        f"{design.lower_bound_source}",
        f"  driven states ({design.n_inputs}): {names_line(wording(system).words(design.driver_names))}",
        *([f"  drawn from the actuator sites: {design.sites} ({design.n_eligible} state(s))"]
          if design.sites else []),
        "  (one set of possibly many)"]
    lines += [f"  note: {x}" for x in notes] + ["  " + CAUTION]
    emit(args, d, wording(system).text("\n".join(lines)))  # a grid: bus words
    return 0
