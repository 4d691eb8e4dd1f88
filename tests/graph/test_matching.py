"""The matching engine against reference libraries (scipy, networkx, igraph) and brute force."""

from __future__ import annotations

import igraph as ig
import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.sparse.csgraph import maximum_bipartite_matching

from netctl.graph import (
    alternating_reach_rows,
    condensation_sources,
    is_valid_matching,
    maximum_matching,
    reachable_from,
    strongly_connected_components,
)


def _random_csr(rng, n_rows, n_cols, mean_deg):
    nnz = rng.poisson(mean_deg * n_rows)
    r = rng.integers(0, n_rows, nnz)
    c = rng.integers(0, n_cols, nnz)
    m = sp.csr_array((np.ones(nnz), (r, c)), shape=(n_rows, n_cols))
    m.sum_duplicates()
    m.sort_indices()
    return m


def _scipy_size(m):
    if m.nnz == 0:
        return 0
    return int((maximum_bipartite_matching(sp.csr_matrix(m), perm_type="column") >= 0).sum())


def _igraph_size(m):
    n_rows, n_cols = m.shape
    coo = m.tocoo()
    g = ig.Graph.Bipartite([False] * n_rows + [True] * n_cols,
                           list(zip(coo.row.tolist(), (coo.col + n_rows).tolist())))
    return len(g.maximum_bipartite_matching())  # number of matched pairs


def _networkx_size(m):
    n_rows, n_cols = m.shape
    g = nx.Graph()
    g.add_nodes_from(range(n_rows), bipartite=0)
    g.add_nodes_from(range(n_rows, n_rows + n_cols), bipartite=1)
    coo = m.tocoo()
    g.add_edges_from(zip(coo.row.tolist(), (coo.col + n_rows).tolist()))
    match = nx.bipartite.hopcroft_karp_matching(g, top_nodes=range(n_rows))
    return sum(1 for v in range(n_rows) if v in match)


@pytest.mark.parametrize("n_rows, n_cols, deg", [(50, 50, 1.0), (200, 180, 2.0), (300, 320, 3.5),
                                                 (1000, 1000, 1.5), (2000, 1500, 4.0)])
def test_matching_size_equals_scipy_igraph_networkx(n_rows, n_cols, deg):
    rng = np.random.default_rng(n_rows + n_cols)
    for _ in range(5):
        m = _random_csr(rng, n_rows, n_cols, deg)
        rm, cm = maximum_matching(m.indptr, m.indices, n_cols)
        assert is_valid_matching(m.indptr, m.indices, rm, cm)
        size = int((rm >= 0).sum())
        assert size == _scipy_size(m)
        assert size == _networkx_size(m)
        assert size == _igraph_size(m)


@settings(max_examples=300, deadline=None)
@given(st.integers(1, 9), st.integers(1, 9), st.data())
def test_matching_is_maximum_on_arbitrary_small_graphs(n_rows, n_cols, data):
    cells = data.draw(st.sets(st.tuples(st.integers(0, n_rows - 1), st.integers(0, n_cols - 1)),
                              max_size=n_rows * n_cols))
    dense = np.zeros((n_rows, n_cols), bool)
    for r, c in cells:
        dense[r, c] = True
    m = sp.csr_array(dense.astype(float))
    rm, cm = maximum_matching(m.indptr.astype(np.int64), m.indices.astype(np.int64), n_cols)
    assert is_valid_matching(m.indptr, m.indices, rm, cm)
    assert int((rm >= 0).sum()) == _scipy_size(m)


def test_warm_start_keeps_matched_vertices_matched():
    rng = np.random.default_rng(0)
    m = _random_csr(rng, 400, 400, 2.0)
    # a greedy partial matching as the start
    rm0 = np.full(400, -1, np.int64)
    cm0 = np.full(400, -1, np.int64)
    for r in range(0, 400, 3):
        for c in m.indices[m.indptr[r]:m.indptr[r + 1]]:
            if cm0[c] == -1:
                rm0[r], cm0[c] = c, r
                break
    rm, cm = maximum_matching(m.indptr, m.indices, 400, row_match=rm0, col_match=cm0)
    assert np.all(rm[rm0 >= 0] >= 0) and np.all(cm[cm0 >= 0] >= 0)
    assert int((rm >= 0).sum()) == _scipy_size(m)
    # inputs were not modified
    assert int((rm0 >= 0).sum()) < int((rm >= 0).sum())


