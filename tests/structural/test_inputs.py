"""Minimum inputs and sensors.

External checks: analytic counts (Liu, Slotine, Barabási 2011, Nature 473:167-173:
N_D = max(N - |M*|, 1)); the dedicated count m_u + beta - alpha (Commault & Dion 2013;
Pequito, Kar, Aguiar 2016) against brute force over input sets with the generic rank of
the controllability matrix computed independently over F_p (tests/_reference.py); the
worked example of Jia et al. 2013 (Nat. Commun. 4:2002, Fig. 1: N_D = 3).
"""

from __future__ import annotations

import itertools
import json

import numpy as np
import pytest

from netctl import StructuredSystem, controllability, minimum_inputs, minimum_sensors, summarize
from tests import _reference as ref
from tests.conftest import (
    complete_digraph,
    directed_cycle,
    directed_path,
    from_edges,
    in_star,
    out_star,
    random_pattern,
)

KNOWN = [  # minimum shared inputs; analytic values (Liu, Slotine, Barabasi 2011)
    pytest.param(directed_path(5), 1, id="directed-path"),
    pytest.param(directed_cycle(4), 1, id="directed-cycle"),
    pytest.param(out_star(3), 3, id="out-star-3-leaves"),
    pytest.param(out_star(7), 7, id="out-star-7-leaves"),
    pytest.param(in_star(4), 4, id="in-star-4-leaves"),
    pytest.param(complete_digraph(6), 1, id="complete-digraph"),
    # Jia et al. 2013, Fig. 1 (edge list per REFERENCES.md section 4): N_D = 3
    pytest.param(from_edges([(0, 1), (1, 2), (1, 3), (1, 4)], 5), 3, id="jia-2013-fig1"),
]


@pytest.mark.parametrize("system, expected", KNOWN)
def test_minimum_inputs_known_values(system, expected):
    design = minimum_inputs(system)
    assert design.n_inputs == expected
    assert controllability(design.apply(system)).controllable


DEDICATED = [  # REFERENCES.md section 3 table [C], recomputed below by brute force
    pytest.param([(0, 1), (1, 0), (2, 3), (3, 2)], 4, 2, id="two-disjoint-2-cycles"),
    pytest.param([(0, i) for i in range(1, 5)], 5, 4, id="out-star-4"),
    pytest.param([(i, 0) for i in range(1, 5)], 5, 4, id="in-star-4"),
    pytest.param([(0, 1), (1, 2), (2, 3)], 4, 1, id="path-4"),
    pytest.param([(0, 1), (1, 2), (2, 3), (3, 0)], 4, 1, id="cycle-4"),
]


@pytest.mark.parametrize("edges, n, expected", DEDICATED)
def test_dedicated_table(edges, n, expected):
    s = from_edges(edges, n)
    d = minimum_inputs(s, dedicated=True)
    assert d.n_inputs == expected
    rng = np.random.default_rng(1)
    assert ref.brute_force_min_dedicated(ref.pattern_from_edges(np.array(edges), n), rng) == expected
    assert all(w.size == 1 for w in d.wiring)


def test_dedicated_equals_brute_force_on_random_graphs():
    rng = np.random.default_rng(2026)
    ref_rng = np.random.default_rng(99)
    for trial in range(300):
        n = int(rng.integers(1, 8))
        edges = random_pattern(rng, n, float(rng.uniform(0.05, 0.45)), loops=bool(rng.random() < 0.3))
        s = StructuredSystem.from_matrices(ref.pattern_from_edges(edges, n), weighted=False)
        d = minimum_inputs(s, dedicated=True)
        assert d.n_inputs == ref.brute_force_min_dedicated(ref.pattern_from_edges(edges, n),
                                                           ref_rng), (trial, edges.tolist())
        # the returned placement works (checked independently)
        A = ref.pattern_from_edges(edges, n)
        assert ref.generic_controllable_dimension(A, ref.dedicated_B(n, list(d.drivers)),
                                                  ref_rng) == n


