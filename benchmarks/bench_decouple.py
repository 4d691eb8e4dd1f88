"""Benchmark: the disturbance-decoupling check at 10^6 states / 3·10^6 links, whole process.

Run by hand (not part of the test suite):

    python benchmarks/bench_decouple.py                       # n = 1e6, E = 3e6, two shapes
    python benchmarks/bench_decouple.py --n 1e5 --shapes 10,5,10

Each case runs in a fresh subprocess (python start, imports, numba's cached kernels loaded,
the random system generated and built, the analysis) and the wall time of that whole
subprocess is reported, next to the parts the child times itself. The system: G(n, E)
random links without self-loops, m dedicated inputs, q disturbances and r regulated outputs
on random states (seeded). The analysis is ``decoupling(system, explain=False,
fixes=False)``: both questions (state feedback; measured disturbance) and, when one fails,
which disturbances fail on their own (one Dijkstra each).
"""

from __future__ import annotations

import argparse
import json
import platform
import subprocess
import sys
import time


def child(n: int, E: int, m: int, q: int, r: int, seed: int) -> None:
    t0 = time.perf_counter()
    import numpy as np

    from netctl.structural.decoupling import decoupling
    from netctl.system import StructuredSystem
    t1 = time.perf_counter()
    rng = np.random.default_rng(seed)
    src, dst = rng.integers(0, n, E), rng.integers(0, n, E)
    keep = src != dst
    s = StructuredSystem.from_edges(src[keep], dst[keep], n_states=n,
                                    inputs=rng.choice(n, m, replace=False))
    s = s.with_disturbances(rng.choice(n, q, replace=False).tolist())
    s = s.with_regulated(rng.choice(n, r, replace=False).tolist())
    t2 = time.perf_counter()
    rep = decoupling(s, explain=False, fixes=False)
    t3 = time.perf_counter()
    print(json.dumps({"import": t1 - t0, "build": t2 - t1, "analysis": t3 - t2,
                      "links": int(s.n_links), "rank": rep.input_rank,
                      "length": rep.input_length, "state_feedback": rep.state_feedback.solvable,
                      "measured": rep.measured.solvable,
                      "failing": int(rep.state_feedback.failing.size)}))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=float, default=1e6)
    ap.add_argument("--links", type=float, default=3e6)
    ap.add_argument("--shapes", default="10,5,10;100,10,100",
                    help="m,q,r triples separated by ';'")
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--child", nargs=6, type=int, default=None, help=argparse.SUPPRESS)
    a = ap.parse_args()
    if a.child:
        child(*a.child)
        return
    n, E = int(a.n), int(a.links)
    print(f"# {platform.processor() or platform.machine()}, python {platform.python_version()}")
    print("| n | links | m, q, r | whole process (s) | import | build | analysis | rank u->z "
          "| least length | state fb | measured |")
    print("|---|---|---|---|---|---|---|---|---|---|---|")
    for shape in a.shapes.split(";"):
        m, q, r = (int(v) for v in shape.split(","))
        cmd = [sys.executable, __file__, "--child", str(n), str(E), str(m), str(q), str(r),
               str(a.seed)]
        subprocess.run(cmd, check=True, capture_output=True)  # warm numba's cache once
        t = time.perf_counter()
        out = subprocess.run(cmd, check=True, capture_output=True, text=True).stdout
        wall = time.perf_counter() - t
        d = json.loads(out.strip().splitlines()[-1])
        print(f"| {n:.0e} | {d['links']} | {m}, {q}, {r} | {wall:.2f} | {d['import']:.2f} | "
              f"{d['build']:.2f} | {d['analysis']:.2f} | {d['rank']} | {d['length']} | "
              f"{'yes' if d['state_feedback'] else 'no'} | {'yes' if d['measured'] else 'no'} |",
              flush=True)


if __name__ == "__main__":
    main()
