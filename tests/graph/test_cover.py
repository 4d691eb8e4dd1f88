"""Largest stem-cycle cover (Hosoe's dimension) by primal-dual phases: cross-checks.

Hosoe's theorem (S. Hosoe, IEEE Trans. Automatic Control 25(6):1192-1196, 1980, from
memory): the generic dimension of the controllable subspace is the largest number of
input-accessible states covered by disjoint stems and cycles. Checked against (a) the
generic rank of the controllability matrix ``[B, AB, ..., A^{n-1} B]`` at random weights
over a prime field (Schwartz-Zippel; ``tests/_reference.py``) and (b) SciPy's
minimum-weight full bipartite matching (LAPJVsp) on the same costs, on thousands of
small random systems, with the kernels run as Python and compiled.
"""

from __future__ import annotations

import importlib
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import netctl.graph.cover as cov
from netctl._jit import always_compiled, always_python
from netctl.graph.cover import stem_cycle_cover
from netctl.structural._engine import accessible_states, structure_of
from tests import _reference as ref

ctl = importlib.import_module("netctl.structural.controllability")


def _random_system(rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray]:
    n = int(rng.integers(1, 9))
    m = int(rng.integers(0, 3))
    A = rng.random((n, n)) < rng.uniform(0.05, 0.45)
    B = rng.random((n, m)) < 0.35
    return A, B


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_dimension_matches_controllability_matrix_rank(mode):
    rng = np.random.default_rng(20240515)
    ctx = always_python() if mode == "python" else always_compiled()
    with ctx:
        for trial in range(1500 if mode == "python" else 600):
            A, B = _random_system(rng)
            As, Bs = sp.csr_array(A.astype(float)), sp.csr_array(B.astype(float))
            acc = accessible_states(structure_of(As), Bs)
            got = ctl._hosoe_dimension(As, Bs, acc)
            want = ref.generic_controllable_dimension(A, B, rng, trials=2)
            assert got == want, (trial, A.astype(int).tolist(), B.astype(int).tolist())


def test_dimension_matches_scipy_assignment_on_arbitrary_row_sets():
    rng = np.random.default_rng(7)
    for trial in range(1500):
        n = int(rng.integers(1, 14))
        m = int(rng.integers(0, 4))
        A = sp.csr_array((rng.random((n, n)) < rng.uniform(0.05, 0.4)).astype(float))
        B = sp.csr_array((rng.random((n, m)) < 0.3).astype(float))
        rows = rng.random(n) < 0.8
        assert ctl._hosoe_dimension(A, B, rows) == \
            ctl._hosoe_dimension_reference(A, B, rows), trial


def test_cover_is_a_valid_assignment_of_stems_and_cycles():
    # u -> x0 -> x1 and u -> x2 -> x3 (u shared): one stem only, 2 states covered; the
    # other path has no input at its head (analytic, Hosoe 1980 definition of a stem)
    ptr = np.array([0, 1, 2, 3, 4])
    ind = np.array([4, 0, 4, 2])  # rows: x0<-u, x1<-x0, x2<-u, x3<-x2; column 4 is u
    rm, unc = stem_cycle_cover(ptr, ind, 5, np.zeros(4, bool))
    assert unc == 2
    assert sorted(rm.tolist()) == sorted(set(rm.tolist()))  # a matching
    # a directed 3-cycle without inputs is covered by its cycle (no dummy needed)
    rm, unc = stem_cycle_cover(np.array([0, 1, 2, 3]), np.array([2, 0, 1]), 3,
                               np.zeros(3, bool))
    assert unc == 0 and rm.tolist() == [2, 0, 1]


def test_large_failing_system_agrees_with_scipy():
    from netctl.generate import erdos_renyi

    s = erdos_renyi(3000, mean_degree=20 / 3, seed=3).with_inputs(list(range(5)))
    acc = accessible_states(structure_of(s.A), s.B)
    assert ctl._hosoe_dimension(s.A, s.B, acc) == \
        ctl._hosoe_dimension_reference(s.A, s.B, acc)


FAILING = [  # thousand-state networks with inputs on a few states: many phases, long paths
    pytest.param("er", 2000, 3.0, 3, 11, id="er-2000-deg3-3-inputs"),
    pytest.param("er", 4000, 6.0, 10, 12, id="er-4000-deg6-10-inputs"),
    pytest.param("er", 3000, 1.5, 40, 13, id="er-3000-deg1.5-40-inputs"),
    pytest.param("sf", 3000, 4.0, 5, 14, id="scale-free-3000-deg4-5-inputs"),
    pytest.param("loops", 2500, 3.0, 4, 15, id="er-2500-half-self-loops-4-inputs"),
]


