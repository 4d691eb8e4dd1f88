"""Interconnection of subsystems: the composite against a hand-built block system and
against Lin's (1974) conditions recomputed with scipy / networkx."""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching

from netctl import StructuredSystem
from netctl.errors import InvalidSystemError, OptionError, UnknownNameError
from netctl.structural.interconnect import Tie, compose, interconnection
from tests.conftest import from_edges


def lin(A: np.ndarray, B: np.ndarray) -> bool:
    n = A.shape[0]
    M = np.hstack([A, B]).astype(np.int8)
    m = maximum_bipartite_matching(sp.csr_matrix(M), perm_type="column")
    if np.count_nonzero(m >= 0) < n:
        return False
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    g.add_edges_from((int(u), int(v)) for v, u in zip(*np.nonzero(A)))
    seen: set[int] = set()
    for d in np.flatnonzero(B.any(axis=1)).tolist():
        seen |= {d} | nx.descendants(g, d)
    return len(seen) == n


def test_state_ties_build_the_block_matrix():
    a = from_edges([(0, 1)], 2)
    b = from_edges([(0, 1), (0, 2)], 3)
    c = compose({"a": a, "b": b}, [("a", "x1", "b", "x0")])
    A = c.system.A.toarray() != 0
    expected = np.zeros((5, 5), bool)
    expected[1, 0] = True  # a.x0 -> a.x1
    expected[3, 2] = expected[4, 2] = True  # b.x0 -> b.x1, b.x2
    expected[2, 1] = True  # the tie a.x1 -> b.x0
    assert np.array_equal(A, expected)
    assert c.system.state_names == ("a.x0", "a.x1", "b.x0", "b.x1", "b.x2")


def test_random_compositions_match_lin():
    rng = np.random.default_rng(41)
    for _ in range(80):
        parts = {}
        for name in ("p", "q"):
            n = int(rng.integers(1, 5))
            D = rng.random((n, n)) < 0.35
            np.fill_diagonal(D, False)
            s = StructuredSystem.from_matrices(D, weighted=False)
            if rng.random() < 0.7:
                s = s.with_inputs([int(rng.integers(n))])
            parts[name] = s
        ties = []
        for _ in range(int(rng.integers(1, 3))):
            i = int(rng.integers(parts["p"].n_states))
            j = int(rng.integers(parts["q"].n_states))
            if (("p", f"x{i}", "q", f"x{j}")) not in ties:
                ties.append(("p", f"x{i}", "q", f"x{j}"))
        r = interconnection(parts, ties)
        s = r.composite.system
        if s.n_inputs == 0:
            assert r.controllable is None
            continue
        A = s.A.toarray() != 0
        B = s.B.toarray() != 0
        assert r.controllable == lin(A, B)
        if not r.controllable:
            fixed = s.with_inputs(list(s.driven_states()) + list(r.report.fix))
            assert lin(A, fixed.B.toarray() != 0)


def test_signal_tie_consumes_the_input_and_cuts_off_states():
    # b's only input is fed by a's output, which reads a state no input of a reaches:
    # b's states become unreachable in the composite although b alone is controllable.
    a = from_edges([(0, 1)], 3).with_inputs(["x0"]).with_outputs(["x2"])
    b = from_edges([(0, 1)], 2).with_inputs(["x0"])
    r = interconnection({"a": a, "b": b}, [Tie("a", "y:x2", "b", "u:x0", "signal")])
    assert r.composite.consumed_inputs == ("b.u:x0",)
    fb = {f.name: f for f in r.findings}
    assert fb["b"].controllable_alone is True
    assert set(fb["b"].unreachable) == {"x0", "x1"}
    assert set(fb["a"].unreachable) == {"x2"}
    assert r.controllable is False
    assert "x2" in fb["a"].fix


def test_tie_into_a_dilation_and_the_fix():
    # Tie a.x0 -> b.x0 where b.x0 fans out to b.x1 and b.x2: two states with one feeder,
    # a dilation (Lin 1974); one extra input on b.x1 or b.x2 fixes it.
    a = from_edges([], 1).with_inputs(["x0"])
    b = from_edges([(0, 1), (0, 2)], 3)
    r = interconnection({"a": a, "b": b}, [("a", "x0", "b", "x0")])
    fb = {f.name: f for f in r.findings}
    assert r.controllable is False
    assert set(fb["b"].in_dilation) >= {"x1", "x2"}
    assert len(r.report.fix) == 1 and fb["b"].fix[0] in ("x1", "x2")


def test_approximate_signal_ties_are_listed():
    a = from_edges([(0, 1)], 2).with_inputs(["x0"]).with_outputs({"y": ["x0", "x1"]})
    b = from_edges([], 2).with_inputs({"u": ["x0", "x1"]})
    r = interconnection({"a": a, "b": b}, [("a", "y", "b", "u", "signal")])
    assert r.composite.approximate == ("a.y => b.u",)
    assert r.to_dict()["approximate_ties"] == ["a.y => b.u"]


def test_bad_ties_have_clear_messages():
    a = from_edges([(0, 1)], 2)
    with pytest.raises(UnknownNameError, match="no subsystem named 'c'"):
        compose({"a": a}, [("a", "x0", "c", "x1")])
    with pytest.raises(UnknownNameError, match="subsystem 'a': unknown state name 'x7'"):
        compose({"a": a}, [("a", "x7", "a", "x1")])
    with pytest.raises(OptionError, match="tie kind must be one of 'state', 'signal'"):
        compose({"a": a}, [("a", "x0", "a", "x1", "wire")])
    with pytest.raises(InvalidSystemError, match="duplicate a link already inside"):
        compose({"a": a}, [("a", "x0", "a", "x1")])
    with pytest.raises(InvalidSystemError, match="contains the separator"):
        compose({"a.b": a}, [])
