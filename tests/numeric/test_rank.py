"""Reliable rank tests: staircase, PBH with clusters, modular (exact), sparse certificate.

External checks: exact rational arithmetic (sympy) on integer-weighted systems; the
ill-conditioned Kalman example A = diag(1..n), b = 1 (a scaled Vandermonde matrix; its
conditioning is classical, e.g. Gautschi, Numer. Math. 23:337-347, 1975 -- from memory;
Paige, IEEE TAC 26(1):130-138, 1981 warns against the controllability matrix for this
reason); Rahmani, Ji, Mesbahi, Egerstedt, SIAM J. Control Optim. 48(1):162-186, 2009
(symmetric leaves make a star with identical links driven at its centre uncontrollable);
the structural generic dimension (Hosoe 1980, netctl.structural) for the modular test;
python-control (optional test extra) on small random systems.
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy

from netctl import OptionError, StructuredSystem, controllability
from netctl.numeric import modular, pbh, realize, sparse_certificate, staircase
from netctl.numeric.prime_field import krylov_dimension_mod_p
from tests.conftest import directed_path, from_edges, random_pattern


def exact_kalman_rank(A, B):
    """Rank of [B, AB, ..., A^{n-1}B] in exact rational arithmetic (sympy)."""
    A = sympy.Matrix(A.astype(int).tolist())
    B = sympy.Matrix(B.astype(int).tolist())
    n = A.shape[0]
    blocks, X = [], B
    for _ in range(n):
        blocks.append(X)
        X = A * X
    return sympy.Matrix.hstack(*blocks).rank()


def star(k):
    edges = [(0, i) for i in range(1, k + 1)] + [(i, 0) for i in range(1, k + 1)]
    return from_edges(edges, k + 1, inputs=[0])


# ----------------------------------------------------------------- Kalman example
@pytest.mark.parametrize("n", [12, 15, 20, 30])
def test_kalman_rank_wrong_staircase_and_modular_right(n):
    # A = diag(1..n), b = 1: controllable (distinct eigenvalues, every b_i != 0, PBH).
    A = np.diag(np.arange(1.0, n + 1))
    b = np.ones((n, 1))
    K = np.hstack([np.linalg.matrix_power(A, k) @ b for k in range(n)])
    assert np.linalg.matrix_rank(K) < n          # the Kalman test fails in floating point
    s = StructuredSystem.from_matrices(A, b)
    st = staircase(s)
    assert st.dimension == n and st.margin > 3
    assert pbh(s).dimension == n
    # exact: same integers mod p (no random weights needed -- uniform keeps the values)
    Ai, Bi = np.diag(np.arange(1, n + 1)), np.ones((n, 1), np.int64)
    assert krylov_dimension_mod_p(Ai, Bi, 2**61 - 1) == n


def test_staircase_finds_the_uncontrollable_eigenvalue():
    # diag(1, 2, 3), b = (1, 1, 0): the mode 3 is not reached (PBH by hand)
    s = StructuredSystem.from_matrices(np.diag([1.0, 2.0, 3.0]), np.array([[1.0], [1.0], [0.0]]))
    r = staircase(s)
    assert r.dimension == 2
    np.testing.assert_allclose(r.uncontrollable_eigenvalues, [3.0])
    p = pbh(s)
    assert p.dimension == 2 and p.names(p.lost_modes[0].states) == ["x2"]


# ----------------------------------------------------------------- Jordan structure
@pytest.mark.parametrize("n, driven, expected", [
    pytest.param(5, [0], 5, id="nilpotent-chain-driven-at-head"),
    pytest.param(5, [4], 1, id="nilpotent-chain-driven-at-tail"),
    pytest.param(5, [2], 3, id="nilpotent-chain-driven-in-middle"),
])
def test_jordan_block_dimension(n, driven, expected):
    # directed path = one Jordan block at 0; the dimension is the length of the stem
    # from the driven state (analytic; Kalman matrix of a shift is a 0/1 matrix)
    s = directed_path(n).with_inputs(driven)
    for test in (staircase, pbh):
        assert test(s).dimension == expected, test.__name__
    assert exact_kalman_rank(s.A.toarray(), s.B.toarray()) == expected


def test_repeated_eigenvalue_with_two_jordan_blocks():
    # A = blockdiag(J2(1), J2(1)): geometric multiplicity 2, one input cannot suffice
    J = np.array([[1.0, 1.0], [0.0, 1.0]])
    A = np.kron(np.eye(2), J)
    B1 = np.array([[0.0], [1.0], [0.0], [1.0]])
    B2 = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 0.0], [0.0, 1.0]])
    for B, expected in ((B1, 2), (B2, 4)):
        s = StructuredSystem.from_matrices(A, B)
        assert exact_kalman_rank(A, B) == expected
        assert staircase(s).dimension == expected
        r = pbh(s)
        assert r.dimension == expected
        assert sum(m.n_lost for m in r.lost_modes) == 4 - expected


# ----------------------------------------------------------------- exact references
def test_against_exact_rational_rank_on_random_integer_systems(rng):
    agree = 0
    for trial in range(60):
        n = int(rng.integers(2, 7))
        m = int(rng.integers(1, 3))
        A = rng.integers(-2, 3, size=(n, n)) * (rng.random((n, n)) < 0.5)
        B = rng.integers(-1, 2, size=(n, m)) * (rng.random((n, m)) < 0.5)
        exact = exact_kalman_rank(A, B)
        s = StructuredSystem.from_matrices(A.astype(float), B.astype(float))
        assert staircase(s).dimension == exact, (A, B)
        assert pbh(s).dimension == exact, (A, B)
        assert krylov_dimension_mod_p(A % (2**61 - 1), B % (2**61 - 1), 2**61 - 1) == exact
        agree += 1
    assert agree == 60


def test_against_python_control_on_random_systems(rng):
    control = pytest.importorskip("control", reason="python-control (test extra) not installed")
    for _ in range(40):
        n = int(rng.integers(2, 8))
        A = rng.normal(size=(n, n)) * (rng.random((n, n)) < 0.5)
        B = rng.normal(size=(n, 1)) * (rng.random((n, 1)) < 0.7)
        ref = np.linalg.matrix_rank(control.ctrb(A, B), tol=1e-8)
        s = StructuredSystem.from_matrices(A, B)
        assert staircase(s).dimension == ref
        assert pbh(s).dimension == ref


# ----------------------------------------------------------------- modular vs structural
def test_modular_matches_structural_generic_dimension_on_random_patterns(rng):
    # Hosoe (1980) generic dimension from netctl.structural vs exact rank mod p with random
    # weights (Schwartz-Zippel, REFERENCES.md §9): at least 200 random patterns
    checked = 0
    for _ in range(220):
        n = int(rng.integers(1, 9))
        e = random_pattern(rng, n, float(rng.uniform(0.05, 0.4)), loops=bool(rng.random() < 0.3))
        k = int(rng.integers(1, n + 1))
        inputs = sorted(rng.choice(n, size=min(k, 2), replace=False).tolist())
        s = from_edges(e, n, inputs=inputs)
        structural = controllability(s).controllable_dimension
        r = modular(s, seed=int(rng.integers(1 << 30)))
        assert r.dimension == structural, (e.tolist(), inputs)
        assert r.failure_bound <= n * n / (2**61 - 2)
        checked += 1
    assert checked >= 200


def test_modular_uniform_star_is_exact_and_laplacian_generic():
    s = star(4)
    assert modular(s, weights="uniform").dimension == 2    # Rahmani et al. 2009
    assert modular(s, weights="laplacian", seed=1).dimension == 5
    assert modular(s, weights="uniform").failure_bound is None


def test_modular_rejects_unsupported_weights():
    with pytest.raises(OptionError, match="supports weights independent, symmetric, "
                       "laplacian, uniform; found 'swing'"):
        modular(star(2), weights="swing")


# ----------------------------------------------------------------- Rahmani star
@pytest.mark.parametrize("k", [2, 3, 5])
def test_uniform_star_driven_at_centre_loses_leaf_modes(k):
    s = star(k)
    u = realize(s, weights="uniform")
    # independent reason (Rahmani et al. 2009): swapping two leaves commutes with A and
    # fixes B, so the difference of two leaves is never steered
    P = np.eye(k + 1)
    P[[1, 2]] = P[[2, 1]]
    A, B = u.A.toarray(), u.B.toarray()
    assert np.array_equal(P @ A, A @ P) and np.array_equal(P @ B, B)
    assert exact_kalman_rank(A, B) == 2
    assert controllability(u).controllable                 # pattern: structurally fine
    for test in (staircase, pbh):
        assert test(u).dimension == 2
    r = pbh(u)
    (mode,) = r.lost_modes
    assert mode.n_lost == k - 1 and abs(mode.eigenvalue + 1) < 1e-9
    assert r.names(mode.states) == [f"x{i}" for i in range(1, k + 1)]
    # random positive (laplacian) weights break the symmetry
    assert staircase(realize(s, weights="laplacian", seed=0)).dimension == k + 1


# ----------------------------------------------------------------- sparse certificate
def test_sparse_certificate_agrees_with_lin_on_random_patterns(rng):
    for _ in range(80):
        n = int(rng.integers(2, 30))
        e = random_pattern(rng, n, 3.0 / n, loops=bool(rng.random() < 0.5))
        inputs = sorted(rng.choice(n, size=int(rng.integers(1, 4)) if n > 3 else 1,
                                   replace=False).tolist())
        s = from_edges(e, n, inputs=inputs)
        cert = sparse_certificate(s, seed=1)
        if controllability(s).controllable:
            assert cert.dimension == n and cert.margin > 0
        else:
            assert cert.dimension is None and cert.note.startswith("not structurally")


def _fine_blocks_networkx(edges, n, inputs):
    """Sizes (largest first, sizes >= 2) of the strongly connected blocks of the square
    matrix formed by the nonzero columns of the pattern [A B], computed with networkx
    alone: a Hopcroft-Karp perfect matching of rows to columns, then the strongly
    connected components of the row graph (row i -> row matched to column c, for every
    nonzero (i, c)). The block sizes of the block-triangular form do not depend on which
    perfect matching is used (Duff, ACM TOMS 7(3):315-330, 1981 -- from memory), so the
    certificate's own matching must give the same sizes."""
    import networkx as nx
    from networkx.algorithms import bipartite

    cols = {}  # column label -> rows with a nonzero there; u -> v is A[v, u]
    for u, v in edges:
        cols.setdefault(("x", u), set()).add(v)
    for k, i in enumerate(inputs):
        cols.setdefault(("u", k), set()).add(i)
    assert len(cols) == n  # exactly n nonzero columns: the matched columns are forced
    G = nx.Graph()
    rows = [("r", i) for i in range(n)]
    G.add_nodes_from(rows)
    G.add_edges_from((("r", i), c) for c, rs in cols.items() for i in rs)
    match = bipartite.hopcroft_karp_matching(G, top_nodes=rows)
    assert all(r in match for r in rows)  # structurally full rank
    D = nx.DiGraph()
    D.add_nodes_from(range(n))
    D.add_edges_from((i, match[c][1]) for c, rs in cols.items() for i in rs)
    return sorted((len(c) for c in nx.strongly_connected_components(D) if len(c) > 1),
                  reverse=True)


