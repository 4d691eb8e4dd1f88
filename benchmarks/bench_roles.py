"""Benchmark: node and link roles and single-loss sweeps against one maximum matching,
and against the brute-force approach (one fresh matching per element), side by side.

Run by hand (not part of the test suite):

    python benchmarks/bench_roles.py                    # n = 10^6, <k_in> = 2 and 4
    python benchmarks/bench_roles.py --n 100000 --mean 2 --repeat 3

The machine is shared and noisy, so the methods run interleaved in ``--repeat`` rounds
(one matching, node roles, link roles, the sweeps, then again) after a warm-up call
(numba compilation excluded), and each is reported by its *minimum* over the rounds,
the least disturbed run; ratios are ratios of minima. Brute force is timed on ``--sample`` random elements --
for a node, delete its row and recompute a maximum matching from scratch; for a link,
delete it and recompute -- and extrapolated linearly to all elements. Writes nothing;
paste the printed Markdown table into benchmarks/RESULTS.md.
"""

from __future__ import annotations

import argparse
import time

import numpy as np
import scipy.sparse as sp

from netctl import StructuredSystem
from netctl.graph import maximum_matching
from netctl.structural.robustness import contingency_sweep
from netctl.structural.roles import link_roles, node_roles


def er_system(n: int, mean_in: float, seed: int) -> StructuredSystem:
    """Directed Erdős–Rényi pattern: Poisson(n * mean_in) random arcs, duplicates merged."""
    rng = np.random.default_rng(seed)
    m = int(rng.poisson(n * mean_in))
    src = rng.integers(0, n, m)
    dst = rng.integers(0, n, m)
    key = np.unique(dst.astype(np.int64) * n + src)
    A = sp.csr_array((np.ones(key.size), (key // n, key % n)), shape=(n, n))
    return StructuredSystem(A=A, B=None, C=None, state_names=(), input_names=(),
                            output_names=())


def interleaved(fns: dict, repeat: int) -> dict:
    """Minimum seconds of each function over ``repeat`` interleaved rounds."""
    for fn in fns.values():
        fn()  # warm-up (compilation, caches)
    best = {k: float("inf") for k in fns}
    for _ in range(repeat):
        for k, fn in fns.items():
            t = time.perf_counter()
            fn()
            best[k] = min(best[k], time.perf_counter() - t)
    return best


def brute_node(system: StructuredSystem, nodes: np.ndarray) -> float:
    """Seconds per node for: delete row v of A, recompute a maximum matching."""
    A = system.A
    n = system.n_states
    t = time.perf_counter()
    for v in nodes.tolist():
        keep = np.ones(n, bool)
        keep[v] = False
        Av = A[keep].tocsr()
        maximum_matching(Av.indptr, Av.indices, n)
    return (time.perf_counter() - t) / nodes.size


def brute_link(system: StructuredSystem, links: np.ndarray) -> float:
    """Seconds per link for: delete the link, recompute a maximum matching."""
    A = system.A
    n = system.n_states
    t = time.perf_counter()
    for k in links.tolist():
        mask = np.ones(A.nnz, bool)
        mask[k] = False
        rows = np.repeat(np.arange(n), np.diff(A.indptr))[mask]
        ptr = np.zeros(n + 1, np.int64)
        np.cumsum(np.bincount(rows, minlength=n), out=ptr[1:])
        maximum_matching(ptr, A.indices[mask], n)
    return (time.perf_counter() - t) / links.size


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=float, default=1e6)
    ap.add_argument("--mean", default="2,4", help="mean in-degrees, comma-separated")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--sample", type=int, default=5)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    n = int(args.n)
    rows = []
    for mean in (float(x) for x in args.mean.split(",")):
        s = er_system(n, mean, args.seed)
        design = s.with_inputs(node_roles(s).critical[:1].tolist() or [0])
        A = s.A
        t = interleaved({
            "match": lambda: maximum_matching(A.indptr, A.indices, n),
            "nodes": lambda: node_roles(s),
            "links": lambda: link_roles(s),
            "sweep_l": lambda: contingency_sweep(s, elements="links"),
            "sweep_n": lambda: contingency_sweep(s, elements="nodes"),
            "sweep_d": lambda: contingency_sweep(design, elements="links"),
        }, args.repeat)
        t_match, t_nodes, t_links = t["match"], t["nodes"], t["links"]
        t_sweep_l, t_sweep_n, t_sweep_d = t["sweep_l"], t["sweep_n"], t["sweep_d"]
        rng = np.random.default_rng(args.seed)
        per_node = brute_node(s, rng.choice(n, args.sample, replace=False))
        per_link = brute_link(s, rng.choice(A.nnz, args.sample, replace=False))
        nr = node_roles(s)
        rows.append((mean, s.n_links, nr.n_inputs, t_match, t_nodes, t_links, t_sweep_l,
                     t_sweep_n, t_sweep_d, per_node * n, per_link * A.nnz))
        print(f"mean {mean}: done", flush=True)
    print()
    print(f"n = {n:,} states, directed Erdős–Rényi, minimum of {args.repeat} interleaved runs "
          f"(brute force: {args.sample} sampled elements, extrapolated)")
    print()
    print("| <k_in> | links | N_D | one matching (s) | node roles (s) | ratio | link roles (s) "
          "| ratio | link sweep (s) | node sweep (s) | link sweep with design (s) "
          "| brute-force node roles (s, extrap.) | speed-up | brute-force link roles "
          "(s, extrap.) | speed-up |")
    print("|" + "---|" * 15)
    for (mean, E, nd, tm, tn, tl, tsl, tsn, tsd, bn, bl) in rows:
        print(f"| {mean:g} | {E:,} | {nd:,} | {tm:.3f} | {tn:.3f} | {tn / tm:.2f}x | {tl:.3f} "
              f"| {tl / tm:.2f}x | {tsl:.3f} | {tsn:.3f} | {tsd:.3f} | {bn:,.0f} "
              f"| {bn / tn:,.0f}x | {bl:,.0f} | {bl / tl:,.0f}x |")


if __name__ == "__main__":
    main()
