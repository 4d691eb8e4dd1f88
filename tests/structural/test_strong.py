"""Strong structural controllability: zero forcing rules checked against published zero
forcing numbers, brute force, and exhaustive / adversarial numeric searches.

Independent references used here (no netctl forcing code):
* ``_zf_closure_undirected``: the colour-change rule exactly as stated by the AIM Minimum
  Rank - Special Graphs Work Group, LAA 428(7):1628-1648, 2008 (a black vertex with
  exactly one white neighbour forces it), on networkx graphs.
* ``_search_uncontrollable``: enumeration of every realization with entries from a small
  value set, controllability decided by the rank of the Kalman matrix modulo the prime
  p = 2^31 - 1 (rank mod p <= rank over Q, so "full rank mod p" proves controllability;
  a deficiency mod p is confirmed with exact rational arithmetic before it counts).
"""

from __future__ import annotations

import itertools
from contextlib import nullcontext
from fractions import Fraction

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from hypothesis import example, given, settings
from hypothesis import strategies as st
from numba import njit

from netctl import StructuredSystem
from netctl.errors import OptionError
from netctl.structural import controllability
from netctl.structural.strong import (
    DIAGONALS,
    forcing_closure,
    is_strongly_controllable,
    minimum_strong_inputs,
    strong_controllability,
    strong_witness,
)

P = (1 << 31) - 1


# ---------------------------------------------------------------- references
def undirected(G: nx.Graph) -> StructuredSystem:
    G = nx.convert_node_labels_to_integers(G)
    e = np.array([(u, v) for u, v in G.edges()] + [(v, u) for u, v in G.edges()],
                 dtype=np.int64).reshape(-1, 2)
    return StructuredSystem.from_edges(e[:, 0], e[:, 1], G.number_of_nodes())


def _zf_closure_undirected(G: nx.Graph, black: set) -> set:
    black = set(black)
    changed = True
    while changed:
        changed = False
        for v in list(black):
            white = [u for u in G.neighbors(v) if u not in black and u != v]
            if len(white) == 1:
                black.add(white[0])
                changed = True
    return black


def _zf_number_brute(G: nx.Graph) -> int:
    G = nx.convert_node_labels_to_integers(G)
    n = G.number_of_nodes()
    for k in range(n + 1):
        for S in itertools.combinations(range(n), k):
            if len(_zf_closure_undirected(G, set(S))) == n:
                return k
    return n


def _exact_rank(rows: list[list[Fraction]]) -> int:
    m = [list(r) for r in rows]
    rank, n_cols = 0, len(m[0]) if m else 0
    for c in range(n_cols):
        piv = next((i for i in range(rank, len(m)) if m[i][c] != 0), None)
        if piv is None:
            continue
        m[rank], m[piv] = m[piv], m[rank]
        for i in range(len(m)):
            if i != rank and m[i][c] != 0:
                f = m[i][c] / m[rank][c]
                m[i] = [a - f * b for a, b in zip(m[i], m[rank])]
        rank += 1
    return rank


def exact_controllable(A: np.ndarray, B: np.ndarray) -> bool:
    """Kalman rank over the rationals (exact)."""
    n = A.shape[0]
    Af = [[Fraction(x) for x in row] for row in A]
    blocks = [[[Fraction(x) for x in row] for row in B]]
    for _ in range(n - 1):
        prev = blocks[-1]
        blocks.append([[sum(Af[i][k] * prev[k][j] for k in range(n))
                        for j in range(len(prev[0]))] for i in range(n)])
    K = [sum((blk[i] for blk in blocks), []) for i in range(n)]
    return _exact_rank(K) == n


@njit(cache=True)
def _rank_mod_p(M):  # pragma: no cover - compiled
    M = M.copy()
    rows, cols = M.shape
    r = 0
    for c in range(cols):
        piv = -1
        for i in range(r, rows):
            if M[i, c] != 0:
                piv = i
                break
        if piv < 0:
            continue
        for k in range(cols):
            M[r, k], M[piv, k] = M[piv, k], M[r, k]
        # inverse by Fermat
        inv = 1
        base = M[r, c]
        e = P - 2
        while e > 0:
            if e & 1:
                inv = inv * base % P
            base = base * base % P
            e >>= 1
        for k in range(cols):
            M[r, k] = M[r, k] * inv % P
        for i in range(rows):
            if i != r and M[i, c] != 0:
                f = M[i, c]
                for k in range(cols):
                    M[i, k] = (M[i, k] - f * M[r, k]) % P
        r += 1
        if r == rows:
            break
    return r


