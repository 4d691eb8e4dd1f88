"""Every verb on a 2-line edge list, whole processes, two source trees in turn (issue 15,
goal 1: < 0.25 s each).

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_small_every_verb.py --before /path/to/old/checkout [--runs 5]

The file is ``a,b`` / ``b,c`` (and, for ``decouple``, the same chain fed by a disturbance
``w`` with a regulated output on ``c``), written to a temporary folder that is also the
working folder, so output files land there. Each command runs with the *before* tree and
then the *after* tree first on ``PYTHONPATH`` (A B A B ..., one warm-up pair), and the row
gives the median wall and CPU seconds of each side and the medians of the paired ratios
after/before (``_two_trees.in_turn``). Exit statuses 0, 1 and 2 count as runs (2: the
refusals, e.g. ``decouple`` on a file without disturbances).
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from _two_trees import check_trees, machine_line, pair_row, tree_options  # noqa: E402

COMMANDS: list[list[str]] = [
    ["--help"], ["inspect", "two.csv"], ["drivers", "two.csv"], ["drivers", "two.csv", "--json"],
    ["sensors", "two.csv"], ["check", "two.csv", "--inputs", "a"], ["roles", "two.csv"],
    ["strong", "two.csv"], ["place", "two.csv"], ["sweep", "two.csv"],
    ["node-control", "two.csv"], ["secure", "two.csv", "--inputs", "a"],
    ["verify", "two.csv", "--inputs", "a"], ["compare", "two.csv"],
    ["decouple", "dist.csv"], ["decouple", "two.csv"],
    ["energy", "two.csv", "--weights", "independent", "--inputs", "a"],
    ["modes", "two.csv", "--weights", "independent", "--inputs", "a"],
    ["map", "two.csv", "--out", "m.html"], ["map", "two.csv", "--out", "m.svg"],
    ["map", "two.csv", "--out", "m.graphml"], ["map", "two.csv", "--out", "m.png"],
    ["report", "two.csv", "--out", "r.html"], ["report", "two.csv", "--out", "r.md"],
    ["report", "two.csv", "--out", "r.json"], ["convert", "two.csv", "t.graphml"],
    ["convert", "two.csv", "t.gml"], ["convert", "two.csv", "t.mtx"],
    ["generate", "erdos-renyi", "--nodes", "5", "g.csv"],
]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    tree_options(ap, runs=5)
    args = ap.parse_args()
    trees = {"before": os.path.abspath(args.before), "after": os.path.abspath(args.after)}
    with tempfile.TemporaryDirectory() as work:
        with open(os.path.join(work, "two.csv"), "w") as fh:
            fh.write("a,b\nb,c\n")
        with open(os.path.join(work, "dist.csv"), "w") as fh:
            fh.write("# disturbances: w\n# regulated: c\nw,a\na,b\nb,c\n")
        check_trees(trees.values(), work)
        print(machine_line())
        print("| command (2-line file) | before wall s | after wall s | before cpu s | "
              "after cpu s | ratio wall | ratio cpu |")
        print("|---|---|---|---|---|---|---|")
        for argv in COMMANDS:
            pair_row(" ".join(argv), ["-m", "netctl", *argv], trees, work, args.runs,
                     ok=(0, 1, 2))


if __name__ == "__main__":
    main()
