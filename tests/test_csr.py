"""The stored patterns of a system (netctl/_csr.py) against scipy.sparse, the reference:
assembled from coordinates, transposed and read on the diagonal, on both sides of the
size at which the work passes from NumPy to scipy, and a system's scipy view sharing
the stored arrays."""

from __future__ import annotations

import pickle

import numpy as np
import pytest
import scipy.sparse as sp

import netctl._csr as csr
from netctl import StructuredSystem


def _scipy_canonical(rows, cols, vals, shape):
    M = sp.coo_array((vals, (rows, cols)), shape=shape).tocsr()
    M.sum_duplicates()
    M.eliminate_zeros()
    M.sort_indices()
    return M


@pytest.fixture(params=["numpy", "scipy"])
def path(request, monkeypatch):
    """Run each check on the NumPy path, then with the threshold at 0 (scipy's path)."""
    if request.param == "scipy":
        monkeypatch.setattr(csr, "SMALL_ENTRIES", 0)
    return request.param


def test_coo_pattern_matches_scipy_canonical_form(path):
    rng = np.random.default_rng(15)
    for _ in range(200):
        r, c = int(rng.integers(0, 7)), int(rng.integers(0, 7))
        k = int(rng.integers(0, 30)) if r and c else 0
        rows = rng.integers(0, max(r, 1), k)
        cols = rng.integers(0, max(c, 1), k)
        vals = rng.choice([-1.0, 1.0, 2.0, 0.0], k)  # duplicates that cancel, zeros
        p, n_dup = csr.coo_pattern(rows, cols, vals, (r, c))
        M = _scipy_canonical(rows, cols, vals, (r, c))
        assert p.shape == M.shape
        assert np.array_equal(p.indptr, M.indptr) and np.array_equal(p.indices, M.indices)
        assert np.array_equal(p.data, M.data)
        assert p.indices.dtype == np.int64 and p.indptr.dtype == np.int64
        assert not p.data.flags.writeable and not p.indices.flags.writeable
        assert n_dup == k - len(set(zip(rows.tolist(), cols.tolist())))


def test_transpose_and_diagonal_match_scipy(path):
    rng = np.random.default_rng(16)
    for _ in range(200):
        r, c = int(rng.integers(0, 8)), int(rng.integers(0, 8))
        D = (rng.random((r, c)) < 0.4) * rng.integers(1, 5, (r, c)).astype(float)
        M = sp.csr_array(D)
        M.indices = M.indices.astype(np.int64)
        M.indptr = M.indptr.astype(np.int64)
        p = csr.Pattern.of_scipy(M)
        t = csr.transpose_pattern(p)
        assert np.array_equal(t.to_scipy().toarray(), D.T)
        ref = M.T.tocsr()
        ref.sort_indices()
        assert np.array_equal(t.indices, ref.indices) and np.array_equal(t.indptr, ref.indptr)
        assert np.array_equal(csr.diagonal_mask(p), np.diag(D) != 0)
        assert csr.n_diagonal(p) == int(np.count_nonzero(np.diag(D)))


def test_the_scipy_view_shares_the_stored_arrays_and_survives_pickling():
    with pytest.warns(UserWarning, match="1 duplicate link was merged"):
        s = StructuredSystem.from_named_edges(["a", "b", "b"], ["b", "c", "c"],
                                              weights=[2.0, 1.0, 0.5]).with_inputs(["a"])
    p = s.pattern("A")
    assert "A" not in vars(s)  # not built yet
    A = s.A
    assert isinstance(A, sp.csr_array) and A is s.A
    assert A.data is p.data and A.indices is p.indices and A.indptr is p.indptr
    assert A.toarray().tolist() == [[0, 0, 0], [2, 0, 0], [0, 1.5, 0]]
    t = pickle.loads(pickle.dumps(s))
    assert "A" not in vars(t) and t.same_as(s)
    assert np.array_equal(t.A.toarray(), A.toarray())


def test_take_and_hstack_match_scipy_slicing(path):
    rng = np.random.default_rng(17)
    for _ in range(200):
        r, c = int(rng.integers(1, 8)), int(rng.integers(1, 8))
        D = (rng.random((r, c)) < 0.5) * rng.integers(1, 5, (r, c)).astype(float)
        M = sp.csr_array(D)
        p = csr.Pattern.of_scipy(M)
        rows = rng.permutation(r)[:int(rng.integers(0, r + 1))]  # any order, distinct
        cols = rng.permutation(c)[:int(rng.integers(0, c + 1))]
        for got, ref in ((csr.take(p, rows, cols), D[rows][:, cols]),
                         (csr.take(p, rows), D[rows]), (csr.take(p, None, cols), D[:, cols])):
            assert np.array_equal(got.to_scipy().toarray(), ref)
            assert np.array_equal(got.indices, sp.csr_array(ref).indices)
        D2 = (rng.random((r, 3)) < 0.5).astype(float)
        h = csr.hstack_patterns(p, csr.Pattern.of_scipy(sp.csr_array(D2)))
        assert np.array_equal(h.to_scipy().toarray(), np.hstack([D, D2]))
        assert h.indices.dtype == np.int64 and not h.indices.flags.writeable


def _same(p, M):
    """``p`` equals the canonical scipy matrix ``M`` array by array."""
    M = sp.csr_array(M)
    M.sum_duplicates()
    M.eliminate_zeros()
    M.sort_indices()
    assert p.shape == M.shape
    assert np.array_equal(p.indptr, M.indptr) and np.array_equal(p.indices, M.indices)
    assert np.array_equal(p.data, M.data)


def test_diagonal_edits_dense_form_and_padding_match_scipy():
    """The helpers the small-file paths of strong, whatif and convert use, against the
    scipy expressions they replace (``A - dia(A.diagonal())``, ``A + dia(add)``,
    ``A.diagonal()``, ``A.toarray()``, ``vstack`` / ``hstack`` with an empty block)."""
    rng = np.random.default_rng(17)
    for _ in range(300):
        n = int(rng.integers(0, 9))
        D = (rng.random((n, n)) < 0.35) * rng.choice([-2.0, 1.0, 3.5], (n, n))
        M = sp.csr_array(D)
        M.indices, M.indptr = M.indices.astype(np.int64), M.indptr.astype(np.int64)
        p = csr.Pattern.of_scipy(M).frozen()
        diag = M.diagonal()
        _same(csr.without_diagonal(p), M - sp.dia_array((diag[None, :], [0]), shape=(n, n)))
        add = np.where(diag == 0, 1.0, 0.0)
        _same(csr.with_full_diagonal(p), M + sp.dia_array((add[None, :], [0]), shape=(n, n)))
        assert np.array_equal(csr.diagonal(p), diag)
        assert np.array_equal(csr.to_dense(p), M.toarray())
        extra_r, extra_c = int(rng.integers(0, 3)), int(rng.integers(0, 3))
        grown = csr.padded(p, (n + extra_r, n + extra_c))
        _same(grown, sp.block_array([[M, sp.csr_array((n, extra_c))],
                                     [sp.csr_array((extra_r, n)),
                                      sp.csr_array((extra_r, extra_c))]]))
