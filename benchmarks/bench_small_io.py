"""Whole-process cost of ``decouple``, ``convert`` and ``map --out x.graphml`` on a small
file: two source trees in turn (issue 15, goal 1: under 0.25 s).

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_small_io.py --before /path/to/old/tree [--runs 9]
    python3 benchmarks/bench_small_io.py --before OLD --large 200000 [--runs 3]

Times whole processes (start-up, imports and the work, until exit) of the two trees in
turn (A B A B ...), one warm-up pair first, so the ratio of each pair is taken under the
same load: ``decouple`` on a 3-line file (``a,b`` / ``b,c`` and a disturbance ``w -> a``
with ``c`` regulated, declared by ``#`` comment lines) and its refusal of the 2-line file
(no disturbances, exit 2); ``convert`` of the 2-line file to .graphml, .gml and .mtx;
``map --out`` .graphml; and ``drivers`` as the reference. ``--large N``: instead, the
same conversions and ``decouple`` on a generated directed Erdős–Rényi network of N
states (mean degree 3, seed 1; for decouple, a disturbance and a regulated output added
by comment lines), to check that large inputs do not get slower.

Reports medians of wall and CPU seconds (user + system of the child, from ``os.wait4``)
of each side and the median of the per-pair ratios after/before. Compile both trees
first (``python3 -m compileall -q TREE``) so that neither pays for compiling its sources.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # run as a script
from _two_trees import check_trees, env_for, machine_line, pair_row, tree_options  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    tree_options(ap, 9)
    ap.add_argument("--large", type=int, default=0, metavar="N",
                    help="convert and decouple a generated network of N states instead")
    args = ap.parse_args()
    trees = {"before": args.before, "after": args.after}
    py = sys.executable
    cli = ["-m", "netctl.cli"]
    with tempfile.TemporaryDirectory() as d:
        check_trees(trees.values(), d)  # each side must import its own tree
        print(machine_line())
        print("| command | before wall s | after wall s | before cpu s | after cpu s | "
              "ratio wall | ratio cpu |\n|---|---|---|---|---|---|---|", flush=True)
        out = os.path.join(d, "out")
        if args.large:
            net = os.path.join(d, "large.csv")
            subprocess.run([py, *cli, "generate", "erdos-renyi", net, "--nodes",
                            str(args.large), "--mean-degree", "3", "--seed", "1"],
                           env=env_for(args.after), cwd=d, check=True,
                           stdout=subprocess.DEVNULL)
            with open(net, encoding="utf-8") as fh:
                body = fh.read()
            first = body.split("\n", 1)[0].split(",")[0].split()[0]
            dist = os.path.join(d, "large_dist.csv")
            with open(dist, "w", encoding="utf-8") as fh:
                fh.write(f"# disturbances: w\n# regulated: {first}\n{body}w,{first}\n")
            for suffix in ("graphml", "gml", "mtx"):
                pair_row(f"convert to .{suffix}, {args.large} states",
                         [*cli, "convert", net, f"{out}.{suffix}"], trees, d, args.runs)
            pair_row(f"decouple, {args.large} states", [*cli, "decouple", dist], trees, d,
                     args.runs)
            return
        two = os.path.join(d, "two.csv")
        with open(two, "w") as fh:
            fh.write("a,b\nb,c\n")
        three = os.path.join(d, "three.csv")
        with open(three, "w") as fh:
            fh.write("# disturbances: w\n# regulated: c\na,b\nb,c\nw,a\n")
        pair_row("drivers (reference)", [*cli, "drivers", two], trees, d, args.runs)
        pair_row("decouple, 3-line file", [*cli, "decouple", three], trees, d, args.runs)
        pair_row("decouple, 2-line file (refused)", [*cli, "decouple", two], trees, d,
                 args.runs, ok=(2,))
        for suffix in ("graphml", "gml", "mtx"):
            pair_row(f"convert to .{suffix}", [*cli, "convert", two, f"{out}.{suffix}"],
                     trees, d, args.runs)
        pair_row("map --out .graphml", [*cli, "map", two, "--out", f"{out}.m.graphml"],
                 trees, d, args.runs)


if __name__ == "__main__":
    main()
