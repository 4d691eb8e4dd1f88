"""``netctl check FILE --inputs ... [--outputs ...]``: is a given design structurally
controllable (observable)? Exit 0 yes, 1 no."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import SHOWN, emit, names_line
from netctl.commands._load import load_system, parse_names
from netctl.commands._options import (
    UsageError,
    add_inputs,
    add_outputs,
    add_terms,
    caution,
    link_progress,
    terms,
)

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``check`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_terms(p)
    add_inputs(p)
    add_outputs(p)
    p.add_argument("--no-dimension", action="store_true",
                   help="skip the generic controllable dimension (faster on huge failing cases)")
    p.set_defaults(func=_cmd_check)


def _cmd_check(args: argparse.Namespace) -> int:
    from netctl.structural import controllability, observability

    from netctl.commands._words import wording  # a grid's states by bus
    from netctl.commands.drivers import barred_line, not_eligible

    system = load_system(args)
    check_inputs = args.inputs is not None
    check_outputs = args.outputs is not None
    if not check_inputs and not check_outputs:
        # a system description may carry its own design
        check_inputs = system.n_inputs > 0
        check_outputs = system.n_outputs > 0
        if not (check_inputs or check_outputs):
            raise UsageError("check needs --inputs (controllability) and/or --outputs "
                             "(observability): comma-separated state names or a file with "
                             "one name a line (the file itself declares no inputs or "
                             "outputs).")
    if args.inputs is not None:
        system = system.with_inputs(parse_names(system, args.inputs))
    if args.outputs is not None:
        system = system.with_outputs(system.names_of(
            parse_names(system, args.outputs, what="--outputs")))
    reports = []
    # a large system: one progress line a stage (the dimension of a failing design takes
    # 12-15 s at 10^7 links)
    for wanted, analysis, label in ((check_inputs, controllability, "controllability"),
                                    (check_outputs, observability, "observability")):
        if wanted:
            reports.append(analysis(system, dimension=not args.no_dimension,
                                    progress=_hinted(link_progress(args, system, label))))
    t = terms(args)
    said = wording(system)
    lines = [f"{args.file}: {t.of(system.n_states)}, model {system.model}"]
    ok = True
    for r in reports:
        ok &= r.controllable
        word = "controllable" if r.kind == "controllability" else "observable"
        what = (("driver node" if t.name == "network" else "input")
                if r.kind == "controllability" else "sensor")
        what += "s" if r.n_missing_inputs != 1 else ""
        dim = r.controllable_dimension
        lines.append(f"  structurally {word}: {'yes' if r.controllable else 'NO'}"
                     + (f" (generic {word} dimension {dim} of {r.n_states})"
                        if dim is not None and not r.controllable else ""))
        lines.extend(f"    - {cause}" for cause in r.causes(**said.causes(r.kind)))
        if not r.controllable:
            lines.append(f"  smallest fix: add {r.n_missing_inputs} dedicated {what} at "
                         + names_line(said.of(r.fix[:SHOWN]), total=r.fix.size))
            barred = not_eligible(system, r.fix, sensors=r.kind != "controllability")
            if barred is not None and barred.size:
                lines.append("    " + barred_line(system, barred, t,
                                                  sensors=r.kind != "controllability"))
    lines.append("  " + str(caution(args)))

    def full() -> dict[str, Any]:
        result: dict[str, Any] = {"file": args.file}
        parts = []
        for r in reports:
            part = r.to_dict()
            barred = not_eligible(system, r.fix, sensors=r.kind != "controllability")
            if barred is not None and not r.controllable:  # the fix's states it forbids
                part["fix_not_eligible"] = system.names_of(barred)
            parts.append(part)
        if len(reports) == 1:
            result.update(parts[0])
        else:
            for r, part in zip(reports, parts):
                result[r.kind] = part
            result["controllable"] = reports[0].controllable
            result["observable"] = reports[1].controllable
        if said.grid:  # additive: the bus of every state the result names
            result["state_buses"] = said.buses(_named(reports))
        return result

    emit(args, full, said.text("\n".join(lines)))  # a grid: bus words
    return 0 if ok else 1


def _hinted(tick: Any) -> Any:
    """The progress callback ``tick`` with the way to skip the dimension stage named."""
    if tick is None:
        return None

    def hinted(stage: str, done: int, total: int) -> None:
        tick(f"{stage} (--no-dimension skips it)" if stage.endswith("dimension") else stage,
             done, total)

    return hinted


def _named(reports: list[Any]) -> list[str]:
    """Every state a check's JSON names (unreached, dilation, fix), in state order."""
    import numpy as np

    parts = []
    for r in reports:
        parts += [r.inaccessible, r.fix]
        if r.dilation is not None:
            d = r.dilation
            parts += [d.states, d.region, d.fed_by[d.fed_by < r.n_states]]
    idx = np.unique(np.concatenate([np.asarray(p, np.int64) for p in parts]))
    return reports[0].names(idx)
