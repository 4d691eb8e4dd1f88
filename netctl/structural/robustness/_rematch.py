"""Maximum matching size after each of many losses, from one maximum matching.

Private kernel of :func:`~netctl.structural.robustness.elements.element_sweep`: for every
loss (a set of matrix entries, rows and columns taken out) the size of a maximum matching
of what is left, without rebuilding the matrix and without a fresh matching per loss.

Orientation: the matrix is a CSR pattern whose rows and columns are the two sides of
the bipartite graph (rows: ``A``'s rows, the in-copies of the states; columns: the
out-copies, then the inputs for ``[A B]``).
"""

from __future__ import annotations

import numpy as np

from netctl._jit import njit

__all__ = ["matching_sizes_after"]


def matching_sizes_after(indptr: np.ndarray, indices: np.ndarray, n_cols: int,
                         row_mate: np.ndarray, col_mate: np.ndarray,
                         pos_ptr: np.ndarray, pos: np.ndarray, row_ptr: np.ndarray,
                         rows: np.ndarray, col_ptr: np.ndarray,
                         cols: np.ndarray) -> np.ndarray:
    r"""Size of a maximum matching after each loss, from a maximum matching of the whole.

    Parameters
    ----------
    indptr, indices : ndarray of int
        CSR pattern (rows x ``n_cols``), canonical (sorted, no duplicates).
    n_cols : int
    row_mate, col_mate : ndarray of int
        A maximum matching of the pattern (``-1`` unmatched).
    pos_ptr, pos, row_ptr, rows, col_ptr, cols : ndarray of int
        Loss ``k`` removes the entries at CSR positions ``pos[pos_ptr[k]:pos_ptr[k+1]]``,
        the rows ``rows[row_ptr[k]:row_ptr[k+1]]`` and the columns
        ``cols[col_ptr[k]:col_ptr[k+1]]`` (ragged arrays, one group per loss).

    Returns
    -------
    ndarray of int
        Maximum matching size after each loss.

    Notes
    -----
    The matching restricted to what is left is valid; the vertices that lost their
    partner (*freed*) are the only possible ends, with the vertices left unmatched by the
    maximum matching, of an augmenting path (one between two of the latter would augment
    the whole matching, which is maximum [1]_). Two phases are exact: first each freed
    column searches (breadth-first, by alternating paths) for an originally unmatched row,
    freed rows set aside -- a search from a column left unmatched from the start never
    succeeds, so this is a complete run of the augmenting-path method on the graph
    without the freed rows; then each freed row searches for any unmatched column -- an
    originally unmatched row cannot augment now (its path could not pass through a freed
    row, which is unmatched, so it would augment the first phase's maximum), and a
    vertex with no augmenting path keeps none after other augmentations [2]_. Each search
    costs at most O(E); losses that free nothing cost their size. The matching is
    restored after each loss (an undo list of the rows and columns changed).

    References
    ----------
    .. [1] C. Berge, "Two theorems in graph theory", PNAS 43(9):842-844, 1957.
       doi:10.1073/pnas.43.9.842
    .. [2] H. W. Kuhn, "The Hungarian method for the assignment problem", Naval Research
       Logistics Quarterly 2:83-97, 1955 (a vertex without an augmenting path keeps none
       after augmentations elsewhere; from memory). doi:10.1002/nav.3800020109

    Examples
    --------
    >>> import numpy as np
    >>> # rows 0, 1; columns 0, 1; entries (0, 0), (0, 1), (1, 0); matching 0-1, 1-0
    >>> ptr, idx = np.array([0, 2, 3]), np.array([0, 1, 0])
    >>> rm, cm = np.array([1, 0]), np.array([1, 0])
    >>> z = np.zeros(3, np.int64)  # no rows or columns lost
    >>> # loss 0: entry (0, 1) (position 1); loss 1: entry (1, 0) (position 2)
    >>> matching_sizes_after(ptr, idx, 2, rm, cm, np.array([0, 1, 2]), np.array([1, 2]),
    ...                      z, np.zeros(0, np.int64), z, np.zeros(0, np.int64)).tolist()
    [1, 1]
    """
    n_rows = indptr.size - 1
    indptr = np.asarray(indptr, np.int64)
    indices = np.asarray(indices, np.int64)
    row_of = np.repeat(np.arange(n_rows, dtype=np.int64), np.diff(indptr))
    order = np.argsort(indices, kind="stable")
    t_ptr = np.zeros(n_cols + 1, np.int64)
    np.cumsum(np.bincount(indices, minlength=n_cols), out=t_ptr[1:])
    size = int(np.count_nonzero(np.asarray(row_mate) >= 0))
    return _sizes_after(indptr, indices, row_of, t_ptr, row_of[order], order.astype(np.int64),
                        np.asarray(row_mate, np.int64), np.asarray(col_mate, np.int64), size,
                        np.asarray(pos_ptr, np.int64), np.asarray(pos, np.int64),
                        np.asarray(row_ptr, np.int64), np.asarray(rows, np.int64),
                        np.asarray(col_ptr, np.int64), np.asarray(cols, np.int64))