@njit(cache=True)
def _enumerate(n, m, slots_i, slots_j, slot_is_b, values, n_values, fixed_A, fixed_B,
               start, stop):  # pragma: no cover - compiled
    """Index (mixed radix over ``values``) of the first realization in [start, stop)
    whose Kalman matrix is rank deficient mod P, or -1."""
    k = slots_i.size
    for code in range(start, stop):
        A = fixed_A.copy()
        B = fixed_B.copy()
        c = code
        for s in range(k):
            v = values[s, c % n_values[s]]
            c //= n_values[s]
            if slot_is_b[s]:
                B[slots_i[s], slots_j[s]] = v % P
            else:
                A[slots_i[s], slots_j[s]] = v % P
        K = np.zeros((n, n * m), np.int64)
        blk = B.copy()
        for p in range(n):
            K[:, p * m:(p + 1) * m] = blk
            nb = np.zeros_like(blk)
            for i in range(n):
                for j in range(m):
                    acc = 0
                    for t in range(n):
                        acc = (acc + A[i, t] * blk[t, j]) % P
                    nb[i, j] = acc
            blk = nb
        if _rank_mod_p(K) < n:
            return code
    return -1


OFF_VALUES = (-1, 1, 2)
BIG_VALUES = (-2, -1, 1, 2)


def _slots(A_pat: np.ndarray, B_pat: np.ndarray, diagonal: str, off_values):
    """Free entries of the class and the values each may take."""
    n, m = B_pat.shape
    slots = []
    for i, j in zip(*np.nonzero(A_pat)):
        if i != j:
            slots.append((i, j, False, off_values))
    for i in range(n):
        if diagonal == "free":
            slots.append((i, i, False, (0,) + tuple(off_values)))
        elif diagonal == "nonzero" or (diagonal == "as-given" and A_pat[i, i]):
            slots.append((i, i, False, tuple(off_values)))
    for i, j in zip(*np.nonzero(B_pat)):
        if B_pat[:, j].sum() == 1:
            continue  # a dedicated input column: its scale does not matter
        slots.append((i, j, True, tuple(off_values)))
    return slots


def _decode(slots, code, n, m):
    A = np.zeros((n, n), np.int64)
    B = np.zeros((n, m), np.int64)
    for i, j, is_b, vals in slots:
        v = vals[code % len(vals)]
        code //= len(vals)
        (B if is_b else A)[i, j] = v
    return A, B


def _search_uncontrollable(A_pat, B_pat, diagonal, off_values=OFF_VALUES):
    """An exactly verified uncontrollable realization of the class, or None (after
    trying every assignment of ``off_values``)."""
    n, m = B_pat.shape
    slots = _slots(A_pat, B_pat, diagonal, off_values)
    fixed_B = np.zeros((n, m), np.int64)
    for j in range(m):
        col = np.flatnonzero(B_pat[:, j])
        if col.size == 1:
            fixed_B[col[0], j] = 1
    width = max([len(s[3]) for s in slots] + [1])
    values = np.zeros((max(len(slots), 1), width), np.int64)
    n_values = np.ones(max(len(slots), 1), np.int64)
    for s, (_, _, _, vals) in enumerate(slots):
        values[s, :len(vals)] = vals
        n_values[s] = len(vals)
    total = int(np.prod([len(s[3]) for s in slots])) if slots else 1
    si = np.array([s[0] for s in slots], np.int64)
    sj = np.array([s[1] for s in slots], np.int64)
    sb = np.array([s[2] for s in slots], np.bool_)
    start = 0
    while start < total:
        code = _enumerate(n, m, si, sj, sb, values, n_values, np.zeros((n, n), np.int64),
                          fixed_B, start, total)
        if code < 0:
            return None
        A, B = _decode(slots, code, n, m)
        B = B + fixed_B
        if not exact_controllable(A, B):
            return A, B
        start = code + 1  # a false alarm modulo P: keep searching
    return None


def _patterns(system: StructuredSystem):
    return (system.A.toarray() != 0), (system.B.toarray() != 0)


