"""Kernels give the same answers run as Python (small inputs) and compiled (large ones).

``netctl._jit`` runs a kernel's Python body below a size threshold and numba's compiled
body above it. Both are checked here on random graphs against outside references:
maximum matching size against SciPy's ``maximum_bipartite_matching`` (Hopcroft–Karp),
strongly connected components against NetworkX, reachability against SciPy's
``breadth_first_order``, and whole analyses (``minimum_inputs``, ``controllability``)
between the two paths (Liu, Slotine & Barabási 2011, Nature 473:167: N_D = max(N - |M*|, 1)).
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import scipy.sparse as sp
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.sparse.csgraph import breadth_first_order, maximum_bipartite_matching

from netctl import _jit
from netctl.graph import (
    is_valid_matching,
    maximum_matching,
    reachable_from,
    strongly_connected_components,
)
from netctl.graph.components import weak_component_count, weak_component_labels
from netctl.structural import controllability, minimum_inputs
from netctl.system import StructuredSystem

graphs = st.integers(1, 40).flatmap(lambda n: st.tuples(
    st.just(n), st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)),
                         max_size=4 * n)))


def _csr(n, edges):
    r = np.array([e[0] for e in edges], np.int64)
    c = np.array([e[1] for e in edges], np.int64)
    m = sp.csr_array((np.ones(r.size), (r, c)), shape=(n, n))
    m.sum_duplicates()
    m.sort_indices()
    return m


def _both(fn):
    with _jit.always_python():
        py = fn()
    with _jit.always_compiled():
        co = fn()
    return py, co


@settings(max_examples=150, deadline=None)
@given(graphs)
def test_matching_python_and_compiled_are_maximum(g):
    n, edges = g
    m = _csr(n, edges)
    ref = 0 if m.nnz == 0 else int(
        (maximum_bipartite_matching(sp.csr_matrix(m), perm_type="column") >= 0).sum())
    for rm, cm in _both(lambda: maximum_matching(m.indptr, m.indices, n)):
        assert is_valid_matching(m.indptr, m.indices, rm, cm)
        assert int((rm >= 0).sum()) == ref


@settings(max_examples=150, deadline=None)
@given(graphs)
def test_components_and_reach_python_and_compiled_agree_with_references(g):
    n, edges = g
    m = _csr(n, edges)
    ref = nx.DiGraph()
    ref.add_nodes_from(range(n))
    ref.add_edges_from(edges)
    want = sorted(sorted(c) for c in nx.strongly_connected_components(ref))
    reach_ref = np.zeros(n, bool)
    reach_ref[breadth_first_order(sp.csr_matrix(m), 0, directed=True,
                                  return_predecessors=False)] = True
    for (k, labels), reach in zip(
            _both(lambda: strongly_connected_components(m.indptr, m.indices)),
            _both(lambda: reachable_from(m.indptr, m.indices, np.array([0])))):
        got = sorted(sorted(np.flatnonzero(labels == i).tolist()) for i in range(k))
        assert got == want
        assert np.array_equal(reach, reach_ref)
    for k_weak in _both(lambda: weak_component_count(m.indptr, m.indices)):
        assert k_weak == nx.number_weakly_connected_components(ref)
    # the labels, numbered by smallest vertex, against NetworkX's weak components
    weak = sorted(sorted(c) for c in nx.weakly_connected_components(ref))
    for k, labels in _both(lambda: weak_component_labels(m.indptr, m.indices)):
        assert k == len(weak)
        assert [sorted(np.flatnonzero(labels == i).tolist()) for i in range(k)] == weak


@settings(max_examples=100, deadline=None)
@given(graphs)
def test_analyses_same_on_both_paths(g):
    n, edges = g
    edges = sorted(set(edges))  # duplicates would be merged with a warning
    system = StructuredSystem.from_edges([e[0] for e in edges], [e[1] for e in edges], n)
    a, b = _both(lambda: minimum_inputs(system))
    assert a.to_dict() == b.to_dict()
    driven = system.with_inputs(a.drivers.tolist() or [0])
    c, d = _both(lambda: controllability(driven))
    assert c.to_dict() == d.to_dict()


_PROBE = """
import sys
import numpy as np
from netctl import _jit

def total(a):
    s = 0.0
    for i in range(a.size):
        s += a[i]
    return s

k = _jit.Kernel(total, {"cache": False}, True)
_jit.THRESHOLD, _jit.PYTHON_BUDGET = 10, 30
out = [float(k(np.ones(3))), k.dispatcher is None, "numba" in sys.modules]
out += [k(np.ones(50)), k.dispatcher is not None, len(k.dispatcher.overloads)]
k2 = _jit.Kernel(total, {"cache": False}, True)
out += [k2(np.ones(3)), k2.dispatcher is not None]  # numba loaded: compiled from now on
print(out)
"""

_BUDGET = """
import sys
import numpy as np
from netctl import _jit

def total(a):
    s = 0.0
    for i in range(a.size):
        s += a[i]
    return s

k = _jit.Kernel(total, {"cache": False}, True)
_jit.THRESHOLD, _jit.PYTHON_BUDGET = 10, 30
seen = []
for _ in range(12):  # 12 calls of 5 elements: the budget of 30 runs out after 6
    k(np.ones(5))
    seen.append(k.dispatcher is not None)
print(seen)
"""


def _run(code):
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                       cwd=root, timeout=300, env={"PYTHONPATH": str(root),
                                                   "PATH": "/usr/bin:/bin"})
    assert r.returncode == 0, r.stderr
    return r.stdout.strip().splitlines()[-1]


def test_small_inputs_run_python_large_compiled_then_all_compiled():
    """Fresh interpreter: below the threshold the Python body runs and numba is not
    imported; a large input compiles; after that every kernel runs compiled."""
    assert _run(_PROBE) == "[3.0, True, False, 50.0, True, 1, 3.0, True]"


def test_many_small_calls_switch_to_compiled():
    assert _run(_BUDGET) == str([False] * 6 + [True] * 6)
