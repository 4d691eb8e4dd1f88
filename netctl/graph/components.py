"""Strongly connected components, source components and reachability on index arrays."""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from numba import njit
from scipy.sparse.csgraph import connected_components

__all__ = ["strongly_connected_components", "condensation_sources", "reachable_from"]


def strongly_connected_components(indptr: np.ndarray, indices: np.ndarray) -> tuple[int, np.ndarray]:
    """Strongly connected components of a directed graph given as CSR adjacency.

    Returns ``(n_components, labels)``. Components do not depend on the orientation, so
    either the out- or the in-adjacency may be passed. Labels are renumbered in order of
    each component's smallest vertex, so they are deterministic.
    """
    n = indptr.size - 1
    if n == 0:
        return 0, np.zeros(0, np.int64)
    g = sp.csr_array((np.ones(indices.size, np.int8), indices, indptr), shape=(n, n))
    k, labels = connected_components(g, directed=True, connection="strong")
    labels = labels.astype(np.int64)
    # renumber by first appearance so that label order follows vertex order
    first = np.full(k, n, np.int64)
    np.minimum.at(first, labels, np.arange(n, dtype=np.int64))
    order = np.argsort(first, kind="stable")
    remap = np.empty(k, np.int64)
    remap[order] = np.arange(k, dtype=np.int64)
    return int(k), remap[labels]


def condensation_sources(in_indptr: np.ndarray, in_indices: np.ndarray, labels: np.ndarray,
                         n_components: int) -> np.ndarray:
    """Boolean mask over components: True for *source* components.

    A source component receives no edge from another component. ``in_indptr`` /
    ``in_indices`` is the in-adjacency (row ``v`` lists the ``u`` with ``u -> v``), which is
    exactly the CSR of a state matrix ``A``.
    """
    n = in_indptr.size - 1
    tgt = np.repeat(np.arange(n, dtype=np.int64), np.diff(in_indptr))
    cross = labels[in_indices] != labels[tgt]
    has_in = np.zeros(n_components, dtype=bool)
    has_in[labels[tgt[cross]]] = True
    return ~has_in


@njit(cache=True, nogil=True)
def _bfs(indptr, indices, sources, mask):  # pragma: no cover - compiled
    n = indptr.size - 1
    queue = np.empty(n, np.int64)
    tail = 0
    for s in sources:
        if not mask[s]:
            mask[s] = True
            queue[tail] = s
            tail += 1
    head = 0
    while head < tail:
        u = queue[head]
        head += 1
        for k in range(indptr[u], indptr[u + 1]):
            v = indices[k]
            if not mask[v]:
                mask[v] = True
                queue[tail] = v
                tail += 1
    return mask


def reachable_from(out_indptr: np.ndarray, out_indices: np.ndarray, sources: np.ndarray) -> np.ndarray:
    """Boolean mask of the vertices reachable from ``sources`` (sources included).

    ``out_indptr`` / ``out_indices`` is the out-adjacency: ``indices[indptr[u]:indptr[u+1]]``
    are the successors of ``u``. Linear time.
    """
    n = out_indptr.size - 1
    mask = np.zeros(n, dtype=np.bool_)
    src = np.ascontiguousarray(sources, dtype=np.int64)
    if n == 0 or src.size == 0:
        return mask
    return _bfs(np.ascontiguousarray(out_indptr, np.int64),
                np.ascontiguousarray(out_indices, np.int64), src, mask)
