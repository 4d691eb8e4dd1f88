"""``netctl node-control FILE``: control capacity of every state (how often it is a driver
across minimum driver sets), control centrality (``--centrality``) and the driver
fraction by in- and out-degree (see :mod:`netctl.structural.node_control`)."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import load_system
from netctl.commands._options import (
    UsageError,
    add_seed,
    add_terms,
    caution,
    links_text,
    progress_enabled,
    terms,
)
from netctl.commands._words import wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``node-control`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_terms(p)
    p.add_argument("--sweeps", type=int, default=400, metavar="K",
                   help="sampling sweeps of minimum driver sets after burn-in (default 400)")
    p.add_argument("--burn-in", type=int, default=50, metavar="K",
                   help="sweeps discarded first (default 50)")
    add_seed(p)
    p.add_argument("--centrality", action="store_true",
                   help="also the control centrality of every state (one assignment for the "
                        "network, then one shortest-path search a state; progress on a "
                        "terminal)")
    p.add_argument("--top", type=int, default=10, metavar="K",
                   help="states listed in the summary (default 10)")
    p.set_defaults(func=_cmd_node_control)


def _cmd_node_control(args: argparse.Namespace) -> int:
    import numpy as np

    from netctl.structural.node_control import (
        control_capacity,
        control_centrality,
        drivers_by_degree,
    )

    for name, value, low in (("--sweeps", args.sweeps, 1), ("--burn-in", args.burn_in, 0),
                             ("--seed", args.seed, 0), ("--top", args.top, 0)):
        if value < low:
            raise UsageError(f"{name} must be at least {low}, found {value}.")
    system = load_system(args)
    said = wording(system)  # a grid's states in bus words
    n = system.n_states
    cap = control_capacity(system, sweeps=args.sweeps, burn_in=args.burn_in, seed=args.seed)
    table = drivers_by_degree(system, cap)
    cent = None
    if args.centrality:
        from netctl.report.progress import count_progress

        cent = control_centrality(system, progress=count_progress(
            "control centrality, states", enabled=progress_enabled(args)))
    d: dict[str, Any] = {"analysis": "node_control", "file": args.file, "n_states": n,
                         "n_links": system.n_links, "model": system.model,
                         "n_unmatched": cap.n_drivers,
                         "driver_fraction": cap.n_drivers / n if n else None,
                         "capacity": cap.to_dict(), "by_degree": table.to_dict(),
                         "centrality": None if cent is None else cent.to_dict()}
    c = cap.capacity
    between = int(np.count_nonzero((c > 0) & (c < 1)))
    t = terms(args)
    lines = [f"{args.file}: {t.of(n)}, {links_text(system.n_links)}, model {system.model}",
             f"  {t.unmatched} in every minimum driver set: {cap.n_drivers}"
             + (f" (n_D = {cap.n_drivers / n:.3g})" if n else ""),
             f"  control capacity ({cap.sweeps} sweeps after {cap.burn_in} burn-in, seed "
             f"{cap.seed}): {int(np.count_nonzero(c == 1))} always drivers, "
             f"{int(np.count_nonzero(c == 0))} never, {between} sometimes"]
    some = np.flatnonzero((c > 0) & (c < 1))
    for i in some[np.lexsort((some, -c[some]))][:args.top]:
        lines.append(f"    {said(system.state_names[i])}: {c[i]:.3g} "
                     f"(standard error {cap.standard_error[i]:.2g})")
    if cent is not None and n:
        k = cent.centrality
        lines.append(f"  control centrality (largest first; generic controllable dimension "
                     f"from that {t.state} alone, of {n}):")
        for i in np.lexsort((np.arange(n), -k))[:args.top]:
            lines.append(f"    {said(system.state_names[i])}: {int(k[i])}")
    lines.append(f"  driver fraction by in-degree (degree: {t.states}, expected fraction of "
                 "them that drive):")
    lines.append("    " + "; ".join(f"{k}: {m}, {f:.3g}" for k, m, f in table.in_degree[:8]))
    lines.append("  by out-degree:")
    lines.append("    " + "; ".join(f"{k}: {m}, {f:.3g}" for k, m, f in table.out_degree[:8]))
    note = caution(args, engineering=False)
    if note:
        lines.append("  " + note)
    emit(args, d, said.text("\n".join(lines)))  # a grid: bus words
    return 0