def _random_case(rng, n, p, with_loops):
    mask = rng.random((n, n)) < p
    if not with_loops:
        np.fill_diagonal(mask, False)
    src, dst = np.nonzero(mask.T)  # mask[i, j]: edge j -> i
    s = StructuredSystem.from_edges(src, dst, n)
    k = int(rng.integers(1, n + 1))
    drivers = np.sort(rng.choice(n, size=k, replace=False))
    return s.with_inputs(drivers.tolist())


# ---------------------------------------------------------------- known values
ZF_KNOWN = [  # zero forcing numbers; AIM Minimum Rank - Special Graphs Work Group 2008
    pytest.param(nx.path_graph(6), 1, id="path-P6-Z1-AIM2008"),
    pytest.param(nx.cycle_graph(7), 2, id="cycle-C7-Z2-AIM2008"),
    pytest.param(nx.complete_graph(5), 4, id="complete-K5-Zn-1-AIM2008"),
    pytest.param(nx.star_graph(5), 4, id="star-K1,5-Zn-2-AIM2008"),
    pytest.param(nx.complete_bipartite_graph(3, 4), 5, id="K3,4-Zp+q-2-AIM2008"),
    pytest.param(nx.complete_bipartite_graph(2, 2), 2, id="K2,2-Zp+q-2-AIM2008"),
    pytest.param(nx.hypercube_graph(3), 4, id="cube-Q3-Z4-AIM2008"),
    pytest.param(nx.petersen_graph(), 5, id="petersen-Z5-AIM2008"),
]


@pytest.mark.parametrize("G, expected", ZF_KNOWN)
def test_zero_forcing_numbers_published_and_brute_force(G, expected):
    d = minimum_strong_inputs(undirected(G), diagonal="free", method="exact")
    assert d.optimal and d.method == "exact"
    assert d.n_inputs == expected
    assert _zf_number_brute(G) == expected  # brute force with the AIM rule
    # the set found forces the whole graph under the AIM rule
    H = nx.convert_node_labels_to_integers(G)
    assert len(_zf_closure_undirected(H, set(d.drivers.tolist()))) == H.number_of_nodes()


@pytest.mark.parametrize("G", [nx.path_graph(4), nx.cycle_graph(5), nx.petersen_graph(),
                               nx.complete_bipartite_graph(2, 3)])
def test_nonzero_diagonal_gives_the_standard_number(G):
    # self-damped systems reduce to the standard rule (derivation in the module docstring)
    s = undirected(G)
    assert (minimum_strong_inputs(s, diagonal="nonzero").n_inputs
            == minimum_strong_inputs(s, diagonal="free").n_inputs)


def test_hypercube_Q4_exact_minimum():
    # Z(Q_d) = 2^(d-1) (AIM 2008, from memory); cross-checked: no 7 vertices force Q4
    G = nx.convert_node_labels_to_integers(nx.hypercube_graph(4))
    d = minimum_strong_inputs(undirected(G), diagonal="free", method="exact")
    assert d.n_inputs == 8 and d.optimal
    assert not any(len(_zf_closure_undirected(G, set(S))) == 16
                   for S in itertools.combinations(range(16), 7))


def test_closure_matches_the_aim_rule_on_random_undirected_graphs(rng):
    for _ in range(40):
        G = nx.gnp_random_graph(int(rng.integers(2, 12)), 0.3, seed=int(rng.integers(1 << 30)))
        s = undirected(G)
        S = [v for v in G if rng.random() < 0.3]
        mine = forcing_closure(s, S, diagonal="free")["all"]
        ref = _zf_closure_undirected(G, set(S))
        assert set(np.flatnonzero(mine).tolist()) == ref


def test_loop_rule_zero_eigenvalue_on_undirected_paths():
    # P_n with a_ii = 0: nothing needs forcing for the zero eigenvalue when n is even
    # (every realization is nonsingular), one state otherwise (REFERENCES 6, [C]);
    # recomputed: the determinant of every realization with entries in {-2..2}\{0}
    for n in (2, 3, 4, 5):
        s = undirected(nx.path_graph(n))
        forced = forcing_closure(s, [], diagonal="zero")["zero"].all()
        A_pat = s.A.toarray() != 0
        idx = list(zip(*np.nonzero(A_pat)))
        singular = False
        for vals in itertools.product(BIG_VALUES, repeat=len(idx)):
            A = np.zeros((n, n), np.int64)
            for (i, j), v in zip(idx, vals):
                A[i, j] = v
            if _exact_rank([[Fraction(int(x)) for x in r] for r in A]) < n:
                singular = True
                break
        assert forced == (not singular), n


