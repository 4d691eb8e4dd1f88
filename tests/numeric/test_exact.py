"""Exact controllability for given weights (Yuan et al. 2013).

Check values: Yuan, Zhao, Di, Wang, Lai, Nat. Commun. 4:2447 (2013),
doi:10.1038/ncomms3447 -- N_D = largest geometric multiplicity (from memory; REFERENCES.md
§5 lists the [C] values below). Every count is recomputed here in exact arithmetic
(sympy eigenvects), and every driver set is checked with an exact Kalman rank.
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
import sympy

from netctl import StructuredSystem
from netctl.numeric.exact import exact_controllability


def exact_max_geometric(A):
    M = sympy.Matrix(A.astype(int).tolist())
    return max(len(vecs) for _, _, vecs in M.eigenvects())


def exact_rank_with_drivers(A, drivers):
    n = A.shape[0]
    M = sympy.Matrix(A.astype(int).tolist())
    B = sympy.zeros(n, len(drivers))
    for k, i in enumerate(drivers):
        B[int(i), k] = 1
    blocks, X = [], B
    for _ in range(n):
        blocks.append(X)
        X = M * X
    return sympy.Matrix.hstack(*blocks).rank()


GRAPHS = [  # (graph, N_D); unit weights, zero diagonal; Yuan et al. 2013 / REFERENCES §5
    pytest.param(nx.complete_graph(6), 5, id="complete-K6-N-1"),
    pytest.param(nx.complete_graph(4), 3, id="complete-K4-N-1"),
    pytest.param(nx.star_graph(5), 4, id="star-6-nodes-N-2"),
    pytest.param(nx.star_graph(3), 2, id="star-4-nodes-N-2"),
    pytest.param(nx.path_graph(6), 1, id="path-P6-simple-spectrum"),
    pytest.param(nx.cycle_graph(6), 2, id="cycle-C6-double-eigenvalues"),
    pytest.param(nx.cycle_graph(5), 2, id="cycle-C5"),
    pytest.param(nx.path_graph(5, create_using=nx.DiGraph), 1, id="directed-path-jordan"),
    pytest.param(nx.cycle_graph(5, create_using=nx.DiGraph), 1, id="directed-cycle"),
]


@pytest.mark.parametrize("graph, expected", GRAPHS)
def test_exact_controllability_counts_and_drivers(graph, expected):
    s = StructuredSystem.from_networkx(graph)
    A = s.A.toarray()
    assert exact_max_geometric(A) == expected          # independent exact recomputation
    r = exact_controllability(s)
    assert r.n_inputs == expected
    assert r.n_drivers == expected and r.verified
    assert exact_rank_with_drivers(A, r.drivers) == A.shape[0]


def test_all_ones_matrix_needs_n_minus_1():
    # A = J (all ones, with diagonal): eigenvalue 0 with multiplicity N-1 (REFERENCES §5)
    n = 5
    s = StructuredSystem.from_matrices(np.ones((n, n)), np.zeros((n, 0)))
    r = exact_controllability(s)
    assert r.n_inputs == n - 1 == exact_max_geometric(np.ones((n, n)))
    assert abs(r.eigenvalue) < 1e-9
    assert exact_rank_with_drivers(np.ones((n, n)), r.drivers) == n


def test_directed_path_driver_is_the_head():
    s = StructuredSystem.from_networkx(nx.path_graph(5, create_using=nx.DiGraph))
    r = exact_controllability(s)
    assert r.names(r.drivers) == ["0"]
    (m,) = r.multiplicities
    assert (m.algebraic, m.geometric) == (5, 1)


def test_random_integer_weights_against_exact(rng):
    for _ in range(25):
        n = int(rng.integers(2, 7))
        A = rng.integers(-1, 2, size=(n, n)) * (rng.random((n, n)) < 0.4)
        s = StructuredSystem.from_matrices(A.astype(float), np.zeros((n, 0)))
        r = exact_controllability(s)
        assert r.n_inputs == max(1, exact_max_geometric(A)), A
        assert r.verified and exact_rank_with_drivers(A, r.drivers) == n, A


def test_to_dict_names():
    s = StructuredSystem.from_networkx(nx.star_graph(3))
    d = exact_controllability(s).to_dict()
    assert d["n_inputs"] == 2 and d["symmetric"] is True
    assert d["drivers"] and all(isinstance(x, str) for x in d["drivers"])
