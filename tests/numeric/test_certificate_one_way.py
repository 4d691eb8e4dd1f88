"""The sparse certificate's faster factorization on lattice-like networks whose links
are mostly one way.

The faster path (threshold pivoting on a symmetric ordering, trusted only with
``MARGIN_DECADES`` of margin over a growth-raised tolerance) is chosen for large blocks
whose links are mostly one way. ``test_certificate_lu`` checks it on random directed
networks; here the networks are lattices and chains, where the matched columns form
long banded or wrap-around blocks and the conditioning falls with size:

* a directed torus (links right and down only, with wrap-around) with a few links made
  two-way;
* a directed grid (right and down only) with a few two-way links, inputs from a minimum
  input set;
* long directed chains with links to the next two or three states and sparse feedback
  from the far half to the near half.

Weights are small integers (all ones, +-1, +-1 times odd row and column scales, +-1..9),
for which exact singularity is common. Reference outside netctl: sympy's exact rank
over the rationals (``DomainMatrix`` over QQ) of ``[A B]``; and
(slow) the same at full size with the default thresholds.

Not checked here, on purpose: numpy's SVD rank on long chains. A 3000-state chain with
links to the next two states and 20 feedback links, independent weights (random start
1), is certified by both factorizations (faster path 2.5 decades clear, reference 3.3),
while ``numpy.linalg.matrix_rank`` of the realized ``[A B]`` gives 2999 (smallest
singular value 6.6e-14, numpy's tolerance 1.8e-12; measured 2026-12-05). The weights are
continuous, so the exact rank is 3000 almost surely; the gap is the known one between
LU pivots and singular values that the certificate's docstring states (no LU is
rank-revealing), not a verdict changed by the faster path.
"""

from __future__ import annotations

from unittest import mock

import numpy as np
import pytest
from sympy import QQ, ZZ
from sympy.polys.matrices import DomainMatrix

from netctl import StructuredSystem
from netctl.numeric import certificate, sparse_certificate
from netctl.structural import minimum_inputs


def _lattice(rng: np.random.Generator, r: int, c: int, wrap: bool, two_way: int):
    """Edges of an r x c lattice with links right and down only (wrapping round when
    ``wrap``), ``two_way`` of them also reversed."""
    idx = np.arange(r * c).reshape(r, c)
    if wrap:
        a = np.concatenate([idx.ravel(), idx.ravel()])
        b = np.concatenate([np.roll(idx, -1, 1).ravel(), np.roll(idx, -1, 0).ravel()])
    else:
        a = np.concatenate([idx[:, :-1].ravel(), idx[:-1, :].ravel()])
        b = np.concatenate([idx[:, 1:].ravel(), idx[1:, :].ravel()])
    pick = rng.choice(a.size, two_way, replace=False)
    return np.concatenate([a, b[pick]]), np.concatenate([b, a[pick]]), r * c


