"""Dedicated actuators at minimum cost, exactly: one min-cost assignment on the reduced
problem (Pequito, Kar & Aguiar 2016; the construction is in the Notes of
:func:`netctl.structural.placement.place_inputs`).

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a dedicated actuator at state ``i`` adds
the input column ``e_i``.

References
----------
.. [1] S. Pequito, S. Kar, A. P. Aguiar, "Minimum cost input/output design for
   large-scale linear structural systems", Automatica 68:384-391, 2016.
   arXiv:1407.3327
"""

from __future__ import annotations

from typing import Any

import numpy as np

from netctl import _csr
from netctl._csr import Pattern, coo_pattern, is_sparse
from netctl._csr import take as take_pattern
from netctl.records import Candidates
from netctl.structural.placement._reduced import Outcome, Reduced, gather_ranges

__all__ = ["assignment_by_component", "dedicated_assignment"]


# ====================================================================== dedicated: exact
def _components(M: Pattern) -> np.ndarray:
    """Component label of each row, then of each column, of the bipartite graph of
    ``M``: NumPy union–find on small graphs (no scipy), scipy's on large ones. Only
    which rows and columns share a component matters (each is solved on its own)."""
    n_rows, n_cols = M.shape
    if M.nnz <= _csr.SMALL_ENTRIES:
        from netctl.graph.components import weak_component_labels

        indptr = np.concatenate([np.asarray(M.indptr, np.int64),
                                 np.full(n_cols, M.indptr[-1], np.int64)])
        return weak_component_labels(indptr, np.asarray(M.indices, np.int64) + n_rows)[1]
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    Ms = M.to_scipy()
    G = sp.bmat([[None, Ms], [Ms.T, None]], format="csr")
    return connected_components(G, directed=False)[1]


def assignment_by_component(M: Any) -> tuple[np.ndarray, np.ndarray]:
    """Row-perfect min-cost assignment of ``M``, solved per connected component.

    Components of the bipartite graph are independent, and LAPJVsp is superlinear, so
    the many small components of sparse networks are solved separately; a component
    with one row takes its cheapest edge (ties: the smallest column). ``M``: a
    :class:`~netctl._csr.Pattern` or a scipy sparse matrix; scipy is imported only when
    a component has several rows (or the graph is large).
    """
    if is_sparse(M):
        M = Pattern.of_scipy(_canonical(M))
    n_rows, n_cols = M.shape
    lab = _components(M)
    rlab = lab[:n_rows]
    counts = np.bincount(rlab, minlength=lab.max(initial=-1) + 1)
    col_of_row = np.full(n_rows, -1, np.int64)
    single = counts[rlab] == 1
    rows1 = np.flatnonzero(single)
    if rows1.size:
        take = gather_ranges(M.indptr.astype(np.int64), rows1)
        seg_row = np.repeat(rows1, np.diff(M.indptr)[rows1])
        order = np.lexsort((M.indices[take], M.data[take], seg_row))
        first = np.ones(order.size, bool)
        first[1:] = seg_row[order][1:] != seg_row[order][:-1]
        col_of_row[seg_row[order][first]] = M.indices[take][order][first]
    multi = np.flatnonzero(~single)
    if multi.size:
        # permute rows and columns so that each component is one contiguous block
        rows_p = multi[np.argsort(rlab[multi], kind="stable")]
        col_lab = lab[n_rows:]
        cols_p = np.argsort(col_lab, kind="stable")
        import scipy.sparse as sp
        from scipy.sparse.csgraph import min_weight_full_bipartite_matching

        P = take_pattern(M, rows_p, cols_p)
        r_bounds = np.concatenate([[0], np.flatnonzero(np.diff(rlab[rows_p])) + 1,
                                   [rows_p.size]])
        c_starts = np.searchsorted(col_lab[cols_p], np.arange(counts.size + 1))
        for r0, r1 in zip(r_bounds[:-1].tolist(), r_bounds[1:].tolist()):
            c = int(rlab[rows_p[r0]])
            c0, c1 = int(c_starts[c]), int(c_starts[c + 1])
            a, b = int(P.indptr[r0]), int(P.indptr[r1])
            sub = sp.csr_matrix((P.data[a:b], P.indices[a:b] - c0, P.indptr[r0:r1 + 1] - a),
                                shape=(r1 - r0, c1 - c0))
            r_i, c_i = min_weight_full_bipartite_matching(sub)
            col_of_row[rows_p[r0 + r_i]] = cols_p[c0 + c_i]
    return np.arange(n_rows, dtype=np.int64), col_of_row


