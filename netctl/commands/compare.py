"""``netctl compare FILE --null degree --samples K``: is the driver count unusual?"""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import load_system
from netctl.commands._options import (
    UsageError,
    add_executor_options,
    add_samples,
    add_seed,
    add_terms,
    caution,
    links_text,
    progress_enabled,
    terms,
)

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``compare`` verb."""
    from netctl.ensemble.null import NULL_MODELS

    p = subparsers.add_parser(name, parents=[common], help=help)
    add_terms(p)
    p.add_argument("--null", choices=list(NULL_MODELS), default="degree",
                   help="null model: degree = configuration model (stub matching; default), "
                        "swap = degree-preserving link swaps of the network itself, "
                        "erdos-renyi = as many links placed uniformly at random")
    add_samples(p, default=100, help="null-model samples (default 100)")
    add_seed(p, default=None, help="random seed; the same seed gives the same samples on any "
             "executor (default: fresh, printed so the run can be repeated)")
    add_executor_options(p)
    p.set_defaults(func=_cmd_compare)


def _fmt(x: float | None, digits: int = 3) -> str:
    """``digits`` significant digits (small values stay visible), never ``-0``."""
    if x is None:
        return "undefined"
    text = f"{x:.{digits}g}"
    return text[1:] if text.startswith("-") and float(text) == 0 else text


def _cmd_compare(args: argparse.Namespace) -> int:
    from netctl.ensemble import compare_to_null
    from netctl.report.progress import count_progress

    if args.samples < 1:
        raise UsageError(f"--samples must be at least 1, found {args.samples}; use 100 or "
                         "more for a stable mean and spread.")
    if args.seed is not None and args.seed < 0:
        raise UsageError(f"--seed must be >= 0, found {args.seed}.")
    if args.workers is not None and args.workers < 1:
        raise UsageError(f"--workers must be at least 1, found {args.workers}.")
    if args.scheduler is not None and args.executor != "dask":
        raise UsageError(f"--scheduler {args.scheduler} needs --executor dask.")
    system = load_system(args)
    r = compare_to_null(system, null=args.null, samples=args.samples, seed=args.seed,
                        executor=args.executor, workers=args.workers, scheduler=args.scheduler,
                        progress=count_progress("null-model samples",
                                                enabled=progress_enabled(args)))
    d = r.to_dict()
    d["file"] = args.file
    n = r.n_states
    z = r.z_score
    t = terms(args)
    frac = "fraction" if t.name == "engineering" else t.fraction
    lines = [f"{args.file}: {t.of(n)}, {links_text(r.n_links)}, model {r.model}",
             f"  observed {t.inputs}: {r.observed_n_inputs} "
             f"({frac} {_fmt(r.fraction(r.observed_n_inputs))})",
             f"  null model '{r.null}' ({r.n_samples} samples, seed {r.seed}): "
             f"mean {_fmt(r.mean)}, standard deviation {_fmt(r.std)}, standard error of "
             f"the mean {_fmt(r.standard_error, 2)}",
             f"    as fractions of the {t.states}"
             + ("" if t.name == "engineering" else " (n_D)")
             + f": mean {_fmt(r.fraction(r.mean))}, standard "
             f"deviation {_fmt(r.fraction(r.std))}",
             f"  z-score: {_fmt(z)}"
             + ("" if z is not None else " (the samples have no spread)")]
    if r.prediction is not None:
        p = r.prediction.driver_fraction
        lines.append(f"  cavity prediction (Liu, Slotine & Barabasi 2011; larger side, see "
                     f"docs/SCALE.md): {frac} {_fmt(p)} ({_fmt(p * n)} "
                     f"{'inputs' if t.name == 'engineering' else 'driver nodes'})")
    for note in r.notes:
        lines.append(f"  note: {note}")
    lines.append("  (z-score: how many ensemble standard deviations the observed count lies "
                 "from the ensemble mean)")
    closing = caution(args, engineering=False)
    if closing:
        lines.append("  " + closing)
    emit(args, d, "\n".join(lines))
    return 0
