"""Whole-process cost of ``map`` and ``report`` on a small file: two source trees in turn.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_small_maps.py --before /path/to/old/tree [--runs 5]
    python3 benchmarks/bench_small_maps.py --before OLD --large 20000 [--runs 3]

Times whole processes (start-up, imports and the work, until exit) of the two trees in
turn (A B A B ...), one warm-up pair first, so the ratio of each pair is taken under the
same load: ``map`` without ``--out`` (the usage message), ``map --out`` .html, .geojson,
.svg, .png, ``report --out`` .html, .json and .md on a 2-line edge list (``a,b`` / ``b,c``),
and ``drivers`` as the reference. Then the floors a form cannot go below: the bare
interpreter, ``import numpy``, and matplotlib's figure with the Agg canvas (what a PNG
of a map above the small map's size needs; a small one is painted with Pillow). ``--large N``: instead, ``map --out`` .html, .png and .svg on a generated directed
Erdős–Rényi network of N states (mean degree 3, seed 1), to check a large map does not
get slower.

Reports medians of wall and CPU seconds (user + system of the child, from ``os.wait4``)
of each side and the median of the per-pair ratios after/before (the CPU ratio is the
figure of record on a shared machine). Compile both trees first (``python3 -m
compileall -q TREE``) so that neither pays for compiling its sources.
"""

from __future__ import annotations

import argparse
import os
import platform
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # run as a script
from _two_trees import (  # noqa: E402
    check_trees,
    env_for,
    floor_row,
    pair_row,
    tree_options,
)



def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    tree_options(ap, 5)
    ap.add_argument("--large", type=int, default=0, metavar="N",
                    help="map a generated network of N states instead")
    args = ap.parse_args()
    trees = {"before": args.before, "after": args.after}
    py = sys.executable
    with tempfile.TemporaryDirectory() as d:
        check_trees(trees.values(), d)  # each side must import its own tree
        print(f"# {platform.machine()}, {os.cpu_count()} CPUs, Python "
              f"{platform.python_version()}, {time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}"
              f", load average {os.getloadavg()[0]:.2f}")
        print("| command | before wall s | after wall s | before cpu s | after cpu s | "
              "ratio wall | ratio cpu |\n|---|---|---|---|---|---|---|")
        out = os.path.join(d, "out")
        if args.large:
            net = os.path.join(d, "large.csv")
            subprocess.run([py, "-m", "netctl.cli", "generate", "erdos-renyi", net, "--nodes",
                            str(args.large), "--mean-degree", "3", "--seed", "1"],
                           env=env_for(args.after), cwd=d, check=True,
                           stdout=subprocess.DEVNULL)
            for suffix in ("html", "png", "svg"):
                pair_row(f"map --out .{suffix}, {args.large} states", ["-m", "netctl.cli", "map",
                      net, "--out", f"{out}.{suffix}"], trees, d, args.runs)
            return
        two = os.path.join(d, "two.csv")
        with open(two, "w") as fh:
            fh.write("a,b\nb,c\n")
        cli = ["-m", "netctl.cli"]
        pair_row("drivers (reference)", [*cli, "drivers", two], trees, d, args.runs)
        pair_row("map (no --out: usage message)", [*cli, "map", two], trees, d, args.runs,
              ok=(2,))
        for suffix in ("html", "geojson", "svg", "png"):
            pair_row(f"map --out .{suffix}", [*cli, "map", two, "--out", f"{out}.{suffix}"],
                  trees, d, args.runs)
        for suffix in ("html", "json", "md"):
            pair_row(f"report --out .{suffix}", [*cli, "report", two, "--out",
                                              f"{out}.{suffix}"], trees, d, args.runs)
        floor_row("bare interpreter", "pass", d, args.runs)
        floor_row("import numpy", "import numpy", d, args.runs)
        floor_row("matplotlib figure + Agg canvas", "import matplotlib.figure, "
              "matplotlib.backends.backend_agg", d, args.runs)
        floor_row("matplotlib.pyplot", "import matplotlib.pyplot", d, args.runs)


if __name__ == "__main__":
    main()
