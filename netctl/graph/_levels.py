"""Putting one level of a breadth-first search in increasing vertex order.

A search that reads each vertex's edge list in discovery order jumps about memory on a
large graph; the same level read in vertex order streams it (measured 1.5-2x on
Erdős–Rényi graphs of 10^6 states and more, ``benchmarks/RESULTS.md``, 2026-12-05).
For a level holding a sizeable share of the vertices, marking its vertices and scanning
the marks costs less than sorting it.
"""

from __future__ import annotations

from netctl._jit import njit

__all__ = ["order_by_scan"]


@njit(cache=True, nogil=True)
def order_by_scan(queue, lo, hi, mark):  # pragma: no cover - compiled
    """Rewrite the distinct vertices ``queue[lo:hi]`` in increasing order by marking them
    in ``mark`` (bool, one per vertex, all False on entry and again on return) and
    scanning it: O(len(mark)) whatever the level's size."""
    for t in range(lo, hi):
        mark[queue[t]] = True
    t = lo
    for v in range(mark.size):
        if mark[v]:
            mark[v] = False
            queue[t] = v
            t += 1