def _canonical(M: Any) -> Any:
    """A scipy matrix as canonical CSR (duplicates summed, indices sorted, int64)."""
    import scipy.sparse as sp

    C = sp.csr_array(M, dtype=np.float64, copy=True)
    C.sum_duplicates()
    C.sort_indices()
    C.indices = C.indices.astype(np.int64)
    C.indptr = C.indptr.astype(np.int64)
    return C


def dedicated_assignment(prob: Reduced, cands: Candidates) -> Outcome:
    site_state = cands.indices  # candidate k acts on state site_state[k]
    cost = cands.cost
    n_u = prob.unreached.size
    # cheapest eligible state of each unreached source component (ties: smallest index)
    comp_of = prob.comp_slot[prob.scc[site_state]]
    in_src = np.flatnonzero(comp_of >= 0)
    order = in_src[np.lexsort((site_state[in_src], cost[in_src], comp_of[in_src]))]
    first = np.ones(order.size, bool)
    first[1:] = comp_of[order][1:] != comp_of[order][:-1]
    rep = np.full(n_u, -1, np.int64)  # candidate index of the representative
    rep[comp_of[order[first]]] = order[first]
    minc = cost[rep] if n_u else np.zeros(0)
    chosen_rows: np.ndarray = np.zeros(0, np.int64)
    hit = np.zeros(n_u, bool)
    if prob.D.size:
        nD = prob.D.size
        d_local = np.full(prob.n, -1, np.int64)
        d_local[prob.D] = np.arange(nD)
        cand_row = d_local[site_state]
        elig = np.flatnonzero(cand_row >= 0)             # candidates on D rows
        r_real = np.repeat(np.arange(nD), np.diff(prob.sub_indptr))
        c_real = prob.sub_indices
        r_priv = cand_row[elig]
        c_priv = prob.n_real + np.arange(elig.size)
        src = elig[comp_of[elig] >= 0]
        r_src = cand_row[src]
        c_src = prob.n_real + elig.size + comp_of[src]
        rows = np.concatenate([r_real, r_priv, r_src])
        cols = np.concatenate([c_real, c_priv, c_src])
        # +1 on every edge keeps weights positive (zeros are not edges); every full
        # matching uses exactly nD edges, so the shift does not change the optimum
        w = np.concatenate([np.ones(r_real.size), 1.0 + cost[elig],
                            1.0 + cost[src] - minc[comp_of[src]]])
        n_cols = prob.n_real + elig.size + n_u
        M = coo_pattern(rows, cols, w, (nD, n_cols), count=False)[0]
        r_ind, c_ind = assignment_by_component(M)
        priv = (c_ind >= prob.n_real) & (c_ind < prob.n_real + elig.size)
        srcm = c_ind >= prob.n_real + elig.size
        chosen_rows = np.sort(r_ind[priv | srcm])
        hit[c_ind[srcm] - prob.n_real - elig.size] = True
        # a driven D row in an unreached source component serves it too
        cmp_rows = prob.comp_slot[prob.scc[prob.D[chosen_rows]]]
        hit[cmp_rows[cmp_rows >= 0]] = True
        cand_of_state = np.full(prob.n, -1, np.int64)
        cand_of_state[site_state] = np.arange(site_state.size)
        chosen = cand_of_state[prob.D[chosen_rows]]
    else:
        chosen = np.zeros(0, np.int64)
    chosen = np.union1d(chosen, rep[~hit]).astype(np.int64)
    total = float(cost[chosen].sum())
    return Outcome("dedicated", "assignment", True, False, chosen, total, total, None, None,
                    [], "exact minimum cost (min-cost assignment, polynomial time)")
