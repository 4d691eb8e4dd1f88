"""Whole-process start-up of netctl: before/after two source trees, side by side.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_startup.py --before /path/to/old/checkout [--runs 7]

Times whole processes (start-up, imports and the work, until exit), each command of the
two trees in turn (A B A B ...), so the ratio of each pair is taken under the same load:

* ``import netctl``,
* ``netctl --help``,
* ``drivers``, ``inspect``, ``check --inputs a`` and ``roles`` on a 2-line edge list,
* a floor: ``import numpy, scipy.sparse, numba`` (what a structural verb cannot avoid
  today: the system holds scipy.sparse arrays and the reader and engine are compiled).

Each tree is put first on ``PYTHONPATH``; the interpreter is this one (``sys.executable``;
call it directly, not through a shell shim, or the shim's own start-up is measured too).
Reports the median wall and CPU seconds (user + system of the child, from
``os.wait4``) of each side and the median of the per-pair ratios after/before.
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # run as a script
from _two_trees import check_trees, env_for, in_turn, run_once, tree_options  # noqa: E402



def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    tree_options(ap, 7)
    args = ap.parse_args()
    py = sys.executable
    with tempfile.TemporaryDirectory() as d:
        two = os.path.join(d, "two.csv")
        with open(two, "w") as fh:
            fh.write("a,b\nb,c\n")
        check_trees((args.before, args.after), d)  # each side must import its own tree
        cases = {
            "import netctl": ["-c", "import netctl"],
            "netctl --help": ["-m", "netctl.cli", "--help"],
            "drivers, 2-line file": ["-m", "netctl.cli", "drivers", two],
            "inspect, 2-line file": ["-m", "netctl.cli", "inspect", two],
            "check --inputs a, 2-line file": ["-m", "netctl.cli", "check", two,
                                              "--inputs", "a"],
            "roles, 2-line file": ["-m", "netctl.cli", "roles", two],
        }
        print(f"# {platform.node()} {platform.processor() or platform.machine()}, "
              f"{os.cpu_count()} CPUs, Python {platform.python_version()}, "
              f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}")
        print(f"{'command':32}{'before wall':>12}{'after wall':>12}{'before cpu':>12}"
              f"{'after cpu':>12}{'ratio wall':>12}{'ratio cpu':>11}")
        for name, tail in cases.items():
            med, rw, rc = in_turn(tail, args.before, args.after, d, args.runs)
            print(f"{name:32}{med['before'][0]:12.3f}{med['after'][0]:12.3f}"
                  f"{med['before'][1]:12.3f}{med['after'][1]:12.3f}{rw:12.3f}{rc:11.3f}")
        floor = [run_once([py, "-c", "import numpy, scipy.sparse, numba"], env_for(None), d)
                 for _ in range(args.runs)]
        bare = [run_once([py, "-c", "pass"], env_for(None), d) for _ in range(args.runs)]
        print(f"{'floor: numpy+scipy.sparse+numba':32}{statistics.median(w for w, _ in floor):12.3f}"
              f"{'':12}{statistics.median(c for _, c in floor):12.3f}")
        print(f"{'bare interpreter':32}{statistics.median(w for w, _ in bare):12.3f}"
              f"{'':12}{statistics.median(c for _, c in bare):12.3f}")


if __name__ == "__main__":
    main()
