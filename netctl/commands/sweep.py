"""``netctl sweep FILE``: what losing each link or state does (minimum inputs, and the
given design), ``k > 1`` losses by seeded sampling, and attack curves.

Exit status: 0 when the given design (``--inputs``) survives every loss examined, 1 when
some loss breaks it (or it is not controllable to begin with); without ``--inputs`` 0.
"""

from __future__ import annotations

import argparse
import time
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

from netctl.commands._emit import emit, safe_write
from netctl.commands._load import load_system, parse_names
from netctl.commands._options import (
    CAUTION,
    UsageError,
    add_inputs,
    add_samples,
    add_seed,
    links_text,
)
from netctl.commands._words import wording

if TYPE_CHECKING:
    from netctl.structural.robustness import AttackCurve

__all__ = ["register", "progress_printer"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``sweep`` verb."""
    from netctl.structural.robustness import ATTACK_STRATEGIES

    p = subparsers.add_parser(name, parents=[common], help=help)
    add_inputs(p, default=None, what="states with a dedicated input (the design to check)")
    p.add_argument("--elements", choices=("links", "nodes", "both", "grid"), default=None,
                   help="lose links, states (nodes), both, or grid elements (branches, "
                        "transformers, buses, generators by their case IDs) (default: grid "
                        "for a grid file, else both)")
    p.add_argument("--k", type=int, default=1, metavar="K",
                   help="elements lost at once (default 1: every single loss, exactly; "
                        "K > 1: sampled)")
    add_samples(p, default=100, metavar="S", help="samples for K > 1 (default 100)")
    add_seed(p, help="seed for sampling and random attack orders (default 0)")
    p.add_argument("--csv", metavar="FILE", default=None,
                   help="write one row per single loss (K = 1) or per sample (K > 1)")
    p.add_argument("--attack", metavar="STRATEGIES", default=None,
                   help="also compute attack curves for these comma-separated strategies: "
                        + ", ".join(ATTACK_STRATEGIES))
    p.add_argument("--steps", type=int, default=20, help="attack-curve points (default 20)")
    p.add_argument("--attack-csv", metavar="FILE", default=None,
                   help="write the attack curves as CSV")
    p.add_argument("--plot", metavar="FILE", default=None,
                   help="draw the attack curves into an image file (PNG, SVG, PDF)")
    p.set_defaults(func=_cmd_sweep)


def progress_printer(label: str, *, quiet: bool = False
                     ) -> Callable[[int, int], None] | None:
    """A ``progress(done, total)`` callback printing to stderr when it is a terminal
    (never with ``quiet``): :func:`netctl.report.progress.count_progress`."""
    from netctl.report.progress import count_progress

    return count_progress(label, enabled=False if quiet else None)


def _cmd_sweep(args: argparse.Namespace) -> int:
    from netctl.structural.robustness import (
        ATTACK_STRATEGIES,
        AttackCurve,
        attack_curve,
        contingency_sweep,
        sampled_losses,
    )

    if args.k < 1:
        raise UsageError(f"--k must be at least 1, found {args.k}.")
    if args.samples < 1:
        raise UsageError(f"--samples must be at least 1, found {args.samples}.")
    if args.steps < 1:
        raise UsageError(f"--steps must be at least 1, found {args.steps}.")
    strategies: list[str] = []
    if args.attack:
        strategies = [s.strip() for s in args.attack.split(",") if s.strip()]
        bad = [s for s in strategies if s not in ATTACK_STRATEGIES]
        if bad or not strategies:
            raise UsageError(f"--attack: unknown strategy {bad[0] if bad else args.attack!r}; "
                             f"choose from {', '.join(ATTACK_STRATEGIES)} (comma-separated).")
    if (args.attack_csv or args.plot) and not strategies:
        raise UsageError("--attack-csv and --plot need --attack STRATEGIES "
                         f"(from {', '.join(ATTACK_STRATEGIES)}).")
    system = load_system(args)
    if args.inputs is not None:
        system = system.with_inputs(parse_names(system, args.inputs))
    elements = args.elements or ("grid" if system.elements is not None else "both")
    if elements == "grid":
        return _grid_sweep(args, system)
    if system.elements is not None:
        import warnings

        # asked for on purpose, but not what a planner's N-1 means
        warnings.warn(f"--elements {elements} on a grid loses single links and states of "
                      "the model: one direction of a line (a line is a link each way) and "
                      "the terms inside a bus (angle-frequency, damping) are not equipment; "
                      "--elements grid (the default here) loses whole branches, buses and "
                      "generators.", stacklevel=2)
    kinds = ["links", "nodes"] if elements == "both" else [elements]
    result: dict[str, Any] = {"analysis": "sweep", "file": args.file, "k": args.k,
                              "model": system.model}
    lines = [f"{args.file}: {system.n_states} states, {links_text(system.n_links)}, "
             f"model {system.model}"]
    ok = True
    csv_rows: list[list[Any]] = []
    for kind in kinds:
        total = system.n_links if kind == "links" else system.n_states
        if args.k == 1:
            sw = contingency_sweep(system, elements=kind)
            result[kind] = sw.to_dict(rows=bool(args.json or args.out))
            lines.append(f"  single {kind[:-1]} losses ({sw.n_elements}): "
                         f"{sw.costly.size} raise the minimum inputs above {sw.n_inputs}")
            if sw.has_design:
                if not sw.controllable_before:
                    ok = False
                    lines.append("  the given design is NOT structurally controllable even "
                                 "before any loss (run netctl check for the reasons)")
                else:
                    br = sw.breaking
                    ok &= br.size == 0
                    lines.append(f"  {br.size} of them break the given design"
                                 + (":" if br.size else ""))
                    for k in br.tolist()[:20]:
                        lines.append(f"    - {sw.label(k)}: {'; '.join(sw.reasons(k))}")
                    if br.size > 20:
                        lines.append(f"    ... ({br.size - 20} more; --json lists all)")
            for row in (sw.rows() if args.csv else ()):
                csv_rows.append([kind[:-1] if kind == "links" else "state",
                                 row.get("source", row.get("state")),
                                 row.get("target", ""), row["role"], row["n_inputs_after"],
                                 row.get("controllable_after", ""), row.get("rank_lost", ""),
                                 row.get("cut_off", "")])
        else:
            if args.k > total:
                raise UsageError(f"--k {args.k} exceeds the number of {kind} ({total}).")
            sl = sampled_losses(system, elements=kind, k=args.k, samples=args.samples,
                                seed=args.seed, progress=progress_printer(f"sampling {kind}",
                                                          quiet=args.quiet))
            result[kind] = sl.to_dict()
            lines.append(f"  {args.k} {kind} lost at once, {sl.n_samples} samples (seed "
                         f"{args.seed}): minimum inputs rise in "
                         f"{100 * sl.fraction_costly():.1f}% of samples")
            if sl.has_design:
                if not sl.controllable_before:
                    ok = False
                    lines.append("  the given design is NOT structurally controllable even "
                                 "before any loss")
                else:
                    frac = sl.fraction_breaking()
                    ok &= frac == 0
                    lines.append(f"  the given design breaks in {100 * frac:.1f}% of samples")
            for s in range(sl.n_samples):
                csv_rows.append([kind, s, " | ".join(sl.labels(s)),
                                 int(sl.n_inputs_after[s]),
                                 bool(sl.controllable_after[s]) if sl.has_design else ""])
    curves: list[AttackCurve] = []
    for strat in strategies:
        for kind in kinds:
            c = attack_curve(system, elements=kind, strategy=strat, steps=args.steps,
                             seed=args.seed,
                             progress=progress_printer(f"attack {strat} on {kind}",
                                                       quiet=args.quiet))
            curves.append(c)
    if curves:
        result["attack_curves"] = [c.to_dict() for c in curves]
        for c in curves:
            half = c.n_inputs[min(len(c.n_inputs) - 1, len(c.n_inputs) // 2)]
            lines.append(f"  attack {c.strategy} on {c.elements}: minimum inputs "
                         f"{c.n_inputs[0]} -> {half} at "
                         f"{100 * c.fraction_removed[len(c.n_inputs) // 2]:.0f}% removed")
    if args.csv:
        with safe_write(args.csv) as fh:
            from netctl.io._common import SpreadsheetSafeWriter

            w = SpreadsheetSafeWriter(fh)  # no formula injection
            if args.k == 1:
                w.writerow(["element", "source", "target", "role", "n_inputs_after",
                            "controllable_after", "rank_lost", "cut_off"])
            else:
                w.writerow(["elements", "sample", "lost", "n_inputs_after",
                            "controllable_after"])
            w.writerows(csv_rows)
    if args.attack_csv:
        with safe_write(args.attack_csv) as fh:
            fh.write(AttackCurve.CSV_HEADER + "\n")
            for c in curves:
                fh.write("\n".join(c.csv_lines()) + "\n")
    if args.plot:
        _plot(curves, args.plot)
    if args.inputs is not None:
        lines.append(f"  design survives every loss examined: {'yes' if ok else 'NO'}")
    lines.append("  " + CAUTION)
    emit(args, result, wording(system).text("\n".join(lines)))  # a grid: bus words
    return 0 if ok else 1


def _plot(curves: list[AttackCurve], path: str) -> None:
    import os
    import tempfile

    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, axes = plt.subplots(1, 2 if len({c.elements for c in curves}) > 1 else 1,
                             figsize=(10, 4), squeeze=False)
    from netctl.viz.charts import plot_attack_curves as chart

    for ax, kind in zip(axes[0], sorted({c.elements for c in curves})):
        chart([c for c in curves if c.elements == kind], ax=ax)
    fig.tight_layout()
    suffix = os.path.splitext(path)[1] or ".png"
    directory = os.path.dirname(path) or "."
    try:
        fd, tmp = tempfile.mkstemp(prefix=".plot.", suffix=suffix, dir=directory)
    except OSError as exc:
        plt.close(fig)
        raise UsageError(f"cannot write {path}: {exc.strerror or exc}; check that the "
                         "directory exists and is writable.") from None
    os.close(fd)
    try:
        fig.savefig(tmp)
        # mkstemp made the file private (0600); give it the mode every other output file
        # gets (0666 less the umask, as atomic_write does)
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, path)
    except (OSError, ValueError) as exc:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise UsageError(f"cannot write the plot {path}: {exc}. Use a .png, .svg or .pdf "
                         "file name in a writable directory.") from None
    finally:
        plt.close(fig)


def _grid_sweep(args: argparse.Namespace, system: Any) -> int:
    """Element-level N-1 of a grid: every branch, transformer, bus and generator."""
    from netctl.structural.robustness.elements import element_sweep

    if args.attack:
        raise UsageError("--attack works on links or states; add --elements links or nodes.")
    if args.k != 1:
        return _grid_sets(args, system)
    sw = element_sweep(system)
    counts = ", ".join(f"{c} {k}{'es' if k == 'bus' and c != 1 else ('s' if c != 1 else '')}"
                       for k, c in sw.counts().items())
    lines = [f"{args.file}: {system.n_states} states, model {system.model}",
             f"  N-1 over {sw.n_elements} grid elements ({counts})",
             f"  minimum inputs {sw.n_inputs}; {sw.costly.size} loss(es) raise it"
             + (": " + ", ".join(sw.ids[k] for k in sw.costly[:20].tolist())
                + (" ..." if sw.costly.size > 20 else "") if sw.costly.size else ""),
             f"  {int(sw.no_change.sum())} loss(es) change nothing structurally (one circuit "
             "of a parallel pair, a generator carrying none of the design's inputs or "
             "sharing its bus)"]
    ok = True
    if sw.has_design:
        if not sw.controllable_before:
            ok = False
            lines.append("  the given design is NOT structurally controllable even before any "
                         "loss (run netctl check for the reasons)")
        else:
            br = sw.breaking
            ok = br.size == 0
            lines.append(f"  {br.size} loss(es) break the given design" + (":" if br.size else ""))
            for k in br[:20].tolist():
                lines.append(f"    - {sw.ids[k]} ({' - '.join(sw.buses[k])}): "
                             + "; ".join(sw.reasons(k)))
            if br.size > 20:
                lines.append(f"    ... ({br.size - 20} more; --json lists all)")
    if args.csv:
        from netctl.io._common import SpreadsheetSafeWriter

        with safe_write(args.csv) as fh:
            w = SpreadsheetSafeWriter(fh)  # no formula injection
            w.writerow(["element", "kind", "buses", "n_inputs_after", "no_structural_change",
                        "controllable_after", "reasons"])
            for row in sw.rows():
                w.writerow([row["element"], row["kind"], " ".join(row["buses"]),
                            row["n_inputs_after"], row["no_structural_change"],
                            row.get("controllable_after", ""), "; ".join(row.get("reasons", []))])
    lines.append("  " + CAUTION)
    result = {"analysis": "sweep", "file": args.file, "k": 1, "model": system.model,
              "elements": sw.to_dict(rows=bool(args.json or args.out))}
    emit(args, result, wording(system).text("\n".join(lines)))  # a grid: bus words
    return 0 if ok else 1


#: the clock that times a sampled N-k run (for the estimate of an exact one)
_clock = time.perf_counter

#: longest exact N-k run the text suggests (seconds at the measured rate)
EXACT_RUN_LIMIT_S = 600.0


def _duration(seconds: float) -> str:
    """A rough duration in the largest fitting unit (seconds up to years)."""
    for unit, size in (("years", 365.25 * 86400), ("days", 86400), ("hours", 3600),
                       ("minutes", 60)):
        if seconds >= 2 * size:
            return f"{seconds / size:,.0f} {unit}"
    return f"{max(seconds, 1):.0f} s"


def _every_set_hint(n_possible: int, n_sets: int, elapsed: float) -> str:
    """How long examining every set would take at the rate this run measured; the exact
    run is suggested only when that is at most :data:`EXACT_RUN_LIMIT_S`."""
    rate = n_sets / max(elapsed, 1e-6)
    est = n_possible / rate
    if est <= EXACT_RUN_LIMIT_S:
        return (f"--samples {n_possible} examines every set, about {_duration(est)} at this "
                f"run's rate")
    speed = f"{rate:,.0f} sets/s" if rate >= 1 else f"{rate * 3600:,.0f} sets an hour"
    return (f"examining every set would take about {_duration(est)} at this run's rate "
            f"({speed}); a larger --samples narrows the estimate instead")


def _grid_sets(args: argparse.Namespace, system: Any) -> int:
    """N-k of a grid (k = --k): every set of k elements when there are at most --samples,
    else --samples distinct sets drawn from --seed; labelled exact or sampled."""
    from netctl.errors import OptionError
    from netctl.structural.robustness.element_sets import element_set_losses

    t0 = _clock()
    try:
        r = element_set_losses(system, k=args.k, samples=args.samples, seed=args.seed)
    except OptionError as exc:
        raise UsageError(f"--k {args.k}: {exc}") from None
    how = (f"all {r.n_sets} sets of {r.k} (exact)" if r.exact else
           f"SAMPLED: {r.n_sets} of {r.n_possible:,} sets of {r.k} drawn at random "
           f"(--seed {r.seed}); " + _every_set_hint(r.n_possible, r.n_sets, _clock() - t0))
    lines = [f"{args.file}: {system.n_states} states, model {system.model}",
             f"  N-{r.k} over {len(r.ids)} grid elements: {how}",
             f"  minimum inputs {r.n_inputs}; {r.costly.size} of the {r.n_sets} sets raise it"]
    ok = True
    if r.has_design:
        if not r.controllable_before:
            ok = False
            lines.append("  the given design is NOT structurally controllable even before any "
                         "loss (run netctl check for the reasons)")
        else:
            br, joint = r.breaking, r.breaking_jointly
            ok = br.size == 0
            lines.append(f"  {br.size} of the {r.n_sets} sets break the given design; in "
                         f"{joint.size} of them no element alone does" + (":" if joint.size
                                                                         else ""))
            for s in joint[:20].tolist():
                lines.append("    - " + " + ".join(r.labels(s)))
            if joint.size > 20:
                lines.append(f"    ... ({joint.size - 20} more; --json lists all)")
    if args.csv:
        from netctl.io._common import SpreadsheetSafeWriter

        with safe_write(args.csv) as fh:
            w = SpreadsheetSafeWriter(fh)  # no formula injection
            w.writerow(["set", "elements", "n_inputs_after", "controllable_after"])
            for s in range(r.n_sets):
                w.writerow([s, " | ".join(r.labels(s)), int(r.n_inputs_after[s]),
                            bool(r.controllable_after[s]) if r.has_design else ""])
    lines.append("  " + CAUTION)
    result = {"analysis": "sweep", "file": args.file, "k": r.k, "model": system.model,
              "element_sets": r.to_dict(rows=bool(args.json or args.out))}
    emit(args, result, wording(system).text("\n".join(lines)))  # a grid: bus words
    return 0 if ok else 1
