"""The sparse certificate's two factorizations give the same verdicts.

Large strongly connected blocks are factorized first with threshold pivoting on a
symmetric fill-reducing ordering (``_threshold_pivots``), and by the reference LU
(COLAMD, partial pivoting) when that witness is not clear of its tolerance. Checked
against references outside netctl:

* exact rank and determinant over the rationals by sympy (``Matrix.rank``, ``det``) on
  small integer-weighted cases, where exact singularity is common;
* ``numpy.linalg.matrix_rank`` (SVD with the default tolerance) on random real weights;
* the reference factorization (the certificate before the faster path existed).

A certificate must never be issued for an exactly singular matrix (soundness), and the
faster path must never change a verdict. ``test_checker_catches_a_broken_factorization``
shows that the checker used here fails on a deliberately broken factorization.
"""

from __future__ import annotations

from unittest import mock

import numpy as np
import pytest
import scipy.sparse as sp
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from netctl import StructuredSystem
from netctl.numeric import certificate, sparse_certificate
from netctl.numeric.rank import _EPS
from netctl.numeric.verdict import MARGIN_DECADES


def _certify(system: StructuredSystem, path: str, weights: str = "given", seed: int = 0):
    """The certificate with the faster factorization tried on every block of two or more
    states, links both ways or not (``threshold``), or never (``reference``)."""
    limit = 0 if path == "threshold" else 10**12
    with mock.patch.object(certificate, "THRESHOLD_LU_FROM", limit), \
            mock.patch.object(certificate, "ONE_WAY_BELOW", 2.0):
        return sparse_certificate(system, weights=weights, seed=seed)


def _integer_system(rng: np.random.Generator, n: int) -> tuple[StructuredSystem, np.ndarray]:
    """A random pattern with weights +-1 times row and column scales (exact singularity
    is then common),
    a self-loop-free cycle through every state (one large strongly connected block) and
    one or two dedicated inputs."""
    A = np.zeros((n, n), np.int64)
    perm = rng.permutation(n)
    A[perm, np.roll(perm, 1)] = rng.choice([-1, 1], n)
    extra = rng.random((n, n)) < 2.5 / n
    A[extra] = rng.choice([-1, 1], int(extra.sum()))
    # rows and columns scaled by odd integers: the same exact rank, but elimination
    # multipliers that binary floating point cannot hold, so a singular block shows up
    # as a pivot at rounding level rather than as an exact zero
    A *= rng.choice([1, 3, 5, 7], n)[:, None] * rng.choice([1, 3, 5, 7], n)[None, :]
    m = int(rng.integers(1, 3))
    B = np.zeros((n, m), np.int64)
    B[rng.choice(n, m, replace=False), np.arange(m)] = 1
    return StructuredSystem.from_matrices(A.astype(float), B.astype(float)), np.hstack([A, B])


def _disagreements(factor, cases: int = 150, start: int = 20261204) -> list[str]:
    """Cases where the certificate, factorizing with ``factor`` on every block, is
    unsound (certifies while sympy's exact rank of [A B] is below n) or differs from the
    reference factorization."""
    rng = np.random.default_rng(start)
    bad, used = [], 0
    for case in range(cases):
        n = int(rng.integers(3, 10))
        s, AB = _integer_system(rng, n)
        with mock.patch.object(certificate, "_threshold_pivots", factor):
            fast = _certify(s, "threshold")
        ref = _certify(s, "reference")
        used += "threshold pivoting" in fast.note
        exact = sympy.Matrix(AB.tolist()).rank()
        if fast.dimension == n and exact < n:
            bad.append(f"case {case}: certified, exact rank {exact} < {n}")
        if fast.dimension != ref.dimension:
            bad.append(f"case {case}: dimension {fast.dimension} != reference "
                       f"{ref.dimension}")
    if used < cases // 4:
        bad.append(f"the faster factorization decided only {used} of {cases} cases")
    return bad


def test_same_verdicts_and_sound_on_small_integer_cases():
    assert _disagreements(certificate._threshold_pivots) == []


