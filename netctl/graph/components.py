"""Strongly connected components, source components and reachability on index arrays."""

from __future__ import annotations

import numpy as np
from netctl._jit import njit
from netctl.graph._levels import order_by_scan
from netctl.graph.transpose import index_array

__all__ = ["strongly_connected_components", "condensation_sources", "reachable_from",
           "hops_from", "label_reach", "induced_subgraph", "weak_component_count", "weak_component_labels"]


@njit(cache=True, nogil=True)
def _tarjan(indptr, indices, mask):  # pragma: no cover - compiled
    """Iterative Tarjan on the vertices with ``mask`` true (edges leaving the mask are
    ignored; vertices outside get label -1); labels renumbered by smallest vertex."""
    n = indptr.size - 1
    # vertex ids and DFS numbers fit in int32 (n < 2**31); edge positions stay int64
    index = np.full(n, -1, np.int32)
    low = np.zeros(n, np.int32)
    onstack = np.zeros(n, np.bool_)
    stack = np.empty(n, np.int32)
    comp = np.full(n, -1, np.int64)
    call_v = np.empty(n, np.int32)
    call_pos = np.empty(n, np.int64)
    sp_ = 0
    ncomp = 0
    counter = 0
    for s in range(n):
        if index[s] != -1 or not mask[s]:
            continue
        index[s] = counter
        low[s] = counter
        counter += 1
        stack[sp_] = s
        sp_ += 1
        onstack[s] = True
        call_v[0] = s
        call_pos[0] = indptr[s]
        csp = 1
        while csp > 0:
            v = call_v[csp - 1]
            pos = call_pos[csp - 1]
            if pos < indptr[v + 1]:
                w = indices[pos]
                call_pos[csp - 1] = pos + 1
                if not mask[w]:
                    continue
                if index[w] == -1:
                    index[w] = counter
                    low[w] = counter
                    counter += 1
                    stack[sp_] = w
                    sp_ += 1
                    onstack[w] = True
                    call_v[csp] = w
                    call_pos[csp] = indptr[w]
                    csp += 1
                elif onstack[w] and index[w] < low[v]:
                    low[v] = index[w]
            else:
                if low[v] == index[v]:
                    while True:
                        sp_ -= 1
                        w = stack[sp_]
                        onstack[w] = False
                        comp[w] = ncomp
                        if w == v:
                            break
                    ncomp += 1
                csp -= 1
                if csp > 0:
                    u = call_v[csp - 1]
                    if low[v] < low[u]:
                        low[u] = low[v]
    # renumber in order of each component's smallest vertex
    remap = np.full(ncomp, -1, np.int64)
    nxt = 0
    for v in range(n):
        c = comp[v]
        if c < 0:
            continue
        if remap[c] == -1:
            remap[c] = nxt
            nxt += 1
        comp[v] = remap[c]
    return ncomp, comp


def strongly_connected_components(indptr: np.ndarray, indices: np.ndarray,
                                  mask: np.ndarray | None = None) -> tuple[int, np.ndarray]:
    """Strongly connected components of a directed graph given as CSR adjacency.

    Returns ``(n_components, labels)``. Components do not depend on the orientation, so
    either the out- or the in-adjacency may be passed. Labels are numbered in order of
    each component's smallest vertex, so they are deterministic. With ``mask``, only the
    subgraph induced by the masked vertices is decomposed (others get label -1), without
    building it. Iterative Tarjan (Tarjan 1972, SIAM J. Comput. 1(2):146-160), linear
    time, compiled.
    """
    n = indptr.size - 1
    if n == 0:
        return 0, np.zeros(0, np.int64)
    m = np.ones(n, np.bool_) if mask is None else np.ascontiguousarray(mask, np.bool_)
    k, labels = _tarjan(index_array(indptr), index_array(indices), m)
    return int(k), labels


@njit(cache=True, nogil=True)
def _sources(in_indptr, in_indices, labels, k):  # pragma: no cover - compiled
    has_in = np.zeros(k, np.bool_)
    for v in range(in_indptr.size - 1):
        cv = labels[v]
        if cv < 0:
            continue
        for e in range(in_indptr[v], in_indptr[v + 1]):
            lu = labels[in_indices[e]]
            if lu >= 0 and lu != cv:
                has_in[cv] = True
                break
    return ~has_in


def condensation_sources(in_indptr: np.ndarray, in_indices: np.ndarray, labels: np.ndarray,
                         n_components: int) -> np.ndarray:
    """Boolean mask over components: True for *source* components.

    A source component receives no edge from another component (vertices labelled -1,
    outside a masked decomposition, are ignored). ``in_indptr`` /
    ``in_indices`` is the in-adjacency (row ``v`` lists the ``u`` with ``u -> v``), which is
    exactly the CSR of a state matrix ``A``.
    """
    if n_components == 0:
        return np.zeros(0, bool)
    return _sources(index_array(in_indptr), index_array(in_indices),
                    np.ascontiguousarray(labels, np.int64), np.int64(n_components))


