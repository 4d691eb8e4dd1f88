"""``netctl energy FILE --inputs ...``: Gramian energy metrics and greedy actuator choice."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._limits import refuse_dense
from netctl.commands._emit import emit
from netctl.commands._load import resolve_weights, system_with_inputs
from netctl.commands._options import (
    CAUTION,
    NUMERIC_INPUTS_DEFAULT,
    add_executor_options,
    add_inputs,
    add_seed,
    add_weights,
    numeric_progress,
    sample_runner,
)
from netctl.commands._words import wording

__all__ = ["register"]

AUTO_SELECT_LIMIT = 200
#: states from which the per-candidate Gramians of --select run on the executor (local
#: processes by default): one Gramian then takes tens of milliseconds or more, so the
#: workers' start is paid back (our choice, measured on a 2-core machine, no source)
SELECT_EXECUTOR_MIN_STATES = 100


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``energy`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_inputs(p, default=NUMERIC_INPUTS_DEFAULT)
    add_weights(p, default=None)
    add_seed(p, help="random seed of the sampled weights (default 0)")
    p.add_argument("--horizon", type=float, default=None, metavar="T",
                   help="control time (default: infinite for a stable system, else 1; "
                        "'inf' insists on the infinite horizon)")
    p.add_argument("--precision", type=int, default=None, metavar="N",
                   help="also compute the Gramian's smallest eigenvalue with N decimal "
                        "digits (mpmath; up to 200 states)")
    p.add_argument("--select", type=int, default=None, metavar="K",
                   help="greedy log-det choice of K actuators, compared with the structural "
                        "minimum set (default: as many as that set, up to "
                        f"{AUTO_SELECT_LIMIT} states; 0 = skip)")
    p.add_argument("--top", type=int, default=5, metavar="K",
                   help="states listed by average controllability (default 5)")
    add_executor_options(p)
    p.set_defaults(func=_cmd_energy)


def _cmd_energy(args: argparse.Namespace) -> int:
    import numpy as np

    from netctl.errors import OptionError
    from netctl.numeric.realize import PARAMETERIZATIONS, realize

    if args.horizon is not None and not args.horizon > 0:
        raise OptionError(f"--horizon must be a positive time, found {args.horizon}; omit it "
                         "for the infinite-horizon Gramian of a stable system.")
    if args.select is not None and args.select < 0:
        raise OptionError(f"--select must be >= 0, found {args.select}.")
    if args.top < 0:
        raise OptionError(f"--top must be >= 0, found {args.top}.")
    system, where = system_with_inputs(args)
    said = wording(system)  # a grid's states in bus words
    refuse_dense(system, what='the controllability Gramian (energy metrics)', file=args.file)
    weights = resolve_weights(args, system)
    # the Gramians (and scipy.linalg) load once the options and weights are settled
    from netctl.numeric.energy import energy
    from netctl.numeric.selection import select_actuators

    real = realize(system, weights=weights, seed=args.seed)
    r = energy(real, horizon=args.horizon, precision=args.precision,
               progress=numeric_progress(args, "energy", real.n_states, 4.0))
    d = r.to_dict()
    d["file"] = args.file
    d["inputs_from"] = where
    d["distribution"] = PARAMETERIZATIONS[weights]
    resolved = r.lambda_min > max(r.n_states, 1) * 2.220446049250313e-16 * r.lambda_max
    if resolved:
        small = (f"smallest eigenvalue {r.lambda_min:.4g} (hardest unit target needs energy "
                 f"{1 / r.lambda_min:.4g})")
    else:
        small = (f"smallest eigenvalue below {r.lambda_min_upper:.3g}, not resolved in "
                 f"double precision (hardest unit target needs energy >= "
                 f"{r.worst_energy_bound:.3g})")
    lines = [f"{args.file}: {r.n_states} states, {r.n_inputs} input(s), model {real.model}",
             f"  {where}; weights: {weights}" + (
                 "" if weights == "given" else f" (seed {args.seed})"),
             f"  Gramian: {r.horizon_note}; from its Cholesky factor",
             f"  {small}, largest {r.lambda_max:.4g}, trace {r.trace:.4g}, log det "
             f"{'<= ' if not resolved else ''}{r.log_det:.4g}",
             f"  average minimum energy over unit targets: {r.average_energy:.4g}"]
    if r.precision is not None:
        pr = r.precision
        lines.append(f"  with {pr.digits} digits: smallest eigenvalue {pr.smallest} "
                     f"(largest {pr.largest})" if pr.resolved else
                     f"  with {pr.digits} digits: smallest eigenvalue below {pr.bound}, not "
                     f"resolved; rerun with --precision {pr.digits_needed}")
    lines.append(("  !! " if r.verdict.failing else "  ") + r.verdict.line())
    from netctl.numeric.energy import AVERAGE_NOTE
    from netctl.numeric.node_metrics import node_controllability

    d["node_controllability"] = node_controllability(real).to_dict()
    if args.top and r.n_states:
        order = np.argsort(-r.average_controllability, kind="stable")
        part = real.nodes.get("part")
        where_ranked = ""
        if part is not None and system.model == "second-order":
            # inputs act on a bus's frequency (power balance), never on its angle
            order = order[np.asarray(part, dtype=object)[order] == "vel"]
            where_ranked = "; frequency (vel) states only: an input never acts on an angle"
            d["average_controllability_ranked"] = "vel states only (second-order model)"
        order = order[:args.top]
        lines.append(f"  average controllability ({AVERAGE_NOTE}{where_ranked}): " + ", ".join(
            f"{said(real.state_names[i])} {r.average_controllability[i]:.4g}" for i in order))
    budget = args.select
    if budget is None and r.n_states <= AUTO_SELECT_LIMIT:
        budget = -1  # structural count
    if budget:
        sel = select_actuators(
            real, budget=None if budget == -1 else budget, horizon=args.horizon,
            runner=sample_runner(args, real.n_states, "energy", what="candidate Gramians",
                                 min_states=SELECT_EXECUTOR_MIN_STATES),
            progress=numeric_progress(args, "energy, greedy choice", real.n_states,
                                      2.0 * real.n_states))
        d["selection"] = sel.to_dict()
        lines.append(f"  greedy log-det choice of {sel.selected.size} among structurally "
                     f"controllable sets: {', '.join(said.words(sel.names(sel.selected)))} (log det "
                     f"{sel.objective:.4g}, smallest eigenvalue <= {sel.lambda_min:.3g})")
        if not sel.structurally_controllable:
            lines.append("  !! the eligible actuator sites cannot make the system "
                         "structurally controllable: this set is uncontrollable for every "
                         "weight (structural)")
        lines.append(f"  structural minimum set: {', '.join(said.words(sel.names(sel.structural)))} "
                     f"(log det {sel.structural_objective:.4g}, smallest eigenvalue <= "
                     f"{sel.structural_lambda_min:.3g}); log det uses +{sel.epsilon:.2g} I")
    elif r.n_states > AUTO_SELECT_LIMIT and args.select is None:
        lines.append(f"  (greedy selection skipped above {AUTO_SELECT_LIMIT} states; ask "
                     "with --select K)")
    lines.append("  " + CAUTION)
    d["caution"] = CAUTION
    emit(args, d, said.text("\n".join(lines)))  # a grid: bus words
    return 1 if r.verdict.failing else 0