def test_checker_catches_a_broken_factorization():
    # a deliberately wrong factorization: the diagonal of M taken for its pivots
    # (ignores every off-diagonal entry, so singular blocks look nonsingular)
    def diagonal_only(blk, tol):
        return np.abs(blk.diagonal()), tol

    found = _disagreements(diagonal_only)
    assert any("exact rank" in b for b in found)  # unsound: certifies a singular [A B]
    assert any("!= reference" in b for b in found)  # and changes verdicts


_ENTRY = st.sampled_from([0, 0, 0, -1, 1, 2])  # sparse: exact singularity is common
_SCALES = st.sampled_from([1, 3, 5, 7])


@settings(max_examples=300, deadline=None)
@given(st.integers(2, 8).flatmap(lambda n: st.tuples(
    st.just(n), st.lists(_ENTRY, min_size=n * n, max_size=n * n),
    st.lists(st.sampled_from([-2, -1, 1, 2]), min_size=n, max_size=n),
    st.lists(_SCALES, min_size=n, max_size=n), st.lists(_SCALES, min_size=n, max_size=n))))
def test_threshold_witness_only_for_nonsingular_blocks(case):
    # a block with a zero-free diagonal (as the matching leaves it), integer entries:
    # sympy's exact determinant decides; a witness clear of the raised tolerance by
    # MARGIN_DECADES must mean det != 0, and an exactly singular block never gets one
    n, entries, diag, rows, cols = case
    M = np.array(entries, dtype=float).reshape(n, n)
    M[np.arange(n), np.arange(n)] = diag
    # exact integers of the same exact rank, whose elimination rounds in binary
    M *= np.array(rows, dtype=float)[:, None] * np.array(cols, dtype=float)[None, :]
    blk = sp.csc_matrix(M)
    tol = n * _EPS * max(float(np.abs(M).max()), 1.0)
    out = certificate._threshold_pivots(blk, tol)
    det = sympy.Matrix(M.astype(int).tolist()).det()
    assert out is None or out[1] >= tol  # the tolerance is never lowered
    witnessed = out is not None and out[0].min() >= 10.0 ** MARGIN_DECADES * out[1]
    if det == 0:
        assert not witnessed
    if witnessed:
        assert det != 0


