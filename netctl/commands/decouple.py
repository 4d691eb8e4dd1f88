"""``netctl decouple FILE``: can feedback keep the disturbances off the regulated outputs?"""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import load_system, parse_names
from netctl.commands._options import CAUTION, UsageError, add_inputs
from netctl.commands._words import wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``decouple`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_inputs(p)
    p.add_argument("--against", choices=("regulated", "measured"), default=None,
                   help="keep the disturbances off the regulated outputs z = Hx (default when "
                        "the file declares some) or off the measured outputs y = Cx")
    p.add_argument("--exit-on", choices=("state-feedback", "measured"), default="state-feedback",
                   help="which answer sets the exit status: decoupling by state feedback "
                        "u = Fx (default) or with the disturbances measured, u = Fx + Gw")
    p.add_argument("--no-fix", action="store_true",
                   help="do not search for the smallest fix")
    p.add_argument("--fix-candidates", type=int, default=200, metavar="K",
                   help="states tried for one more input, nearest the affected outputs "
                        "first (default 200)")
    p.set_defaults(func=_cmd_decouple)


def _cmd_decouple(args: argparse.Namespace) -> int:
    from netctl.errors import OptionError

    if args.fix_candidates < 0:
        raise OptionError(f"--fix-candidates must be >= 0, found {args.fix_candidates}.")
    system = load_system(args)
    if args.inputs is not None:
        system = system.with_inputs(parse_names(system, args.inputs))
    against = args.against or ("regulated" if system.n_regulated else "measured")
    if system.n_disturbances == 0:
        raise UsageError(f"{args.file}: the file declares no disturbances, so there is nothing "
                         "to decouple; mark exogenous signals (weather, feeds, utilities) as "
                         "disturbances (see docs/FORMATS.md).")
    if system.n_regulated == 0 and system.n_outputs == 0:
        raise UsageError(f"{args.file}: the file declares no regulated or measured outputs, so "
                         "nothing is to be protected; declare the outputs to keep the "
                         "disturbances from (see docs/FORMATS.md).")
    n_out = system.n_regulated if against == "regulated" else system.n_outputs
    if n_out == 0:
        raise UsageError(f"{args.file}: the file declares no {against} outputs; declare the "
                         f"outputs to protect, or use --against "
                         f"{'measured' if against == 'regulated' else 'regulated'}.")
    from netctl.structural.decoupling import decoupling  # after the refusals: not needed there

    r = decoupling(system, outputs=against, fixes=not args.no_fix,
                   max_candidates=args.fix_candidates)
    d = r.to_dict()
    # the generic rank of the transfer matrix from u to the outputs is the size of the
    # maximum linking the decoupling test already found (van der Woude 1991)
    d["transfer_rank"] = {"rank": r.input_rank, "least_total_length": r.input_length,
                          "outputs": against, "at_most": min(r.n_inputs, r.n_outputs)}
    d["file"] = args.file
    d["caution"] = CAUTION
    yes = {True: "yes", False: "NO"}
    lines = [f"{args.file}: {r.n_states} states, {r.n_inputs} input(s), {r.n_disturbances} "
             f"disturbance(s), {r.n_outputs} {against} output(s)",
             f"  generic rank of the transfer matrix from the inputs to the {against} "
             f"outputs: {r.input_rank} (at most {min(r.n_inputs, r.n_outputs)})",
             f"  linkings to the {against} outputs: inputs {r.input_rank} path(s), "
             f"{r.input_length} state(s) in all; inputs and disturbances {r.combined_rank} "
             f"path(s), {r.combined_length} state(s)",
             f"  decoupled by {r.state_feedback.question}: {yes[r.state_feedback.solvable]}",
             f"  decoupled with {r.measured.question}: {yes[r.measured.solvable]}"]
    lines += [f"  - {line}" for line in r.reasons()]
    lines.append(f"  {CAUTION}")
    emit(args, d, wording(system).text("\n".join(lines)))  # a grid: bus words
    ok = r.state_feedback.solvable if args.exit_on == "state-feedback" else r.measured.solvable
    return 0 if ok else 1
