"""Largest stem-cycle disjoint subgraphs from every single source, one assignment in all.

A *cycle cover with holes* of a directed graph is a set of vertex-disjoint cycles; the
largest one (most vertices covered) is a minimum-cost assignment of rows (in-copies of
the vertices) to columns (out-copies) where a real edge ``u -> v`` (row ``v``, column
``u``) costs 0 and the dummy pair (row ``v``, column ``v``) costs 1: a row on its dummy
holds its own column, so the real edges used form disjoint cycles only. Adding one extra
column ``s`` joined to row ``i`` (an input at ``i``) lets one path (a *stem*) start at
``i``; the optimum of the enlarged problem is the old one plus the cheapest alternating
path from ``s``, found by one Dijkstra search on reduced costs when the old optimum comes
with optimal dual prices. This module computes those prices once (Jonker–Volgenant
shortest augmenting paths, after a maximum matching of the zero-cost edges) and then
answers one search per source.

Orientation: rows are in-copies, columns out-copies; ``indptr/indices`` (CSR) list each
row's columns (the in-neighbours of a vertex), ``optr/oind`` each column's rows (its
out-neighbours).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from netctl._jit import njit

from netctl.graph.matching import maximum_matching

__all__ = ["CycleCoverPrices", "cycle_cover_prices", "reach_sums", "stem_gains"]

_INF = np.int64(2) ** 62


@njit(cache=True, nogil=True)
def _push(hd, hv, size, d, v):  # pragma: no cover - compiled
    """Binary min-heap on (key hd, value hv); returns the new size."""
    k = size
    hd[k] = d
    hv[k] = v
    while k > 0:
        p = (k - 1) >> 1
        if hd[p] <= hd[k]:
            break
        hd[p], hd[k] = hd[k], hd[p]
        hv[p], hv[k] = hv[k], hv[p]
        k = p
    return size + 1


@njit(cache=True, nogil=True)
def _pop(hd, hv, size):  # pragma: no cover - compiled
    """Remove the root (read it first); returns the new size."""
    size -= 1
    hd[0] = hd[size]
    hv[0] = hv[size]
    k = 0
    while True:
        a = 2 * k + 1
        if a >= size:
            break
        b = a + 1
        m = b if b < size and hd[b] < hd[a] else a
        if hd[k] <= hd[m]:
            break
        hd[m], hd[k] = hd[k], hd[m]
        hv[m], hv[k] = hv[k], hv[m]
        k = m
    return size


@njit(cache=True, nogil=True)
def _prices(indptr, indices, has_loop, row_match, col_match, cost):  # pragma: no cover
    """Complete ``row_match`` (zero-cost edges only so far, prices 0) to an optimal
    assignment with the dummies; returns the column prices ``v``.

    Jonker–Volgenant augmentation: ``u[r] = cost[r] - v[row_match[r]]`` implicitly, and
    ``w(r, c) - v[c] >= u[r]`` for every edge (dual feasibility) throughout.
    """
    n = row_match.size
    inf = np.int64(2) ** 62
    v = np.zeros(n, np.int64)
    d = np.full(n, inf, np.int64)
    pred = np.full(n, -1, np.int64)
    pw = np.zeros(n, np.int64)
    done = np.zeros(n, np.bool_)
    touched = np.empty(n, np.int64)
    cap = indices.size + 2 * n + 2
    hd = np.empty(cap, np.int64)
    hv = np.empty(cap, np.int64)
    for f in range(n):
        if row_match[f] >= 0:
            continue
        nt = 0
        size = 0
        last = -1
        dstar = inf
        # relax the edges of row r from its label less its price u[r] (the free row f
        # first, u[f] taken as 0), then settle the nearest column: its row comes next,
        # unless the column is free (the shortest augmenting path ends there)
        r = f
        base = np.int64(0)
        while r >= 0:
            for e in range(indptr[r], indptr[r + 1] + 1):
                if e < indptr[r + 1]:
                    c2 = indices[e]
                    w = 0
                elif has_loop[r]:
                    break
                else:
                    c2 = r
                    w = 1
                if done[c2]:
                    continue
                nd = base + w - v[c2]
                if nd < d[c2]:
                    if d[c2] == inf:
                        touched[nt] = c2
                        nt += 1
                    d[c2] = nd
                    pred[c2] = r
                    pw[c2] = w
                    size = _push(hd, hv, size, nd, c2)
            r = -1
            while size > 0:
                dc = hd[0]
                c = hv[0]
                size = _pop(hd, hv, size)
                if done[c] or dc > d[c]:
                    continue
                done[c] = True
                r = col_match[c]
                if r < 0:
                    last = c
                    dstar = dc
                else:
                    base = dc - (cost[r] - v[c])
                break
        # price update on the columns settled before the free one, then reset
        for t in range(nt):
            c = touched[t]
            if done[c]:
                v[c] += d[c] - dstar
            d[c] = inf
            done[c] = False
        # augment along the predecessors
        c = last
        while True:
            r = pred[c]
            prev = row_match[r]
            row_match[r] = c
            col_match[c] = r
            cost[r] = pw[c]
            if r == f:
                break
            c = prev
    return v


@dataclass(frozen=True)
class CycleCoverPrices:
    """An optimal largest-cycle-cover assignment with its dual prices.

    Attributes
    ----------
    row_match, col_match : ndarray of int64
        Column of each row and row of each column (a perfect assignment).
    cost : ndarray of int64
        1 where the row sits on its dummy (not on any cycle), else 0.
    price : ndarray of int64
        Column prices ``v``; with ``u[r] = cost[r] - v[row_match[r]]`` every edge has a
        non-negative reduced cost and every assigned pair a zero one.
    """

    row_match: np.ndarray
    col_match: np.ndarray
    cost: np.ndarray
    price: np.ndarray


def cycle_cover_prices(indptr: np.ndarray, indices: np.ndarray, n: int,
                       has_loop: np.ndarray) -> CycleCoverPrices:
    """Largest set of vertex-disjoint cycles, as an assignment with optimal prices.

    Parameters
    ----------
    indptr, indices : ndarray of int
        Row ``v`` (in-copy) is adjacent to the columns ``u`` of its in-neighbours
        (``A[v, u] != 0``); a self-loop is the real edge ``(v, v)``.
    n : int
    has_loop : ndarray of bool
        Whether each vertex has a self-loop (its dummy is then not needed).

    Returns
    -------
    CycleCoverPrices
        ``n - cost.sum()`` vertices lie on the chosen cycles.

    Notes
    -----
    Starts from a maximum matching of the zero-cost (real) edges with all prices 0,
    which is dual feasible, then runs one Jonker–Volgenant shortest augmenting path [1]_
    (Dijkstra on reduced costs) per row left unmatched. Exact.

    References
    ----------
    .. [1] R. Jonker, A. Volgenant, "A shortest augmenting path algorithm for dense and
       sparse linear assignment problems", Computing 38:325-340, 1987.
       doi:10.1007/BF02278710
    """
    ptr = np.ascontiguousarray(indptr, np.int64)
    ind = np.ascontiguousarray(indices, np.int64)
    rm, cm = maximum_matching(ptr, ind, n)
    rm = np.ascontiguousarray(rm, np.int64)
    cm = np.ascontiguousarray(cm, np.int64)
    cost = np.zeros(n, np.int64)
    loops = np.ascontiguousarray(has_loop, np.bool_)
    v = _prices(ptr, ind, loops, rm, cm, cost)
    return CycleCoverPrices(row_match=rm, col_match=cm, cost=cost, price=v)


@njit(cache=True, nogil=True)
def _gains(optr, oind, has_loop, row_match, col_match, cost, v, sources,
           out):  # pragma: no cover - compiled
    n = row_match.size
    inf = np.int64(2) ** 62
    d = np.full(n, inf, np.int64)
    done = np.zeros(n, np.bool_)
    touched = np.empty(n, np.int64)
    cap = oind.size + 2 * n + 2
    hd = np.empty(cap, np.int64)
    hv = np.empty(cap, np.int64)
    vmax = -inf
    for c in range(n):
        if v[c] > vmax:
            vmax = v[c]
    for k in range(sources.size):
        i = sources[k]
        c1 = row_match[i]
        ui = cost[i] - v[c1]
        nt = 1
        touched[0] = c1
        d[c1] = 0
        size = _push(hd, hv, 0, np.int64(0), c1)
        best = inf
        while size > 0:
            dc = hd[0]
            c = hv[0]
            if dc - vmax >= best:
                break
            size = _pop(hd, hv, size)
            if done[c] or dc > d[c]:
                continue
            done[c] = True
            if dc - v[c] < best:
                best = dc - v[c]
            rc0 = col_match[c]
            # rows that column c reaches by an edge not assigned to it
            for e in range(optr[c], optr[c + 1] + 1):
                if e < optr[c + 1]:
                    r = oind[e]
                    w = 0
                elif has_loop[c]:
                    break
                else:
                    r = c
                    w = 1
                if r == rc0:
                    continue
                c2 = row_match[r]
                if done[c2]:
                    continue
                nd = dc + w - (cost[r] - v[c2]) - v[c]
                if nd < d[c2]:
                    if d[c2] == inf:
                        touched[nt] = c2
                        nt += 1
                    d[c2] = nd
                    size = _push(hd, hv, size, nd, c2)
        for t in range(nt):
            d[touched[t]] = inf
            done[touched[t]] = False
        delta = best - ui
        out[k] = -delta if delta < 0 else 0


def stem_gains(optr: np.ndarray, oind: np.ndarray, has_loop: np.ndarray,
               prices: CycleCoverPrices, sources: np.ndarray) -> np.ndarray:
    """How many more vertices a stem from each source adds to the largest cycle cover.

    Parameters
    ----------
    optr, oind : ndarray of int
        Out-adjacency: column ``u`` reaches the rows of its out-neighbours.
    has_loop : ndarray of bool
    prices : CycleCoverPrices
        From :func:`cycle_cover_prices` on the same graph.
    sources : ndarray of int

    Returns
    -------
    ndarray of int64
        For each source ``i``: (largest number of vertices covered by a path starting at
        ``i`` plus vertex-disjoint cycles avoiding it) minus (largest number covered by
        disjoint cycles alone), over the whole graph.

    Notes
    -----
    One Dijkstra search per source over the alternating paths that start with the new
    input column (row ``i``, then ``i``'s assigned column), on the reduced costs of the
    optimal prices; it stops once no unsettled column can beat the best found. Exact.
    """
    out = np.zeros(np.asarray(sources).size, np.int64)
    _gains(np.ascontiguousarray(optr, np.int64), np.ascontiguousarray(oind, np.int64),
           np.ascontiguousarray(has_loop, np.bool_), prices.row_match, prices.col_match,
           prices.cost, prices.price, np.ascontiguousarray(sources, np.int64), out)
    return out


@njit(cache=True, nogil=True)
def _reach_sums(cptr, cind, weight, wanted, out):  # pragma: no cover - compiled
    k = cptr.size - 1
    stamp = np.full(k, -1, np.int64)
    queue = np.empty(k, np.int64)
    for t in range(wanted.size):
        s = wanted[t]
        stamp[s] = t
        queue[0] = s
        head = 0
        tail = 1
        total = 0
        while head < tail:
            a = queue[head]
            head += 1
            total += weight[a]
            for e in range(cptr[a], cptr[a + 1]):
                b = cind[e]
                if stamp[b] != t:
                    stamp[b] = t
                    queue[tail] = b
                    tail += 1
        out[t] = total


def reach_sums(optr: np.ndarray, oind: np.ndarray, labels: np.ndarray, n_labels: int,
               weight: np.ndarray, wanted: np.ndarray) -> np.ndarray:
    """Sum of ``weight`` over the strong components reachable from each wanted one.

    ``labels`` are strong-component labels (``0..n_labels-1``) of the graph with
    out-adjacency ``optr/oind``; the search runs on the condensation (one vertex per
    component, duplicate links merged), one breadth-first search per wanted component.
    """
    optr = np.asarray(optr, np.int64)
    oind = np.asarray(oind, np.int64)
    lab = np.asarray(labels, np.int64)
    src = np.repeat(lab, np.diff(optr))
    dst = lab[oind]
    keep = src != dst
    code = np.unique(src[keep] * np.int64(n_labels) + dst[keep])
    cs, cd = code // n_labels, code % n_labels
    cptr = np.zeros(n_labels + 1, np.int64)
    np.cumsum(np.bincount(cs, minlength=n_labels), out=cptr[1:])
    out = np.zeros(np.asarray(wanted).size, np.int64)
    _reach_sums(cptr, np.ascontiguousarray(cd, np.int64),
                np.ascontiguousarray(weight, np.int64),
                np.ascontiguousarray(wanted, np.int64), out)
    return out