@pytest.mark.parametrize("start", [1, 2, 3])
def test_random_real_weights_agree_with_numpy_rank(start):
    # a random directed network of 600 states, 6 links per state on average, with a
    # minimum dedicated input set; independent weights: both factorizations certify,
    # and numpy's SVD rank of the realized [A B] is n
    from netctl.numeric import realize
    from netctl.structural import minimum_inputs

    rng = np.random.default_rng(start)
    n = 600
    u, v = rng.integers(0, n, 3 * n), rng.integers(0, n, 3 * n)
    key = np.unique(u[u != v] * n + v[u != v])  # no self-loops, no duplicate links
    s = StructuredSystem.from_edges(key // n, key % n, n)
    s = minimum_inputs(s, dedicated=True).apply(s)
    fast = _certify(s, "threshold", weights="independent", seed=start)
    ref = _certify(s, "reference", weights="independent", seed=start)
    assert fast.blocks.size and fast.blocks[0] >= 50  # a large block was factorized
    assert "threshold pivoting" in fast.note
    real = realize(s, weights="independent", seed=start)
    AB = np.hstack([real.A.toarray(), real.B.toarray()])
    assert fast.dimension == ref.dimension == n == np.linalg.matrix_rank(AB)
    assert fast.tolerance >= ref.tolerance and fast.margin > MARGIN_DECADES


def test_raised_tolerance_covers_the_backward_error():
    # Higham (2002), Thm 9.3: the computed factors satisfy P M Q = L U + E with
    # |E| <= gamma_n |L||U|. Diagonal entries small against their columns provoke
    # element growth under threshold pivoting; the residual of the factorization,
    # measured here with scipy's own factors, must stay below the tolerance the
    # faster witness has to clear (it exceeds the reference tolerance in many cases).
    from scipy.sparse.linalg import splu

    rng = np.random.default_rng(20261205)
    above_reference = 0
    for _ in range(600):
        n = int(rng.integers(4, 30))
        M = (rng.random((n, n)) < 0.3) * rng.uniform(-1.5, 1.5, (n, n))
        M[np.arange(n), np.arange(n)] = rng.choice([-1, 1], n) * rng.uniform(0.1, 0.3, n)
        blk = sp.csc_matrix(M)
        tol = n * _EPS * max(float(np.abs(M).max()), 1.0)
        out = certificate._threshold_pivots(blk, tol)
        if out is None:
            continue
        lu = splu(blk, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=certificate.PIVOT_THRESHOLD,
                  options=dict(SymmetricMode=True))
        Pr = sp.csc_matrix((np.ones(n), (lu.perm_r, np.arange(n))), shape=(n, n))
        Pc = sp.csc_matrix((np.ones(n), (np.arange(n), lu.perm_c)), shape=(n, n))
        residual = float(np.abs((Pr @ blk @ Pc - lu.L @ lu.U).toarray()).max())
        assert residual <= out[1]
        above_reference += residual > tol
    assert above_reference >= 20  # the cases that need the raised tolerance occurred


@pytest.mark.parametrize("decades, used", [(1.0, False), (MARGIN_DECADES + 0.5, True)])
def test_a_witness_close_to_its_tolerance_leaves_the_decision_to_the_reference(
        decades, used):
    # a faster witness only one decade clear is not trusted: the reference LU decides
    # (and its numbers are reported); one clear by more than MARGIN_DECADES is used
    rng = np.random.default_rng(7)
    while True:  # the first random case with a block of two or more states to factorize
        n = 8
        s = _integer_system(rng, n)[0]
        if _certify(s, "reference", weights="independent").blocks.size:
            break

    def close_witness(blk, tol):
        return np.full(blk.shape[0], tol * 10.0 ** decades), tol

    with mock.patch.object(certificate, "_threshold_pivots", close_witness):
        r = _certify(s, "threshold", weights="independent")
    ref = _certify(s, "reference", weights="independent")
    assert r.dimension == ref.dimension == n
    assert ("threshold pivoting" in r.note) is used
    if not used:
        assert (r.smallest_kept, r.tolerance, r.margin) == (
            ref.smallest_kept, ref.tolerance, ref.margin)


def test_reciprocity_matches_networkx():
    # the gate of the faster path: networkx.overall_reciprocity on the states' subgraph
    import networkx as nx

    rng = np.random.default_rng(11)
    for _ in range(40):
        n = int(rng.integers(3, 40))
        A = (rng.random((n, n)) < 3.0 / n).astype(float)
        A[np.arange(n), np.arange(n)] = rng.random(n) < 0.3  # self-loops are left out
        keep = np.sort(rng.choice(n, int(rng.integers(2, n + 1)), replace=False))
        G = nx.DiGraph()
        G.add_nodes_from(range(keep.size))
        sub = A[np.ix_(keep, keep)]
        G.add_edges_from((j, i) for i, j in zip(*np.nonzero(sub)) if i != j)
        expected = nx.overall_reciprocity(G) if G.number_of_edges() else 0.0
        assert certificate._reciprocity(sp.csr_matrix(A), keep) == pytest.approx(expected)


def test_grids_keep_the_reference_factorization_and_directed_networks_do_not():
    # links both ways (a 60 x 60 grid, one input): the reference LU; a directed random
    # network with one large block: the faster path (default thresholds)
    from netctl.structural import minimum_inputs

    k = 60
    idx = np.arange(k * k).reshape(k, k)
    a = np.concatenate([idx[:, :-1].ravel(), idx[:-1, :].ravel()])
    b = np.concatenate([idx[:, 1:].ravel(), idx[1:, :].ravel()])
    grid = StructuredSystem.from_edges(np.concatenate([a, b]), np.concatenate([b, a]), k * k,
                                       inputs=[0])
    r = sparse_certificate(grid, seed=1)
    assert r.dimension == k * k and r.blocks.sum() >= certificate.THRESHOLD_LU_FROM
    assert "threshold pivoting" not in r.note
    rng = np.random.default_rng(5)
    n = 12000
    u, v = rng.integers(0, n, 4 * n), rng.integers(0, n, 4 * n)
    key = np.unique(u[u != v] * n + v[u != v])
    s = StructuredSystem.from_edges(key // n, key % n, n)
    s = minimum_inputs(s, dedicated=True).apply(s)
    r = sparse_certificate(s, seed=1)
    assert r.dimension == n and r.blocks[0] >= certificate.THRESHOLD_LU_FROM
    assert "threshold pivoting" in r.note