@njit(cache=True, nogil=True)
def _reach(indptr, indices, seeds, seen):  # pragma: no cover - compiled
    """Breadth-first search from ``seeds``, marking ``seen``. A level above n/16
    vertices is put in increasing order before it is read (by a scan of a mark array),
    so that its vertices read their edge lists in memory order: measured 0.27 -> 0.13 s
    at 3*10^6 states from 100 seeds, of which 0.20 -> 0.13 s from the order alone.
    Smaller levels stay in discovery order: sorting them made a 1000 x 1000 grid
    (thousands of small levels, already local) 1.37 times slower
    (``benchmarks/RESULTS.md``, 2026-12-05)."""
    n = indptr.size - 1
    queue = np.empty(n, np.int32)  # vertex ids fit in int32 (n < 2**31)
    mark = np.zeros(n, np.bool_)
    big = n // 16  # a larger level is put in order by a scan
    tail = 0
    for k in range(seeds.size):
        s = seeds[k]
        if not seen[s]:
            seen[s] = True
            queue[tail] = s
            tail += 1
    head = 0
    level_end = 0
    while head < tail:
        if head == level_end:
            if tail - head > big:
                order_by_scan(queue, head, tail, mark)
            level_end = tail
        u = queue[head]
        head += 1
        for e in range(indptr[u], indptr[u + 1]):
            v = indices[e]
            if not seen[v]:
                seen[v] = True
                queue[tail] = v
                tail += 1


def reachable_from(out_indptr: np.ndarray, out_indices: np.ndarray, sources: np.ndarray) -> np.ndarray:
    """Boolean mask of the vertices reachable from ``sources`` (sources included).

    ``out_indptr`` / ``out_indices`` is the out-adjacency: ``indices[indptr[u]:indptr[u+1]]``
    are the successors of ``u``. Linear time plus the sorting of small levels (one
    breadth-first search, each level read in vertex order).
    """
    n = out_indptr.size - 1
    src = index_array(sources)
    seen = np.zeros(n, dtype=np.bool_)  # one byte per vertex: this runs on every analysis
    if n == 0 or src.size == 0:
        return seen
    _reach(index_array(out_indptr), index_array(out_indices), src, seen)
    return seen


@njit(cache=True, nogil=True)
def _hops(indptr, indices, seeds, dist):  # pragma: no cover - compiled
    """Breadth-first search from ``seeds`` (distance 0), writing each vertex's number of
    edges from the nearest seed into ``dist`` (-1 stays where none reaches)."""
    n = indptr.size - 1
    queue = np.empty(n, np.int64)
    tail = 0
    for k in range(seeds.size):
        s = seeds[k]
        if dist[s] < 0:
            dist[s] = 0
            queue[tail] = s
            tail += 1
    head = 0
    while head < tail:
        u = queue[head]
        head += 1
        for e in range(indptr[u], indptr[u + 1]):
            v = indices[e]
            if dist[v] < 0:
                dist[v] = dist[u] + 1
                queue[tail] = v
                tail += 1


def hops_from(out_indptr: np.ndarray, out_indices: np.ndarray, sources: np.ndarray
              ) -> np.ndarray:
    """Fewest edges from any of ``sources`` to each vertex (0 at the sources, -1 where
    none reaches): one breadth-first search, linear time (the unweighted shortest-path
    lengths of ``scipy.sparse.csgraph.shortest_path(..., unweighted=True)`` from a hub
    joined to every source, less one, without importing scipy)."""
    n = out_indptr.size - 1
    dist = np.full(n, -1, np.int64)
    src = index_array(sources)
    if n == 0 or src.size == 0:
        return dist
    _hops(index_array(out_indptr), index_array(out_indices), src, dist)
    return dist


@njit(cache=True, nogil=True)
def _label_bfs(indptr, indices, seeds, seed_labels, allowed, labels):  # pragma: no cover
    n = indptr.size - 1
    queue = np.empty(n, np.int32)  # vertex ids fit in int32 (n < 2**31)
    tail = 0
    for k in range(seeds.size):
        s = seeds[k]
        if labels[s] == -1:
            labels[s] = seed_labels[k]
            queue[tail] = s
            tail += 1
    head = 0
    while head < tail:
        u = queue[head]
        head += 1
        for e in range(indptr[u], indptr[u + 1]):
            v = indices[e]
            if allowed[v] and labels[v] == -1:
                labels[v] = labels[u]
                queue[tail] = v
                tail += 1
    return labels


