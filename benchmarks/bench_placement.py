"""Benchmark: placement under constraints (run by hand, not part of the test suite).

    python benchmarks/bench_placement.py                 # default sizes, a few minutes
    python benchmarks/bench_placement.py --quick         # small sizes only

Three parts, each side by side in one run (ratios, since the machine is shared):

1. Exact min-cost dedicated placement (``place_inputs``, assignment on the
   over-determined Dulmage-Mendelsohn block) against (a) the foundation's unit-cost
   count ``minimum_inputs(dedicated=True)`` and (b) the unreduced min-cost assignment of
   the REFERENCES.md section 3 flow construction on all n rows (same optimum; checked).
   Directed Erdos-Renyi networks (n * arcs/n random arc pairs, duplicates and self-loops
   dropped), n up to 10^5, costs uniform integers 1..9, every state eligible ("all") or
   a random 10% of the states with in-degree >= 2 forbidden ("-10%").
2. Candidate actuators (each acting on 1-3 random states, cost 1..9, n/5 of them):
   exact MILP (HiGHS) size, time and status against the greedy's time and proven gap,
   growing n until the MILP hits the time limit: the MILP size limits.
3. Target control: the greedy of Gao et al. on 10^5 states, 1000 random targets.
"""

from __future__ import annotations

import argparse
import platform
import sys
import time
from pathlib import Path

import numpy as np
import scipy.sparse as sp

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from netctl import StructuredSystem, minimum_inputs  # noqa: E402
from netctl.structural._engine import structure_of  # noqa: E402
from netctl.records import Candidates, Sites  # noqa: E402
from netctl.structural.placement import place_inputs  # noqa: E402
from netctl.structural.target import gao_greedy_drivers  # noqa: E402


