"""``netctl modes FILE --inputs ...``: modal controllability and exact controllability."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._limits import refuse_dense
from netctl.commands._emit import emit
from netctl.commands._load import resolve_weights, system_with_inputs
from netctl.commands._options import (
    CAUTION,
    NUMERIC_INPUTS_DEFAULT,
    add_inputs,
    add_seed,
    add_sites,
    add_weights,
    numeric_progress,
)
from netctl.commands._words import wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``modes`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_inputs(p, default=NUMERIC_INPUTS_DEFAULT)
    add_weights(p, default=None)
    add_seed(p, help="random seed of the sampled weights (default 0)")
    add_sites(p)
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
    from netctl.errors import OptionError
    from netctl.numeric.realize import PARAMETERIZATIONS, realize
    from netctl.numeric.verdict import MARGIN_DECADES, WEAK_REACH

    if args.weakest < 0:
        raise OptionError(f"--weakest must be >= 0, found {args.weakest}.")
    system, where = system_with_inputs(args)
    said = wording(system)  # a grid's states in bus words
    refuse_dense(system, what='the modal analysis (all eigenvectors of A)', file=args.file)
    weights = resolve_weights(args, system)
    # the dense analyses (and scipy.linalg) load once the options and weights are settled
    from netctl.numeric.exact import exact_controllability
    from netctl.numeric.modal import modal_controllability

    real = realize(system, weights=weights, seed=args.seed)
    tick = numeric_progress(args, "modes", real.n_states, 8.0)
    r = modal_controllability(real, progress=tick)
    sites: Any = "node table"
    if args.sites:
        from netctl.io.sites import read_sites

        sites = read_sites(args.sites, real, kind="actuator").eligible  # overrides the table
    x = exact_controllability(real, progress=tick, sites=sites)
    d = r.to_dict()
    d["file"] = args.file
    d["inputs_from"] = where
    d["distribution"] = PARAMETERIZATIONS[weights]
    d["exact_controllability"] = x.to_dict()
    d["caution"] = CAUTION
    lines = [f"{args.file}: {r.n_states} states, {r.n_inputs} input(s), model {real.model}",
             f"  {where}; weights: {weights}" + (
                 "" if weights == "given" else f" (seed {args.seed})"),
             f"  modes not reached: {len(r.unreached)}" + (
                 f" ({sum(m.multiplicity for m in r.unreached)} eigenvalue(s) counted with "
                 "multiplicity)" if r.unreached else "")]
    if r.unreached:
        lines.append("  " + "!" * 72)
        for m in r.unreached:
            lines.append(f"  !! mode {_ev(m.eigenvalue)} (multiplicity {m.multiplicity}, "
                         f"{m.geometric} eigenvector(s)) is not reached; it lives on "
                         f"{{{_short(said.words(r.names(m.carriers)))}}}")
        lines.append("  " + "!" * 72)
    if args.weakest:
        lines.append(f"  weakest {min(args.weakest, len(r.modes))} mode(s) (reach = cosine "
                     "between left eigenvector and input space, 1 = aligned; not reached "
                     f"at or below {r.tolerance:g}, barely reached below {WEAK_REACH:g}: "
                     "netctl's own thresholds):")
        for m in r.weakest(args.weakest):
            lines.append(f"    {_ev(m.eigenvalue):>24}  x{m.multiplicity}  reach "
                         f"{m.reach:.3g}  on {{{_short(said.words(r.names(m.carriers)), 6)}}}")
    count = (f"exactly {x.n_inputs}" if x.count_certain else
             f"{x.n_inputs} (uncertain: multiplicity margin {x.count_margin:.3g} decades)")
    lines.append(f"  minimum inputs for these weights: {count} (largest geometric "
                 f"multiplicity, at eigenvalue {_ev(x.eigenvalue)}; {x.arithmetic} "
                 "arithmetic)")
    shared = ("" if x.n_drivers == x.n_inputs else
              f"; {x.n_inputs} shared input(s) mixing them also suffice"
              if x.mixing is not None else
              f"; more drivers than the count of {x.n_inputs}: dedicated inputs need "
              f"{x.n_drivers}")
    lines.append(f"  driver set ({x.n_drivers}): {{{_short(said.words(x.names(x.drivers)))}}} -- "
                 + (f"certified: {x.certificate}{shared}" if x.verified else
                    x.certificate))
    if x.sites:
        lines.append(f"  drivers drawn from the actuator sites: {x.sites} ({x.n_eligible} "
                     "state(s))" if x.feasible else
                     f"  !! no driver set on the actuator sites ({x.sites}, {x.n_eligible} "
                     f"state(s)): the mode at eigenvalue {_ev(x.unreachable_mode or 0j)} is "
                     "not reached from any of them; mark more states as actuator sites in "
                     "the node table")
    from netctl.numeric.verdict import judge
    from netctl.structural import controllability

    st = controllability(real, dimension=True)
    s_dim = int(st.controllable_dimension if st.controllable_dimension is not None
                else r.n_states * int(st.controllable))
    from netctl.numeric.rank import staircase

    if tick is not None:
        tick("staircase rank test", 0, 1)
    rt = staircase(real) if r.n_states else None
    if tick is not None:
        tick("staircase rank test", 1, 1)
    num_dim = rt.dimension if rt is not None else 0
    if r.unreached and num_dim == r.n_states:  # the modal test is the sharper one here
        num_dim = r.n_states - sum(m.geometric for m in r.unreached)
    weakest = r.modes[0].reach if r.modes else 1.0
    verdict = judge(n=r.n_states, structural_dimension=s_dim,
                    numeric_dimension=num_dim,
                    numeric_margin=float(rt.margin) if rt is not None else None,
                    weakest_reach=weakest)
    d["verdict"] = verdict.to_dict()
    d["thresholds"] = {"unreached_reach": r.tolerance, "weak_reach": WEAK_REACH,
                       "rank_margin_decades": MARGIN_DECADES,
                       "note": "netctl's own choices, no published source"}
    lines.append(("  !! " if verdict.failing else "  ") + verdict.line())
    lines.append("  " + CAUTION)
    emit(args, d, said.text("\n".join(lines)))  # a grid: bus words
    return 1 if (r.unreached or verdict.failing) else 0
