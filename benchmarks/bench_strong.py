"""Benchmark: strong structural controllability (zero forcing) checks and minimum sets.

Run by hand (not part of the test suite):

    python benchmarks/bench_strong.py                 # check up to 1e6 states, exact limits
    python benchmarks/bench_strong.py --sizes 1e5 --exact-limit 20

Part 1, the check. Sparse random digraphs (G(n, E) with E = 4n links, no self-loops; a
second series with self-loops on a random half of the states). The design is the greedy
set of ``minimum_strong_inputs(method="greedy")`` for the free convention, so every
forcing rule has work to do all the way. Side by side in one run, on the same system:

* ``strong free``      : one forcing pass (the standard rule)
* ``strong as-given``  : two forcing passes (eigenvalue 0 / nonzero eigenvalues)
* ``structural (Lin)`` : ``controllability(dimension=False)`` (matching + reachability),
  the generic test the strong one refines.

Part 2, the search: the greedy search at the same sizes (time, set size, lower bound, gap).

Part 3, the exact search (branch and bound over forts): time to a proven minimum on
undirected random graphs G(n, p) with mean degree about 4 and on grids, with a time limit
per case; the size where it stops proving optimality is the practical limit.
Known values printed beside: Z(P_m x P_n grid) = min(m, n) (AIM Minimum Rank - Special
Graphs Work Group, LAA 428(7):1628-1648, 2008) and Z(Q_d) = 2^(d-1) (same source).
"""

from __future__ import annotations

import argparse
import platform
import time

import networkx as nx
import numpy as np

from netctl import StructuredSystem, controllability
from netctl.structural.strong import minimum_strong_inputs, strong_controllability


def _random_digraph(n: int, rng: np.random.Generator, loops: bool) -> StructuredSystem:
    E = 4 * n
    src = rng.integers(0, n, E)
    dst = rng.integers(0, n, E)
    keep = src != dst
    src, dst = src[keep], dst[keep]
    if loops:
        half = rng.choice(n, n // 2, replace=False)
        src = np.concatenate([src, half])
        dst = np.concatenate([dst, half])
    import warnings
    with warnings.catch_warnings():  # duplicate links of the random draw are merged
        warnings.simplefilter("ignore")
        return StructuredSystem.from_edges(src, dst, n)


def _timed(fn, repeat: int = 1):
    best = np.inf
    out = None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t)
    return best, out


def _undirected(G: nx.Graph) -> StructuredSystem:
    G = nx.convert_node_labels_to_integers(G)
    e = np.array([(u, v) for u, v in G.edges()] + [(v, u) for u, v in G.edges()],
                 dtype=np.int64).reshape(-1, 2)
    return StructuredSystem.from_edges(e[:, 0], e[:, 1], G.number_of_nodes())


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", default="1e4,1e5,1e6")
    ap.add_argument("--exact-limit", type=float, default=60.0, help="seconds per exact case")
    ap.add_argument("--exact-sizes", default="10,15,20,25,30,40,50")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--parts", default="check,exact", help="check, exact or both")
    args = ap.parse_args()
    rng = np.random.default_rng(args.seed)
    stamp = time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime())
    print(f"# bench_strong  python {platform.python_version()}  {stamp}")
    # warm up the compiled kernels
    small = _random_digraph(200, rng, loops=True)
    minimum_strong_inputs(small, diagonal="free", method="greedy")
    strong_controllability(small.with_inputs([0]), diagonal="as-given")
    controllability(small.with_inputs([0]), dimension=False)

    parts = set(args.parts.split(","))
    if "check" in parts:
        _check_part(args, rng)
    if "exact" in parts:
        _exact_part(args)


