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
verbs with sampled weights. ``--large N`` instead times ``verify``, ``energy`` and
``modes`` on a generated Erdos-Renyi network of N states (mean degree 6, seed 1), to
check that nothing large got slower.
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


def run_once(argv: list[str], env: dict[str, str], cwd: str,
             codes: tuple[int, ...] = (0, 1, 2)) -> tuple[float, float]:
    """Wall and CPU seconds of one whole process (output thrown away); ``cwd`` must hold
    no ``netctl`` folder. Exit codes outside ``codes`` stop the benchmark."""
    t0 = time.perf_counter()
    proc = subprocess.Popen(argv, env=env, cwd=cwd, stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    code = os.waitstatus_to_exitcode(status)
    if code not in codes:
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
    ap.add_argument("--runs", type=int, default=7, help="pairs per command (default 7)")
    ap.add_argument("--warmup", type=int, default=1, metavar="K",
                    help="pairs run first and not counted (default 1; 0 for the long large runs)")
    ap.add_argument("--only", default="", metavar="WORD",
                    help="only the commands whose label contains WORD")
    ap.add_argument("--large", type=int, default=0, metavar="N",
                    help="time verify/energy/modes on a generated network of N states instead")
    args = ap.parse_args()
    py = sys.executable
    with tempfile.TemporaryDirectory() as d:
        for tree in (args.before, args.after):  # each side must import its own tree
            where = subprocess.run([py, "-c", "import netctl; print(netctl.__file__)"],
                                   env=env_for(tree), cwd=d, capture_output=True, text=True)
            if not where.stdout.startswith(os.path.abspath(tree)):
                raise SystemExit(f"{tree}: netctl comes from {where.stdout.strip()!r}")
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
            }
        cases = {k: v for k, v in cases.items() if args.only in k}
        load = os.getloadavg()
        print(f"# {platform.node()} {platform.processor() or platform.machine()}, "
              f"{os.cpu_count()} CPUs, Python {platform.python_version()}, "
              f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}, load average "
              f"{load[0]:.2f} {load[1]:.2f} {load[2]:.2f}; {args.runs} pairs after "
              f"{args.warmup} warm-up pair(s)")
        print(f"{'command':34}{'before wall':>12}{'after wall':>12}{'before cpu':>12}"
              f"{'after cpu':>12}{'ratio wall':>12}{'ratio cpu':>11}")
        for name, tail in cases.items():
            rows: dict[str, list[tuple[float, float]]] = {"before": [], "after": []}
            for k in range(args.runs + args.warmup):  # warm-up pairs: the file cache
                pair = {side: run_once([py, *cli, *tail], env_for(tree), d)
                        for side, tree in (("before", args.before), ("after", args.after))}
                if k >= args.warmup:
                    for side in rows:
                        rows[side].append(pair[side])
            med = {s: (statistics.median(w for w, _ in r), statistics.median(c for _, c in r))
                   for s, r in rows.items()}
            rw = statistics.median(a[0] / b[0] for a, b in zip(rows["after"], rows["before"]))
            rc = statistics.median(a[1] / b[1] for a, b in zip(rows["after"], rows["before"]))
            print(f"{name:34}{med['before'][0]:12.3f}{med['after'][0]:12.3f}"
                  f"{med['before'][1]:12.3f}{med['after'][1]:12.3f}{rw:12.3f}{rc:11.3f}",
                  flush=True)
        load = os.getloadavg()
        print(f"# load average at the end {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}")


if __name__ == "__main__":
    main()
