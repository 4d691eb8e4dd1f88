"""Benchmark: node-level control measures on all nodes of a 10^4-node network.

Run by hand (not part of the test suite):

    python benchmarks/bench_node_control.py               # N = 10^4, <k> = 4
    python benchmarks/bench_node_control.py --n 2000 --centrality-states 2000

Times control capacity (400 sweeps after 50 burn-in, all nodes at once) and control
centrality of all nodes (one cycle-cover assignment with prices, then one Dijkstra search
a node) on a directed Erdős–Rényi and a static-model scale-free network, beside the
former method (one weighted matching a node on the states it reaches), timed on
``--centrality-states`` nodes and extrapolated linearly to all nodes (say so in
RESULTS.md). Target: all nodes of a 10^4 node network in < 60 s.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from netctl.generate import erdos_renyi, scale_free
from netctl.structural.node_control import (
    _control_centrality_by_assignments,
    control_capacity,
    control_centrality,
)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=int, default=10_000)
    ap.add_argument("--mean-degree", type=float, default=4.0)
    ap.add_argument("--centrality-states", type=int, default=200)
    a = ap.parse_args()
    print("| network | N | links | N_D | capacity (s) | centrality, all nodes (s) "
          "| former method, measured nodes (s) | former, all nodes (s, extrapolated) "
          "| ratio |")
    print("|---|---|---|---|---|---|---|---|---|")
    for name, g in (("erdos-renyi", erdos_renyi(a.n, mean_degree=a.mean_degree, seed=1)),
                    ("scale-free 2.5", scale_free(a.n, mean_degree=a.mean_degree,
                                                  exponent=2.5, seed=1))):
        control_capacity(g, sweeps=1, burn_in=0)  # compile
        t = time.perf_counter()
        c = control_capacity(g, sweeps=400, burn_in=50, seed=1)
        t_cap = time.perf_counter() - t
        control_centrality(g, states=[0])  # compile
        t = time.perf_counter()
        fast = control_centrality(g).centrality
        t_all = time.perf_counter() - t
        k = min(a.centrality_states, a.n)
        t_old = float("nan")
        if k:
            states = np.random.default_rng(0).choice(a.n, k, replace=False)
            t = time.perf_counter()
            old = _control_centrality_by_assignments(g, states=states)
            t_old = time.perf_counter() - t
            assert np.array_equal(old[states], fast[states]), "methods disagree"
        extra = t_old * a.n / k if k else float("nan")
        print(f"| {name} | {a.n} | {g.n_links} | {c.n_drivers} | {t_cap:.1f} | "
              f"{t_all:.2f} | {k}: {t_old:.1f} | {extra:.0f} | {extra / t_all:.0f} |",
              flush=True)


if __name__ == "__main__":
    main()
