"""Benchmark: kernels folded into one (engine search with banned columns, the linking
residual search, the stem-cycle row relaxation) against their versions at a git revision.

Run by hand (not part of the test suite):

    python benchmarks/bench_folds.py                 # n = 1e6 states, 3e6 links, against main
    python benchmarks/bench_folds.py --n 1e5 --base HEAD~2 --repeat 5

The old modules are read with ``git show BASE:path`` into a temporary folder and imported
under other names, so the old and the new kernels run in one process on the same arrays,
compiled (``netctl._jit.always_compiled``), after one warm-up call each; the repetitions
alternate old and new, and the table gives the median CPU time of each (process time:
the shared machine's load moves wall times by tens of percent) and their same-run ratio
(new / old; 1.00 = no change). Every pair is also checked to give the same answer.
"""

from __future__ import annotations

import argparse
import os
import platform
import sys
import tempfile
import time
from collections.abc import Callable
from typing import Any

import numpy as np
import scipy.sparse as sp

# this checkout's netctl, not an installed one (the new side of every row)
sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
from netctl._jit import always_compiled
from netctl.graph import _costflow, dm, linking, stem_cycle
from netctl.graph.matching import maximum_matching, transpose_csr
from netctl.structural.failures._core import dedicated_B, design_facts
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # run as a script
from _in_process import ONLY, eq, load_old, pair_row  # noqa: E402






def _pair(*args: Any) -> None:
    pair_row(*args, paired=False)  # this script's tables: the ratio of the medians



def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=float, default=1e6)
    ap.add_argument("--links", type=float, default=3e6)
    ap.add_argument("--base", default="main")
    ap.add_argument("--repeat", type=int, default=7)
    ap.add_argument("--rivals", type=int, default=300, help="inputs whose rivals are found")
    ap.add_argument("--prices-n", type=float, default=3e4,
                    help="states of the graph for _prices (one Dijkstra per free row: "
                         "about 27 s a call at 1e5)")
    ap.add_argument("--only", action="append", default=[],
                    help="run only the kernels whose label contains this (repeatable)")
    a = ap.parse_args()
    ONLY.extend(a.only)
    n, E = int(a.n), int(a.links)
    rng = np.random.default_rng(0)
    src, dst = rng.integers(0, n, E), rng.integers(0, n, E)
    keep = src != dst
    A = sp.csr_array((np.ones(int(keep.sum())), (dst[keep], src[keep])), shape=(n, n))
    A.sum_duplicates()
    A.sort_indices()
    ptr = A.indptr.astype(np.int64)
    ind = A.indices.astype(np.int64)
    print(f"# {platform.node()} {platform.processor() or platform.machine()}, "
          f"load {os.getloadavg()[0]:.1f}, n = {n}, links = {A.nnz}, base = {a.base}, "
          f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}")
    print("| kernel | old CPU s (median) | new CPU s (median) | ratio new/old | ratio of minima |")
    print("| --- | --- | --- | --- | --- |")
    with tempfile.TemporaryDirectory() as tmp, always_compiled():
        old_dm = load_old(a.base, "netctl/graph/dm.py", "old_dm", tmp)
        old_core = load_old(a.base, "netctl/structural/failures/_core.py", "old_core", tmp)
        old_lk = load_old(a.base, "netctl/graph/linking.py", "old_linking", tmp)
        old_sc = load_old(a.base, "netctl/graph/stem_cycle.py", "old_stem_cycle", tmp)

        # 1. the engine's alternating search from the unmatched rows (banned=None)
        rm, cm = maximum_matching(ptr, ind, n)
        _pair("alternating_reach_rows, unmatched rows, no ban",
             lambda: old_dm.alternating_reach_rows(ptr, ind, n, cm),
             lambda: dm.alternating_reach_rows(ptr, ind, n, cm), a.repeat, eq)

        # rivals of rank-critical inputs: a design with one input at each unmatched row
        B = dedicated_B(n, np.flatnonzero(rm < 0))
        f = design_facts(A, B)
        crit = np.flatnonzero(f.rank_lost)[:a.rivals]
        nc = f.n + f.m

        def old_rivals() -> list[np.ndarray]:
            out = []
            for q in crit:
                col = f.n + int(q)
                rs = np.zeros(f.n, np.bool_)
                cs = np.zeros(nc, np.bool_)
                old_core._alt_from(f.ab_indptr, f.ab_indices, f.col_match,
                                   int(f.col_match[col]), col, rs, cs)
                out.append(np.flatnonzero(rs))
            return out

        _pair(f"rivals of {crit.size} critical inputs (m = {f.m})", old_rivals,
             lambda: [f.rivals(int(q)) for q in crit], a.repeat,
             lambda x, y: all(eq(p, q) for p, q in zip(x, y)))

        # 2. linking: the residual searches after a max flow, and the whole separator
        out_ptr, out_ind = transpose_csr(ptr, ind, np.int64(n))
        srcs = rng.choice(n, 100, replace=False).astype(np.int64)
        snks = rng.choice(n, 100, replace=False).astype(np.int64)
        one = np.arange(101, dtype=np.int64)
        g = linking.linking_graph(n, one, srcs, out_ptr, out_ind, one, snks)
        lk = linking.maximum_linking(g, paths=False)
        for what, cap in (("no flow", g.cap), ("after a maximum linking", lk._residual)):
            _pair(f"linking: backward residual search to the sink, {what}",
                 lambda: old_lk._to_sink(g.adj_ptr, g.head, g.rev, cap),
                 lambda: _costflow.residual_search(g.adj_ptr, g.head, g.rev, cap, 1, 0, True),
                 a.repeat, eq)
            _pair(f"linking: forward residual search from the source, {what}",
                 lambda: old_lk._residual_reach(g.adj_ptr, g.head, cap),
                 lambda: _costflow.residual_search(g.adj_ptr, g.head, g.rev, cap, 0, -1,
                                                   False),
                 a.repeat, eq)
        old_g = old_lk.LinkingGraph(*[getattr(g, k) for k in g.__dataclass_fields__])
        _pair("linking: minimum_separator (max flow + search)",
             lambda: old_lk.minimum_separator(old_g),
             lambda: linking.minimum_separator(g), max(3, a.repeat // 2), eq)

        # 3. stem-cycle prices: the Jonker-Volgenant completion (_prices), on the first
        # prices_n states' links (the same random graph law, 3 links a state)
        n = min(n, int(a.prices_n))
        rng = np.random.default_rng(1)
        src, dst = rng.integers(0, n, 3 * n), rng.integers(0, n, 3 * n)
        keep = src != dst
        P = sp.csr_array((np.ones(int(keep.sum())), (dst[keep], src[keep])), shape=(n, n))
        P.sum_duplicates()
        P.sort_indices()
        ptr = P.indptr.astype(np.int64)
        ind = P.indices.astype(np.int64)
        loops = np.zeros(n, np.bool_)
        rm0, cm0 = maximum_matching(ptr, ind, n)

        def prices(mod: Any) -> Callable[[], Any]:
            def run() -> Any:
                r, c = rm0.copy(), cm0.copy()
                cost = np.zeros(n, np.int64)
                v = mod._prices(ptr, ind, loops, r, c, cost)
                return v, r, cost
            return run

        _pair(f"stem_cycle: _prices (cycle cover with dual prices), n = {n}", prices(old_sc),
             prices(stem_cycle), a.repeat, eq)


if __name__ == "__main__":
    main()