# ---------------------------------------------------------------- numeric verification
CONVENTIONS = list(DIAGONALS)


@pytest.mark.parametrize("diagonal", CONVENTIONS)
def test_exhaustive_search_agrees_with_the_rules(diagonal, rng):
    """Declared strongly controllable: no realization over {-1, 1, 2} (diagonal also 0
    when free) is uncontrollable. Declared not: one is, and it is found."""
    seen = {True: 0, False: 0}
    tried = 0
    while tried < 36:
        s = _random_case(rng, int(rng.integers(2, 5)), 0.45,
                         with_loops=diagonal == "as-given")
        A_pat, B_pat = _patterns(s)
        slots = _slots(A_pat, B_pat, diagonal, OFF_VALUES)
        if len(slots) > 10:
            continue
        tried += 1
        ok = is_strongly_controllable(s, diagonal=diagonal)
        found = _search_uncontrollable(A_pat, B_pat, diagonal)
        assert ok == (found is None), (diagonal, s.edges(), s.driven_states())
        seen[ok] += 1
    assert seen[True] >= 3 and seen[False] >= 3, seen  # both outcomes exercised


def _class_member(system, A, B, diagonal):
    """Whether integer matrices (A, B) realize the pattern under ``diagonal``."""
    A_pat, B_pat = _patterns(system)
    off = ~np.eye(A.shape[0], dtype=bool)
    if not np.array_equal((A != 0) & off, A_pat & off):
        return False
    if not np.array_equal(B != 0, B_pat):
        return False
    d = np.diag(A) != 0
    if diagonal == "zero":
        return not d.any()
    if diagonal == "nonzero":
        return bool(d.all())
    if diagonal == "as-given":
        return np.array_equal(d, np.diag(A_pat))
    return True


@pytest.mark.parametrize("diagonal", CONVENTIONS)
def test_witness_is_an_uncontrollable_member_of_the_class(diagonal, rng):
    checked = 0
    for _ in range(120):
        s = _random_case(rng, int(rng.integers(2, 9)), 0.3,
                         with_loops=diagonal == "as-given")
        rep = strong_controllability(s, diagonal=diagonal)
        wit = strong_witness(s, diagonal=diagonal)
        assert (wit is None) == rep.strongly_controllable
        if wit is None:
            continue
        checked += 1
        A = wit.A.toarray()
        B = wit.B.toarray()
        assert np.array_equal(A, np.round(A)) and np.array_equal(B, np.round(B))
        assert _class_member(s, A.astype(np.int64), B.astype(np.int64), diagonal)
        q = wit.left_vector
        n = s.n_states
        # exact (integers): q^T (A - lambda I) = 0 and q^T B = 0 with q != 0
        assert q.any()
        assert np.array_equal(q @ (A - wit.eigenvalue * np.eye(n)), np.zeros(n))
        assert np.array_equal(q @ B, np.zeros(B.shape[1]))
        # PBH (Paige 1981, R2) numerically, and Kalman exactly
        assert np.linalg.matrix_rank(np.hstack([A - wit.eigenvalue * np.eye(n), B])) < n
        assert not exact_controllable(A.astype(np.int64), B.astype(np.int64))
        # the white set it certifies is what the report lists
        assert set(np.flatnonzero(q).tolist()) <= set(rep.unforced.tolist())
    assert checked >= 15


ADVERSARIAL = (-2, -1, 1, 2)