# exactly n nonzero columns of [A B] (m states without out-links, m inputs), so the
# matched columns are forced and their strongly connected blocks are fixed by the pattern
FORCED_COLUMNS = [
    pytest.param(  # states 0 and 1 both feed 2 and 3: two ways to match rows 2, 3
        [(0, 2), (0, 3), (1, 2), (1, 3), (2, 1)], 4, [0], id="shared-pair"),
    pytest.param(  # 4, 5, 6 each feed two of 1, 2, 3 in a ring: one block of three
        [(0, 4), (4, 1), (4, 2), (5, 2), (5, 3), (6, 3), (6, 1), (1, 5), (2, 6)], 7, [0],
        id="ring-of-three"),
    pytest.param(  # both of the above side by side, one input each
        [(0, 2), (0, 3), (1, 2), (1, 3), (2, 1),
         (4, 8), (8, 5), (8, 6), (9, 6), (9, 7), (10, 7), (10, 5), (5, 9), (6, 10)], 11,
        [0, 4], id="pair-and-ring"),
]


@pytest.mark.parametrize("edges, n, inputs", FORCED_COLUMNS)
def test_sparse_certificate_reports_blocks(edges, n, inputs):
    expected = _fine_blocks_networkx(edges, n, inputs)
    assert expected and expected[0] >= 2  # blocks must exist here
    r = sparse_certificate(from_edges(edges, n, inputs=inputs))
    assert r.dimension == n
    assert r.blocks.tolist() == expected
    assert f"largest strongly connected block {expected[0]}" in r.note