def er(n: int, k: float, seed: int) -> StructuredSystem:
    rng = np.random.default_rng(seed)
    m = int(n * k)
    src = rng.integers(0, n, m)
    dst = rng.integers(0, n, m)
    keep = src != dst
    key = np.unique(src[keep] * n + dst[keep])
    return StructuredSystem.from_edges(key // n, key % n, n)


def unreduced_assignment(s: StructuredSystem, eligible: np.ndarray, cost: np.ndarray) -> float:
    """The REFERENCES.md section 3 construction on all rows, as one assignment.

    Rows: every state. Columns: states (a_ij != 0, cost 0), a private column per
    eligible state (cost c_i), a column per source component (cost c_i - M for its
    eligible states; the large M forces every source column to be used). Shifted by
    M + 1 so that all weights are positive.
    """
    from scipy.sparse.csgraph import min_weight_full_bipartite_matching

    n = s.n_states
    st = structure_of(s.A)
    src = np.flatnonzero(st.source_scc)
    slot = np.full(st.n_scc, -1)
    slot[src] = np.arange(src.size)
    M = float(cost[eligible].sum()) + 1.0
    r_real = np.repeat(np.arange(n), np.diff(s.A.indptr))
    c_real = s.A.indices
    el = np.flatnonzero(eligible)
    r_priv, c_priv = el, n + np.arange(el.size)
    ins = el[slot[st.scc[el]] >= 0]
    r_src, c_src = ins, n + el.size + slot[st.scc[ins]]
    rows = np.concatenate([r_real, r_priv, r_src])
    cols = np.concatenate([c_real, c_priv, c_src])
    w = np.concatenate([np.full(r_real.size, M + 1), M + 1 + cost[el], 1 + cost[ins]])
    W = sp.csr_matrix((w, (rows, cols)), shape=(n, n + el.size + src.size))
    r, c = min_weight_full_bipartite_matching(W)
    chosen = r[c >= n]
    return float(cost[chosen].sum())


def part1(sizes: list[int], degrees: list[float], with_unreduced: int) -> None:
    print("\n## 1. Exact min-cost dedicated placement\n")
    place_inputs(er(200, 3.0, 1))  # compile the numba kernels outside the timings
    print("| n | arcs/n | sites | feasible | n sites | cost | place_inputs s | "
          "minimum_inputs s | ratio | unreduced s | ratio | same cost |")
    print("|---|---|---|---|---|---|---|---|---|---|---|---|")
    for n in sizes:
        for k in degrees:
            s = er(n, k, seed=n + int(10 * k))
            rng = np.random.default_rng(7)
            cost = rng.integers(1, 10, n).astype(float)
            indeg = np.diff(s.A.indptr)
            forbid = (rng.random(n) < 0.1) & (indeg >= 2)
            for label, elig in (("all", np.ones(n, bool)), ("-10%", ~forbid)):
                sites = Sites.from_arrays("actuator", elig, cost, s.state_names, "bench")
                t = time.perf_counter()
                p = place_inputs(s, sites=sites)
                t_place = time.perf_counter() - t
                t = time.perf_counter()
                d = minimum_inputs(s, dedicated=True)
                t_min = time.perf_counter() - t
                if label == "all":
                    unit = place_inputs(s)  # unit costs must reproduce the count
                    assert unit.cost == d.n_inputs, (unit.cost, d.n_inputs)
                un_t, un_same = "-", "-"
                if p.feasible and n <= with_unreduced:
                    t = time.perf_counter()
                    c_un = unreduced_assignment(s, elig, cost)
                    un_t = f"{time.perf_counter() - t:.2f}"
                    un_same = "yes" if abs(c_un - p.cost) < 1e-6 else f"NO ({c_un})"
                ratio_un = (f"{float(un_t) / t_place:.1f}x" if un_t != "-" else "-")
                print(f"| {n:,} | {k:g} | {label} | {p.feasible} | {p.sites.size:,} | "
                      f"{p.cost:,.0f} | {t_place:.2f} | {t_min:.3f} | "
                      f"{t_place / max(t_min, 1e-9):.0f}x | {un_t} | {ratio_un} | {un_same} |",
                      flush=True)


def random_candidates(n: int, count: int, seed: int) -> Candidates:
    rng = np.random.default_rng(seed)
    sizes = rng.integers(1, 4, count)
    states = [rng.choice(n, size=int(z), replace=False) for z in sizes]
    return Candidates.from_lists([f"c{j}" for j in range(count)], states,
                                 rng.integers(1, 10, count).astype(float))


def part2(sizes: list[int], time_limit: float, k: float = 3.0, header: bool = True) -> None:
    if not header:
        return _part2_rows(sizes, time_limit, k)
    print("\n## 2. Candidate actuators: MILP (HiGHS) vs greedy\n")
    print(f"time limit {time_limit:g} s; candidates = every state once as a dedicated "
          "candidate at cost 20 (so a design always exists) plus n/5 random candidates "
          "acting on 1-3 states at cost 1..9\n")
    print("| n | arcs/n | candidates | MILP variables | MILP s | MILP status | MILP cost | "
          "greedy s | greedy cost | greedy proven gap | greedy / MILP cost |")
    print("|---|---|---|---|---|---|---|---|---|---|---|")
    _part2_rows(sizes, time_limit, k)


def _part2_rows(sizes: list[int], time_limit: float, k: float) -> None:
    for n in sizes:
        s = er(n, k, seed=3 * n)
        rnd = random_candidates(n, max(n // 5, 1), seed=n)
        names = [f"u:{i}" for i in range(n)] + list(rnd.names)
        states = [[i] for i in range(n)] + [rnd.states_of(j) for j in range(rnd.n_candidates)]
        cost = np.concatenate([np.full(n, 20.0), rnd.cost])
        cands = Candidates.from_lists(names, states, cost)
        t = time.perf_counter()
        g = place_inputs(s, candidates=cands, method="greedy", verify=False)
        t_g = time.perf_counter() - t
        from netctl.structural.placement._reduced import reduce_problem
        size = reduce_problem(s.A, s.B, structure_of(s.A), cands).milp_size()
        t = time.perf_counter()
        m = place_inputs(s, candidates=cands, method="exact", time_limit=time_limit,
                         verify=False)
        t_m = time.perf_counter() - t
        status = "optimal" if m.optimal else f"gap {100 * m.gap:.2f}%"
        print(f"| {n:,} | {k:g} | {cands.n_candidates:,} | {size:,} | {t_m:.2f} | {status} | "
              f"{m.cost:,.0f} | {t_g:.2f} | {g.cost:,.0f} | {100 * g.gap:.3f}% | "
              f"{g.cost / max(m.cost, 1e-9):.3f} |", flush=True)


def part3(n: int) -> None:
    print("\n## 3. Target control, greedy of Gao et al.\n")
    s = er(n, 3.0, seed=11)
    rng = np.random.default_rng(5)
    T = np.sort(rng.choice(n, size=1000, replace=False))
    t = time.perf_counter()
    d = gao_greedy_drivers(s, T)
    t_t = time.perf_counter() - t
    t = time.perf_counter()
    full = minimum_inputs(s, dedicated=True)
    t_f = time.perf_counter() - t
    print(f"n = {n:,}, arcs/n = 3, |T| = 1000: {d.size} drivers in {t_t:.2f} s "
          f"(full control needs {full.n_inputs:,} dedicated inputs, {t_f:.2f} s)")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--time-limit", type=float, default=60.0)
    a = ap.parse_args()
    print(f"python {platform.python_version()}, numpy {np.__version__}, "
          f"scipy {sp.__name__ and __import__('scipy').__version__}")
    print(time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime()))
    if a.quick:
        part1([1000, 10_000], [3.0], with_unreduced=10_000)
        part2([1000, 3000], min(a.time_limit, 20))
        part3(10_000)
    else:
        part1([10_000, 100_000], [1.5, 3.0, 8.0], with_unreduced=100_000)
        part2([1000, 3000, 10_000, 20_000, 30_000, 50_000, 100_000], a.time_limit)
        part2([10_000, 30_000, 100_000], a.time_limit, k=1.5, header=False)
        part3(100_000)


if __name__ == "__main__":
    main()
