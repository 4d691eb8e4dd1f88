"""Lin's test, its certificates, and Hosoe's generic dimension.

External checks: analytic values of elementary graphs (Lin 1974; Liu, Slotine, Barabási
2011, Nature 473:167-173), the generic rank of the controllability matrix computed
independently with random weights over a prime field (tests/_reference.py; Schwartz-Zippel),
and the counterexamples of REFERENCES.md §1 recomputed the same way.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp

from netctl import StructuredSystem, controllability, is_structurally_controllable, observability
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

# (system, input states, controllable?) -- analytic facts (Lin 1974 theorem applied by hand)
KNOWN = [
    pytest.param(directed_path(6), [0], True, id="path-driven-at-head"),
    pytest.param(directed_path(6), [5], False, id="path-driven-at-tail"),
    pytest.param(directed_cycle(5), [3], True, id="cycle-any-state"),
    pytest.param(out_star(4), [0], False, id="out-star-hub-only-dilation"),
    pytest.param(out_star(4), [0, 1, 2, 3], True, id="out-star-hub-and-3-leaves"),
    pytest.param(in_star(4), [0], False, id="in-star-hub-leaves-unreached"),
    pytest.param(in_star(4), [1, 2, 3, 4], True, id="in-star-all-leaves"),
    pytest.param(complete_digraph(5), [2], True, id="complete-digraph-one-input"),
]


@pytest.mark.parametrize("system, inputs, expected", KNOWN)
def test_known_verdicts(system, inputs, expected):
    r = controllability(system.with_inputs(inputs))
    assert r.controllable is expected
    assert (r.controllable_dimension == system.n_states) is expected
    assert (r.fix.size == 0) is expected


def companion_pattern(n: int) -> StructuredSystem:
    """Control-canonical (companion) form: x_i' = x_{i+1}, x_n' = sum_j a_j x_j, input at x_n."""
    edges = [(i + 1, i) for i in range(n - 1)] + [(j, n - 1) for j in range(n)]
    return from_edges(edges, n)


@pytest.mark.parametrize("n", [2, 3, 5, 8, 13])
def test_companion_form_driven_at_last_state(n):
    # Textbook fact (e.g. Kailath, Linear Systems, 1980, controller canonical form): the
    # companion form with the input on the last state is controllable for all coefficients.
    s = companion_pattern(n).with_inputs([n - 1])
    assert is_structurally_controllable(s)
    # and driving the first state instead is not, for n >= 2 (x_1 feeds nothing but x_n)
    assert ref.generic_controllable_dimension(
        ref.pattern_from_edges(np.array([(i + 1, i) for i in range(n - 1)]
                                        + [(j, n - 1) for j in range(n)]), n),
        ref.dedicated_B(n, [0]), np.random.default_rng(n)) == controllability(
        companion_pattern(n).with_inputs([0])).controllable_dimension


def _random_system(rng, n_max=7):
    n = int(rng.integers(1, n_max + 1))
    edges = random_pattern(rng, n, float(rng.uniform(0.05, 0.5)), loops=bool(rng.random() < 0.3))
    m = int(rng.integers(0, 3))
    Bpat = rng.random((n, m)) < 0.4
    return n, edges, Bpat


def test_agrees_with_generic_rank_on_500_random_patterns():
    """Verdict and Hosoe dimension equal the generic rank of the controllability matrix."""
    rng = np.random.default_rng(7)
    ref_rng = np.random.default_rng(8)
    for trial in range(500):
        n, edges, Bpat = _random_system(rng)
        A = ref.pattern_from_edges(edges, n)
        s = StructuredSystem.from_matrices(A, Bpat.astype(float), weighted=False)
        r = controllability(s)
        expected = ref.generic_controllable_dimension(A, Bpat, ref_rng)
        assert r.controllable_dimension == expected, (trial, edges.tolist(), Bpat.tolist())
        assert r.controllable == (expected == n)
        # the structural rank is the generic rank of [A B]
        assert r.structural_rank == ref.generic_rank(np.hstack([A, Bpat]), ref_rng)


def test_fix_is_minimal_and_works_on_random_patterns():
    """Adding dedicated inputs at `fix` makes the system controllable, and no smaller
    addition does (brute force over subsets, generic rank over F_p as the reference)."""
    import itertools

    rng = np.random.default_rng(11)
    ref_rng = np.random.default_rng(12)
    for trial in range(150):
        n, edges, Bpat = _random_system(rng, n_max=6)
        A = ref.pattern_from_edges(edges, n)
        s = StructuredSystem.from_matrices(A, Bpat.astype(float), weighted=False)
        r = controllability(s)
        fixed = np.hstack([Bpat, ref.dedicated_B(n, list(r.fix))])
        assert ref.generic_controllable_dimension(A, fixed, ref_rng) == n
        if r.fix.size:
            smaller = r.fix.size - 1
            for S in itertools.combinations(range(n), smaller):
                B2 = np.hstack([Bpat, ref.dedicated_B(n, list(S))])
                assert ref.generic_controllable_dimension(A, B2, ref_rng, trials=1) < n, (
                    trial, edges.tolist(), S)


REFERENCE_COUNTEREXAMPLES = [
    # REFERENCES.md §1 [C]: dimension differs from term rank (recomputed here over F_p)
    pytest.param([(0, 1), (0, 2), (1, 4), (2, 3)], 5, {"u": [0]}, id="out-tree"),
    pytest.param([(0, 2), (0, 3), (0, 4), (1, 4)], 5, {"u": [0, 1]}, id="shared-input"),
]


@pytest.mark.parametrize("edges, n, inputs", REFERENCE_COUNTEREXAMPLES)
def test_dimension_is_not_term_rank(edges, n, inputs):
    s = from_edges(edges, n).with_inputs(inputs)
    r = controllability(s)
    A = ref.pattern_from_edges(np.array(edges), n)
    B = np.zeros((n, 1), bool)
    B[inputs["u"], 0] = True
    rng = np.random.default_rng(3)
    assert r.controllable_dimension == ref.generic_controllable_dimension(A, B, rng)
    assert r.controllable_dimension < ref.generic_rank(np.hstack([A, B]), rng)


def test_star_hub_dimension_two():
    # Liu, Slotine, Barabasi, PLoS ONE 7(9):e44459 (2012), Fig. 1: the hub of a directed
    # star has control centrality 2, for any number of leaves.
    for k in (2, 4, 9):
        assert controllability(out_star(k).with_inputs([0])).controllable_dimension == 2


def test_dag_dimension_is_longest_path_from_driver():
    # PLoS ONE 2012 (same paper): in a DAG, control centrality = layer index, i.e. the
    # number of nodes on the longest path starting at the driver.
    import networkx as nx

    rng = np.random.default_rng(5)
    for _ in range(60):
        n = int(rng.integers(2, 9))
        edges = [(i, j) for i in range(n) for j in range(i + 1, n) if rng.random() < 0.35]
        g = nx.DiGraph(edges)
        g.add_nodes_from(range(n))
        s = from_edges(edges, n) if edges else StructuredSystem.from_edges([], [], n)
        root = 0
        longest = max(nx.single_source_shortest_path_length(g, root).keys().__len__(), 1)
        sub = g.subgraph(nx.descendants(g, root) | {root})
        longest = nx.dag_longest_path_length(sub) + 1
        assert controllability(s.with_inputs([root])).controllable_dimension == longest


def test_inaccessible_groups_and_reasons():
    # two source components {0} and {3,4} (a 2-cycle); input on 0 only
    s = from_edges([(0, 1), (1, 2), (3, 4), (4, 3), (4, 2), (4, 5)], 6).with_inputs([0])
    r = controllability(s)
    assert not r.controllable
    assert r.inaccessible.tolist() == [3, 4, 5]
    assert len(r.groups) == 1
    assert r.groups[0].source.tolist() == [3, 4]
    assert r.groups[0].downstream.tolist() == [5]
    text = " ".join(r.reasons())
    assert "no input reaches the component {x3, x4}" in text
    assert "1 state(s) downstream" in text


def test_dilation_witness_is_a_true_deficiency():
    s = out_star(5).with_inputs([0])
    r = controllability(s)
    d = r.dilation
    assert d is not None and d.deficiency >= 1
    # every feeder of the witness states (in [A B]) is in fed_by
    AB = sp.hstack([s.A, s.B], format="csr")
    feeders = set(np.concatenate([AB.indices[AB.indptr[i]:AB.indptr[i + 1]]
                                  for i in d.states]).tolist())
    assert feeders == set(d.fed_by.tolist())
    assert len(feeders) < d.states.size
    assert "dilation" in r.reasons()[-1]


def test_observability_is_dual():
    # the path is observable from its tail, not from its head
    p = directed_path(5)
    assert observability(p.with_outputs([4])).controllable
    r = observability(p.with_outputs([0]))
    assert not r.controllable
    assert r.to_dict()["observable"] is False


def test_empty_and_degenerate_systems():
    empty = StructuredSystem.from_edges([], [], 0)
    r = controllability(empty)
    assert r.controllable and r.controllable_dimension == 0
    iso = StructuredSystem.from_edges([], [], 3)
    r = controllability(iso)
    assert not r.controllable and r.fix.tolist() == [0, 1, 2]
    assert r.controllable_dimension == 0
    r = controllability(iso.with_inputs([0, 1, 2]))
    assert r.controllable


def test_report_to_dict_has_documented_keys():
    r = controllability(out_star(3).with_inputs([0]))
    d = r.to_dict()
    for key in ("controllable", "controllable_dimension", "inaccessible", "dilation", "fix"):
        assert key in d
    # the witness grows from one unmatched state, so it is short by exactly one; the
    # whole rank deficiency of [A B] (3 leaves fed by 1 hub, plus 1 input) is 2
    assert d["dilation"]["deficiency"] == 1
    assert d["n_states"] - d["structural_rank"] == 2
    assert d["fix"]["n_additional"] == 2


def test_reason_for_a_state_with_no_incoming_link():
    # two isolated states, one input on the first: the second is fed by nothing at all
    r = controllability(StructuredSystem.from_edges([], [], 2).with_inputs([0]))
    assert r.dilation is not None and r.dilation.fed_by.size == 0
    text = " ".join(r.reasons())
    assert "{x1} has no incoming link and no input, so it needs an input of its own" in text
    assert "fed by only 0" not in text


def test_inaccessible_groups_partition_and_are_reachable():
    """Groups partition the inaccessible states; every downstream state is reachable from
    its group's source component and from no input (networkx as the reference)."""
    import networkx as nx

    rng = np.random.default_rng(21)
    for _ in range(80):
        n = int(rng.integers(2, 25))
        edges = random_pattern(rng, n, 0.08)
        s = from_edges(edges, n) if len(edges) else StructuredSystem.from_edges([], [], n)
        inputs = sorted(set(rng.integers(0, n, int(rng.integers(0, 3))).tolist()))
        r = controllability(s.with_inputs(inputs) if inputs else s)
        g = nx.DiGraph()
        g.add_nodes_from(range(n))
        g.add_edges_from(map(tuple, edges.tolist()))
        reached = set(inputs).union(*[nx.descendants(g, i) for i in inputs]) if inputs else set()
        sccs = [set(c) for c in nx.strongly_connected_components(g)]
        assert set(r.inaccessible.tolist()) == set(range(n)) - reached
        listed = [i for grp in r.groups for i in grp.source.tolist() + grp.downstream.tolist()]
        assert sorted(listed) == r.inaccessible.tolist()  # a partition
        for grp in r.groups:
            src = set(grp.source.tolist())
            assert all(set(g.predecessors(v)) <= src for v in src)  # a source component
            assert src in sccs  # a whole strongly connected component
            reach = set().union(*[nx.descendants(g, v) for v in src])
            assert set(grp.downstream.tolist()) <= reach