@pytest.mark.parametrize("diagonal", CONVENTIONS)
def test_declared_strong_stays_controllable_under_near_cancelling_weights(diagonal, rng):
    """Sampled realizations with entries from {+-1, +-2, +-1/1000, 1 + 1/1000}: each is
    checked exactly (rank mod p first, rationals when that is inconclusive)."""
    small = (Fraction(1, 1000), Fraction(-1, 1000), Fraction(1001, 1000))
    pool = [Fraction(v) for v in ADVERSARIAL] + list(small)
    n_designs = 0
    for _ in range(400):
        s = _random_case(rng, int(rng.integers(3, 7)), 0.35,
                         with_loops=diagonal == "as-given")
        if not is_strongly_controllable(s, diagonal=diagonal):
            continue
        n_designs += 1
        A_pat, B_pat = _patterns(s)
        n, m = B_pat.shape
        for _ in range(15):
            A = [[Fraction(0)] * n for _ in range(n)]
            for i, j in zip(*np.nonzero(A_pat)):
                A[i][j] = pool[rng.integers(len(pool))]
            for i in range(n):
                if diagonal == "zero":
                    A[i][i] = Fraction(0)
                elif diagonal == "nonzero" and A[i][i] == 0:
                    A[i][i] = pool[rng.integers(len(pool))]
                elif diagonal == "free":
                    A[i][i] = [Fraction(0), *pool][rng.integers(len(pool) + 1)]
            B = [[pool[rng.integers(len(pool))] if B_pat[i, j] else Fraction(0)
                  for j in range(m)] for i in range(n)]
            assert exact_controllable(np.array(A, dtype=object), np.array(B, dtype=object))
        if n_designs >= 12:
            break
    assert n_designs >= 5


@pytest.mark.parametrize("diagonal", CONVENTIONS)
def test_strong_implies_weak(diagonal, rng):
    """Every strongly controllable design is structurally controllable (Lin's test) for
    the pattern of its diagonal convention."""
    hits = 0
    for _ in range(150):
        s = _random_case(rng, int(rng.integers(2, 14)), 0.2,
                         with_loops=diagonal == "as-given")
        if not is_strongly_controllable(s, diagonal=diagonal):
            continue
        hits += 1
        n = s.n_states
        if diagonal == "nonzero":
            t = s.with_self_loops()
        elif diagonal == "as-given":
            t = s
        else:  # zero, and free (it contains the zero diagonal)
            A = s.A.tolil()
            A.setdiag(0)
            t = s._replace(A=sp.csr_array(A.tocsr()))
        assert controllability(t, dimension=False).controllable, (diagonal, s.edges())
        assert t.n_states == n
    assert hits >= 8


def test_free_class_contains_the_others(rng):
    """free contains every other class, so strong under free implies strong under all;
    nonzero and free coincide (both reduce to the standard rule; the exhaustive test
    above checks each against realizations independently)."""
    for _ in range(100):
        s = _random_case(rng, int(rng.integers(2, 10)), 0.25, with_loops=True)
        with pytest.warns(UserWarning) if s.n_self_loops else nullcontext():
            verdict = {d: is_strongly_controllable(s, diagonal=d) for d in CONVENTIONS}
        if verdict["free"]:
            assert all(verdict.values())
        assert verdict["free"] == verdict["nonzero"]


# ---------------------------------------------------------------- minimum sets
def _brute_minimum(system: StructuredSystem, diagonal: str, numeric: bool = False) -> int:
    """Smallest k such that some k states with dedicated inputs pass; decided by the
    exhaustive numeric search when ``numeric`` (tiny cases), else by the check."""
    n = system.n_states
    for k in range(n + 1):
        for S in itertools.combinations(range(n), k):
            t = system.with_inputs(list(S))
            if numeric:
                ok = _search_uncontrollable(*_patterns(t), diagonal) is None
            else:
                ok = is_strongly_controllable(t, diagonal=diagonal)
            if ok:
                return k
    return n


@pytest.mark.parametrize("diagonal", CONVENTIONS)
def test_minimum_matches_brute_force(diagonal, rng):
    for _ in range(25):
        n = int(rng.integers(2, 8))
        s = _random_case(rng, n, 0.3, with_loops=diagonal == "as-given").with_inputs([])
        exact = minimum_strong_inputs(s, diagonal=diagonal, method="exact")
        greedy = minimum_strong_inputs(s, diagonal=diagonal, method="greedy")
        assert exact.optimal and exact.gap == 0
        assert exact.n_inputs == _brute_minimum(s, diagonal)
        for d in (exact, greedy):
            assert is_strongly_controllable(d.apply(s), diagonal=diagonal)
            assert d.lower_bound <= exact.n_inputs <= d.n_inputs
            assert d.gap == d.n_inputs - d.lower_bound


def test_minimum_on_tiny_cases_agrees_with_numeric_search(rng):
    # n <= 3: the brute force decides each candidate set by exhaustive realizations
    for diagonal in CONVENTIONS:
        for _ in range(6):
            s = _random_case(rng, 3, 0.4, with_loops=diagonal == "as-given").with_inputs([])
            if len(_slots(*_patterns(s.with_inputs([0, 1, 2])), diagonal, OFF_VALUES)) > 9:
                continue
            assert (minimum_strong_inputs(s, diagonal=diagonal).n_inputs
                    == _brute_minimum(s, diagonal, numeric=True))