def test_matching_is_deterministic():
    rng = np.random.default_rng(1)
    m = _random_csr(rng, 3000, 3000, 2.5)
    a = maximum_matching(m.indptr, m.indices, 3000)[0]
    b = maximum_matching(m.indptr, m.indices, 3000)[0]
    assert np.array_equal(a, b)


def test_empty_inputs():
    rm, cm = maximum_matching(np.zeros(1, np.int64), np.zeros(0, np.int64), 0)
    assert rm.size == 0 and cm.size == 0
    rm, cm = maximum_matching(np.zeros(4, np.int64), np.zeros(0, np.int64), 2)
    assert rm.tolist() == [-1, -1, -1] and cm.tolist() == [-1, -1]


def test_alternating_reach_rows_brute_force():
    """Rows reached = rows left unmatched by some maximum matching (brute force over
    all maximum matchings via networkx enumeration on tiny graphs)."""
    rng = np.random.default_rng(2)
    for _ in range(80):
        n = int(rng.integers(1, 6))
        dense = rng.random((n, n)) < 0.35
        m = sp.csr_array(dense.astype(float))
        indptr, indices = m.indptr.astype(np.int64), m.indices.astype(np.int64)
        rm, cm = maximum_matching(indptr, indices, n)
        size = int((rm >= 0).sum())
        rows, _ = alternating_reach_rows(indptr, indices, n, cm)
        # brute force: row r can be unmatched iff deleting it keeps the matching size
        for r in range(n):
            d2 = dense.copy()
            d2[r, :] = False
            can_be_free = _scipy_size(sp.csr_array(d2.astype(float))) == size
            assert rows[r] == can_be_free


def test_alternating_reach_rows_banned_column_brute_force():
    """With the matched column ``c`` of row ``r`` banned and the search started at ``r``:
    when losing ``c`` lowers the matching size, row ``x`` is reached iff the rows the
    matching covered, less ``x``, can still all be matched without ``c`` (an even
    alternating path from ``r`` to ``x`` swaps ``x`` out; König/Berge exchange). Checked
    with scipy's maximum bipartite matching on every row of small random graphs; the
    banned column is never reported reached."""
    rng = np.random.default_rng(12)
    checked = 0
    for _ in range(150):
        n_rows = int(rng.integers(1, 7))
        n_cols = int(rng.integers(1, 8))
        dense = rng.random((n_rows, n_cols)) < 0.4
        m = sp.csr_array(dense.astype(float))
        indptr, indices = m.indptr.astype(np.int64), m.indices.astype(np.int64)
        rm, cm = maximum_matching(indptr, indices, n_cols)
        size = int((rm >= 0).sum())
        covered = np.flatnonzero(rm >= 0)
        for r in covered:
            c = int(rm[r])
            d2 = dense.copy()
            d2[:, c] = False
            if _scipy_size(sp.csr_array(d2.astype(float))) == size:
                continue  # the column is not needed: no rivals to compare
            rows, cols = alternating_reach_rows(indptr, indices, n_cols, cm,
                                                np.array([r], np.int64), banned=c)
            assert not cols[c]
            for x in range(n_rows):
                keep = np.setdiff1d(covered, [x])
                sub = d2[keep, :]
                expect = _scipy_size(sp.csr_array(sub.astype(float))) == keep.size
                assert rows[x] == expect, (dense, r, x)
            checked += 1
    assert checked > 50


def test_alternating_reach_rows_banned_is_deleting_the_columns():
    """Banning columns is the same search as deleting their entries from the graph (any
    set of columns, any starts; the matching array unchanged), and ``banned=None`` is the
    search without a ban."""
    rng = np.random.default_rng(13)
    differs = 0
    for _ in range(300):
        n_rows = int(rng.integers(1, 9))
        n_cols = int(rng.integers(1, 9))
        dense = rng.random((n_rows, n_cols)) < 0.35
        m = sp.csr_array(dense.astype(float))
        ptr, ind = m.indptr.astype(np.int64), m.indices.astype(np.int64)
        _, cm = maximum_matching(ptr, ind, n_cols)
        starts = np.flatnonzero(rng.random(n_rows) < 0.4).astype(np.int64)
        ban = np.flatnonzero(rng.random(n_cols) < 0.3).astype(np.int64)
        cut = dense.copy()
        cut[:, ban] = False
        mc = sp.csr_array(cut.astype(float), shape=dense.shape)
        want = alternating_reach_rows(mc.indptr.astype(np.int64),
                                      mc.indices.astype(np.int64), n_cols, cm, starts)
        got = alternating_reach_rows(ptr, ind, n_cols, cm, starts, banned=ban)
        assert np.array_equal(got[0], want[0]) and np.array_equal(got[1], want[1])
        plain = alternating_reach_rows(ptr, ind, n_cols, cm, starts)
        none = alternating_reach_rows(ptr, ind, n_cols, cm, starts, banned=None)
        assert np.array_equal(plain[0], none[0]) and np.array_equal(plain[1], none[1])
        differs += not np.array_equal(plain[0], got[0])
    assert differs > 10  # the ban changed the rows reached in many cases


