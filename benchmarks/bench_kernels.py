"""Benchmark: compiled kernels against their versions at a git revision, and candidate
rewrites that were measured and not adopted.

Run by hand (not part of the test suite):

    python benchmarks/bench_kernels.py                  # n = 1e6 states, against main
    python benchmarks/bench_kernels.py --n 3e6 --base HEAD~1 --repeat 9 --only least

Two questions about the kernels' loops (``benchmarks/RESULTS.md``, 2026-12-05):

* an array reassigned inside a hot loop (a heap that doubles when full) slows numba's
  code for the whole loop, even when the growth never runs: ``least-cost extension``
  times ``netctl.graph.costmatch.extend_matching_least_cost`` at BASE (the heap doubled
  inside the kernel) and here (the kernel returns when the heap is full and is called
  again with a longer one), on the network of ``bench_check_barred.py`` with source
  cycles (its extra-column search has work to do), as the product calls it (searches
  restricted to the rows some maximum matching leaves free) and with every row
  searched (the same answer, about a hundred times more Dijkstra work);
* ``sink distances`` times ``netctl.graph._costflow.sink_distance`` (before the
  kernels left it, ``netctl.graph.linking._sink_distance``; the 0-1
  breadth-first search that gives the linking's starting potentials) at BASE (a
  double-ended queue) and here (one level at a time), on the node-split network of
  ``bench_folds.py`` (100 sources and 100 sinks on random states), with no flow and
  after a maximum linking; ``minimum_separator`` as a whole (its max flow by
  ``linking._solve`` before 2026-12-05, about 30 s a call at 10^6 states, then by Dinic's
  algorithm, ``netctl/graph/_dinic.py``; so only with ``--only minimum_separator``);
  ``reachable_from`` the accessibility search of every analysis (a queue in discovery
  order at BASE; here levels above n/16 in vertex order), from 100 random states;
  ``--grid`` runs the linking and search rows on a square grid instead (one source,
  one sink, one seed at the corners), where discovery order is already local;
* a breadth-first search that visits each level in index order reads its rows' data in
  memory order: ``alternating search, levels in order`` times
  ``netctl.graph.dm._alt_bfs`` against a variant defined here that sorts each level's
  slice of the queue, and one that collects large levels by a scan of a mark array.

The old modules are read with ``git show BASE:path`` into a temporary folder and
imported under other names, so both versions run in one process on the same arrays,
compiled (``netctl._jit.always_compiled``), after one warm-up call each that also checks
they give the same answer; the repetitions alternate old and new, and the table gives
the median CPU time (process time) of each, the median of the paired ratios new/old and
the ratio of the minima.
"""

from __future__ import annotations

import argparse
import os
import platform
import sys
import tempfile
import time
import warnings
from collections.abc import Callable
from typing import Any

import numpy as np
import scipy.sparse as sp
from numba import njit

# this checkout's netctl, not an installed one (the new side of every row)
sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
from netctl import StructuredSystem
from netctl.generate import grid
from netctl._jit import always_compiled
from netctl.graph import _costflow, components, costmatch, dm, linking
from netctl.graph.matching import maximum_matching, transpose_csr
from netctl.structural import controllability
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # run as a script
from _in_process import ONLY, eq, load_file, load_old, pair_row  # noqa: E402
from _networks import barred_check_network  # noqa: E402

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))




# ----------------------------------------------------------------- 1. least-cost extension

