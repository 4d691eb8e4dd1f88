"""Whole-process time of ``netctl compare``: before/after two source trees, side by side.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_compare.py --before /path/to/old/checkout [--runs 5]
        [--large NETWORK_FILE --large-samples 20]

Times whole processes (start-up, imports, the null-model samples and the cavity
prediction, until exit; CPU includes the worker processes, which each run waits for),
the two trees in turn (A B A B ...), after one warm-up pair, so that each pair's ratio
is taken under the same load:

* ``compare`` on a 2-line edge list (``a,b`` / ``b,c``) with its common options:
  the default (degree null, 100 samples, local executor), ``--samples 10``,
  ``--null swap``, ``--null erdos-renyi`` and ``--terms network``;
* with ``--large``, ``compare`` on that file (e.g. a generated network of 10^5 states:
  ``netctl generate erdos-renyi big.csv --nodes 100000 --mean-degree 4``), to check that
  large cases did not get slower.

Each tree is put first on ``PYTHONPATH``; the interpreter is this one. Prints the load
average, the median wall and CPU seconds (user + system, from ``os.wait4``) of each side,
and the medians of the per-pair ratios after/before (the CPU ratio is the figure of
record on a shared machine).
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # run as a script
from _two_trees import check_trees, in_turn, machine_line, tree_options  # noqa: E402



def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    tree_options(ap, 5)
    ap.add_argument("--large", help="a large network file for the spot check")
    ap.add_argument("--large-samples", type=int, default=20,
                    help="null-model samples on the large file (default 20)")
    ap.add_argument("--only-large", action="store_true", help="skip the 2-line cases")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as d:
        two = os.path.join(d, "two.csv")
        with open(two, "w") as fh:
            fh.write("a,b\nb,c\n")
        check_trees((args.before, args.after), d)  # each side must import its own tree
        verb = ["-m", "netctl.cli", "compare"]
        cases: dict[str, list[str]] = {}
        if not args.only_large:
            cases.update({
                "compare, 2-line file": [*verb, two, "--seed", "1"],
                "  --samples 10": [*verb, two, "--seed", "1", "--samples", "10"],
                "  --null swap": [*verb, two, "--seed", "1", "--null", "swap"],
                "  --null erdos-renyi": [*verb, two, "--seed", "1", "--null", "erdos-renyi"],
                "  --terms network": [*verb, two, "--seed", "1", "--terms", "network"],
            })
        if args.large:
            big = os.path.abspath(args.large)
            cases[f"compare {os.path.basename(big)}"] = [
                *verb, big, "--seed", "1", "--samples", str(args.large_samples)]
        print(machine_line())
        print(f"{'command':30}{'before wall':>12}{'after wall':>12}{'before cpu':>12}"
              f"{'after cpu':>12}{'ratio wall':>12}{'ratio cpu':>11}")
        for name, tail in cases.items():
            med, rw, rc = in_turn(tail, args.before, args.after, d, args.runs)
            print(f"{name:30}{med['before'][0]:12.3f}{med['after'][0]:12.3f}"
                  f"{med['before'][1]:12.3f}{med['after'][1]:12.3f}{rw:12.3f}{rc:11.3f}",
                  flush=True)
        print(f"# load average at the end {' '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