def test_scc_and_sources_match_networkx():
    rng = np.random.default_rng(3)
    for _ in range(30):
        n = int(rng.integers(1, 40))
        dense = rng.random((n, n)) < 0.06
        A = sp.csr_array(dense.astype(float))  # A[v, u]: u -> v
        k, labels = strongly_connected_components(A.indptr.astype(np.int64),
                                                  A.indices.astype(np.int64))
        g = nx.DiGraph()
        g.add_nodes_from(range(n))
        v_idx, u_idx = np.nonzero(dense)
        g.add_edges_from(zip(u_idx.tolist(), v_idx.tolist()))
        comps = list(nx.strongly_connected_components(g))
        assert k == len(comps)
        for c in comps:
            assert len({labels[i] for i in c}) == 1
        src = condensation_sources(A.indptr.astype(np.int64), A.indices.astype(np.int64), labels, k)
        cond = nx.condensation(g, comps)
        nx_sources = {frozenset(cond.nodes[c]["members"]) for c in cond if cond.in_degree(c) == 0}
        ours = {frozenset(np.flatnonzero(labels == c).tolist()) for c in np.flatnonzero(src)}
        assert ours == nx_sources
        # reachability from node 0 equals networkx descendants
        At = A.T.tocsr()
        mask = reachable_from(At.indptr, At.indices, np.array([0]))
        assert set(np.flatnonzero(mask).tolist()) == nx.descendants(g, 0) | {0}


def test_masked_scc_equals_networkx_on_induced_subgraph():
    rng = np.random.default_rng(9)
    for _ in range(40):
        n = int(rng.integers(2, 30))
        dense = rng.random((n, n)) < 0.1
        mask = rng.random(n) < 0.6
        A = sp.csr_array(dense.astype(float))
        k, labels = strongly_connected_components(A.indptr.astype(np.int64),
                                                  A.indices.astype(np.int64), mask=mask)
        g = nx.DiGraph()
        g.add_nodes_from(np.flatnonzero(mask).tolist())
        v_idx, u_idx = np.nonzero(dense)
        g.add_edges_from((u, v) for u, v in zip(u_idx.tolist(), v_idx.tolist())
                         if mask[u] and mask[v])
        comps = list(nx.strongly_connected_components(g))
        assert k == len(comps)
        assert np.all(labels[~mask] == -1)
        for c in comps:
            assert len({labels[i] for i in c}) == 1
        src = condensation_sources(A.indptr.astype(np.int64), A.indices.astype(np.int64), labels, k)
        cond = nx.condensation(g, comps)
        nx_sources = {frozenset(cond.nodes[c]["members"]) for c in cond if cond.in_degree(c) == 0}
        ours = {frozenset(np.flatnonzero(labels == c).tolist()) for c in np.flatnonzero(src)}
        assert ours == nx_sources


def _heavy_tailed_csr(rng, n, mean_deg, gamma=2.5):
    """Chung-Lu style bipartite graph: endpoint probabilities ~ i^(-1/(gamma-1))."""
    nnz = rng.poisson(mean_deg * n)
    w = np.arange(1, n + 1, dtype=float) ** (-1.0 / (gamma - 1.0))
    cdf = np.cumsum(w) / w.sum()
    r = np.minimum(np.searchsorted(cdf, rng.random(nnz)), n - 1)
    c = rng.permutation(n)[np.minimum(np.searchsorted(cdf, rng.random(nnz)), n - 1)]
    m = sp.csr_array((np.ones(nnz), (r, c)), shape=(n, n))
    m.sum_duplicates()
    m.sort_indices()
    return m


