"""CSR transposition of index arrays against SciPy (``csr_array.T.tocsr()``, reference library)."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp

from netctl import _jit
from netctl.graph.matching import transpose_csr as transpose_csr_from_matching
from netctl.graph.transpose import index_dtype, transpose_csr, transpose_index

SHAPES = [  # (rows, columns, mean entries a row): square, wide, tall, empty, all empty rows
    pytest.param(60, 60, 3.0, id="square"),
    pytest.param(20, 90, 5.0, id="wide"),
    pytest.param(90, 20, 1.5, id="tall"),
    pytest.param(0, 7, 0.0, id="no-rows"),
    pytest.param(15, 15, 0.0, id="no-entries"),
]


def _random_csr(rng: np.random.Generator, n_rows: int, n_cols: int, mean: float
                ) -> sp.csr_array:
    nnz = rng.poisson(mean * n_rows) if n_rows else 0
    m = sp.csr_array((np.ones(nnz), (rng.integers(0, max(n_rows, 1), nnz),
                                     rng.integers(0, n_cols, nnz))), shape=(n_rows, n_cols))
    m.sum_duplicates()
    m.sort_indices()
    return m


@pytest.mark.parametrize("mode", ["python", "compiled"])
@pytest.mark.parametrize("n_rows, n_cols, mean", SHAPES)
def test_transpose_equals_scipy(n_rows, n_cols, mean, mode):
    rng = np.random.default_rng(n_rows * 1000 + n_cols)
    for trial in range(5):
        m = _random_csr(rng, n_rows, n_cols, mean)
        want = m.T.tocsr()
        want.sort_indices()
        with (_jit.always_python() if mode == "python" else _jit.always_compiled()):
            tptr, tind = transpose_csr(m.indptr, m.indices, n_cols)
            p32, i32 = transpose_index(m.indptr.astype(np.int64), m.indices.astype(np.int64),
                                       n_cols, np.int32)
        assert tptr.dtype == tind.dtype == np.int64
        assert p32.dtype == i32.dtype == np.int32
        for ptr, ind in ((tptr, tind), (p32, i32)):
            np.testing.assert_array_equal(ptr, want.indptr, err_msg=f"trial {trial}")
            np.testing.assert_array_equal(ind, want.indices, err_msg=f"trial {trial}")


def test_index_dtype_switches_to_int64_at_the_int32_limit():
    # the kernels' work arrays are int32 while every id and position fits (2**31 - 1
    # is the int32 maximum; four values are kept free for encodings)
    assert index_dtype(10, 10, 10) is np.int32
    assert index_dtype(2**31 - 5, 1, 1) is np.int32
    assert index_dtype(1, 1, 2**31 - 4) is np.int64


def test_matching_still_exports_the_transpose():
    # moved from netctl.graph.matching to netctl.graph.transpose; the old import stays
    assert transpose_csr_from_matching is transpose_csr