def least_cost_input(n: int) -> list[Any]:
    """The arguments ``controllability`` hands to ``extend_matching_least_cost`` for
    ``check``'s smallest fix (30% of the states barred, inputs on 0.1%)."""
    src, dst = barred_check_network(n, cycles=True)
    rng = np.random.default_rng(1)
    barred = rng.random(n) < 0.3
    driven = rng.choice(n, n // 1000, replace=False)
    B = sp.csr_array((np.ones(driven.size), (driven, np.arange(driven.size))),
                     shape=(n, driven.size))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        s = StructuredSystem.from_edges(src, dst, n_states=n,
                                        nodes={"actuator": ~barred}).with_inputs(B)
    got: list[Any] = []
    real = costmatch.extend_matching_least_cost

    def spy(*args: Any) -> Any:
        got.extend(np.array(x) if isinstance(x, np.ndarray) else
                   tuple(np.array(y) for y in x) if isinstance(x, tuple) else x
                   for x in args)
        return real(*args)

    costmatch.extend_matching_least_cost = spy  # type: ignore[assignment]
    try:
        controllability(s, dimension=False)
    finally:
        costmatch.extend_matching_least_cost = real  # type: ignore[assignment]
    return got


def least_cost_runner(mod: Any, args: list[Any], every_row: bool) -> Callable[[], Any]:
    csr, tr, n_cols, rm, cm, extra, barred, full = args
    if every_row:  # every row searched: the same answer, more work
        n_rows = rm.size
        mod.alternating_reach_rows = lambda *a, **k: (np.ones(n_rows, np.bool_), None)

    def run() -> Any:
        r, c = rm.copy(), cm.copy()
        x = mod.extend_matching_least_cost(csr, tr, n_cols, r, c, extra, barred, full)
        return r, c, x
    return run


# ------------------------------------------------- 2. breadth-first levels in index order
@njit(cache=True, nogil=True)
def _alt_bfs_sorted(indptr, indices, partner_of_col, starts, row_seen,
                    col_seen):  # pragma: no cover - compiled
    """``dm._alt_bfs`` with each level's slice of the queue sorted before it is read."""
    n_rows = indptr.size - 1
    queue = np.empty(n_rows, np.int64)
    tail = 0
    for s in starts:
        if not row_seen[s]:
            row_seen[s] = True
            queue[tail] = s
            tail += 1
    head = 0
    level_end = 0
    while head < tail:
        if head == level_end:
            queue[head:tail].sort()
            level_end = tail
        r = queue[head]
        head += 1
        for k in range(indptr[r], indptr[r + 1]):
            c = indices[k]
            if col_seen[c]:
                continue
            col_seen[c] = True
            r2 = partner_of_col[c]
            if r2 >= 0 and not row_seen[r2]:
                row_seen[r2] = True
                queue[tail] = r2
                tail += 1


@njit(cache=True, nogil=True)
def _alt_bfs_scan(indptr, indices, partner_of_col, starts, row_seen,
                  col_seen):  # pragma: no cover - compiled
    """``dm._alt_bfs`` with each level larger than n/16 put in order by a scan of a
    mark array (smaller levels as found)."""
    n_rows = indptr.size - 1
    queue = np.empty(n_rows, np.int64)
    lev = np.zeros(n_rows, np.bool_)
    big = n_rows // 16
    tail = 0
    for s in starts:
        if not row_seen[s]:
            row_seen[s] = True
            queue[tail] = s
            tail += 1
    head = 0
    level_end = 0
    while head < tail:
        if head == level_end:
            if tail - head > big:
                for t in range(head, tail):
                    lev[queue[t]] = True
                t = head
                for r in range(n_rows):
                    if lev[r]:
                        lev[r] = False
                        queue[t] = r
                        t += 1
            level_end = tail
        r = queue[head]
        head += 1
        for k in range(indptr[r], indptr[r + 1]):
            c = indices[k]
            if col_seen[c]:
                continue
            col_seen[c] = True
            r2 = partner_of_col[c]
            if r2 >= 0 and not row_seen[r2]:
                row_seen[r2] = True
                queue[tail] = r2
                tail += 1


def alt_runner(kernel: Any, ptr: np.ndarray, ind: np.ndarray, partner: np.ndarray,
               starts: np.ndarray, n_cols: int) -> Callable[[], Any]:
    def run() -> Any:
        rs = np.zeros(ptr.size - 1, np.bool_)
        cs = np.zeros(n_cols, np.bool_)
        kernel(ptr, ind, partner, starts, rs, cs)
        return rs, cs
    return run


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=float, default=1e6)
    ap.add_argument("--base", default="main")
    ap.add_argument("--repeat", type=int, default=7)
    ap.add_argument("--grid", action="store_true",
                    help="a square grid of about n states instead of Erdos-Renyi "
                         "(one source, sink and seed at the corners)")
    ap.add_argument("--only", action="append", default=[],
                    help="run only the kernels whose label contains this (repeatable)")
    a = ap.parse_args()
    ONLY.extend(a.only)
    n = int(a.n)
    print(f"# {platform.node()} {platform.processor() or platform.machine()}, "
          f"{os.cpu_count()} CPUs, Python {platform.python_version()}, "
          f"load {os.getloadavg()[0]:.1f}, n = {n}{' (grid)' if a.grid else ''}, "
          f"base = {a.base}, "
          f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}")
    print("| kernel | old CPU s (median) | new CPU s (median) | paired ratio new/old "
          "(median) | ratio of minima |")
    print("| --- | --- | --- | --- | --- |")
    with tempfile.TemporaryDirectory() as tmp, always_compiled():
        if not ONLY or any("least" in w for w in ONLY):
            args = least_cost_input(n)
            for every in (False, True):
                old_cm = load_old(a.base, "netctl/graph/costmatch.py",
                                  f"old_costmatch_{int(every)}", tmp)
                new_cm = load_file(os.path.join(ROOT, "netctl/graph/costmatch.py"),
                                   f"new_costmatch_{int(every)}")
                what = "every row searched" if every else "as check calls it"
                pair_row(f"least-cost extension, {what}",
                     least_cost_runner(old_cm, args, every),
                     least_cost_runner(new_cm, args, every), a.repeat, eq)

        rng = np.random.default_rng(0)
        if a.grid:  # a square grid, links both ways (thousands of small levels)
            width = int(round(n ** 0.5))
            A = grid(width, width).A
            n = A.shape[0]
        else:  # directed Erdos-Renyi, 3n links (bench_folds.py's draws)
            src, dst = rng.integers(0, n, 3 * n), rng.integers(0, n, 3 * n)
            keep = src != dst
            A = sp.csr_array((np.ones(int(keep.sum())), (dst[keep], src[keep])),
                             shape=(n, n))
            A.sum_duplicates()
            A.sort_indices()
        ptr = A.indptr.astype(np.int64)
        ind = A.indices.astype(np.int64)
        rm, cm = maximum_matching(ptr, ind, n)
        tptr, tind = (np.ascontiguousarray(x, np.int64)
                      for x in transpose_csr(ptr, ind, np.int64(n)))
        out_ptr, out_ind = transpose_csr(ptr, ind, np.int64(n))
        k = 1 if a.grid else 100  # on the grid: one source at a corner, one sink opposite
        srcs = np.zeros(1, np.int64) if a.grid else rng.choice(n, k, replace=False)
        snks = np.full(1, n - 1, np.int64) if a.grid else rng.choice(n, k, replace=False)
        one = np.arange(k + 1, dtype=np.int64)
        g = linking.linking_graph(n, one, srcs, out_ptr, out_ind, one, snks)
        old_lk = load_old(a.base, "netctl/graph/linking.py", "old_linking", tmp)
        old_sink = (old_lk._sink_distance if hasattr(old_lk, "_sink_distance") else
                    load_old(a.base, "netctl/graph/_costflow.py", "old_costflow",
                             tmp).sink_distance)  # the flow kernels' own module
        lk = linking.maximum_linking(g, paths=False)
        for what, cap in (("no flow", g.cap), ("after a maximum linking", lk._residual)):
            pair_row(f"sink distances (linking potentials), {what}",
                 lambda: old_sink(g.adj_ptr, g.head, g.rev, g.forward, g.cost, cap),
                 lambda: _costflow.sink_distance(g.adj_ptr, g.head, g.rev, g.forward,
                                                 g.cost, cap), a.repeat, eq)
        old_g = old_lk.LinkingGraph(*[getattr(g, k) for k in g.__dataclass_fields__])
        if any("minimum_separator" in w for w in ONLY):  # before Dinic: ~30 s a call at 1e6
            pair_row("minimum_separator (max flow + search), 100 sources, 100 sinks",
                 lambda: old_lk.minimum_separator(old_g),
                 lambda: linking.minimum_separator(g), a.repeat, eq)
        pair_row(f"maximum_linking (potentials + flow), {k} sources, {k} sinks",
             lambda: old_lk.maximum_linking(g, paths=False).length,
             lambda: linking.maximum_linking(g, paths=False).length, a.repeat, eq)
        old_comp = load_old(a.base, "netctl/graph/components.py", "old_components", tmp)
        seeds = np.zeros(1, np.int64) if a.grid else rng.choice(n, 100, replace=False)
        pair_row(f"reachable_from {seeds.size} states (accessibility from the inputs)",
             lambda: old_comp.reachable_from(out_ptr, out_ind, seeds),
             lambda: components.reachable_from(out_ptr, out_ind, seeds), a.repeat, eq)
        for side, (p, i, partner, starts) in {
                "from unmatched rows": (ptr, ind, cm, np.flatnonzero(rm < 0)),
                "from unmatched columns": (tptr, tind, rm, np.flatnonzero(cm < 0))}.items():
            for how, cand in (("sorted", _alt_bfs_sorted), ("scan of large", _alt_bfs_scan)):
                pair_row(f"alternating search {side}, levels in order ({how}; candidate)",
                     alt_runner(dm._alt_bfs, p, i, partner, starts, n),
                     alt_runner(cand, p, i, partner, starts, n), a.repeat, eq)


if __name__ == "__main__":
    main()
