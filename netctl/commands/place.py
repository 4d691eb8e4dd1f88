"""``netctl place``: the cheapest actuator (sensor) design under site, cost and budget
constraints, with its optimality status and an independent check.

Exit status: 0 the design meets the goal (and the budget); 1 it cannot (infeasible, or
the budget is too small: the best affordable design is shown); 2 bad usage or input.
"""

from __future__ import annotations

import argparse
import math
from typing import Any

from netctl.commands._emit import emit, names_line
from netctl.commands._load import load_system, parse_names
from netctl.commands._options import CAUTION, UsageError, add_candidates, add_sites
from netctl.commands._words import Wording, wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``place`` verb."""
    from netctl.structural.placement import METHODS

    p = subparsers.add_parser(name, parents=[common], help=help)
    add_sites(p)
    add_candidates(p)
    p.add_argument("--budget", metavar="X", type=float, default=None,
                   help="largest total cost; if too small, the affordable design with the "
                        "largest generic controllable dimension is shown (exit 1)")
    p.add_argument("--targets", metavar="NAMES|FILE", default=None,
                   help="control only these states (target control): 'a,b,c' or a file, "
                        "one name a line")
    p.add_argument("--sensors", action="store_true",
                   help="place sensors for observability instead of actuators")
    p.add_argument("--method", choices=list(METHODS), default="auto",
                   help="auto (exact where affordable, default), exact, or greedy")
    p.add_argument("--time-limit", metavar="S", type=float, default=60.0,
                   help="seconds the mixed-integer solver may use (default 60)")
    p.set_defaults(func=_cmd_place)


def _cmd_place(args: argparse.Namespace) -> int:
    from netctl.io.sites import read_candidates, read_sites
    from netctl.structural.placement import (
        place_inputs,
        place_sensors,
        place_target_inputs,
        sites_from_nodes,
    )

    if args.budget is not None and (not math.isfinite(args.budget) or args.budget < 0):
        raise UsageError(f"--budget must be a finite number >= 0, found {args.budget!r}.")
    if args.targets is not None and args.sensors:
        raise UsageError("--targets works with actuators only: observing a subset of states "
                         "is a different (functional observability) condition that netctl "
                         "does not place for; drop --sensors or --targets.")
    if args.targets is not None and (args.candidates or args.budget is not None):
        raise UsageError("--targets places dedicated actuators at --sites; it does not take "
                         "--candidates or --budget.")
    if args.candidates and args.sites:
        raise UsageError("give --sites (dedicated actuators) or --candidates (actuators "
                         "acting on several states), not both.")
    system = load_system(args)
    said = wording(system)  # a grid's states in bus words
    kind = "sensor" if args.sensors else "actuator"
    sites = (read_sites(args.sites, system, kind=kind) if args.sites
             else sites_from_nodes(system, kind=kind))
    cands = read_candidates(args.candidates, system) if args.candidates else None
    if args.targets is not None:
        targets = parse_names(system, args.targets, what="--targets")
        result = place_target_inputs(system, targets, sites=sites, method=args.method)
    else:
        fn = place_sensors if args.sensors else place_inputs
        result = fn(system, sites=None if cands else sites, candidates=cands,
                    budget=args.budget, method=args.method, time_limit=args.time_limit)
    d = result.to_dict()
    d["file"] = args.file
    # the file's own inputs (sensors) are kept and cost nothing (place_inputs,
    # place_sensors); target placement starts from scratch: say which, or "sites (0)"
    # on an installed design reads as "nothing placed, nothing needed" with no reason
    installed = list(system.output_names if args.sensors else system.input_names)
    if installed:
        d["kept" if args.targets is None else "not_used"] = installed
    d["site_data"] = (args.candidates if cands else args.sites) or sites.source
    check_name = ("target rank of C_T [B AB ...] over F_p" if result.problem == "target" else
                  "structural observability (Lin, dual)" if args.sensors else
                  "structural controllability (Lin)")
    d["check"] = {"method": check_name, "passed": result.verified}
    d["caution"] = CAUTION
    emit(args, d, said.text(_text(args, result, d, check_name, CAUTION, said)))  # bus words
    return 0 if result.goal_met else 1


def _rank_limit() -> int:
    from netctl.structural.target import TARGET_RANK_MAX_STATES

    return TARGET_RANK_MAX_STATES


def _text(args: argparse.Namespace, r: Any, d: dict[str, Any], check_name: str,
          caution: str, said: Wording) -> str:
    noun = "sensors" if r.kind == "sensors" else "actuators"
    what = {"dedicated": f"dedicated {noun}", "candidates": f"candidate {noun}",
            "target": f"dedicated {noun} for {len(d['targets'] or [])} target state(s)"}
    n = len(r.state_names)
    lines = [f"{args.file}: {n} state{'s' if n != 1 else ''}, model {r.model}",
             f"  placing {what[r.problem]} (site data: "
             + ("none given: every state eligible at cost 1" if d["site_data"] == "default"
                else str(d["site_data"])) + ")"
             + (f", budget {r.budget:g}" if r.budget is not None else "")]
    for key, how in (("kept", "kept at no cost; the sites below are added to them"),
                     ("not_used", "not used: target placement starts from no inputs")):
        if key in d:
            lines.append(f"  the file's {len(d[key])} installed "
                         f"{'sensor' if r.kind == 'sensors' else 'input'}(s) "
                         f"({names_line(d[key])}) {how}")
    if r.chosen.size and r.problem == "candidates":
        names = [a["name"] for a in d["actuators" if r.kind == "inputs" else "sensors"]]
        lines.append(f"  chosen {noun} ({len(names)}): {names_line(names)}")
    lines.append(f"  sites ({r.sites.size}): {names_line(said.words(r.site_names)) or '(none)'}")
    lines.append(f"  total cost: {r.cost:g} (in the units of the site costs; 1 a site "
                 "when none are given)")
    if not r.feasible and r.best_effort:
        word = "observable" if r.kind == "sensors" else "controllable"
        dim = "not computed" if r.dimension is None else f"{r.dimension} of {r.goal_dimension}"
        reached = ("target rank (controllable targets)" if r.problem == "target"
                   else f"generic {word} dimension")
        status = (f"best effort: {r.sites.size} site(s) reach a {reached} of "
                  f"{dim}; no design on these sites is {word} because of the cause(s) below")
    elif not r.feasible:
        status = "infeasible"
    elif r.best_effort:
        status = (f"best effort: generic {'observable' if r.kind == 'sensors' else 'controllable'}"
                  f" dimension {r.dimension} of {r.goal_dimension}; "
                  + ("optimal" if r.optimal else
                     f"gap {100 * r.gap:.1f}% (upper bound {r.upper_bound:g})"))
    elif r.optimal:
        status = "optimal (proven)"
    else:
        status = f"not proven optimal: gap {100 * r.gap:.1f}% (lower bound {r.lower_bound:g})"
    lines.append(f"  status: {status}; method {r.method}")
    lines.append(f"  guarantee: {r.guarantee}")
    if r.verified is not None:
        lines.append(f"  check ({check_name}): {'passed' if r.verified else 'NOT passed'}")
    elif r.feasible and r.problem == "target":
        lines.append(f"  check ({check_name}): skipped (dense rank limited to "
                     f"{_rank_limit()} states)")
    if not r.goal_met:
        lines.append("  goal NOT met:")
        lines.extend(f"    - {x}" for x in r.reasons)
        if r.inaccessible.size and r.problem != "target":
            verb = "seen by no chosen sensor" if r.kind == "sensors" else \
                "reached by no chosen actuator"
            state = "unobservable" if r.kind == "sensors" else "uncontrollable"
            lines.append(f"  stays {state}, {verb} ({r.inaccessible.size}): "
                         f"{names_line(said.words(r.names(r.inaccessible)))}")
    if r.feasible:
        lines.append("  (one optimum of possibly many; ties broken by state order)")
    else:
        lines.append("  (no design is called optimal here: the eligible sites cannot make the "
                     "system controllable; widen the sites or see netctl drivers)")
    lines.append("  " + caution)
    return "\n".join(lines)