@pytest.mark.parametrize("prefetch_bytes", [0, 2**62], ids=["prefetch-walks", "no-walks"])
def test_both_kernel_paths_give_maximum_matchings(monkeypatch, prefetch_bytes):
    """The prefetch walks (used above a size threshold) only load data; the matching
    must be a valid maximum matching with them forced on and forced off. Sizes against
    scipy (Hopcroft-Karp) and igraph. Mean degrees below, at and above e, where the
    Karp-Sipser degree-one phase alone is or is not exact (Karp & Sipser 1981)."""
    from netctl.graph import matching

    monkeypatch.setattr(matching, "_PREFETCH_BYTES", prefetch_bytes)
    rng = np.random.default_rng(11)
    graphs = [_random_csr(rng, 3000, 3000, d) for d in (1.0, 2.0, 2.72, 3.0, 4.0, 6.0)]
    graphs += [_random_csr(rng, 2500, 3100, 3.0), _random_csr(rng, 3100, 2500, 3.0)]
    graphs += [_heavy_tailed_csr(rng, 3000, 3.0), _heavy_tailed_csr(rng, 3000, 6.0)]
    # a perfect matching hidden under noise (every row matched in the maximum)
    perm = sp.csr_array((np.ones(3000), (np.arange(3000), rng.permutation(3000))),
                        shape=(3000, 3000))
    graphs.append(((perm + _random_csr(rng, 3000, 3000, 2.0)) > 0).astype(float).tocsr())
    for m in graphs:
        m.sort_indices()
        rm, cm = maximum_matching(m.indptr, m.indices, m.shape[1])
        assert is_valid_matching(m.indptr, m.indices, rm, cm)
        size = int((rm >= 0).sum())
        assert size == _scipy_size(m)
        assert size == _igraph_size(m)


@pytest.mark.parametrize("prefetch_bytes", [0, 2**62], ids=["prefetch-walks", "no-walks"])
def test_repeated_entries_and_warm_starts_on_both_paths(monkeypatch, prefetch_bytes):
    """Rows listing a column twice (non-canonical input) and a greedy start matching:
    still a maximum matching (size against scipy on the merged pattern), start pairs
    kept matched."""
    from netctl.graph import matching

    monkeypatch.setattr(matching, "_PREFETCH_BYTES", prefetch_bytes)
    rng = np.random.default_rng(12)
    for trial in range(6):
        m = _random_csr(rng, 1500, 1500, float(rng.uniform(1.0, 5.0)))
        # repeat every third entry of each row in place
        rows = np.repeat(np.arange(1500), np.diff(m.indptr))
        rep = np.ones(m.indices.size, np.int64)
        rep[::3] = 2
        indices = np.repeat(m.indices, rep)
        per_row = np.bincount(rows, weights=rep, minlength=1500).astype(np.int64)
        indptr = np.concatenate([[0], np.cumsum(per_row)])
        rm, cm = maximum_matching(indptr, indices, 1500)
        assert is_valid_matching(indptr, indices, rm, cm)
        assert int((rm >= 0).sum()) == _scipy_size(m)
        rm0 = np.full(1500, -1, np.int64)
        cm0 = np.full(1500, -1, np.int64)
        for r in range(trial, 1500, 4):
            for c in m.indices[m.indptr[r]:m.indptr[r + 1]]:
                if cm0[c] == -1:
                    rm0[r], cm0[c] = c, r
                    break
        rm, cm = maximum_matching(m.indptr, m.indices, 1500, row_match=rm0, col_match=cm0)
        assert is_valid_matching(m.indptr, m.indices, rm, cm)
        assert np.all(rm[rm0 >= 0] >= 0) and np.all(cm[cm0 >= 0] >= 0)
        assert int((rm >= 0).sum()) == _scipy_size(m)


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_reachable_from_many_sources_equals_scipy_breadth_first_order(mode):
    # reachability from several sources (repeats included), on graphs deep enough for
    # small levels and wide enough for large ones put in order by a scan; reference: the union
    # of SciPy's breadth_first_order from each source
    from scipy.sparse.csgraph import breadth_first_order

    from netctl import _jit

    rng = np.random.default_rng(4)
    for trial in range(60):
        n = int(rng.integers(2, 300))
        m = int(rng.integers(0, 3 * n))
        u, v = rng.integers(0, n, m), rng.integers(0, n, m)
        out = sp.csr_array((np.ones(m), (u, v)), shape=(n, n))
        src = rng.integers(0, n, int(rng.integers(1, 6)))
        want = np.zeros(n, bool)
        for s in src.tolist():
            want[breadth_first_order(out, s, return_predecessors=False)] = True
        with (_jit.always_python() if mode == "python" else _jit.always_compiled()):
            got = reachable_from(out.indptr, out.indices, src)
        assert (got == want).all(), trial