@njit(cache=True, nogil=True)
def _sizes_after(indptr, indices, row_of, t_ptr, t_row, t_pos, rm0, cm0, size0,
                 pos_ptr, pos, drow_ptr, drow, dcol_ptr, dcol):  # pragma: no cover
    n_r = indptr.size - 1
    n_c = t_ptr.size - 1
    k_n = pos_ptr.size - 1
    out = np.empty(k_n, np.int64)
    rm = rm0.copy()
    cm = cm0.copy()
    edge_dead = np.zeros(indices.size, np.bool_)
    row_dead = np.zeros(n_r, np.bool_)
    col_dead = np.zeros(n_c, np.bool_)
    row_freed = np.zeros(n_r, np.bool_)
    is_tr = np.zeros(n_r, np.bool_)
    is_tc = np.zeros(n_c, np.bool_)
    touched_r = np.empty(n_r, np.int64)
    touched_c = np.empty(n_c, np.int64)
    seen_r = np.zeros(n_r, np.int64)
    seen_c = np.zeros(n_c, np.int64)
    prev_r = np.zeros(n_r, np.int64)
    prev_c = np.zeros(n_c, np.int64)
    queue = np.empty(max(n_r, n_c) + 1, np.int64)
    fr = np.empty(n_r, np.int64)
    fc = np.empty(n_c, np.int64)
    stamp = 0
    for k in range(k_n):
        ntr = 0
        ntc = 0
        nfr = 0
        nfc = 0
        for q in range(pos_ptr[k], pos_ptr[k + 1]):
            edge_dead[pos[q]] = True
        for q in range(drow_ptr[k], drow_ptr[k + 1]):
            row_dead[drow[q]] = True
        for q in range(dcol_ptr[k], dcol_ptr[k + 1]):
            col_dead[dcol[q]] = True
        cur = size0
        # unmatch the pairs the loss takes away; their surviving ends are freed
        for q in range(pos_ptr[k], pos_ptr[k + 1]):
            p = pos[q]
            r = row_of[p]
            c = indices[p]
            if rm[r] == c:
                if not is_tr[r]:
                    is_tr[r] = True
                    touched_r[ntr] = r
                    ntr += 1
                if not is_tc[c]:
                    is_tc[c] = True
                    touched_c[ntc] = c
                    ntc += 1
                rm[r] = -1
                cm[c] = -1
                cur -= 1
                if not row_dead[r]:
                    fr[nfr] = r
                    nfr += 1
                    row_freed[r] = True
                if not col_dead[c]:
                    fc[nfc] = c
                    nfc += 1
        for q in range(drow_ptr[k], drow_ptr[k + 1]):
            r = drow[q]
            c = rm[r]
            if c >= 0:
                if not is_tr[r]:
                    is_tr[r] = True
                    touched_r[ntr] = r
                    ntr += 1
                if not is_tc[c]:
                    is_tc[c] = True
                    touched_c[ntc] = c
                    ntc += 1
                rm[r] = -1
                cm[c] = -1
                cur -= 1
                if not col_dead[c]:
                    fc[nfc] = c
                    nfc += 1
        for q in range(dcol_ptr[k], dcol_ptr[k + 1]):
            c = dcol[q]
            r = cm[c]
            if r >= 0:
                if not is_tr[r]:
                    is_tr[r] = True
                    touched_r[ntr] = r
                    ntr += 1
                if not is_tc[c]:
                    is_tc[c] = True
                    touched_c[ntc] = c
                    ntc += 1
                rm[r] = -1
                cm[c] = -1
                cur -= 1
                if not row_dead[r]:
                    fr[nfr] = r
                    nfr += 1
                    row_freed[r] = True
        # phase 1: freed columns to originally unmatched rows (freed rows set aside);
        # none when the matching covered every row (a Lin test's intact design), and
        # each fruitless search would read the whole graph (a grid: quadratic in all)
        for i in range(nfc if size0 < n_r else 0):
            c0 = fc[i]
            if cm[c0] >= 0:
                continue
            stamp += 1
            head = 0
            tail = 1
            queue[0] = c0
            seen_c[c0] = stamp
            found = -1
            last = -1
            while head < tail and found < 0:
                x = queue[head]
                head += 1
                for q in range(t_ptr[x], t_ptr[x + 1]):
                    if edge_dead[t_pos[q]]:
                        continue
                    r = t_row[q]
                    if row_dead[r]:
                        continue
                    y = rm[r]
                    if y < 0:
                        if row_freed[r]:
                            continue
                        found = r
                        last = x
                        break
                    if seen_c[y] == stamp:
                        continue
                    seen_c[y] = stamp
                    prev_c[y] = x
                    queue[tail] = y
                    tail += 1
            if found >= 0:
                rr = found
                cc = last
                while True:
                    old = cm[cc]
                    if not is_tr[rr]:
                        is_tr[rr] = True
                        touched_r[ntr] = rr
                        ntr += 1
                    if not is_tc[cc]:
                        is_tc[cc] = True
                        touched_c[ntc] = cc
                        ntc += 1
                    rm[rr] = cc
                    cm[cc] = rr
                    if cc == c0:
                        break
                    rr = old
                    cc = prev_c[cc]
                cur += 1
        # phase 2: freed rows to any unmatched column
        for i in range(nfr):
            r0 = fr[i]
            if rm[r0] >= 0:
                continue
            stamp += 1
            head = 0
            tail = 1
            queue[0] = r0
            seen_r[r0] = stamp
            found = -1
            last = -1
            while head < tail and found < 0:
                x = queue[head]
                head += 1
                for p in range(indptr[x], indptr[x + 1]):
                    if edge_dead[p]:
                        continue
                    c = indices[p]
                    if col_dead[c]:
                        continue
                    y = cm[c]
                    if y < 0:
                        found = c
                        last = x
                        break
                    if seen_r[y] == stamp:
                        continue
                    seen_r[y] = stamp
                    prev_r[y] = x
                    queue[tail] = y
                    tail += 1
            if found >= 0:
                rr = last
                cc = found
                while True:
                    old = rm[rr]
                    if not is_tr[rr]:
                        is_tr[rr] = True
                        touched_r[ntr] = rr
                        ntr += 1
                    if not is_tc[cc]:
                        is_tc[cc] = True
                        touched_c[ntc] = cc
                        ntc += 1
                    rm[rr] = cc
                    cm[cc] = rr
                    if rr == r0:
                        break
                    cc = old
                    rr = prev_r[rr]
                cur += 1
        out[k] = cur
        # undo: the matching, the freed marks, the losses
        for i in range(ntr):
            r = touched_r[i]
            rm[r] = rm0[r]
            is_tr[r] = False
        for i in range(ntc):
            c = touched_c[i]
            cm[c] = cm0[c]
            is_tc[c] = False
        for i in range(nfr):
            row_freed[fr[i]] = False
        for q in range(pos_ptr[k], pos_ptr[k + 1]):
            edge_dead[pos[q]] = False
        for q in range(drow_ptr[k], drow_ptr[k + 1]):
            row_dead[drow[q]] = False
        for q in range(dcol_ptr[k], dcol_ptr[k + 1]):
            col_dead[dcol[q]] = False
    return out
