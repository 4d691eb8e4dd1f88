"""``netctl secure``: does a design survive a failure (N-1), and the cheapest one that does.

Audit (default): every actuator of ``--inputs`` (sensor of ``--outputs``, or the file's
own design) classified as a single point of failure, useful or useless; the fewest
failures that break it; every line whose loss breaks it. ``--place``: the cheapest
dedicated actuators (``--sensors``: sensors) that survive any ``--k`` failures of their
own (``--against elements``) or any ``--k`` lines (``--against lines``); ``--keep`` keeps the
existing design and adds to it.

Exit status: 0 secure (audit: no single point of failure and no breaking line, and at
least ``--k`` failures withstood; place: a secure design was found), 1 not, 2 bad usage
or input.
"""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit, names_line
from netctl.commands._load import load_system, parse_names
from netctl.commands._options import CAUTION, UsageError, add_inputs, add_outputs, add_sites
from netctl.commands._words import wording

__all__ = ["register"]


#: ``--against`` and ``--method`` choices (the same as
#: :data:`netctl.structural.failures.AGAINST` / ``SECURE_METHODS``; literal here so that
#: building the parser imports no analysis).
_AGAINST = ("elements", "lines")
_METHODS = ("auto", "exact", "two-step")


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``secure`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_inputs(p, what="actuator design to audit (one dedicated actuator per state)")
    add_outputs(p, what="sensor design to audit (one sensor per state)")
    p.add_argument("--place", action="store_true",
                   help="find the cheapest design that survives failures instead of auditing")
    p.add_argument("--sensors", action="store_true",
                   help="with --place: place sensors (observability) instead of actuators")
    p.add_argument("--keep", action="store_true",
                   help="with --place: keep the existing design (--inputs/--outputs, else "
                        "the file's own) and add the cheapest sites that make it secure")
    p.add_argument("--against", choices=list(_AGAINST), default="elements",
                   help="with --place: survive the loss of any --k elements of the design "
                        "(default) or of any --k lines (many lines: a labelled sample)")
    p.add_argument("--k", metavar="K", type=int, default=1,
                   help="failures to survive (default 1: N-1)")
    add_sites(p)
    p.add_argument("--method", choices=list(_METHODS), default="auto",
                   help="with --place: auto (exact within the time limit, else two-step), "
                        "exact, or two-step")
    p.add_argument("--time-limit", metavar="S", type=float, default=60.0,
                   help="seconds the integer programmes may use (default 60)")
    p.set_defaults(func=_cmd_secure)


def _cmd_secure(args: argparse.Namespace) -> int:
    import math


    if args.k < 1:
        raise UsageError(f"--k must be an integer >= 1 (failures to survive), found {args.k}.")
    if not math.isfinite(args.time_limit) or args.time_limit <= 0:
        raise UsageError(f"--time-limit must be a positive number of seconds, found "
                         f"{args.time_limit!r}.")
    system = load_system(args)
    _no_disturbance_sites(system, args)
    if args.place:
        if (args.inputs or args.outputs) and not args.keep:
            raise UsageError("--place builds a design from scratch; drop --inputs/--outputs "
                             "(audit a design without --place), or add --keep to keep "
                             "them and add to them.")
        if args.inputs is not None:
            system = system.with_inputs(parse_names(system, args.inputs))
        if args.outputs is not None:
            system = system.with_outputs(parse_names(system, args.outputs, what="--outputs"))
        return _place(args, system)
    if args.sensors or args.sites or args.against != "elements" or args.method != "auto" \
            or args.keep:
        raise UsageError("--sensors, --sites, --against, --method and --keep go with "
                         "--place; an audit takes --inputs and/or --outputs.")
    if args.inputs is not None:
        system = system.with_inputs(parse_names(system, args.inputs))
    if args.outputs is not None:
        system = system.with_outputs(parse_names(system, args.outputs, what="--outputs"))
    kinds = []
    if system.n_inputs:
        kinds.append("inputs")
    if system.n_outputs:
        kinds.append("sensors")
    if not kinds:
        raise UsageError("secure needs a design: --inputs and/or --outputs (comma-separated "
                         "state names or a file with one name a line), or --place to find "
                         "one.")
    for kind in kinds:
        m = system.n_inputs if kind == "inputs" else system.n_outputs
        if args.k > m:
            raise UsageError(f"--k {args.k} is larger than the design: it has {m} "
                             f"{'actuators' if kind == 'inputs' else 'sensors'}; give "
                             f"--k <= {m}.")
    return _audit(args, system, kinds)


def _no_disturbance_sites(system: Any, args: argparse.Namespace) -> None:
    """Disturbances are never sites. Hook for systems that carry them (``E``)."""
    from netctl.io import read_state_list

    dist = set(getattr(system, "disturbance_names", ()) or ())
    if not dist:
        return
    for opt in ("inputs", "outputs"):
        val = getattr(args, opt)
        if val is None:
            continue
        bad = [x for x in read_state_list(val) if x in dist]
        if bad:
            raise UsageError(f"--{opt}: {bad[0]!r} is a disturbance, not a state; a "
                             "disturbance can host no actuator or sensor. Name states only.")


def _audit(args: argparse.Namespace, system: Any, kinds: list[str]) -> int:
    from netctl.structural.failures import (
        ELEMENT_CLASSES,
        audit_design,
        audit_links,
        fewest_failures,
    )

    said = wording(system)  # a grid's states and inputs in bus words
    lines = [f"{args.file}: {system.n_states} states, model {system.model}"]
    out: dict[str, Any] = {"file": args.file, "k": args.k, "audits": []}
    secure = True
    for kind in kinds:
        au = audit_design(system, kind=kind)
        ff = fewest_failures(system, kind=kind, time_limit=args.time_limit)
        ll = audit_links(system, kind=kind)
        noun = "sensors" if kind == "sensors" else "actuators"
        prop = "observable" if kind == "sensors" else "controllable"
        ok = au.secure and ll.secure and ff.lower >= args.k + 1
        secure &= ok
        lines.append(f"  {noun} ({au.n_elements}): "
                     + ("SECURE" if ok else "NOT secure") + f" (k = {args.k})")
        if not au.works:
            lines.append(f"    the intact design is not structurally {prop}:")
            lines.extend(f"      - {r}" for r in au.intact_reasons())
        else:
            for c, name in enumerate(ELEMENT_CLASSES[:4]):
                idx = [said(au.element_names[int(j)]) for j in au.of_class(name)]
                if idx:
                    lines.append(f"    {name} ({len(idx)}): {names_line(idx)}")
            for j in au.critical[:10].tolist():
                lines.append(f"    single point of failure {said(au.element_names[j])}:")
                lines.extend(f"      - {r}" for r in au.reasons(j))
            if au.critical.size > 10:
                lines.append(f"    ... {au.critical.size - 10} more (--json lists them)")
            fw = ("exactly " + str(ff.value) if ff.exact else
                  f"between {ff.lower} and {ff.upper} (bounds, not exact)")
            lines.append(f"    fewest failures that break it: {fw} [{ff.guarantee}]")
            if ff.witness:
                lines.append(f"      e.g. losing {', '.join(ff.witness)}: {ff.cause}")
            br = [ll.labels[int(j)] for j in ll.breaking.nonzero()[0]]
            lines.append(f"    lines whose loss breaks it: {len(br)} of {ll.n_lines}"
                         + (f": {names_line(br, 10)}" if br else ""))
        out["audits"].append({"kind": kind, "secure": bool(ok), "elements": au.to_dict(),
                              "fewest_failures": ff.to_dict(), "lines": ll.to_dict()})
    out["secure"] = bool(secure)
    out["caution"] = CAUTION
    lines.append("  " + CAUTION)
    emit(args, out, said.text("\n".join(lines)))  # a grid: bus words
    return 0 if secure else 1


def _place(args: argparse.Namespace, system: Any) -> int:
    from netctl.structural.failures import secure_placement
    from netctl.io.sites import read_sites

    kind = "sensors" if args.sensors else "inputs"
    sites = (read_sites(args.sites, system, kind="sensor" if args.sensors else "actuator")
             if args.sites else None)
    r = secure_placement(system, kind=kind, against=args.against, k=args.k, sites=sites,
                         method=args.method, time_limit=args.time_limit, keep=args.keep)
    said = wording(system)  # a grid's states in bus words
    noun = "sensors" if args.sensors else "actuators"
    what = (f"any {args.k} failure(s) of the design" if args.against == "elements" else
            "any one line" if args.k == 1 else f"any {args.k} lines")
    lines = [f"{args.file}: {system.n_states} states, model {system.model}",
             f"  cheapest {'added ' if args.keep else ''}dedicated {noun} surviving {what}"
             + (f" (sites: {args.sites})" if args.sites else "")]
    if args.keep:
        lines.append(f"  kept ({len(r.kept)}, can fail too): {names_line(said.words(r.kept))}")
    if r.scenarios != "all":
        lines.append(f"  line losses {r.scenarios}: the design is checked on those only "
                     "(not proven for every combination)")
    if not r.feasible:
        lines.append("  infeasible: these losses cannot be covered: "
                     + "; ".join(r.uncovered[:10]))
        lines.extend(f"    - {x}" for x in r.reasons)
    elif r.sites.size == 0 and not (args.keep and r.optimal):
        lines.append(f"  no design found: {r.guarantee}")
    elif r.sites.size == 0:
        lines.append("  nothing to add: the kept design is already secure (proven)")
    else:
        lines.append(f"  sites ({r.sites.size}): {names_line(said.words(r.site_names))}")
        status = ("NOT SECURE: the design failed its recheck; proven lower bound "
                  f"{r.lower_bound:g}" if r.verified is False else "optimal (proven)"
                  if r.optimal else
                  f"gap {100 * r.gap:.1f}% to the proven lower bound {r.lower_bound:g}")
        lines.append(f"  total cost: {r.cost:g}; {status}; method {r.method}")
        lines.append(f"  guarantee: {r.guarantee}")
        lines.append(f"  check (losses recomputed): {r.recheck}")
    lines.append("  " + CAUTION)
    d = r.to_dict()
    d["file"] = args.file
    d["caution"] = CAUTION
    emit(args, d, said.text("\n".join(lines)))  # a grid: bus words
    found = r.feasible and (r.sites.size > 0 or (args.keep and r.optimal))
    # a sampled recheck (verified None) that passed does not fail the design
    return 0 if found and r.verified is not False else 1
