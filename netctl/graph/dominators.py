"""Dominators of the input-reachability digraph: which vertices every path from the
inputs to a vertex passes through.

A virtual root (vertex ``n``) feeds every driven vertex; the dominator tree from it tells
which states a lost state or link would cut off from all inputs (Lin's accessibility
[2]_). The vertices are states, plus whatever a caller adds (input or line vertices).
Integer index arrays in, integer arrays out, as everywhere in the engine; orientation as
in :mod:`netctl` (edge ``u -> v`` iff ``A[v, u] != 0``). Compiled with numba; the kernel
trusts its input.

References
----------
.. [1] K. D. Cooper, T. J. Harvey, K. Kennedy, "A simple, fast dominance algorithm",
   Software Practice & Experience 4:1-10, 2001 (details from memory).
.. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
   (issue number from memory).
"""

from __future__ import annotations

import numpy as np

from netctl._jit import njit

__all__ = ["input_dominators"]


@njit(cache=True, nogil=True)
def input_dominators(out_indptr, out_indices, in_indptr, in_indices,
                     driven):  # pragma: no cover - compiled
    """Immediate dominators from a virtual root ``n`` that feeds every driven vertex.

    Parameters
    ----------
    out_indptr, out_indices : ndarray of int64
        CSR successor lists of the ``n`` vertices (for states, ``A^T``: the states each
        one influences).
    in_indptr, in_indices : ndarray of int64
        CSR predecessor lists (for states, ``A``: the states that influence each one).
    driven : ndarray of bool
        Per vertex: an arc from the root enters it (an input acts on it).

    Returns
    -------
    idom, pre, size : ndarray of int64, length ``n + 1`` (the root last)
        Of every vertex: its immediate dominator (``-1`` where the root does not reach
        it; the root's is ``n``), its preorder number in the dominator tree (``-1``
        where unreached) and the size of its dominator subtree (itself included).

    Notes
    -----
    Cooper, Harvey & Kennedy's iterative algorithm over reverse postorder [1]_. Vertex
    ``v`` is dominated by ``x`` iff ``pre[x] <= pre[v] < pre[x] + size[x]``.
    """
    n = out_indptr.size - 1
    N = n + 1
    po = np.full(N, -1, np.int64)
    order = np.empty(N, np.int64)  # vertices in postorder
    # iterative DFS from the root
    stack_v = np.empty(N, np.int64)
    stack_k = np.empty(N, np.int64)
    seen = np.zeros(N, np.bool_)
    roots = np.flatnonzero(driven)
    top = 0
    stack_v[0] = n
    stack_k[0] = 0
    seen[n] = True
    count = 0
    while top >= 0:
        v = stack_v[top]
        k = stack_k[top]
        if v == n:
            end = roots.size
        else:
            end = out_indptr[v + 1] - out_indptr[v]
        if k < end:
            stack_k[top] = k + 1
            w = roots[k] if v == n else out_indices[out_indptr[v] + k]
            if not seen[w]:
                seen[w] = True
                top += 1
                stack_v[top] = w
                stack_k[top] = 0
        else:
            po[v] = count
            order[count] = v
            count += 1
            top -= 1
    idom = np.full(N, -1, np.int64)
    idom[n] = n
    changed = True
    while changed:
        changed = False
        for j in range(count - 2, -1, -1):  # reverse postorder, root excluded
            v = order[j]
            new = -1
            npred = in_indptr[v + 1] - in_indptr[v] + (1 if driven[v] else 0)
            for t in range(npred):
                p = n if t == in_indptr[v + 1] - in_indptr[v] else in_indices[in_indptr[v] + t]
                if idom[p] == -1:
                    continue
                if new == -1:
                    new = p
                else:
                    a = p
                    b = new
                    while a != b:
                        while po[a] < po[b]:
                            a = idom[a]
                        while po[b] < po[a]:
                            b = idom[b]
                    new = a
            if new != idom[v]:
                idom[v] = new
                changed = True
    # dominator tree: children lists, preorder and subtree sizes
    cnt = np.zeros(N + 1, np.int64)
    for v in range(n):
        if idom[v] >= 0:
            cnt[idom[v] + 1] += 1
    for v in range(N):
        cnt[v + 1] += cnt[v]
    fill = cnt[:-1].copy()
    kids = np.empty(cnt[N], np.int64)
    for v in range(n):
        if idom[v] >= 0:
            kids[fill[idom[v]]] = v
            fill[idom[v]] += 1
    pre = np.full(N, -1, np.int64)
    size = np.zeros(N, np.int64)
    top = 0
    stack_v[0] = n
    stack_k[0] = 0
    c = 0
    pre[n] = c
    c += 1
    while top >= 0:
        v = stack_v[top]
        k = stack_k[top]
        if k < cnt[v + 1] - cnt[v]:
            stack_k[top] = k + 1
            w = kids[cnt[v] + k]
            pre[w] = c
            c += 1
            top += 1
            stack_v[top] = w
            stack_k[top] = 0
        else:
            size[v] = c - pre[v]
            top -= 1
    return idom, pre, size