@pytest.mark.parametrize("stopped", [False, True], ids=["searches", "stopped-searches"])
@pytest.mark.parametrize("kind, n, degree, n_inputs, random_start", FAILING)
def test_thousand_state_failing_networks_agree_with_scipy(kind, n, degree, n_inputs,
                                                          random_start, stopped,
                                                          monkeypatch):
    # reference: SciPy's minimum-weight full bipartite matching (LAPJVsp) on the same
    # costs; each phase's augmentation is restricted to the useful admissible subgraph.
    # "stopped": every phase's search stops at distance 1 (as the last phases' do,
    # _CAP_SHARE), and the cover must still be optimal
    from netctl.generate import erdos_renyi, scale_free

    if stopped:
        monkeypatch.setattr(cov, "_CAP_SHARE", 0)
    rng = np.random.default_rng(random_start)
    if kind == "sf":
        s = scale_free(n, mean_degree=degree, seed=random_start)
    else:
        s = erdos_renyi(n, mean_degree=degree, seed=random_start)
    if kind == "loops":
        s = s._replace(A=s.A + sp.diags_array((rng.random(n) < 0.5).astype(float)))
    s = s.with_inputs(rng.choice(n, n_inputs, replace=False).tolist())
    acc = accessible_states(structure_of(s.A), s.B)
    got = ctl._hosoe_dimension(s.A, s.B, acc)
    assert got == ctl._hosoe_dimension_reference(s.A, s.B, acc)
    assert 0 < got < int(acc.sum()) or kind == "loops"


@pytest.mark.parametrize("kind, n, degree, n_inputs, random_start", FAILING[:3])
def test_second_thread_gives_the_same_cover(kind, n, degree, n_inputs, random_start,
                                            monkeypatch):
    # the set-up beside the maximum matching and the row-wise tight copies run on a
    # second thread from _SIDE_MIN entries on; forced on here, the cover must be the
    # one the single-thread run finds, entry for entry, and its size SciPy's
    # (minimum-weight full bipartite matching on the same costs)
    from netctl.generate import erdos_renyi

    rng = np.random.default_rng(random_start)
    s = erdos_renyi(n, mean_degree=degree, seed=random_start)
    s = s.with_inputs(rng.choice(n, n_inputs, replace=False).tolist())
    acc = accessible_states(structure_of(s.A), s.B)
    B = sp.csr_array(s.B)
    ptr, ind, n_cols, loops = cov.accessible_rows(s.A.indptr, s.A.indices, B.indptr,
                                                  B.indices, s.B.shape[1], acc)
    seen = []
    for side_min in (2**62, 0):
        monkeypatch.setattr(cov, "_SIDE_MIN", side_min)
        seen.append(stem_cycle_cover(ptr, ind, n_cols, loops))
    assert (seen[0][0] == seen[1][0]).all() and seen[0][1] == seen[1][1]
    assert int(acc.sum()) - seen[1][1] == ctl._hosoe_dimension_reference(s.A, s.B, acc)


@settings(max_examples=150, deadline=None)
@given(st.sampled_from(["chain", "cycles", "sources", "random"]), st.integers(1, 60),
       st.integers(0, 2**32 - 1))
def test_shaped_systems_with_searches_stopped_at_distance_one(kind, n, start):
    # as above on the adversarial shapes (long chains, cycles, many sources): a search
    # that stops at distance 1 in every phase still ends at SciPy's optimum
    rng = np.random.default_rng(start)
    A, B = _shaped_system(kind, n, rng)
    rows = accessible_states(structure_of(A), B)
    keep = cov._CAP_SHARE
    cov._CAP_SHARE = 0
    try:
        with always_compiled():
            got = ctl._hosoe_dimension(A, B, rows)
    finally:
        cov._CAP_SHARE = keep
    assert got == ctl._hosoe_dimension_reference(A, B, rows)


# -- the phases grown from the sink: adversarial shapes and the invariants of each step --