def label_reach(out_indptr: np.ndarray, out_indices: np.ndarray, seeds: np.ndarray,
                seed_labels: np.ndarray, allowed: np.ndarray) -> np.ndarray:
    """One breadth-first search from many labelled seeds at once.

    Every vertex reachable through ``allowed`` vertices gets the label of the seed whose
    search reached it first (breadth-first, seeds in the order given); others get -1.
    Linear time, whatever the number of labels.
    """
    n = out_indptr.size - 1
    labels = np.full(n, -1, np.int64)
    if n == 0 or np.asarray(seeds).size == 0:
        return labels
    return _label_bfs(index_array(out_indptr), index_array(out_indices),
                      np.ascontiguousarray(seeds, np.int64),
                      np.ascontiguousarray(seed_labels, np.int64),
                      np.ascontiguousarray(allowed, np.bool_), labels)


@njit(cache=True, nogil=True)
def _induced(indptr, indices, vertices, local):  # pragma: no cover - compiled
    n_sub = vertices.size
    ptr = np.zeros(n_sub + 1, np.int64)
    for i in range(n_sub):
        v = vertices[i]
        cnt = 0
        for e in range(indptr[v], indptr[v + 1]):
            if local[indices[e]] >= 0:
                cnt += 1
        ptr[i + 1] = ptr[i] + cnt
    ind = np.empty(ptr[n_sub], np.int64)
    for i in range(n_sub):
        v = vertices[i]
        k = ptr[i]
        for e in range(indptr[v], indptr[v + 1]):
            w = local[indices[e]]
            if w >= 0:
                ind[k] = w
                k += 1
    return ptr, ind


def induced_subgraph(indptr: np.ndarray, indices: np.ndarray,
                     vertices: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """CSR index arrays (int64) of the subgraph induced by ``vertices`` (sorted, distinct),
    renumbered ``0..len(vertices)-1`` in their order. Linear in the links of those
    vertices plus one int32 array over all vertices."""
    n = np.asarray(indptr).size - 1
    verts = np.ascontiguousarray(vertices, np.int64)
    local = np.full(n, -1, np.int32)
    local[verts] = np.arange(verts.size, dtype=np.int32)
    return _induced(index_array(indptr), index_array(indices), verts, local)


@njit(cache=True, nogil=True)
def _weak_count(indptr, indices, parent):  # pragma: no cover - compiled
    n = parent.size
    for v in range(n):
        parent[v] = v
    k = n
    for v in range(n):
        for e in range(indptr[v], indptr[v + 1]):
            a = v
            while parent[a] != a:  # path halving
                parent[a] = parent[parent[a]]
                a = parent[a]
            b = indices[e]
            while parent[b] != b:
                parent[b] = parent[parent[b]]
                b = parent[b]
            if a != b:
                if a < b:
                    parent[b] = a
                else:
                    parent[a] = b
                k -= 1
    return k


def weak_component_count(indptr: np.ndarray, indices: np.ndarray) -> int:
    """Number of weakly connected components of a directed graph given as CSR (either
    orientation). Union–find with path halving (Tarjan & van Leeuwen 1984, J. ACM
    31(2):245-281), near-linear time, one int32 (int64 above 2^31 vertices) array of work
    memory — no symmetrised copy of the graph."""
    n = indptr.size - 1
    if n <= 0:
        return 0
    parent = np.empty(n, np.int32 if n < 2**31 - 1 else np.int64)
    return int(_weak_count(index_array(indptr), index_array(indices), parent))


def weak_component_labels(indptr: np.ndarray, indices: np.ndarray) -> tuple[int, np.ndarray]:
    """Weakly connected components of a directed graph given as CSR (either orientation):
    ``(n_components, labels)``, labels numbered in order of each component's smallest
    vertex (deterministic). The union–find of :func:`weak_component_count`, then every
    vertex pointed at its root."""
    n = indptr.size - 1
    if n <= 0:
        return 0, np.zeros(0, np.int64)
    parent = np.empty(n, np.int32 if n < 2**31 - 1 else np.int64)
    k = int(_weak_count(index_array(indptr), index_array(indices), parent))
    root = parent.astype(np.int64)
    while True:  # pointer jumping: each round at least halves every path
        up = root[root]
        if np.array_equal(up, root):
            break
        root = up
    # roots are each component's smallest vertex (unions keep the smaller root), so
    # numbering the roots in increasing order numbers components by smallest vertex
    first = np.zeros(n, np.int64)
    first[np.unique(root)] = np.arange(k)
    return k, first[root]

