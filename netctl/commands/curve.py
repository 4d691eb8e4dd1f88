"""``netctl curve``: driver-node fraction against mean degree for random-network families,
cavity prediction and simulation side by side (table, JSON, plot); no input file."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._options import (
    UsageError,
    add_json,
    add_out,
    add_quiet,
    add_seed,
    add_terms,
    caution,
    progress_enabled,
)

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``curve`` verb (no input file)."""
    p = subparsers.add_parser(name, help=help)
    # the names of netctl.ensemble.curves.CURVE_FAMILIES (not imported here: it loads
    # scipy.optimize and numba, which parsing must not)
    p.add_argument("--family", action="append", choices=["erdos-renyi", "scale-free"],
                   default=None,
                   help="network family (repeat for several; default both)")
    p.add_argument("--exponents", default="2.5", metavar="G[,G...]",
                   help="degree exponents of the scale-free family (default 2.5)")
    p.add_argument("--mean-degrees", default="1,2,3,4,5,6,8,10,12", metavar="K[,K...]",
                   help="mean total degrees <k> = 2 L / N (default 1,2,3,4,5,6,8,10,12)")
    p.add_argument("--nodes", type=int, default=10_000, help="simulated size (default 10^4)")
    p.add_argument("--samples", type=int, default=5,
                   help="simulated networks per point (default 5)")
    add_seed(p)
    p.add_argument("--plot", metavar="FILE", default=None,
                   help="also draw the curves (.png, .svg or .pdf)")
    add_json(p)
    add_out(p)
    add_quiet(p)
    add_terms(p)
    p.set_defaults(func=_cmd_curve)


def _numbers(text: str, what: str) -> list[float]:
    try:
        return [float(x) for x in text.split(",") if x.strip()]
    except ValueError:
        raise UsageError(f"{what} must be comma-separated numbers, found {text!r}.") from None


def _cmd_curve(args: argparse.Namespace) -> int:
    from netctl.ensemble.curves import driver_fraction_curve
    from netctl.report.progress import count_progress

    ks = _numbers(args.mean_degrees, "--mean-degrees")
    gammas = _numbers(args.exponents, "--exponents")
    if args.plot:
        from netctl.viz.output import figure_format
        figure_format(args.plot)  # reject a bad suffix before any work
    if args.samples < 1 or args.nodes < 10:
        raise UsageError(f"--samples must be >= 1 and --nodes >= 10, found {args.samples} "
                         f"and {args.nodes}.")
    jobs = []
    for fam in args.family or ["erdos-renyi", "scale-free"]:
        for g in (gammas if fam == "scale-free" else [None]):
            jobs.append((fam, g))
    curves = []
    for i, (fam, g) in enumerate(jobs):
        tick = count_progress(f"[{i + 1}/{len(jobs)}] {fam}" + (f" gamma {g}" if g else "")
                              + ", networks", enabled=progress_enabled(args))
        curves.append(driver_fraction_curve(fam, ks, n_states=args.nodes,
                                            samples=args.samples, exponent=g or 2.5,
                                            seed=args.seed, progress=tick))
    lines = [f"driver-node fraction n_D against mean degree <k> = 2 L / N "
             f"(N = {args.nodes}, {args.samples} networks a point, seed {args.seed}; "
             "simulated: mean +/- standard error)"]
    labels = {}
    for c in curves:
        label = c.family + (f" gamma {c.exponent:g}" if c.exponent else "")
        labels[label] = (c.mean_degree, c.predicted, c.simulated_mean,
                         c.simulated_standard_error)
        lines.append(f"  {label}")
        lines.append(f"    {'<k>':>6}  {'cavity':>9}  {'simulated':>21}")
        for k, p, m, e in zip(c.mean_degree, c.predicted, c.simulated_mean,
                              c.simulated_standard_error):
            lines.append(f"    {k:6.3g}  {p:9.3g}  {m:9.3g} +/- {e:<9.2g}")
    if args.plot:
        from netctl.viz.curves import plot_driver_curves
        from netctl.viz.output import save_figure

        ax = plot_driver_curves(labels)
        save_figure(ax.figure, args.plot)
        lines.append(f"  plot written to {args.plot}")
    note = caution(args, engineering=False)
    if note:
        lines.append("  " + note)
    emit(args, {"analysis": "driver_fraction_curves",
                "curves": [c.to_dict() for c in curves]}, "\n".join(lines))
    return 0
