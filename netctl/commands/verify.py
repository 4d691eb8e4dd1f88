"""``netctl verify FILE [--inputs ...] --weights W --samples K``: numeric confirmation."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.numeric.realize import PARAMETERIZATIONS

__all__ = ["register", "add_weight_options", "system_with_inputs"]


def add_weight_options(p: argparse.ArgumentParser, *, default: str | None) -> None:
    """``--inputs``, ``--weights``, ``--seed`` (shared by verify, energy, modes)."""
    p.add_argument("--inputs", metavar="NAMES|FILE", default=None,
                   help="states with a dedicated input: 'a,b,c' or a file, one name a line "
                        "(default: the file's inputs, else a minimum dedicated input set)")
    p.add_argument("--weights", choices=list(PARAMETERIZATIONS), default=default,
                   help="which numbers to use: " + "; ".join(
                       f"{k} = {v}" for k, v in PARAMETERIZATIONS.items())
                   + (f" (default: {default})" if default else
                      " (default: given when the file has weights)"))
    p.add_argument("--seed", type=int, default=0, metavar="N",
                   help="random seed of the sampled weights (default 0)")


def system_with_inputs(args: argparse.Namespace) -> tuple[Any, str]:
    """The system with ``--inputs`` (or the file's, or a minimum set) and a note."""
    from netctl.cli import load_system, parse_names
    from netctl.structural import minimum_inputs

    system = load_system(args)
    if args.inputs is not None:
        return system.with_inputs(parse_names(system, args.inputs)), "inputs: --inputs"
    if system.n_inputs:
        return system, "inputs: from the file"
    design = minimum_inputs(system, dedicated=True)
    return (design.apply(system),
            f"inputs: none given, so a minimum dedicated set ({design.drivers.size}) "
            "from the structural analysis")


def resolve_weights(args: argparse.Namespace, system: Any) -> str:
    """``--weights``, or ``given`` for a weighted file; a usage error otherwise."""
    from netctl.errors import OptionError

    if args.weights is not None:
        return str(args.weights)
    if system.weighted:
        return "given"
    raise OptionError(f"{args.file} carries no weights; choose which numbers to use with "
                     f"--weights ({', '.join(k for k in PARAMETERIZATIONS if k != 'given')}).")


def register(subparsers: Any, common: argparse.ArgumentParser) -> None:
    from netctl.numeric.verify import METHODS

    p = subparsers.add_parser(
        "verify", parents=[common],
        help="confirm the structural verdict on sampled or given weights; exit 1 when a "
             "sample disagrees (e.g. symmetries under identical links) or the design is "
             "uncontrollable for every weight (structural) or for these weights")
    add_weight_options(p, default="independent")
    p.add_argument("--samples", type=int, default=3, metavar="K",
                   help="number of sampled realizations (default 3; uniform and given "
                        "weights are deterministic and use one)")
    p.add_argument("--method", choices=list(METHODS), default="auto",
                   help="rank test: staircase (dense, default up to 3000 states), pbh, "
                        "modular (exact, over a prime field), certificate (sparse, large "
                        "networks; default above 3000 states)")
    p.set_defaults(func=_cmd_verify)


def _cmd_verify(args: argparse.Namespace) -> int:
    from netctl.cli import CAUTION, emit
    from netctl.errors import OptionError
    from netctl.numeric.verify import verify

    if args.samples < 1:
        raise OptionError(f"--samples must be at least 1, found {args.samples}; 3 to 10 "
                         "samples are usual.")
    system, where = system_with_inputs(args)
    v = verify(system, weights=args.weights, samples=args.samples, seed=args.seed,
               method=args.method)
    d = v.to_dict()
    d["file"] = args.file
    d["inputs_from"] = where
    d["caution"] = CAUTION
    lines = [f"{args.file}: {v.n_states} states, {v.n_inputs} input(s), model {v.model}",
             f"  {where}",
             f"  weights: {v.weights} ({PARAMETERIZATIONS[v.weights]})",
             f"  method: {v.method}; {len(v.samples)} sample(s), seeds {v.seeds[0]}.."
             f"{v.seeds[-1]}",
             f"  structural: {'controllable' if v.structural_controllable else 'NOT controllable'}"
             f" (generic dimension {v.structural_dimension} of {v.n_states})"]
    for k, (sd, r) in enumerate(zip(v.seeds, v.samples)):
        dim = "inconclusive" if r.dimension is None else r.dimension
        exact = v.exact_dimensions[k] if k < len(v.exact_dimensions) else None
        note = (f" (close to rounding; exact over a prime field: {exact})" if exact is not None
                else " (close to rounding: uncertain)" if v.sample_uncertain(k) else "")
        lines.append(f"  sample {k} (seed {sd}): dimension {dim}, margin "
                     f"{r.margin:.3g} decades{note} -- "
                     f"{'agrees' if v.sample_agrees(k) else 'DISAGREES'}")
    if not v.agrees:
        lines.append("  " + "!" * 72)
    for f in v.findings:
        lines.append(("  !! " if not v.agrees else "  ") + f)
    if not v.agrees:
        lines.append("  " + "!" * 72)
    verdict = v.verdict
    lines.append(("  !! " if verdict.failing else "  ") + verdict.line())
    lines.append("  " + CAUTION)
    emit(args, d, "\n".join(lines))
    return 0 if v.agrees and not verdict.failing else 1
