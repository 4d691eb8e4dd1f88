"""``netctl generate KIND OUT``: write a seeded synthetic network.

Kinds (:data:`netctl.generate.GENERATORS`): ``erdos-renyi``, ``scale-free``, ``grid``,
``small-world``. The same options and ``--seed`` give the same file, byte for byte. The
format comes from OUT's name (see docs/FORMATS.md); the file is written atomically.
"""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._options import add_json, add_seed

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``generate`` verb (no input file)."""
    from netctl.generate import GENERATORS
    from netctl.io import FORMATS

    p = subparsers.add_parser(name, help=help)
    p.add_argument("kind", choices=list(GENERATORS), metavar="KIND",
                   help="; ".join(f"{k}: {v}" for k, v in GENERATORS.items()))
    p.add_argument("output", metavar="OUT", help="file to write (.csv, .mtx, .npz, ...)")
    p.add_argument("--nodes", type=int, required=True, help="number of nodes")
    p.add_argument("--mean-degree", type=float, default=4.0,
                   help="mean total degree <k> = 2 links / nodes (erdos-renyi, scale-free)")
    p.add_argument("--exponent", type=float, default=2.5,
                   help="degree exponent gamma > 2 (scale-free)")
    p.add_argument("--exponent-in", type=float, default=None, metavar="GAMMA",
                   help="in-degree exponent (scale-free; default: --exponent)")
    p.add_argument("--exponent-out", type=float, default=None, metavar="GAMMA",
                   help="out-degree exponent (scale-free; default: --exponent)")
    p.add_argument("--neighbours", type=int, default=4,
                   help="ring neighbours k, even (small-world)")
    p.add_argument("--rewire", type=float, default=0.1,
                   help="rewiring probability (small-world)")
    add_seed(p)
    p.add_argument("--to", choices=sorted(k for k, v in FORMATS.items() if v[1]),
                   default=None, help="output format (default: from OUT's name)")
    add_json(p, help="print the summary as JSON")
    p.set_defaults(func=_cmd_generate, out=None)


def _cmd_generate(args: argparse.Namespace) -> int:
    from netctl.generate import generate
    from netctl.io import detect_format, write

    g = generate(args.kind, args.nodes, mean_degree=args.mean_degree, exponent=args.exponent,
                 exponent_in=args.exponent_in, exponent_out=args.exponent_out,
                 k=args.neighbours, rewire=args.rewire, seed=args.seed)
    fmt = args.to or detect_format(args.output)
    write(g, args.output, fmt)
    result = {"kind": args.kind, "output": args.output, "format": fmt, "seed": args.seed,
              "n_states": g.n_states, "n_links": g.n_links,
              "mean_degree": 2 * g.n_links / max(g.n_states, 1)}
    emit(args, result, f"{args.output}: {args.kind} network, {g.n_states} nodes, {g.n_links} "
         f"links (seed {args.seed}; invented, for experiments)")
    return 0