def test_inaccessible_groups_same_from_subgraph_and_whole_graph_components():
    """The groups come out the same whether the components of the whole graph are at hand
    or only the inaccessible subgraph is decomposed (the accessible part is skipped)."""
    from netctl.structural._engine import accessible_states, structure_of
    from netctl.structural.controllability import _inaccessible_groups

    rng = np.random.default_rng(22)
    for _ in range(120):
        n = int(rng.integers(2, 40))
        edges = random_pattern(rng, n, float(rng.uniform(0.02, 0.15)))
        s = from_edges(edges, n) if len(edges) else StructuredSystem.from_edges([], [], n)
        s = s.with_inputs(sorted(set(rng.integers(0, n, int(rng.integers(1, 4))).tolist())))
        A, B = s.pattern("A"), s.pattern("B")
        acc = accessible_states(structure_of(A), B)
        if acc.all():
            continue
        part = _inaccessible_groups(structure_of(A), acc)
        st = structure_of(A)
        _ = st.n_scc  # the whole graph's components first
        whole = _inaccessible_groups(st, acc)
        assert [(g.source.tolist(), g.downstream.tolist()) for g in part] == \
            [(g.source.tolist(), g.downstream.tolist()) for g in whole]


def test_stacked_pattern_equals_scipy_hstack():
    """[A B] index arrays built row by row equal scipy.sparse.hstack's (sorted), for
    canonical inputs (fast path) and for unsorted ones (scipy path)."""
    import scipy.sparse as sp

    from netctl.structural._engine import stack_AB

    rng = np.random.default_rng(41)
    for trial in range(20):
        n, m = int(rng.integers(1, 60)), int(rng.integers(1, 8))
        A = sp.random_array((n, n), density=float(rng.uniform(0, 0.3)), rng=rng, format="csr")
        B = sp.random_array((n, m), density=float(rng.uniform(0, 0.5)), rng=rng, format="csr")
        if trial % 2:  # shuffle the column order inside rows: not sorted any more
            for M in (A, B):
                for r in range(n):
                    seg = slice(M.indptr[r], M.indptr[r + 1])
                    M.indices[seg] = rng.permutation(M.indices[seg])
                M.has_sorted_indices = False
        ref = sp.hstack([A, B], format="csr")
        ref.sort_indices()
        ptr, ind, n_cols = stack_AB(A, B)
        assert n_cols == n + m
        assert np.array_equal(ptr, ref.indptr) and np.array_equal(ind, ref.indices)