def test_greedy_reports_bound_and_gap_on_a_larger_graph():
    G = nx.gnp_random_graph(400, 0.01, seed=7, directed=True)
    e = np.array(list(G.edges()), dtype=np.int64)
    s = StructuredSystem.from_edges(e[:, 0], e[:, 1], 400)
    d = minimum_strong_inputs(s, diagonal="free")  # auto: greedy above the exact limit
    assert d.method == "greedy"
    assert is_strongly_controllable(d.apply(s), diagonal="free")
    # the generic dedicated minimum is a valid lower bound (strong implies weak)
    from netctl import minimum_inputs
    assert d.lower_bound >= minimum_inputs(s, dedicated=True).n_inputs
    assert d.gap == d.n_inputs - d.lower_bound >= 0
    assert d.to_dict()["method"] == "greedy" and "gap" in d.to_dict()


def test_exact_time_limit_reports_best_found_and_bound():
    G = nx.gnp_random_graph(60, 0.08, seed=3)
    d = minimum_strong_inputs(undirected(G), diagonal="free", method="exact", time_limit=0.5)
    assert d.lower_bound <= d.n_inputs
    assert d.optimal == (d.gap == 0)
    assert is_strongly_controllable(d.apply(undirected(G)), diagonal="free")


# ---------------------------------------------------------------- report, options, edges
def test_report_lists_unforced_states_by_name():
    path = StructuredSystem.from_edges([0, 1], [1, 2], state_names=["a", "b", "c"])
    rep = strong_controllability(path.with_inputs(["c"]), diagonal="free")
    assert not rep.strongly_controllable
    d = rep.to_dict()
    assert d["strongly_controllable"] is False
    assert d["unforced"] == ["a", "b"]  # c (the input) forces nothing: no out-neighbours
    assert d["diagonal"] == "free"
    assert rep.reasons() and "2 state(s) left unforced" in rep.reasons()[0]
    ok = strong_controllability(path.with_inputs(["a"]), diagonal="free")
    assert ok.strongly_controllable and ok.to_dict()["unforced"] == []
    assert ok.forced_by.tolist() == [3, 0, 1]  # input column (index n = 3) forces a


def test_shared_input_column_acts_as_a_black_vertex():
    # one input on both leaves of an in-star 1 -> 0 <- 2: column equation q1 b + q2 b' = 0
    s = StructuredSystem.from_edges([1, 2], [0, 0], 3).with_inputs({"u": [1, 2]})
    A_pat, B_pat = _patterns(s)
    for diagonal in CONVENTIONS:
        ok = is_strongly_controllable(s, diagonal=diagonal)
        assert ok == (_search_uncontrollable(A_pat, B_pat, diagonal) is None), diagonal


def test_unknown_diagonal_is_rejected_with_choices():
    s = StructuredSystem.from_edges([0], [1])
    with pytest.raises(OptionError, match=r"unknown diagonal convention 'loops'.*'as-given'"):
        strong_controllability(s, diagonal="loops")
    with pytest.raises(OptionError, match=r"unknown method 'fast'.*'greedy'"):
        minimum_strong_inputs(s, method="fast")
    with pytest.raises(OptionError, match=r"time_limit must be a positive.*-1"):
        minimum_strong_inputs(s, time_limit=-1)


def test_forcing_closure_rejects_bad_indices():
    s = StructuredSystem.from_edges([0], [1])
    with pytest.raises(OptionError, match=r"indices 0\.\.1, found 5; use system.index_of"):
        forcing_closure(s, [5])


def test_zero_diagonal_warns_about_self_loops():
    s = StructuredSystem.from_edges([0, 1], [1, 1], 2, state_names=["p", "q"])
    with pytest.warns(UserWarning, match=r"1 self-loop\(s\) in the pattern \(q\)"):
        strong_controllability(s.with_inputs(["p"]), diagonal="zero")


