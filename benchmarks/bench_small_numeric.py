"""Whole-process time of the numeric and failure verbs on a 2-line file: two source
trees side by side (issue 15, goal 1: any verb on a 2-line file < 0.25 s).

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_small_numeric.py --before /path/to/old/checkout [--runs 7]
    python3 benchmarks/bench_small_numeric.py --before OLD --large 2000 --runs 1

Times whole processes (start-up, imports and the work, until exit), each command of the
two trees in turn (A B A B ...) after one warm-up pair, so the ratio of each pair is
taken under the same load. Reports the median wall and CPU seconds (user + system of the
child, from ``os.wait4``) of each side and the medians of the per-pair ratios
after/before (on a shared machine the CPU ratio is the figure to quote).

The commands: ``verify``, ``secure`` (the audit of a design), ``energy`` and ``modes``
with their common options on the path ``a -> b -> c`` (``energy``/``modes`` without
``--weights`` are refused, exit 2, as a user meets them first), and the two dense
verbs with sampled weights (independent, with and without ``--inputs a``; laplacian;
symmetric). ``--large N`` instead times ``verify``, ``energy`` and
``modes`` on a generated Erdos-Renyi network of N states (mean degree 6, seed 1), to
check that nothing large got slower.
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
from _two_trees import check_trees, env_for, in_turn, tree_options  # noqa: E402



def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    tree_options(ap, 7)
    ap.add_argument("--warmup", type=int, default=1, metavar="K",
                    help="pairs run first and not counted (default 1; 0 for the long large runs)")
    ap.add_argument("--only", default="", metavar="WORD",
                    help="only the commands whose label contains WORD")
    ap.add_argument("--large", type=int, default=0, metavar="N",
                    help="time verify/energy/modes on a generated network of N states instead")
    args = ap.parse_args()
    py = sys.executable
    with tempfile.TemporaryDirectory() as d:
        check_trees((args.before, args.after), d)  # each side must import its own tree
        cli = ["-m", "netctl.cli"]
        if args.large:
            f = os.path.join(d, "large.csv")
            subprocess.run([py, *cli, "generate", "erdos-renyi", f, "--nodes", str(args.large),
                            "--mean-degree", "6", "--seed", "1"], env=env_for(args.after),
                           cwd=d, check=True, capture_output=True)
            cases = {f"verify, {args.large} states": ["verify", f],
                     f"energy --weights independent, {args.large}": ["energy", f, "--weights",
                                                                      "independent"],
                     f"modes --weights independent, {args.large}": ["modes", f, "--weights",
                                                                     "independent"]}
        else:
            f = os.path.join(d, "two.csv")
            with open(f, "w") as fh:
                fh.write("a,b\nb,c\n")
            cases = {
                "verify": ["verify", f], "verify --inputs a": ["verify", f, "--inputs", "a"],
                "secure (no design: refused)": ["secure", f],
                "secure --inputs a": ["secure", f, "--inputs", "a"],
                "secure --outputs c": ["secure", f, "--outputs", "c"],
                "energy (no weights: refused)": ["energy", f],
                "energy --inputs a (refused)": ["energy", f, "--inputs", "a"],
                "modes (no weights: refused)": ["modes", f],
                "modes --inputs a (refused)": ["modes", f, "--inputs", "a"],
                "energy --weights independent": ["energy", f, "--weights", "independent"],
                "modes --weights independent": ["modes", f, "--weights", "independent"],
                "energy --weights independent --inputs a": ["energy", f, "--weights",
                                                            "independent", "--inputs", "a"],
                "modes --weights independent --inputs a": ["modes", f, "--weights",
                                                          "independent", "--inputs", "a"],
                "energy --weights laplacian": ["energy", f, "--weights", "laplacian"],
                "modes --weights symmetric": ["modes", f, "--weights", "symmetric"],
            }
        cases = {k: v for k, v in cases.items() if args.only in k}
        load = os.getloadavg()
        print(f"# {platform.node()} {platform.processor() or platform.machine()}, "
              f"{os.cpu_count()} CPUs, Python {platform.python_version()}, "
              f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}, load average "
              f"{load[0]:.2f} {load[1]:.2f} {load[2]:.2f}; {args.runs} pairs after "
              f"{args.warmup} warm-up pair(s)")
        print(f"{'command':42}{'before wall':>12}{'after wall':>12}{'before cpu':>12}"
              f"{'after cpu':>12}{'ratio wall':>12}{'ratio cpu':>11}")
        for name, tail in cases.items():
            med, rw, rc = in_turn([*cli, *tail], args.before, args.after, d, args.runs,
                                  args.warmup, ok=(0, 1, 2))
            print(f"{name:42}{med['before'][0]:12.3f}{med['after'][0]:12.3f}"
                  f"{med['before'][1]:12.3f}{med['after'][1]:12.3f}{rw:12.3f}{rc:11.3f}",
                  flush=True)
        load = os.getloadavg()
        print(f"# load average at the end {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")


if __name__ == "__main__":
    main()
