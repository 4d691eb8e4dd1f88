"""``netctl verify FILE [--inputs ...] --weights W --samples K``: numeric confirmation."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import system_with_inputs
from netctl.commands._options import (
    CAUTION,
    NUMERIC_INPUTS_DEFAULT,
    add_executor_options,
    add_inputs,
    add_samples,
    add_seed,
    add_weights,
    sample_runner,
)

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``verify`` verb."""
    from netctl.numeric.verify import METHODS

    p = subparsers.add_parser(name, parents=[common], help=help)
    add_inputs(p, default=NUMERIC_INPUTS_DEFAULT)
    add_weights(p, default="independent")
    add_seed(p, help="random seed of the sampled weights (default 0)")
    add_samples(p, default=3, help="number of sampled realizations (default 3; uniform and "
                "given weights are deterministic and use one)")
    p.add_argument("--method", choices=list(METHODS), default="auto",
                   help="rank test: staircase (dense, default up to 3000 states), pbh, "
                        "modular (exact, over a prime field), certificate (sparse, large "
                        "networks; default above 3000 states)")
    add_executor_options(p)
    p.set_defaults(func=_cmd_verify)


def _cmd_verify(args: argparse.Namespace) -> int:
    from netctl.errors import OptionError
    from netctl.numeric.realize import PARAMETERIZATIONS
    from netctl.numeric.verify import verify

    if args.samples < 1:
        raise OptionError(f"--samples must be at least 1, found {args.samples}; 3 to 10 "
                         "samples are usual.")
    system, where = system_with_inputs(args)
    v = verify(system, weights=args.weights, samples=args.samples, seed=args.seed,
               method=args.method, runner=sample_runner(args, system.n_states, "verify"))
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