def test_sparse_certificate_blocks_random_forced_columns():
    # random patterns with m sinks and m inputs (exactly n nonzero columns of [A B]):
    # the reported block sizes equal networkx's on every certified case
    rng = np.random.default_rng(20261205)
    checked = 0
    for _ in range(400):
        n, m = int(rng.integers(5, 16)), int(rng.integers(1, 3))
        sinks = set(rng.choice(n, m, replace=False).tolist())
        e = [(int(u), int(v)) for u, v in random_pattern(rng, n, 0.3) if int(u) not in sinks]
        inputs = sorted(rng.choice(n, m, replace=False).tolist())
        if len({u for u, _ in e}) != n - m:
            continue
        try:
            expected = _fine_blocks_networkx(e, n, inputs)
        except AssertionError:  # structurally rank deficient
            continue
        r = sparse_certificate(from_edges(e, n, inputs=inputs))
        if r.dimension is None:  # inaccessible states: no blocks to compare
            continue
        assert r.blocks.tolist() == expected, (e, n, inputs)
        checked += 1 if expected else 0
    assert checked >= 20


def test_margin_and_dict():
    r = staircase(directed_path(4).with_inputs([0]))
    d = r.to_dict()
    assert d["dimension"] == 4 and d["controllable"] is True
    assert d["margin"] == r.margin and r.margin > 10
    assert d["weights"] == "pattern (all weights 1)"


def test_dense_limit_message():
    big = from_edges([(i, i + 1) for i in range(5999)], 6000, inputs=[0])
    with pytest.raises(OptionError, match="limit is 5000 states. Use method 'certificate'"):
        staircase(big)