def _cause_counts(lines: list[str]) -> tuple[int, int]:
    import re

    comps = dil = 0
    for line in lines:
        if m := re.match(r"(\d+) (source|sink) components? no (input|output)", line):
            comps = int(m.group(1))
        elif m := re.match(r"(\d+) dilations? \(", line):
            dil = int(m.group(1))
        else:
            raise AssertionError(f"unexpected cause line {line!r}")
    return comps, dil


def test_causes_count_every_cause_against_networkx():
    """The grouped cause lines count every unreached source component and every dilation.

    Independent recomputation with networkx: source components of the condensation that
    no input reaches, and the deficiency ``n - maximum matching`` of the bipartite graph of
    ``[A B]`` (Hopcroft–Karp); Lin 1974: the two causes of uncontrollability.
    """
    import networkx as nx

    rng = np.random.default_rng(25)
    seen_both = 0
    for _ in range(200):
        n = int(rng.integers(1, 20))
        edges = random_pattern(rng, n, float(rng.uniform(0.03, 0.3)),
                               loops=bool(rng.random() < 0.3))
        s = from_edges(edges, n) if len(edges) else StructuredSystem.from_edges([], [], n)
        inputs = sorted(set(rng.integers(0, n, int(rng.integers(0, 4))).tolist()))
        r = controllability(s.with_inputs(inputs) if inputs else s)
        g = nx.DiGraph()
        g.add_nodes_from(range(n))
        g.add_edges_from(map(tuple, edges.tolist()))
        cond = nx.condensation(g)
        reached = set(inputs).union(*[nx.descendants(g, i) for i in inputs]) if inputs else set()
        unreached_sources = [c for c in cond.nodes if cond.in_degree(c) == 0
                             and not cond.nodes[c]["members"] & reached]
        bip = nx.Graph()
        rows = [("r", v) for v in range(n)]
        bip.add_nodes_from(rows)
        bip.add_edges_from((("r", v), ("c", u)) for u, v in edges.tolist())
        bip.add_edges_from((("r", v), ("b", k)) for k, v in enumerate(inputs))
        matched = len(nx.bipartite.hopcroft_karp_matching(bip, top_nodes=rows)) // 2
        comps, dil = _cause_counts(r.causes())
        assert comps == len(unreached_sources), (edges.tolist(), inputs)
        assert dil == n - matched, (edges.tolist(), inputs)
        assert (comps + dil == 0) == r.controllable
        seen_both += comps > 0 and dil > 0
    assert seen_both >= 10  # both causes together, not only one at a time


def test_causes_truncate_names_with_a_count():
    # 12 isolated states, one input: 11 unreached source components, 11 dilations
    s = StructuredSystem.from_edges([], [], 12).with_inputs([0])
    lines = controllability(s, dimension=False).causes(limit=4)
    assert lines[0].startswith("11 source components no input reaches (x1, x2, x3, x4, ... "
                               "(7 more))")
    assert lines[1].startswith("11 dilations (structural rank of [A B] 1 < 12;")
    o = observability(s.with_outputs([0]), dimension=False).causes()
    assert o[0].startswith("11 sink components no output sees")