def _min_shared_brute_force(A: np.ndarray, rng) -> int:
    """Fewest input columns (each acting on any nonempty set of states) for full rank."""
    n = A.shape[0]
    subsets = [np.array([(mask >> i) & 1 for i in range(n)], bool) for mask in range(1, 1 << n)]
    for m in range(1, n + 1):
        for cols in itertools.combinations_with_replacement(range(len(subsets)), m):
            B = np.stack([subsets[c] for c in cols], axis=1)
            if ref.generic_controllable_dimension(A, B, rng, trials=1) == n:
                return m
    raise AssertionError("unreachable")


def test_shared_equals_brute_force_on_small_graphs():
    rng = np.random.default_rng(4)
    ref_rng = np.random.default_rng(5)
    for trial in range(60):
        n = int(rng.integers(1, 5))
        edges = random_pattern(rng, n, float(rng.uniform(0.1, 0.6)), loops=bool(rng.random() < 0.3))
        A = ref.pattern_from_edges(edges, n)
        d = minimum_inputs(StructuredSystem.from_matrices(A, weighted=False))
        assert d.n_inputs == _min_shared_brute_force(A, ref_rng), (trial, edges.tolist())
        B = np.zeros((n, d.n_inputs), bool)
        for k, w in enumerate(d.wiring):
            B[w, k] = True
        assert ref.generic_controllable_dimension(A, B, ref_rng) == n


SENSORS = [  # REFERENCES.md section 10 [C]; recomputed by brute force on the dual below
    pytest.param([(0, i) for i in range(1, 5)], 5, 4, [1, 2, 3, 4], id="out-star-leaves"),
    pytest.param([(0, 1), (1, 2), (2, 3)], 4, 1, [3], id="path-tail"),
    pytest.param([(0, 1), (1, 2), (2, 3), (3, 0)], 4, 1, None, id="cycle-4"),
    pytest.param([(0, 1), (1, 0), (2, 3), (3, 2)], 4, 2, None, id="two-2-cycles"),
]


@pytest.mark.parametrize("edges, n, expected, where", SENSORS)
def test_minimum_sensors(edges, n, expected, where):
    s = from_edges(edges, n)
    d = minimum_sensors(s, dedicated=True)
    assert d.n_inputs == expected
    if where is not None:
        assert d.drivers.tolist() == where
    AT = ref.pattern_from_edges(np.array(edges), n).T
    assert ref.brute_force_min_dedicated(AT, np.random.default_rng(0)) == expected
    from netctl import observability
    assert observability(d.apply(s)).controllable


def test_design_is_deterministic():
    rng = np.random.default_rng(3)
    edges = random_pattern(rng, 60, 0.04)
    a = json.dumps(minimum_inputs(from_edges(edges, 60)).to_dict())
    b = json.dumps(minimum_inputs(from_edges(edges, 60)).to_dict())
    assert a == b


def test_perfect_matching_needs_one_input_per_design():
    # self-loops on every state give a perfect matching: one input is generically enough
    # when the graph is strongly connected (DESIGN.md, "Self-dynamics")
    s = directed_cycle(6).with_self_loops()
    d = minimum_inputs(s)
    assert d.n_inputs == 1 and d.unmatched.size == 0
    # two disjoint cycles: one shared input touching both components
    s2 = from_edges([(0, 1), (1, 0), (2, 3), (3, 2)], 4)
    d2 = minimum_inputs(s2)
    assert d2.n_inputs == 1 and len(d2.wiring[0]) == 2


def test_dedicated_option_is_validated():
    from netctl import OptionError
    with pytest.raises(OptionError, match="dedicated must be True or False, found 'yes'"):
        minimum_inputs(directed_path(3), dedicated="yes")