def _chain(rng: np.random.Generator, n: int, hops: list[int], feedback: int):
    """Edges of a chain of ``n`` states, state i linked to i + h for h in ``hops``, plus
    ``feedback`` links from the far half back to the near half."""
    a = np.concatenate([np.arange(n - h) for h in hops])
    b = np.concatenate([np.arange(h, n) for h in hops])
    src, dst = rng.integers(n // 2, n, feedback), rng.integers(0, n // 2, feedback)
    return np.concatenate([a, src]), np.concatenate([b, dst]), n


def _family(rng: np.random.Generator, name: str, scale: int = 1):
    if name == "torus":
        r, c = (int(x) * scale for x in rng.integers(4, 12, 2))
        return _lattice(rng, r, c, True, int(rng.integers(0, 8)))
    if name == "grid":
        r, c = (int(x) * scale for x in rng.integers(4, 12, 2))
        return _lattice(rng, r, c, False, int(rng.integers(r, 3 * r)))
    n = int(rng.integers(40, 300)) * scale
    return _chain(rng, n, [1, 2] if name == "chain-2" else [1, 2, 3],
                  int(rng.integers(1, 12)))


def _weights(rng: np.random.Generator, kind: str, a: np.ndarray, b: np.ndarray, n: int):
    if kind == "ones":
        return np.ones(a.size, np.int64)
    sign = rng.choice([-1, 1], a.size)
    if kind == "pm1":
        return sign
    if kind == "pm1-scaled":  # same exact rank, multipliers binary floats cannot hold
        return sign * rng.choice([1, 3, 5, 7], n)[b] * rng.choice([1, 3, 5, 7], n)[a]
    return sign * rng.integers(1, 10, a.size)


def _system(a, b, n, w) -> tuple[StructuredSystem, np.ndarray]:
    """The weighted system (duplicate links dropped) with a minimum input set, and its
    integer [A B]."""
    keep = np.unique(a * n + b, return_index=True)[1]
    a, b, w = a[keep], b[keep], w[keep]
    pattern = StructuredSystem.from_edges(a, b, n)
    B = minimum_inputs(pattern).apply(pattern).B.toarray().astype(np.int64)
    A = np.zeros((n, n), np.int64)
    A[b, a] = w  # u -> v is A[v, u]
    return StructuredSystem.from_matrices(A.astype(float), B.astype(float)), np.hstack([A, B])


def _exact_rank(M: np.ndarray) -> int:
    """Rank over the rationals (sympy DomainMatrix, exact)."""
    rows = [[ZZ(int(x)) for x in row] for row in M]
    return int(DomainMatrix(rows, M.shape, ZZ).convert_to(QQ).rank())


def _certify(system: StructuredSystem, path: str):
    """``threshold``: the faster factorization tried on every block of two or more
    states (the one-way gate left as it is); ``reference``: never."""
    limit = 0 if path == "threshold" else 10**12
    with mock.patch.object(certificate, "THRESHOLD_LU_FROM", limit):
        return sparse_certificate(system, weights="given")


FAMILIES = ["torus", "grid", "chain-2", "chain-3"]
WEIGHTS = ["ones", "pm1", "pm1-scaled", "int9"]


def _disagreements(family: str, cases: int, start: int) -> tuple[list[str], int, int]:
    """Unsound certificates (certified while sympy's exact rank of [A B] is below n),
    missed ones on exactly full rank matched blocks that the reference certifies, and
    verdicts that differ from the reference factorization; with the number of cases the
    faster path decided and the number that were exactly rank deficient."""
    rng = np.random.default_rng(start)
    bad, used, deficient = [], 0, 0
    for case in range(cases):
        a, b, n = _family(rng, family)
        kind = WEIGHTS[case % len(WEIGHTS)]
        s, AB = _system(a, b, n, _weights(rng, kind, a, b, n))
        fast, ref = _certify(s, "threshold"), _certify(s, "reference")
        used += "threshold pivoting" in fast.note
        exact = _exact_rank(AB)
        deficient += exact < n
        if fast.dimension == n and exact < n:
            bad.append(f"{family} case {case} ({kind}, n={n}): certified, exact rank {exact}")
        if fast.dimension != ref.dimension:
            bad.append(f"{family} case {case} ({kind}, n={n}): dimension {fast.dimension} "
                       f"!= reference {ref.dimension} (exact rank {exact})")
    return bad, used, deficient


@pytest.mark.parametrize("family", FAMILIES)
def test_one_way_lattices_sound_and_same_verdicts_as_the_reference(family):
    bad, used, deficient = _disagreements(family, 16, 20261205)
    assert bad == []
    assert used >= 4  # the faster path decided a fair share of the cases
    if family in ("torus", "grid"):
        # the soundness check has something to catch: with equal or +-1 weights these
        # lattices are often exactly rank deficient although structurally full rank
        assert deficient >= 1


def test_the_check_catches_a_broken_faster_path():
    # a deliberately broken faster path: pivots read off the diagonal (off-diagonal
    # entries ignored, so a singular block looks nonsingular)
    def diagonal_only(blk, tol):
        return np.abs(blk.diagonal()), tol

    with mock.patch.object(certificate, "_threshold_pivots", diagonal_only):
        found = [b for f in ("torus", "grid") for b in _disagreements(f, 16, 20261205)[0]]
    assert any("certified, exact rank" in b for b in found)
    assert any("!= reference" in b for b in found)


@pytest.mark.slow
def test_full_size_torus_uses_the_faster_path_and_matches_the_exact_rank():
    # default thresholds: a 50 x 50 directed torus, 10 links two-way, weights +-1..9;
    # the strongly connected blocks hold more than THRESHOLD_LU_FROM states, so the
    # faster path decides, and sympy's exact rank of [A B] agrees
    rng = np.random.default_rng(20261205)
    a, b, n = _lattice(rng, 50, 50, True, 10)
    s, AB = _system(a, b, n, _weights(rng, "int9", a, b, n))
    r = sparse_certificate(s, weights="given")
    assert r.blocks.sum() >= certificate.THRESHOLD_LU_FROM
    assert "threshold pivoting" in r.note
    assert r.dimension == n == _exact_rank(AB)


def _forced_three(weights):
    """Three states, an input on state 0, links 0->1, 0->2, 1->1, 1->2 with ``weights``:
    [A B] has exactly three nonzero columns (out of 0, out of 1, the input), so the matched
    columns are forced; structurally of full rank and all states accessible. The 2x2 block
    of rows 1, 2 is [[w01, w11], [w02, w12]] (hand calculation)."""
    return StructuredSystem.from_edges([0, 0, 1, 1], [1, 2, 1, 2], 3, weights=weights,
                                       inputs=[0])


def test_given_weights_that_are_singular_do_not_ask_for_another_seed():
    """With given weights another seed changes nothing: an inconclusive note must not send
    the user to one (it did), and a certified one must not speak of random weights.
    Singular by hand: w01*w12 - w11*w02 = 1*1 - 1*1 = 0; numpy agrees below."""
    singular = _forced_three([1.0, 1.0, 1.0, 1.0])
    AB = np.hstack([singular.A.toarray(), singular.B.toarray()])
    assert np.linalg.matrix_rank(AB) == 2  # numpy: the given weights lose a rank
    r = sparse_certificate(singular, weights="given")
    assert r.dimension is None and "another seed does not change them" in r.note
    assert "(try another seed)" not in r.note and "--weights independent" in r.note
    regular = _forced_three([1.0, 2.0, 3.0, 5.0])  # 1*5 - 3*2 = -1
    assert np.linalg.matrix_rank(np.hstack([regular.A.toarray(), regular.B.toarray()])) == 3
    ok = sparse_certificate(regular, weights="given")
    assert ok.dimension == 3 and "the given weights" in ok.note and "random" not in ok.note
