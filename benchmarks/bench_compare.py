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
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def run_once(argv: list[str], env: dict[str, str], cwd: str) -> tuple[float, float]:
    """Wall and CPU seconds of one whole process and the children it waited for (its
    output thrown away). ``cwd`` must hold no ``netctl`` folder."""
    t0 = time.perf_counter()
    proc = subprocess.Popen(argv, env=env, cwd=cwd, stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    code = os.waitstatus_to_exitcode(status)
    if code not in (0, 1):
        raise SystemExit(f"{' '.join(argv)} exited with {code}")
    return wall, usage.ru_utime + usage.ru_stime


def env_for(tree: str) -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = tree
    return env


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", required=True, help="source tree of the baseline (a checkout)")
    ap.add_argument("--after", default=str(ROOT), help="source tree measured (default: this one)")
    ap.add_argument("--runs", type=int, default=5, help="pairs per command (default 5)")
    ap.add_argument("--large", help="a large network file for the spot check")
    ap.add_argument("--large-samples", type=int, default=20,
                    help="null-model samples on the large file (default 20)")
    ap.add_argument("--only-large", action="store_true", help="skip the 2-line cases")
    args = ap.parse_args()
    py = sys.executable
    with tempfile.TemporaryDirectory() as d:
        two = os.path.join(d, "two.csv")
        with open(two, "w") as fh:
            fh.write("a,b\nb,c\n")
        for tree in (args.before, args.after):  # each side must import its own tree
            where = subprocess.run([py, "-c", "import netctl; print(netctl.__file__)"],
                                   env=env_for(tree), cwd=d, capture_output=True, text=True)
            if not where.stdout.startswith(os.path.abspath(tree)):
                raise SystemExit(f"{tree}: netctl comes from {where.stdout.strip()!r}")
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
        print(f"# {platform.node()} {platform.processor() or platform.machine()}, "
              f"{os.cpu_count()} CPUs, Python {platform.python_version()}, "
              f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}, "
              f"load average {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
        print(f"{'command':30}{'before wall':>12}{'after wall':>12}{'before cpu':>12}"
              f"{'after cpu':>12}{'ratio wall':>12}{'ratio cpu':>11}")
        for name, tail in cases.items():
            rows: dict[str, list[tuple[float, float]]] = {"before": [], "after": []}
            for k in range(args.runs + 1):  # the first pair warms caches
                pair = {side: run_once([py, *tail], env_for(tree), d)
                        for side, tree in (("before", args.before), ("after", args.after))}
                if k:
                    for side in rows:
                        rows[side].append(pair[side])
            med = {s: (statistics.median(w for w, _ in r), statistics.median(c for _, c in r))
                   for s, r in rows.items()}
            rw = statistics.median(a[0] / b[0] for a, b in zip(rows["after"], rows["before"]))
            rc = statistics.median(a[1] / b[1] for a, b in zip(rows["after"], rows["before"]))
            print(f"{name:30}{med['before'][0]:12.3f}{med['after'][0]:12.3f}"
                  f"{med['before'][1]:12.3f}{med['after'][1]:12.3f}{rw:12.3f}{rc:11.3f}",
                  flush=True)
        print(f"# load average at the end {' '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
