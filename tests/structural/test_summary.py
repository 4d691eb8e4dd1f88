"""``summarize`` (``netctl inspect``) against independent computations on random graphs.

``summarize`` shares one transpose and one strongly-connected-component pass between
``A`` and its transpose and starts the dual completion from the transposed matching; each
count is checked here against a reference that does none of that: NetworkX's strongly
and weakly connected components and condensation, SciPy's maximum bipartite matching
(structural rank), and ``minimum_sensors`` (its own transpose and matching) for the
dedicated sensor count (duality: Lin 1974; Liu, Slotine & Barabási 2011).
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import scipy.sparse as sp
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.sparse.csgraph import maximum_bipartite_matching

from netctl import minimum_inputs, minimum_sensors, summarize
from netctl.system import StructuredSystem

graphs = st.integers(1, 30).flatmap(lambda n: st.tuples(
    st.just(n), st.sets(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)),
                        max_size=3 * n)))


@settings(max_examples=200, deadline=None)
@given(graphs)
def test_summary_against_references(g):
    n, edges = g
    edges = sorted(edges)
    s = StructuredSystem.from_edges([u for u, _ in edges], [v for _, v in edges], n)
    summ = summarize(s)
    ref = nx.DiGraph()
    ref.add_nodes_from(range(n))
    ref.add_edges_from(edges)
    cond = nx.condensation(ref)
    assert summ.n_strong_components == cond.number_of_nodes()
    assert summ.n_weak_components == nx.number_weakly_connected_components(ref)
    assert summ.n_source_components == sum(1 for c in cond if cond.in_degree(c) == 0)
    assert summ.n_sink_components == sum(1 for c in cond if cond.out_degree(c) == 0)
    rank = 0 if not edges else int((maximum_bipartite_matching(
        sp.csr_matrix(s.A), perm_type="column") >= 0).sum())
    assert summ.structural_rank == rank
    assert summ.n_dedicated_inputs == minimum_inputs(s, dedicated=True).n_inputs
    assert summ.n_dedicated_sensors == minimum_sensors(s, dedicated=True).n_inputs
    deg = {v: ref.in_degree(v) + ref.out_degree(v) - 2 * ref.has_edge(v, v) for v in ref}
    assert summ.n_isolated == sum(1 for v in deg if deg[v] == 0)
