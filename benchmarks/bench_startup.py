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
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def run_once(argv: list[str], env: dict[str, str], cwd: str) -> tuple[float, float]:
    """Wall and CPU seconds of one whole process (its output thrown away). ``cwd`` must
    hold no ``netctl`` folder: ``-c`` and ``-m`` put it first on the path."""
    t0 = time.perf_counter()
    proc = subprocess.Popen(argv, env=env, cwd=cwd, stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    proc.returncode = os.waitstatus_to_exitcode(status)
    if proc.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(argv)} exited with {proc.returncode}")
    return wall, usage.ru_utime + usage.ru_stime


def env_for(tree: str | None) -> dict[str, str]:
    env = dict(os.environ)
    if tree is None:
        env.pop("PYTHONPATH", None)
    else:
        env["PYTHONPATH"] = tree
    return env


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", required=True, help="source tree of the baseline (a checkout)")
    ap.add_argument("--after", default=str(ROOT), help="source tree measured (default: this one)")
    ap.add_argument("--runs", type=int, default=7, help="pairs per command (default 7)")
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
            rows = {"before": [], "after": []}
            for k in range(args.runs + 1):  # the first pair warms the file cache
                pair = {side: run_once([py, *tail], env_for(tree), d)
                        for side, tree in (("before", args.before), ("after", args.after))}
                if k:
                    for side in rows:
                        rows[side].append(pair[side])
            med = {s: (statistics.median(w for w, _ in r), statistics.median(c for _, c in r))
                   for s, r in rows.items()}
            rw = statistics.median(a[0] / b[0] for a, b in zip(rows["after"], rows["before"]))
            rc = statistics.median(a[1] / b[1] for a, b in zip(rows["after"], rows["before"]))
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