def _check_part(args: argparse.Namespace, rng: np.random.Generator) -> None:
    print("\n## Check (seconds, best of 3) and greedy search")
    print("| states | links | loops | greedy s | set | lower bound | gap | strong free s | "
          "strong as-given s | structural (Lin) s | free / Lin | as-given / Lin | "
          "ns per link (free) |")
    print("|---|---|---|---|---|---|---|---|---|---|---|---|---|")
    for size in [int(float(x)) for x in args.sizes.split(",")]:
        for loops in (False, True):
            s = _random_digraph(size, rng, loops)
            tg, d = _timed(lambda: minimum_strong_inputs(s, diagonal="free", method="greedy"))
            sys_ = d.apply(s)
            rep = 3 if size <= 100_000 else 2
            tf, rf = _timed(lambda: strong_controllability(sys_, diagonal="free"), rep)
            ta, ra = _timed(lambda: strong_controllability(sys_, diagonal="as-given"), rep)
            tl, rl = _timed(lambda: controllability(sys_, dimension=False), rep)
            assert rf.strongly_controllable and rl.controllable
            print(f"| {size:,} | {s.n_links:,} | {'half' if loops else 'none'} | {tg:.2f} | "
                  f"{d.n_inputs:,} | {d.lower_bound:,} | {d.gap:,} | {tf:.3f} | {ta:.3f} | "
                  f"{tl:.3f} | {tf / tl:.2f} | {ta / tl:.2f} | "
                  f"{1e9 * tf / max(1, s.n_links):.0f} |", flush=True)
            del s, sys_



def _exact_part(args: argparse.Namespace) -> None:
    print(f"\n## Exact minimum (branch and bound over forts), time limit {args.exact_limit:.0f} s"
          " per case")
    print("| graph | states | links | minimum (or best) | proven | lower bound | known value | "
          "exact s | B&B nodes | greedy set | greedy s |")
    print("|---|---|---|---|---|---|---|---|---|---|---|")
    cases = []
    for m in (3, 4, 5, 6, 7):
        cases.append((f"grid {m}x{m}", nx.grid_2d_graph(m, m), m))
    for dd in (3, 4, 5):
        cases.append((f"hypercube Q{dd}", nx.hypercube_graph(dd), 2 ** (dd - 1)))
    for nn in [int(x) for x in args.exact_sizes.split(",")]:
        cases.append((f"G(n, 4/n) seed {args.seed}",
                      nx.gnp_random_graph(nn, 4.0 / nn, seed=args.seed), None))
    for name, G, known in cases:
        s = _undirected(G)
        te, d = _timed(lambda: minimum_strong_inputs(s, diagonal="free", method="exact",
                                                     time_limit=args.exact_limit))
        tg, g = _timed(lambda: minimum_strong_inputs(s, diagonal="free", method="greedy"))
        if known is not None and d.optimal:
            assert d.n_inputs == known, (name, d.n_inputs, known)
        print(f"| {name} | {s.n_states} | {s.n_links} | {d.n_inputs} | "
              f"{'yes' if d.optimal else 'no'} | {d.lower_bound} | "
              f"{known if known is not None else '-'} | {te:.2f} | {d.iterations} | "
              f"{g.n_inputs} | {tg:.3f} |", flush=True)

    print("\n## Exact minimum, directed random digraphs G(n, 3n links), as-given "
          "diagonal with self-loops on a random half")
    print("| states | links | minimum (or best) | proven | lower bound | exact s | greedy set |")
    print("|---|---|---|---|---|---|---|")
    for nn in [int(x) for x in args.exact_sizes.split(",")]:
        r2 = np.random.default_rng(args.seed + nn)
        src = r2.integers(0, nn, 3 * nn)
        dst = r2.integers(0, nn, 3 * nn)
        keep = src != dst
        half = r2.choice(nn, nn // 2, replace=False)
        import warnings
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            s = StructuredSystem.from_edges(np.concatenate([src[keep], half]),
                                            np.concatenate([dst[keep], half]), nn)
        te, d = _timed(lambda: minimum_strong_inputs(s, diagonal="as-given", method="exact",
                                                     time_limit=args.exact_limit))
        g = minimum_strong_inputs(s, diagonal="as-given", method="greedy")
        print(f"| {nn} | {s.n_links} | {d.n_inputs} | {'yes' if d.optimal else 'no'} | "
              f"{d.lower_bound} | {te:.2f} | {g.n_inputs} |", flush=True)


if __name__ == "__main__":
    main()
