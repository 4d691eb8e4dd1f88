"""Whole-process cost of ``report`` with its figures: two source trees in turn.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_report_figures.py --before /path/to/old/tree [--runs 5]
    python3 benchmarks/bench_report_figures.py --before OLD --large 2000

Times whole processes (start-up, imports, the analyses, the figures, until exit) of the
two trees in turn (A B A B ...), one warm-up pair first, so the ratio of each pair is
taken under the same load: ``report --out`` .html, .json and .md on a 2-line edge list
(``a,b`` / ``b,c``), then ``report --out`` .html and .md on a generated directed
Erdős–Rényi network of ``--large`` states (default 500; mean degree 3, seed 1), where
the HTML report's map is inline SVG but its null-model and attack-curve charts are still
drawn as PNG. Then the floors: the bare interpreter, ``import numpy``, and matplotlib's
figure with the Agg canvas (what a PNG figure needs).

Reports medians of wall and CPU seconds (user + system of the child, from ``os.wait4``)
of each side and the median of the per-pair ratios after/before (the CPU ratio is the
figure of record on a shared machine). Compile both trees first (``python3 -m
compileall -q TREE``) so that neither pays for compiling its sources.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # run as a script
from _two_trees import (  # noqa: E402
    check_trees,
    env_for,
    floor_row,
    machine_line,
    pair_row,
    tree_options,
)

def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    tree_options(ap, 5)
    ap.add_argument("--large", type=int, default=500, metavar="N",
                    help="states of the larger generated network (0: leave it out)")
    args = ap.parse_args()
    trees = {"before": args.before, "after": args.after}
    cli = ["-m", "netctl.cli"]
    with tempfile.TemporaryDirectory() as d:
        check_trees(trees.values(), d)  # each side must import its own tree
        print(machine_line())
        print("| command | before wall s | after wall s | before cpu s | after cpu s | "
              "ratio wall | ratio cpu |\n|---|---|---|---|---|---|---|")
        out = os.path.join(d, "r")
        two = os.path.join(d, "two.csv")
        with open(two, "w") as fh:
            fh.write("a,b\nb,c\n")
        for suffix in ("html", "json", "md"):
            pair_row(f"report --out .{suffix}, 2-line file", [*cli, "report", two, "--out",
                  f"{out}.{suffix}"], trees, d, args.runs)
        if args.large:
            net = os.path.join(d, "large.csv")
            subprocess.run([sys.executable, *cli, "generate", "erdos-renyi", net, "--nodes",
                            str(args.large), "--mean-degree", "3", "--seed", "1"],
                           env=env_for(args.after), cwd=d, check=True,
                           stdout=subprocess.DEVNULL)
            for suffix in ("html", "md"):
                pair_row(f"report --out .{suffix}, {args.large} states", [
                    *cli, "report", net, "--out", f"{out}.{suffix}"], trees, d, args.runs)
        floor_row("bare interpreter", "pass", d, args.runs)
        floor_row("import numpy", "import numpy", d, args.runs)
        floor_row("matplotlib figure + Agg canvas", "import matplotlib.figure, "
              "matplotlib.backends.backend_agg", d, args.runs)


if __name__ == "__main__":
    main()
