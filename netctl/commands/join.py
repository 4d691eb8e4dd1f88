"""``netctl join A B ... --ties FILE``: compose subsystems and check the composite.

Subsystems are network or system files (``NAME=PATH`` names one; otherwise the file name
without its suffix). A TOML system description that declares ``[subsystems]`` contributes
each of its subsystems and its ``[[ties]]`` (see docs/FORMATS.md); one without subsystems
is one subsystem with its own inputs. The ties file is CSV with the header
``from_system,from_state,to_system,to_state`` and an optional fifth column ``kind``
(``state``, the default: a link between states; ``signal``: ``from_state`` names an
output and ``to_state`` an input, fed by that output). ``#`` starts a comment.

Exit status: 0 when the composite is structurally controllable with its external inputs
(or when it has none: then the minimum number of inputs is reported), 1 when it is not,
2 on bad usage or input.
"""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import disturbance_summary
from netctl.commands._options import CAUTION, UsageError, add_inputs, links_text

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``join`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    p.add_argument("more", nargs="*", metavar="FILE",
                   help="further subsystem files (NAME=PATH names a subsystem)")
    p.add_argument("--ties", metavar="FILE", default=None,
                   help="CSV: from_system,from_state,to_system,to_state[,kind] (needed unless "
                        "a TOML system description brings its own ties)")
    add_inputs(p, default="the subsystems' own inputs",
               what="composite states ('sub.state') with a dedicated input")
    p.add_argument("--separator", default=".",
                   help="between subsystem and state in composite names (default '.')")
    p.set_defaults(func=_cmd_join)


def _read_parts(path: str, name: str, args: argparse.Namespace) -> dict[str, Any]:
    """Subsystems (and ties) from one file: a TOML description with subsystems gives
    several, any other file one."""
    from netctl.io import read
    from netctl.models import resolve_model
    from netctl.records import Tie

    if Path(path).suffix.lower() == ".toml":
        import importlib.util

        if importlib.util.find_spec("netctl.io.system_spec") is not None:
            from netctl.io.system_spec import read_spec

            spec = read_spec(path)
            if spec.subsystems:
                if spec.unassigned:
                    import warnings

                    warnings.warn(f"{path}: {len(spec.unassigned)} state(s) belong to no "
                                  "subsystem and are left out of the composite: "
                                  + ", ".join(spec.unassigned[:10])
                                  + (" ..." if len(spec.unassigned) > 10 else ""),
                                  stacklevel=2)
                subs = spec.subsystem_systems()
                out: dict[str, Any] = {
                    k: (resolve_model(v, args.model), []) for k, v in subs.items()}
                first = next(iter(out))
                out[first] = (out[first][0], [Tie(*t) for t in spec.ties])
                return out
            return {name: (resolve_model(spec.system, args.model), [])}
    return {name: (resolve_model(read(path, args.format), args.model), [])}


def _cmd_join(args: argparse.Namespace) -> int:
    from netctl.errors import NetctlError
    from netctl.io import read_state_list
    from netctl.structural.interconnect import interconnection

    systems: dict[str, Any] = {}
    ties: list[Any] = []
    for spec in [args.file, *args.more]:
        name, _, path = spec.rpartition("=") if "=" in spec else ("", "", spec)
        name = name or Path(path).name.split(".")[0]
        parts = _read_parts(path, name, args)
        for sub, (system, sub_ties) in parts.items():
            if sub in systems:
                raise UsageError(f"two subsystems are named {sub!r}; name them with "
                                 "NAME=PATH, e.g. plant_a=a.csv.")
            systems[sub] = system
            ties.extend(sub_ties)
    tie_lines: dict[str, int] = {}
    if args.ties:
        from netctl.io.ties import read_tie_lines

        for tie, line in read_tie_lines(args.ties):
            ties.append(tie)
            tie_lines.setdefault(f"tie {tie.label()}:", line)
    if not ties and len(systems) > 1:
        raise UsageError("join needs ties between the subsystems: --ties FILE (CSV "
                         "from_system,from_state,to_system,to_state[,kind]) or a TOML system description "
                         "with [[ties]].")
    inputs = read_state_list(args.inputs) if args.inputs is not None else None
    if inputs is not None and not inputs:
        where = f"{args.inputs}: " if Path(args.inputs).is_file() else ""
        raise UsageError(f"{where}--inputs names no state; give 'sub.state,...' or a file.")
    try:
        r = interconnection(systems, ties, inputs=inputs, separator=args.separator)
    except NetctlError as exc:  # a tie of the --ties file: name its file and line
        at = next((k for lab, k in tie_lines.items() if str(exc).startswith(lab)), None)
        if at is None:
            raise
        raise type(exc)(f"{args.ties}:{at}: {exc}") from None
    d = r.to_dict()
    s = r.composite.system
    if s.n_disturbances:  # emit() prints them apart, as every verb does
        args._disturbances = disturbance_summary(s)
    lines = [f"composite of {', '.join(r.composite.subsystems)}: {s.n_states} states, "
             f"{links_text(s.n_links)}, {len(ties)} tie(s), {s.n_inputs} external input(s)"]
    if r.composite.consumed_inputs:
        lines.append(f"  inputs fed by signal ties: {', '.join(r.composite.consumed_inputs)}")
    if r.composite.approximate:
        lines.append("  note: signal ties reading or driving several states are entered as "
                     "independent links (may be optimistic): "
                     + ", ".join(r.composite.approximate))
    lines.append(f"  minimum inputs: composite {r.n_inputs_composite}, parts separately "
                 f"{r.n_inputs_parts}")
    code = 0
    if r.report is None:
        lines.append("  no external inputs: give --inputs or subsystems with inputs to "
                     "check a design")
    else:
        lines.append(f"  composite structurally controllable: "
                     f"{'yes' if r.controllable else 'NO'}")
        code = 0 if r.controllable else 1
        for f in r.findings:
            bits = []
            if f.unreachable:
                bits.append(f"unreachable: {', '.join(f.unreachable)}")
            if f.in_dilation:
                bits.append(f"in a dilation: {', '.join(f.in_dilation)}")
            if f.fix:
                bits.append(f"add inputs at: {', '.join(f.fix)}")
            alone = {None: "no own inputs", True: "controllable alone",
                     False: "not controllable alone"}[f.controllable_alone]
            lines.append(f"  {f.name} ({f.n_states} states, {alone}): "
                         + ("; ".join(bits) if bits else "fine in the composite"))
        if not r.controllable:
            for reason in r.report.reasons():
                lines.append(f"    - {reason}")
            lines.append(f"  smallest fix: add {r.report.n_missing_inputs} dedicated input(s) "
                         f"at {', '.join(r.report.names(r.report.fix))}")
    lines.append("  " + CAUTION)
    emit(args, d, "\n".join(lines))
    return code
