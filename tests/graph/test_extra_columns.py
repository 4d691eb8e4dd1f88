"""Extra columns matched into a maximum matching (netctl.graph.extra_columns), against scipy.

Reference: SciPy's ``maximum_bipartite_matching`` (Hopcroft–Karp) on the graph with the
extra columns appended. Augmenting paths never unmatch a vertex (L. Lovász, M. D.
Plummer, *Matching Theory*, 1986; from memory), so completing a maximum matching of the
real columns by augmenting paths from the free extra columns must reach the maximum of
the whole graph while the real part keeps its (maximum) size: the number of matched
extra columns is then the largest any matching with a maximum real part allows.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp

from netctl import _jit
from netctl.graph.extra_columns import extend_matching
from netctl.graph.matching import maximum_matching, transpose_csr
from tests.graph.test_matching import _random_csr, _scipy_size


def _pattern(rng, n_rows, n_cols, mean_deg):
    return _random_csr(rng, n_rows, n_cols, mean_deg) if n_cols else sp.csr_array((n_rows, 0))


def _case(rng):
    n_rows = int(rng.integers(1, 30))
    n_cols = int(rng.integers(0, 30))
    n_x = int(rng.integers(1, 8))
    real = _pattern(rng, n_rows, n_cols, float(rng.uniform(0.3, 3.0)))
    extra = _pattern(rng, n_rows, n_x, float(rng.uniform(0.1, 1.5)))
    return real, extra


def _extend(real, extra, rng, warm):
    n_rows, n_cols = real.shape
    rm, cm = maximum_matching(real.indptr, real.indices, n_cols)
    xt = extra.T.tocsr()  # the extra columns' adjacency: rows each one may take
    xt.sort_indices()
    xm = np.full(extra.shape[1], -1, np.int64)
    start_rows = []
    if warm:  # as the structural analyses do: some extra columns start on a free row
        for k in range(extra.shape[1]):
            rows = xt.indices[xt.indptr[k]:xt.indptr[k + 1]]
            free = [r for r in rows.tolist() if rm[r] == -1 and r not in start_rows]
            if free and rng.random() < 0.5:
                xm[k] = free[0]
                rm[free[0]] = n_cols + k
                start_rows.append(free[0])
    matched_before = np.flatnonzero(rm >= 0)
    out = extend_matching(transpose_csr(real.indptr, real.indices, n_cols), n_cols, rm, cm,
                          (xt.indptr.astype(np.int64), xt.indices.astype(np.int64)), xm)
    return out, matched_before


@pytest.mark.parametrize("mode", ["python", "compiled"])
@pytest.mark.parametrize("warm", [False, True], ids=["cold", "warm-start"])
def test_extension_reaches_the_maximum_of_the_whole_graph(mode, warm):
    rng = np.random.default_rng(2024 + warm)
    ctx = _jit.always_python() if mode == "python" else _jit.always_compiled()
    with ctx:
        for _ in range(150):
            real, extra = _case(rng)
            n_rows, n_cols = real.shape
            (rm, cm, xm), matched_before = _extend(real, extra, rng, warm)
            both = sp.hstack([real, extra]).tocsr()
            # a valid matching of the whole graph
            rows = np.flatnonzero(rm >= 0)
            assert np.unique(rm[rows]).size == rows.size
            for r in rows.tolist():
                c = int(rm[r])
                assert both[r, c] != 0, (r, c)
                assert (cm[c] if c < n_cols else xm[c - n_cols]) == r
            assert np.count_nonzero(cm >= 0) + np.count_nonzero(xm >= 0) == rows.size
            # no vertex unmatched; the real part keeps its maximum size
            assert np.all(rm[matched_before] >= 0)
            assert np.count_nonzero(cm >= 0) == _scipy_size(real)
            # as many matched pairs as the whole graph's maximum matching
            assert rows.size == _scipy_size(both)
