"""Verbs on the shapes that break near-linear algorithms: chains, stars, two-way chains.

Usage::

    python3 benchmarks/bench_shapes.py --before /path/to/old/checkout [--after .] \
        [--runs 2] [--only secure,strong]

Whole processes (``python -m netctl ...`` by way of ``netctl.cli.main``), before and
after in turn, one warm-up each (numba's cache), medians of the paired runs; wall and
CPU seconds, peak RSS (``os.wait4``). The networks are generated here, in a temporary
folder: a chain ``s0 -> s1 -> ...``, an out-star (``s0`` to every leaf), an in-star
(every leaf to ``s0``) and a two-way chain (both directions of every link), each with
a design of one input on ``s0`` where the verb takes one. Sizes are per case (a case's
"before" may need minutes or tens of GB at larger sizes: the secure audit of a chain of
10^5 states was killed by the out-of-memory killer at 17 GB).
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_verbs import netctl, run_once  # noqa: E402

CASES = [
    # (label, shape, states, verb arguments)
    ("secure --inputs s0", "chain", 30_000, ["secure", "--inputs", "s0"]),
    ("secure --inputs s0", "twoway", 30_000, ["secure", "--inputs", "s0"]),
    ("strong", "outstar", 100_000, ["strong"]),
    ("sweep --elements nodes", "twoway", 100_000, ["sweep", "--elements", "nodes"]),
    ("report --out r.html", "instar", 100_000, ["report", "--out", "{tmp}/r.html"]),
]


def write_shape(shape: str, n: int, path: Path) -> None:
    """One edge list of the named shape with ``n`` states."""
    if shape == "chain":
        lines = (f"s{i},s{i + 1}\n" for i in range(n - 1))
    elif shape == "twoway":
        lines = (f"s{i},s{i + 1}\ns{i + 1},s{i}\n" for i in range(n - 1))
    elif shape == "outstar":
        lines = (f"s0,s{i}\n" for i in range(1, n))
    elif shape == "instar":
        lines = (f"s{i},s0\n" for i in range(1, n))
    else:
        raise ValueError(shape)
    path.write_text("".join(lines))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", required=True, help="checkout to compare against")
    ap.add_argument("--after", default=str(Path(__file__).resolve().parents[1]))
    ap.add_argument("--runs", type=int, default=2)
    ap.add_argument("--only", default="", help="comma-separated verbs to keep")
    args = ap.parse_args()
    keep = [w for w in args.only.split(",") if w]
    print("| command | network (states) | before wall s | after wall s | before cpu s | "
          "after cpu s | ratio wall | ratio cpu | before / after peak MiB | exit |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    with tempfile.TemporaryDirectory() as tmp:
        for label, shape, n, verb in CASES:
            if keep and not any(label.startswith(k) for k in keep):
                continue
            net = Path(tmp) / f"{shape}{n}.csv"
            if not net.exists():
                write_shape(shape, n, net)
            argv = netctl([a.format(tmp=tmp) for a in verb] + [str(net)])
            rows = {"before": [], "after": []}
            for tree in ("before", "after"):  # warm-up (numba's cache)
                run_once(argv, getattr(args, tree), tmp)
            for _ in range(args.runs):
                for tree in ("before", "after"):
                    rows[tree].append(run_once(argv, getattr(args, tree), tmp))
            med = {t: [statistics.median(r[i] for r in rows[t]) for i in range(3)]
                   for t in rows}
            ratios_w = [a[0] / b[0] for b, a in zip(rows["before"], rows["after"])]
            ratios_c = [a[1] / b[1] for b, a in zip(rows["before"], rows["after"])]
            print(f"| {label} | {shape} ({n}) | {med['before'][0]:.2f} | "
                  f"{med['after'][0]:.2f} | {med['before'][1]:.2f} | {med['after'][1]:.2f} | "
                  f"{statistics.median(ratios_w):.2f} | {statistics.median(ratios_c):.2f} | "
                  f"{med['before'][2]:.0f} / {med['after'][2]:.0f} | "
                  f"{rows['before'][-1][3]}/{rows['after'][-1][3]} |", flush=True)


if __name__ == "__main__":
    main()