def test_summary_counts():
    s = from_edges([(0, 1), (1, 2), (3, 2)], 5)  # 4 is isolated
    summ = summarize(s)
    assert summ.n_states == 5 and summ.n_links == 3 and summ.n_isolated == 1
    assert summ.n_weak_components == 2
    assert summ.n_source_components == 3  # {0}, {3}, {4}
    assert summ.n_sink_components == 2  # {2}, {4}
    assert summ.n_inputs == 5 - summ.structural_rank
    assert summ.n_dedicated_inputs == minimum_inputs(s, dedicated=True).n_inputs


def test_representatives_prefer_eligible_states():
    # second-order model: actuators may sit on velocity states only (netctl.models);
    # the unconstrained count is unchanged, and the chosen states respect eligibility
    from netctl.models import apply_model

    ring = from_edges([(i, (i + 1) % 5) for i in range(5)] + [((i + 1) % 5, i) for i in range(5)], 5)
    s = apply_model(ring, "second-order")
    d = minimum_inputs(s)
    assert d.n_inputs == minimum_inputs(s._replace(nodes={})).n_inputs
    assert all(name.endswith(":vel") for name in d.driver_names)
    assert controllability(d.apply(s)).controllable


@pytest.mark.parametrize("thread_min_links", [0, 10**12], ids=["two-threads", "one-thread"])
def test_design_on_both_engine_paths(monkeypatch, thread_min_links):
    """Large systems search for unreached sources in a second thread beside the matching.
    Either way: the dedicated count equals brute force on small graphs; on larger sparse
    graphs the shared count is max(n - |M|, 1) with |M| from scipy's maximum matching,
    the dedicated driver set passes Lin's two conditions checked independently (scipy
    matching of [A B], networkx reachability; Lin 1974), and it is no smaller than the
    lower bounds n - |M| and the number of source components (networkx condensation)."""
    import networkx as nx
    import scipy.sparse as sp
    from scipy.sparse.csgraph import maximum_bipartite_matching

    from netctl.structural import _engine

    monkeypatch.setattr(_engine, "_THREAD_MIN_LINKS", thread_min_links)
    rng = np.random.default_rng(31)
    ref_rng = np.random.default_rng(32)
    for _ in range(40):
        n = int(rng.integers(1, 7))
        edges = random_pattern(rng, n, float(rng.uniform(0.05, 0.5)), loops=bool(rng.random() < 0.3))
        A = ref.pattern_from_edges(edges, n)
        d = minimum_inputs(StructuredSystem.from_matrices(A, weighted=False), dedicated=True)
        assert d.n_inputs == ref.brute_force_min_dedicated(A, ref_rng)

    def scipy_size(M):
        M = sp.csr_matrix(M)
        return 0 if M.nnz == 0 else int((maximum_bipartite_matching(M, perm_type="column") >= 0).sum())

    for trial in range(12):
        n = int(rng.integers(200, 3000))
        k = rng.poisson(float(rng.uniform(0.5, 4.0)) * n)
        code = np.unique(rng.integers(0, n, k) * n + rng.integers(0, n, k))
        src, dst = code // n, code % n
        s = StructuredSystem.from_edges(src, dst, n)
        g = nx.DiGraph()
        g.add_nodes_from(range(n))
        g.add_edges_from(zip(src.tolist(), dst.tolist()))
        size = scipy_size(s.A)
        assert minimum_inputs(s).n_inputs == max(n - size, 1)
        d = minimum_inputs(s, dedicated=True)
        B = sp.csr_array((np.ones(d.drivers.size), (d.drivers, np.arange(d.drivers.size))),
                         shape=(n, d.drivers.size))
        assert scipy_size(sp.hstack([s.A, B])) == n  # no dilation
        reach = set(d.drivers.tolist())
        for v in d.drivers.tolist():
            reach |= nx.descendants(g, v)
        assert len(reach) == n  # every state accessible
        cond = nx.condensation(g)
        n_sources = sum(1 for c in cond.nodes if cond.in_degree(c) == 0)
        assert d.n_inputs >= max(n - size, n_sources), trial