def _shaped_system(kind: str, n: int, rng: np.random.Generator) -> tuple[sp.csr_array,
                                                                          sp.csr_array]:
    """Failing systems of shapes that stress the phases: long chains with the input
    midway (long augmenting paths), disjoint cycles joined by few links (cycles against
    stems), many source states feeding a core (many free rows), and sparse random
    graphs with self-loops."""
    edges: list[tuple[int, int]] = []  # (u, v): u -> v
    if kind == "chain":
        edges += [(k, k + 1) for k in range(n - 1)]
        edges += [tuple(rng.integers(0, n, 2)) for _ in range(int(rng.integers(0, 4)))]
    elif kind == "cycles":
        k = 0
        while k < n:
            length = int(rng.integers(1, 7))
            cyc = list(range(k, min(n, k + length)))
            edges += [(cyc[t], cyc[(t + 1) % len(cyc)]) for t in range(len(cyc))]
            k += length
        edges += [tuple(rng.integers(0, n, 2)) for _ in range(int(rng.integers(1, n // 3 + 2)))]
    elif kind == "sources":
        core = min(max(1, n // 3), n - 1)
        if core:
            edges += [(int(rng.integers(core, n)), int(rng.integers(0, core)))
                      for _ in range(n)]
            edges += [(int(rng.integers(0, core)), int(rng.integers(0, core)))
                      for _ in range(core)]
    else:
        p = float(rng.uniform(0.5, 3.0)) / n
        mask = rng.random((n, n)) < p
        edges += [(int(u), int(v)) for v, u in zip(*np.nonzero(mask))]
        edges += [(v, v) for v in range(n) if rng.random() < 0.2]
    A = np.zeros((n, n))
    for u, v in edges:
        A[v, u] = 1.0
    m = int(rng.integers(0, 4))
    B = np.zeros((n, m))
    for k in range(m):
        B[rng.integers(0, n), k] = 1.0
    return sp.csr_array(A), sp.csr_array(B)


@settings(max_examples=250, deadline=None)
@given(st.sampled_from(["chain", "cycles", "sources", "random"]), st.integers(1, 60),
       st.integers(0, 2**32 - 1), st.booleans(), st.sampled_from(["python", "compiled"]))
def test_shaped_failing_systems_agree_with_scipy(kind, n, start, any_rows, mode):
    # reference: SciPy's minimum-weight full bipartite matching (LAPJVsp) on the same
    # costs (``_hosoe_dimension_reference``); rows: the accessible states, or any subset
    rng = np.random.default_rng(start)
    A, B = _shaped_system(kind, n, rng)
    rows = (rng.random(n) < 0.8) if any_rows else accessible_states(structure_of(A), B)
    with always_python() if mode == "python" else always_compiled():
        got = ctl._hosoe_dimension(A, B, rows)
    assert got == ctl._hosoe_dimension_reference(A, B, rows)


def _cover_arrays(A: sp.csr_array, B: sp.csr_array):
    """The kernels' arrays for ``[A B]`` on every state (as ``stem_cycle_cover`` builds
    them), with the starting maximum matching."""
    from netctl.graph.matching import maximum_matching

    AB = sp.hstack([A, B], format="csr") if B.shape[1] else A.tocsr()
    AB.sort_indices()
    ptr, ind = AB.indptr.astype(np.int64), AB.indices.astype(np.int64)
    r, n_cols = A.shape[0], AB.shape[1]
    loops = A.diagonal() != 0
    size = ind.size + r - int(loops.sum())
    fptr, find = np.zeros(r + 1, np.int64), np.empty(size, np.int64)
    fw = np.empty(size, np.int8)
    cov._with_dummies(ptr, ind, loops, fptr, find, fw)
    tptr, tind = np.zeros(n_cols + 1, np.int64), np.empty(size, np.int64)
    tw = np.empty(size, np.int8)
    cov._transpose_w(fptr, find, fw, tptr, tind, tw)
    rm, cm = maximum_matching(ptr, ind, n_cols)
    return fptr, find, fw, tptr, tind, tw, rm, cm


def test_each_phase_keeps_the_optimality_conditions_and_matches_every_tight_path():
    # the assignment LP's conditions (Ahuja, Magnanti & Orlin 1993, section 9.4, from
    # memory): reduced costs >= 0, matched edges tight, free columns at the sink's price
    # (stored 0) and the other columns at or below it; and after each matching step the
    # matching is maximum on the tight edges (SciPy's maximum_bipartite_matching of the
    # tight subgraph as reference), with the rows left free reported as such
    from scipy.sparse.csgraph import maximum_bipartite_matching

    rng = np.random.default_rng(99)
    phases = 0
    with always_compiled():
        for trial in range(120):
            kind = ["chain", "cycles", "sources", "random"][trial % 4]
            A, B = _shaped_system(kind, int(rng.integers(5, 80)), rng)
            fptr, find, fw, tptr, tind, tw, rm, cm = _cover_arrays(A, B)
            r, n_cols = rm.size, cm.size
            rows = np.repeat(np.arange(r), np.diff(fptr))
            srow, scol = np.zeros(r, np.int64), np.zeros(n_cols, np.int64)
            dcol = np.empty(n_cols, np.int64)
            rcs = tw.copy()
            work = cov._SearchWork(r, n_cols, np.int64)
            pair = cov._TightWork(r, n_cols, find.size, np.int64)
            act = np.empty(r + 1, np.int64)
            free = np.flatnonzero(rm < 0)
            while free.size:
                work.search(tptr, tind, tw, rcs, rm, cm, srow, scol, dcol)
                rc = fw + srow[rows] - scol[find]
                assert (rc >= 0).all(), trial
                on = rm[rows] == find
                assert (rc[on] == 0).all(), trial
                assert (scol[cm < 0] == 0).all() and (scol <= 0).all(), trial
                n_free = pair.match(fptr, find, fw, tptr, tind, tw, rcs, rm, cm, srow,
                                    scol, free, dcol, work.buf, act)
                # the reduced costs kept for the next search, column-wise
                cols = np.repeat(np.arange(n_cols), np.diff(tptr))
                want_rc = np.minimum(tw + srow[tind] - scol[cols], cov._RC_TOP)
                assert (rcs == want_rc).all(), trial
                free = free[:n_free]
                phases += 1
                tight = rc == 0
                T = sp.csr_matrix((np.ones(int(tight.sum())), (rows[tight], find[tight])),
                                  shape=(r, n_cols))
                want = int((maximum_bipartite_matching(T, perm_type="column") >= 0).sum())
                assert int((rm >= 0).sum()) == want, trial
                assert sorted(free.tolist()) == np.flatnonzero(rm < 0).tolist(), trial
                assert ((rc == 0) | ~(rm[rows] == find)).all(), trial
                assert (cm[rm[rm >= 0]] == np.flatnonzero(rm >= 0)).all(), trial
    assert phases > 120  # some systems needed more than one phase


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_accessible_rows_equals_scipy_slicing(mode):
    """The one-pass restriction of ``[A B]`` to the kept states equals SciPy's: hstack,
    then keep the rows and the state columns of the kept states (inputs all kept); the
    self-loop marks equal the kept diagonal of ``A``."""
    rng = np.random.default_rng(8)
    with always_python() if mode == "python" else always_compiled():
        for _ in range(60):
            n, m = int(rng.integers(1, 30)), int(rng.integers(0, 4))
            A = sp.random_array((n, n), density=float(rng.uniform(0.02, 0.3)), rng=rng,
                                format="csr")
            B = sp.random_array((n, m), density=0.3, rng=rng, format="csr")
            keep = rng.random(n) < rng.uniform(0.2, 1.0)
            ptr, ind, n_cols, loops = cov.accessible_rows(A.indptr, A.indices, B.indptr,
                                                          B.indices, m, keep)
            ref_ = sp.hstack([A, B], format="csr")[keep][:, np.r_[np.flatnonzero(keep),
                                                                   n + np.arange(m)]]
            ref_ = ref_.tocsr()
            ref_.sort_indices()
            got = sp.csr_array((np.ones(ind.size), ind, ptr), shape=ref_.shape)
            assert n_cols == ref_.shape[1]
            assert (got != (ref_ != 0)).nnz == 0
            assert loops.tolist() == (A.diagonal()[keep] != 0).tolist()


def _after_one_search(A: sp.csr_array, B: sp.csr_array, work_of=None):
    fptr, find, fw, tptr, tind, tw, rm, cm = _cover_arrays(A, B)
    r, n_cols = rm.size, cm.size
    srow, scol = np.zeros(r, np.int64), np.zeros(n_cols, np.int64)
    dcol = np.empty(n_cols, np.int64)
    work = cov._SearchWork(r, n_cols, np.int64) if work_of is None else work_of(r, n_cols)
    far = work.search(tptr, tind, tw, tw.copy(), rm, cm, srow, scol, dcol)
    return (fptr, find, fw, tptr, tind, tw, rm, cm), srow, scol, far, work


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_search_with_short_work_arrays_gives_the_same_prices(mode):
    # a search that runs out of bucket entries (-1) or list heads (-2) is run again
    # with longer arrays and must give the prices of a search that had room from the
    # start (the first, abandoned attempt must leave no trace)
    def short(r, n_cols):
        w = cov._SearchWork(r, n_cols, np.int64)
        w.enode, w.enext = np.empty(1, np.int64), np.empty(1, np.int64)
        w.head = np.empty(1, np.int64)
        return w

    rng = np.random.default_rng(5)
    grown = 0
    with always_python() if mode == "python" else always_compiled():
        for trial in range(40):
            kind = ["chain", "cycles", "sources", "random"][trial % 4]
            A, B = _shaped_system(kind, int(rng.integers(5, 60)), rng)
            _, s1, c1, f1, _ = _after_one_search(A, B)
            _, s2, c2, f2, w2 = _after_one_search(A, B, short)
            assert (s1 == s2).all() and (c1 == c2).all() and f1 == f2, trial
            grown += w2.enode.size > 1
    assert grown > 30


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_search_computes_saturated_reduced_costs_from_the_prices(mode):
    # an entry whose kept reduced cost reads _RC_TOP (int8 saturation) has it computed
    # from the prices instead: after one phase (prices no longer 0), marking random
    # entries so must not change the next search (the reference is the same search with
    # every reduced cost kept exactly)
    rng = np.random.default_rng(23)
    marked = priced = 0
    with always_python() if mode == "python" else always_compiled():
        for trial in range(60):
            kind = ["chain", "cycles", "sources", "random"][trial % 4]
            A, B = _shaped_system(kind, int(rng.integers(5, 60)), rng)
            fptr, find, fw, tptr, tind, tw, rm, cm = _cover_arrays(A, B)
            r, n_cols = rm.size, cm.size
            srow, scol = np.zeros(r, np.int64), np.zeros(n_cols, np.int64)
            dcol = np.empty(n_cols, np.int64)
            rcs = tw.copy()
            work = cov._SearchWork(r, n_cols, np.int64)
            free = np.flatnonzero(rm < 0)
            if free.size:  # one phase: search, then match the tight edges
                work.search(tptr, tind, tw, rcs, rm, cm, srow, scol, dcol)
                pair = cov._TightWork(r, n_cols, find.size, np.int64)
                pair.match(fptr, find, fw, tptr, tind, tw, rcs, rm, cm, srow, scol, free,
                           dcol, work.buf, np.empty(r + 1, np.int64))
            priced += bool((srow != 0).any())
            out = []
            for saturate in (False, True):
                kept = rcs.copy()
                if saturate:
                    hit = rng.random(kept.size) < 0.5
                    kept[hit] = cov._RC_TOP
                    marked += int(hit.sum())
                s2, c2 = srow.copy(), scol.copy()
                far = cov._SearchWork(r, n_cols, np.int64).search(
                    tptr, tind, tw, kept, rm.copy(), cm.copy(), s2, c2, dcol)
                out.append((far, s2, c2))
            assert out[0][0] == out[1][0], trial
            assert (out[0][1] == out[1][1]).all() and (out[0][2] == out[1][2]).all(), trial
    assert marked > 100 and priced > 10


def test_relabel_gives_breadth_first_distances_of_scipy():
    # exact labels: twice the number of rows on the shortest alternating path of tight
    # edges from each column to a free column; reference: SciPy's unweighted shortest
    # paths (csgraph.dijkstra, unweighted) on the graph "column j -> column rm[i]" for every tight edge (i, j)
    # that is not matched
    from scipy.sparse.csgraph import dijkstra

    rng = np.random.default_rng(17)
    with always_compiled():
        for trial in range(60):
            kind = ["chain", "cycles", "sources", "random"][trial % 4]
            A, B = _shaped_system(kind, int(rng.integers(5, 120)), rng)
            (fptr, find, fw, tptr, tind, tw, rm, cm), srow, scol, _, work = \
                _after_one_search(A, B)
            r, n_cols = rm.size, cm.size
            inf = 2 * (r + n_cols) + 4
            psi = np.empty(n_cols, np.int64)
            tight = cov._TightWork(r, n_cols, find.size, np.int64)
            cov._tight_cols(tptr, tind, tw, srow, scol, tight.tptr, tight.tind, tw.copy())
            cov._relabel(tight.tptr, tight.tind, rm, cm, psi, work.buf, inf)
            rows = np.repeat(np.arange(r), np.diff(fptr))
            go = (fw + srow[rows] == scol[find]) & (rm[rows] >= 0) & (rm[rows] != find)
            G = sp.csr_array((np.ones(int(go.sum())), (find[go], rm[rows][go])),
                             shape=(n_cols, n_cols))
            free = np.flatnonzero(cm < 0)
            want = np.full(n_cols, inf)
            if free.size:
                d = dijkstra(G, unweighted=True, indices=free, min_only=True)
                want = np.where(np.isfinite(d), 2 * np.nan_to_num(d, posinf=0), inf)
            assert (psi == want.astype(np.int64)).all(), trial
            # the same labels with each level split between two threads
            psi2 = np.empty(n_cols, np.int64)
            with ThreadPoolExecutor(max_workers=1) as side:
                cov._relabel_two(tight.tptr, tight.tind, rm, cm, psi2, work.buf.copy(), inf,
                                 side)
            assert (psi2 == want.astype(np.int64)).all(), trial
