"""``netctl modes FILE --inputs ...``: modal controllability and exact controllability."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands.verify import add_weight_options, resolve_weights, system_with_inputs

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser) -> None:
    p = subparsers.add_parser(
        "modes", parents=[common],
        help="how strongly the inputs reach each mode (weakest first) and the minimum "
             "inputs for these weights (largest eigenvalue multiplicity); exit 1 when a "
             "mode is not reached")
    add_weight_options(p, default=None)
    p.add_argument("--weakest", type=int, default=5, metavar="K",
                   help="modes listed, weakest first (default 5; --json lists all)")
    p.set_defaults(func=_cmd_modes)


def _ev(z: complex) -> str:
    z = complex(round(z.real, 12) + 0.0, round(z.imag, 12) + 0.0)
    if abs(z.imag) <= 1e-12 * max(1.0, abs(z)):
        return f"{z.real:.6g}"
    return f"{z.real:.6g}{z.imag:+.6g}j"


def _short(names: list[str], limit: int = 10) -> str:
    return ", ".join(names[:limit]) + (f", ... ({len(names) - limit} more)"
                                       if len(names) > limit else "")


def _cmd_modes(args: argparse.Namespace) -> int:
    from netctl.cli import CAUTION, emit
    from netctl.errors import OptionError
    from netctl.numeric.exact import exact_controllability
    from netctl.numeric.modal import modal_controllability
    from netctl.numeric.realize import PARAMETERIZATIONS, realize

    if args.weakest < 0:
        raise OptionError(f"--weakest must be >= 0, found {args.weakest}.")
    system, where = system_with_inputs(args)
    weights = resolve_weights(args, system)
    real = realize(system, weights=weights, seed=args.seed)
    r = modal_controllability(real)
    x = exact_controllability(real)
    d = r.to_dict()
    d["file"] = args.file
    d["inputs_from"] = where
    d["distribution"] = PARAMETERIZATIONS[weights]
    d["exact_controllability"] = x.to_dict()
    d["caution"] = CAUTION
    lines = [f"{args.file}: {r.n_states} states, {r.n_inputs} input(s), model {real.model}",
             f"  {where}; weights: {weights} (seed {args.seed})",
             f"  modes not reached: {len(r.unreached)}" + (
                 f" ({sum(m.multiplicity for m in r.unreached)} eigenvalue(s) counted with "
                 "multiplicity)" if r.unreached else "")]
    if r.unreached:
        lines.append("  " + "!" * 72)
        for m in r.unreached:
            lines.append(f"  !! mode {_ev(m.eigenvalue)} (multiplicity {m.multiplicity}, "
                         f"{m.geometric} eigenvector(s)) is not reached; it lives on "
                         f"{{{_short(r.names(m.carriers))}}}")
        lines.append("  " + "!" * 72)
    if args.weakest:
        lines.append(f"  weakest {min(args.weakest, len(r.modes))} mode(s) (reach = cosine "
                     "between left eigenvector and input space, 1 = aligned):")
        for m in r.weakest(args.weakest):
            lines.append(f"    {_ev(m.eigenvalue):>24}  x{m.multiplicity}  reach "
                         f"{m.reach:.3g}  on {{{_short(r.names(m.carriers), 6)}}}")
    lines.append(f"  exact controllability (these weights): at least {x.n_inputs} input(s) "
                 f"(largest geometric multiplicity, at eigenvalue {_ev(x.eigenvalue)}); "
                 f"dedicated inputs at {{{_short(x.names(x.drivers))}}} "
                 f"{'suffice (staircase-verified)' if x.verified else 'did NOT verify'}")
    lines.append("  " + CAUTION)
    emit(args, d, "\n".join(lines))
    return 1 if r.unreached else 0
