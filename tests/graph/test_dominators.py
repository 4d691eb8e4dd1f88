"""Dominators of the input-reachability digraph against NetworkX's ``immediate_dominators``
(reference library; Cooper, Harvey & Kennedy's algorithm there too, written independently)."""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp

from netctl import _jit
from netctl.graph.dominators import input_dominators


def _case(rng: np.random.Generator, n: int, mean: float, n_driven: int):
    """Random digraph on ``n`` vertices (``A[v, u]``: edge u -> v) and driven vertices."""
    m = rng.poisson(mean * n)
    A = sp.csr_array((np.ones(m), (rng.integers(0, n, m), rng.integers(0, n, m))),
                     shape=(n, n))
    A.sum_duplicates()
    A.sort_indices()
    At = A.T.tocsr()
    At.sort_indices()
    driven = np.zeros(n, np.bool_)
    driven[rng.choice(n, n_driven, replace=False)] = True
    return A, At, driven


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_input_dominators_equal_networkx(mode):
    rng = np.random.default_rng(17)
    unreached = deep = 0
    for trial in range(60):
        n = int(rng.integers(2, 40))
        A, At, driven = _case(rng, n, float(rng.uniform(0.5, 2.0)), int(rng.integers(1, 3)))
        as64 = [np.asarray(x, np.int64) for x in (At.indptr, At.indices, A.indptr, A.indices)]
        with (_jit.always_python() if mode == "python" else _jit.always_compiled()):
            idom, pre, size = input_dominators(*as64, driven)
        g = nx.DiGraph()
        g.add_nodes_from(range(n + 1))
        v, u = A.nonzero()
        g.add_edges_from(zip(u.tolist(), v.tolist()))
        g.add_edges_from((n, int(d)) for d in np.flatnonzero(driven))
        want = nx.immediate_dominators(g, n)
        assert [want.get(i, -1) for i in range(n)] == idom[:n].tolist(), trial
        assert idom[n] == n
        # pre/size: x dominates v iff x is on v's chain of immediate dominators
        for x in range(n + 1):
            for w in range(n + 1):
                if pre[w] < 0 or pre[x] < 0:
                    continue
                chain, y = set(), w
                while True:
                    chain.add(y)
                    if y == n:
                        break
                    y = int(idom[y])
                in_subtree = pre[x] <= pre[w] < pre[x] + size[x]
                assert in_subtree == (x in chain), (trial, x, w)
        assert ((pre < 0) == (idom < 0)).all()
        unreached += int((idom[:n] < 0).sum() > 0)
        deep += int(any(idom[i] not in (-1, n) for i in range(n)))
    assert unreached > 5 and deep > 20  # the cases exercise both situations