def test_empty_and_edgeless_systems():
    empty = StructuredSystem.from_edges([], [], 0)
    assert strong_controllability(empty).strongly_controllable
    assert minimum_strong_inputs(empty).n_inputs == 0
    iso = StructuredSystem.from_edges([], [], 3)
    for diagonal in CONVENTIONS:
        # isolated states: a realization with a_ii = 0 or a_11 = a_22 = a_33 leaves a
        # state without an input uncontrollable, so each state needs one
        assert minimum_strong_inputs(iso, diagonal=diagonal).n_inputs == 3
        assert _search_uncontrollable(*_patterns(iso.with_inputs([0, 1, 2])), diagonal) is None
        assert _search_uncontrollable(*_patterns(iso.with_inputs([0, 1])), diagonal) is not None


def _greedy_rescanning(g, rule, black0, allowed):
    """``_greedy`` as it was before each vertex kept a resume position: the same heap
    and closure steps (the module's own), but every choice scans the chosen vertex's
    out-list from its start (quadratic on an out-star). Plain Python."""
    import heapq

    from netctl.structural.strong.forcing import _blacken, _drain, _white_counts

    out_ptr, out_idx, in_ptr, in_idx = g.out_ptr, g.out_idx, g.in_ptr, g.in_idx
    closed, white_ok = rule.closed, rule.white_ok
    black = black0.copy()
    w = _white_counts(g, rule, black)
    forcer = np.full(black.size, -1, np.int64)
    N, n_states = black.size, g.n
    queue = np.empty(3 * N + 1, np.int64)
    tail = 0
    heap = []
    for j in range(N):
        if white_ok[j] or black[j]:
            if w[j] == 1:
                queue[tail] = j
                tail += 1
            elif w[j] >= 2:
                heap.append((w[j], np.int64(j)))
    heapq.heapify(heap)
    n_white = int(np.count_nonzero(~black[:n_states]))
    chosen = []
    head = 0
    scan = 0
    while True:
        head, tail, nf = _drain(out_ptr, out_idx, in_ptr, in_idx, closed, white_ok, black,
                                w, forcer, queue, head, tail, heap, True)
        n_white -= nf
        head = tail = 0
        if n_white <= 0:
            return chosen
        t = -1
        while heap:
            k, j = heapq.heappop(heap)
            if w[j] != k or k < 2 or not (white_ok[j] or black[j]):
                continue
            for p in range(out_ptr[j], out_ptr[j + 1]):
                if not black[out_idx[p]] and allowed[out_idx[p]]:
                    t = int(out_idx[p])
                    break
            if t < 0 and closed[j] and not black[j] and allowed[j]:
                t = int(j)
            if t >= 0:
                break
        if t < 0:
            while scan < n_states and (black[scan] or not allowed[scan]):
                scan += 1
            if scan >= n_states:
                return chosen
            t = scan
        chosen.append(t)
        n_white -= 1
        tail = _blacken(t, out_ptr, in_ptr, in_idx, closed, white_ok, black, w, queue,
                        tail, heap, True)


@settings(max_examples=150, deadline=None)
@example((9, [(0, 5), (0, 6), (0, 7), (4, 1), (4, 2), (4, 3), (4, 8)], [True] * 9,
          "as-given"))  # state 0 picks a second target from its list after a first one
@given(st.integers(2, 10).flatmap(lambda n: st.tuples(
    st.just(n),
    st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)), max_size=3 * n,
             unique=True),
    st.lists(st.booleans(), min_size=n, max_size=n),
    st.sampled_from(["free", "as-given"]))))
def test_greedy_choices_equal_the_rescanning_greedy(case):
    # the greedy keeps a resume position per vertex instead of rescanning its out-list
    # at every step (an out-star was quadratic); its choices must not change (common
    # practice, no source: a faster path pinned to the plain one)
    from netctl._jit import always_python
    from netctl.structural.strong.forcing import _graph, _greedy, _rules

    n, links, allowed, diagonal = case
    s = StructuredSystem.from_edges([a for a, _ in links], [b for _, b in links], n)
    A = s.pattern("A")
    loops = np.zeros(n, bool)
    loops[[a for a, b in links if a == b]] = True
    g = _graph(A, None)
    ok = np.asarray(allowed, bool)
    for rule in _rules(loops, diagonal, 0):
        b0 = np.zeros(n, bool)
        with always_python():  # the module's kernels on a Python list as the heap
            want = _greedy_rescanning(g, rule, b0, ok)
        assert _greedy(g, rule, b0, ok).tolist() == want
