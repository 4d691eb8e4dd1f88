"""Matching size after each loss (the element N-1 kernel) against fresh matchings.

Reference: scipy.sparse.csgraph.maximum_bipartite_matching (Hopcroft-Karp) run from
scratch on the pattern with the loss's entries, rows and columns deleted; the kernel
works from one maximum matching of the whole pattern instead (Berge 1957; Kuhn 1955).
Both the Python body and the compiled kernel are checked.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching

from netctl._jit import always_compiled, always_python
from netctl.graph.matching import maximum_matching
from netctl.structural.robustness._rematch import matching_sizes_after


def _fresh(M, pos, rows, cols):
    coo = M.tocoo()
    keep = np.ones(M.nnz, bool)
    keep[pos] = False
    keep &= ~np.isin(coo.row, rows) & ~np.isin(coo.col, cols)
    R = sp.csr_array((np.ones(int(keep.sum())), (coo.row[keep], coo.col[keep])),
                     shape=M.shape)
    return int(np.count_nonzero(maximum_bipartite_matching(R, perm_type="column") >= 0))


def _ragged(groups):
    ptr = np.zeros(len(groups) + 1, np.int64)
    np.cumsum([len(g) for g in groups], out=ptr[1:])
    flat = np.concatenate([np.asarray(g, np.int64) for g in groups]) if groups else []
    return ptr, np.asarray(flat, np.int64)


def _random_case(rng, n_rows, n_cols, density):
    M = sp.random_array((n_rows, n_cols), density=density, rng=rng, format="csr")
    M.data[:] = 1.0
    M.sort_indices()
    losses = []
    for _ in range(40):
        n_pos = int(rng.integers(0, 4))
        pos = rng.choice(M.nnz, size=min(n_pos, M.nnz), replace=False) if M.nnz else []
        rows = rng.choice(n_rows, size=int(rng.integers(0, 2)), replace=False)
        cols = rng.choice(n_cols, size=int(rng.integers(0, 3)), replace=False)
        losses.append((np.sort(pos), rows, cols))
    return M, losses


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_sizes_after_losses_match_fresh_matchings(mode):
    rng = np.random.default_rng(2025)
    ctx = always_python if mode == "python" else always_compiled
    checked = 0
    for trial in range(60):
        n_rows, n_cols = int(rng.integers(2, 14)), int(rng.integers(2, 14))
        M, losses = _random_case(rng, n_rows, n_cols, float(rng.uniform(0.1, 0.5)))
        ptr, idx = M.indptr.astype(np.int64), M.indices.astype(np.int64)
        rm, cm = maximum_matching(ptr, idx, n_cols)
        pp, pf = _ragged([p for p, _, _ in losses])
        rp, rf = _ragged([r for _, r, _ in losses])
        cp, cf = _ragged([c for _, _, c in losses])
        with ctx():
            got = matching_sizes_after(ptr, idx, n_cols, rm, cm, pp, pf, rp, rf, cp, cf)
        want = [_fresh(M, p, r, c) for p, r, c in losses]
        assert got.tolist() == want, f"trial {trial}"
        checked += len(losses)
    assert checked == 2400


def test_augmenting_through_a_freed_column_needs_the_right_order():
    # rows r=0 (freed), f=1 (unmatched from the start), s=2 (lost); columns c=0 (freed),
    # g=1 (unmatched from the start), t=2 (lost). Entries: r-c, r-g, r-t, f-c, s-c.
    # Matching r-t, s-c; losing row s and column t frees r and c. The answer is 2
    # (r-g, f-c); matching r to c first would leave f-c-r-g as an augmenting path.
    M = sp.csr_array((np.ones(5), ([0, 0, 0, 1, 2], [0, 1, 2, 0, 0])), shape=(3, 3))
    assert _fresh(M, [], [], []) == 2  # the matching below is maximum
    ptr, idx = M.indptr.astype(np.int64), M.indices.astype(np.int64)
    rm, cm = np.array([2, -1, 0]), np.array([2, -1, 0])
    z = np.array([0, 0])
    got = matching_sizes_after(ptr, idx, 3, rm, cm, z, np.zeros(0, np.int64),
                               np.array([0, 1]), np.array([2]), np.array([0, 1]),
                               np.array([2]))
    assert got.tolist() == [_fresh(M, [], [2], [2])] == [2]
