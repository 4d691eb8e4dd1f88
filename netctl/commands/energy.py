"""``netctl energy FILE --inputs ...``: Gramian energy metrics and greedy actuator choice."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands.verify import add_weight_options, resolve_weights, system_with_inputs

__all__ = ["register"]

AUTO_SELECT_LIMIT = 200


def register(subparsers: Any, common: argparse.ArgumentParser) -> None:
    p = subparsers.add_parser(
        "energy", parents=[common],
        help="control energy of an input design (Gramian: smallest eigenvalue, trace, "
             "log det, average energy), average controllability per state, greedy "
             "log-det actuator choice; exit 1 when the Gramian is singular")
    add_weight_options(p, default=None)
    p.add_argument("--horizon", type=float, default=None, metavar="T",
                   help="control time (default: infinite for a stable system, else 1)")
    p.add_argument("--select", type=int, default=None, metavar="K",
                   help="greedy log-det choice of K actuators, compared with the structural "
                        "minimum set (default: as many as that set, up to "
                        f"{AUTO_SELECT_LIMIT} states; 0 = skip)")
    p.add_argument("--top", type=int, default=5, metavar="K",
                   help="states listed by average controllability (default 5)")
    p.set_defaults(func=_cmd_energy)


def _cmd_energy(args: argparse.Namespace) -> int:
    import numpy as np

    from netctl.cli import CAUTION, emit
    from netctl.errors import OptionError
    from netctl.numeric.energy import energy, select_actuators
    from netctl.numeric.realize import PARAMETERIZATIONS, realize

    if args.horizon is not None and not args.horizon > 0:
        raise OptionError(f"--horizon must be a positive time, found {args.horizon}; omit it "
                         "for the infinite-horizon Gramian of a stable system.")
    if args.select is not None and args.select < 0:
        raise OptionError(f"--select must be >= 0, found {args.select}.")
    if args.top < 0:
        raise OptionError(f"--top must be >= 0, found {args.top}.")
    system, where = system_with_inputs(args)
    weights = resolve_weights(args, system)
    real = realize(system, weights=weights, seed=args.seed)
    r = energy(real, horizon=args.horizon)
    d = r.to_dict()
    d["file"] = args.file
    d["inputs_from"] = where
    d["distribution"] = PARAMETERIZATIONS[weights]
    lines = [f"{args.file}: {r.n_states} states, {r.n_inputs} input(s), model {real.model}",
             f"  {where}; weights: {weights} (seed {args.seed})",
             f"  Gramian: {r.horizon_note}",
             f"  smallest eigenvalue {r.lambda_min:.4g} (hardest unit target needs energy "
             f"{'inf' if r.lambda_min <= 0 else f'{1 / r.lambda_min:.4g}'}), largest "
             f"{r.lambda_max:.4g}, trace {r.trace:.4g}, log det {r.log_det:.4g}",
             f"  average minimum energy over unit targets: {r.average_energy:.4g}"]
    if not r.controllable:
        lines.append("  !! the Gramian is singular: these inputs cannot steer every state "
                     "(see netctl verify / netctl modes)")
    from netctl.numeric.energy import node_controllability

    d["node_controllability"] = node_controllability(real).to_dict()
    if args.top and r.n_states:
        order = np.argsort(-r.average_controllability, kind="stable")[:args.top]
        lines.append("  highest average controllability (one input there): " + ", ".join(
            f"{real.state_names[i]} {r.average_controllability[i]:.4g}" for i in order))
    budget = args.select
    if budget is None and r.n_states <= AUTO_SELECT_LIMIT:
        budget = -1  # structural count
    if budget:
        sel = select_actuators(real, budget=None if budget == -1 else budget,
                               horizon=args.horizon)
        d["selection"] = sel.to_dict()
        lines.append(f"  greedy log-det choice of {sel.selected.size}: "
                     f"{', '.join(sel.names(sel.selected))} (log det {sel.objective:.4g}, "
                     f"smallest eigenvalue {sel.lambda_min:.3g})")
        lines.append(f"  structural minimum set: {', '.join(sel.names(sel.structural))} "
                     f"(log det {sel.structural_objective:.4g}, smallest eigenvalue "
                     f"{sel.structural_lambda_min:.3g}); log det uses +{sel.epsilon:.2g} I")
    elif r.n_states > AUTO_SELECT_LIMIT and args.select is None:
        lines.append(f"  (greedy selection skipped above {AUTO_SELECT_LIMIT} states; ask "
                     "with --select K)")
    lines.append("  " + CAUTION)
    d["caution"] = CAUTION
    emit(args, d, "\n".join(lines))
    return 0 if r.controllable else 1
