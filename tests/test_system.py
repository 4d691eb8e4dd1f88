"""StructuredSystem: builders, canonical form, validation messages, conversions."""

from __future__ import annotations

import igraph as ig
import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp

from netctl import InvalidSystemError, StructuredSystem, UnknownNameError


def test_orientation_edge_u_to_v_sets_A_v_u():
    s = StructuredSystem.from_edges([0], [2], 3)
    assert s.A[2, 0] == 1.0 and s.A[0, 2] == 0.0
    src, dst = s.edges()
    assert src.tolist() == [0] and dst.tolist() == [2]


def test_canonical_pattern_drops_explicit_zeros_and_merges_duplicates():
    A = sp.csr_array((np.array([1.0, 0.0, 2.0]), np.array([0, 1, 1]), np.array([0, 2, 3])),
                     shape=(2, 2))
    s = StructuredSystem.from_matrices(A)
    assert s.n_links == 2  # the explicit zero is not a link
    with pytest.warns(UserWarning, match="1 duplicate link was merged"):
        s2 = StructuredSystem.from_edges([0, 0, 1], [1, 1, 0], 2)
    assert s2.n_links == 2
    with pytest.warns(UserWarning, match=r"weights summed"):
        s3 = StructuredSystem.from_edges([0, 0], [1, 1], 2, weights=[1.5, 2.0])
    assert s3.A[1, 0] == 3.5 and s3.weighted


@pytest.mark.parametrize("kwargs, message", [
    (dict(sources=[0, -1], targets=[1, 0], n_states=2), r"index -1, outside 0\.\.1"),
    (dict(sources=[0, 5], targets=[1, 0], n_states=3), r"index 5, outside 0\.\.2"),
    (dict(sources=[0, 1], targets=[1], n_states=2), "equal lengths, found 2 and 1"),
    (dict(sources=[0], targets=[1], n_states=2, weights=[np.nan]), "NaN or infinite"),
    (dict(sources=["a"], targets=["b"], n_states=2), "use StructuredSystem.from_named_edges for string names"),
    (dict(sources=[0], targets=[1], n_states=2, state_names=["a", "a"]), "'a' is used twice"),
])
def test_validation_messages(kwargs, message):
    with pytest.raises(InvalidSystemError, match=message):
        StructuredSystem.from_edges(**kwargs)


def test_shape_mismatch_message():
    with pytest.raises(InvalidSystemError, match=r"B must have shape \(3, 1\), found \(2, 1\)"):
        StructuredSystem(A=np.eye(3), B=np.ones((2, 1)), C=None, state_names=(),
                         input_names=("u",), output_names=())
    with pytest.raises(InvalidSystemError, match="must be square"):
        StructuredSystem.from_matrices(np.ones((2, 3)))


def test_unknown_name_suggests_close_matches():
    s = StructuredSystem.from_edges([0], [1], 2, state_names=["pump_speed", "tank_level"])
    with pytest.raises(UnknownNameError, match=r"unknown state name 'pump_sped'.*Did you mean 'pump_speed'"):
        s.with_inputs(["pump_sped"])
    with pytest.raises(KeyError):  # also a KeyError for Python users
        s.index_of(["nope"])


def test_frozen_and_read_only():
    s = StructuredSystem.from_edges([0], [1], 2)
    with pytest.raises(Exception):
        s.model = "x"  # type: ignore[misc]
    with pytest.raises(ValueError):
        s.A.data[0] = 5.0


def test_with_inputs_forms_and_dual():
    s = StructuredSystem.from_edges([0, 1], [1, 2], 3, state_names=["a", "b", "c"])
    s1 = s.with_inputs(["a", "c"])
    assert s1.B.shape == (3, 2) and s1.driven_states().tolist() == [0, 2]
    assert s1.input_names == ("u:a", "u:c")
    s2 = s.with_inputs({"valve": ["a", "b"]})
    assert s2.B.shape == (3, 1) and s2.driven_states().tolist() == [0, 1]
    s3 = s2.with_outputs(["c"])
    d = s3.dual()
    assert d.n_inputs == 1 and d.n_outputs == 1
    assert d.A[0, 1] == 1.0  # reversed edge b -> a
    assert d.driven_states().tolist() == [2] and d.measured_states().tolist() == [0, 1]
    assert d.dual().A.nnz == s3.A.nnz


def test_with_outputs_names_sensors_y_for_every_form():
    # a 1-D index array (what the CLI's name parser returns) is a list of states, as in
    # with_inputs: dedicated sensors named y:<state>, not u:<state>; a matrix gets y<j>
    s = StructuredSystem.from_edges([0, 1], [1, 2], 3, state_names=["a", "b", "c"])
    assert s.with_outputs(np.array([2, 0])).output_names == ("y:c", "y:a")
    assert s.with_outputs(np.array([2, 0])).measured_states().tolist() == [0, 2]
    assert s.with_outputs(["c"]).output_names == ("y:c",)
    m = s.with_outputs(np.array([[0.0, 0.0, 1.0]]))
    assert m.output_names == ("y0",) and m.C.toarray().tolist() == [[0.0, 0.0, 1.0]]
    assert s.with_outputs(np.array([[0.0, 0.0, 1.0]]), names=["q"]).output_names == ("q",)
    assert s.with_inputs(np.array([2])).input_names == ("u:c",)


def test_from_networkx_undirected_means_both_directions_and_keeps_attributes():
    g = nx.Graph()
    g.add_node("p", x=1.0, y=2.0, actuator=False, zone="north")
    g.add_node("q", x=3.0, y=4.0)
    g.add_edge("p", "q", weight=0.5)
    g.add_edge("q", "q", weight=2.0)  # self-loop kept once
    s = StructuredSystem.from_networkx(g, weight="weight")
    assert s.n_links == 3 and s.n_self_loops == 1
    assert s.A[1, 0] == 0.5 and s.A[0, 1] == 0.5
    assert s.nodes["x"].tolist() == [1.0, 3.0]
    assert s.nodes["actuator"].tolist() == [False, True]
    assert s.nodes["zone"].tolist() == ["north", None]
    back = s.to_networkx()
    assert back.nodes["p"]["zone"] == "north" and back["p"]["q"]["weight"] == 0.5


def test_from_igraph_matches_networkx():
    g = ig.Graph(directed=True)
    g.add_vertices(3)
    g.vs["name"] = ["a", "b", "c"]
    g.add_edges([(0, 1), (1, 2), (2, 2)])
    s = StructuredSystem.from_igraph(g)
    assert s.state_names == ("a", "b", "c")
    assert s.n_links == 3 and s.A[2, 1] == 1.0 and s.n_self_loops == 1
    u = StructuredSystem.from_igraph(ig.Graph([(0, 1)]))
    assert u.n_links == 2


def test_self_loops_model_keeps_given_diagonal_weights():
    s = StructuredSystem.from_edges([0, 1], [0, 0], 2, weights=[-3.0, 1.0])
    t = s.with_self_loops()
    assert t.A[0, 0] == -3.0 and t.A[1, 1] == 1.0 and t.n_self_loops == 2


@pytest.mark.parametrize("seed", range(40))
def test_self_loops_model_is_scipys_sum_with_an_identity_on_the_empty_diagonal(seed):
    """with_self_loops builds its pattern from the stored arrays (no scipy on small
    systems): the same canonical arrays as scipy.sparse's A + diag(1 where A_ii = 0),
    the reference library, on random weighted and 0/1 patterns (loops, none, all)."""
    rng = np.random.default_rng(seed)
    n = int(rng.integers(1, 30))
    A = rng.standard_normal((n, n)) * (rng.random((n, n)) < rng.uniform(0.05, 0.5))
    if seed % 3 == 0:
        A = (A != 0).astype(float)
    if seed % 5 == 0:
        np.fill_diagonal(A, 2.0)
    s = StructuredSystem.from_matrices(A, np.eye(n)[:, :1])
    t = s.with_self_loops()
    ref = sp.csr_array(A) + sp.dia_array((np.where(np.diag(A) == 0, 1.0, 0.0)[None, :], [0]),
                                         shape=(n, n))
    ref = sp.csr_array(ref)
    ref.sort_indices()
    got = t.pattern("A")
    assert np.array_equal(got.indptr, ref.indptr)
    assert np.array_equal(got.indices, ref.indices)
    assert np.array_equal(got.data, ref.data)
    assert t.weighted == s.weighted and t.n_self_loops == n


def test_from_named_edges_orders_by_first_appearance():
    s = StructuredSystem.from_named_edges(["pump", "tank"], ["tank", "valve"], states=["spare"],
                                          inputs=["pump"])
    assert s.state_names == ("spare", "pump", "tank", "valve")
    assert s.A[2, 1] == 1.0 and s.A[3, 2] == 1.0 and s.n_links == 2
    assert s.driven_states().tolist() == [1]


def test_index_of_few_names_in_a_large_pool_matches_the_whole_index():
    """A few names among many are found by one pass over the pool (no whole index kept);
    the positions equal Python's ``list.index`` on the same names, and unknown names
    and integer positions behave as with the whole index."""
    import netctl._parts as parts

    rng = np.random.default_rng(5)
    n = parts.LARGE_POOL + 17
    names = [f"v{k}" for k in rng.permutation(n)]
    s = StructuredSystem.from_edges(np.arange(n - 1), np.arange(1, n), n, state_names=names)
    asked = [names[int(k)] for k in rng.integers(0, n, 40)]
    got = s.index_of(asked)
    assert got.tolist() == [names.index(a) for a in asked]
    assert "state" not in s._index  # nothing kept: the next lookup passes again
    assert s.index_of(iter(asked[:3])).tolist() == got[:3].tolist()
    assert s.index_of([0, n - 1]).tolist() == [0, n - 1]  # integers as positions
    with pytest.raises(UnknownNameError):
        s.index_of(["no-such-state"])
    many = [names[int(k)] for k in rng.integers(0, n, parts.FEW_NAMES + 1)]
    assert s.index_of(many).tolist() == [names.index(a) for a in many]
    assert "state" in s._index  # the whole index, kept


def test_duplicate_link_warning_points_at_the_callers_line():
    # The builder bodies live in netctl/_construct.py; the warning must still name the
    # line that called StructuredSystem.from_edges (Python's warnings.warn ``stacklevel``;
    # common practice, no source).
    import warnings

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        StructuredSystem.from_edges([0, 0], [1, 1], 2)
    assert len(caught) == 1 and "duplicate link" in str(caught[0].message)
    assert caught[0].filename == __file__


def test_builders_keep_their_signatures_and_docstrings():
    # The public builders are thin class methods over netctl/_construct.py: their
    # parameters (names, order, keyword-only) and numpydoc docstrings are the API.
    import inspect

    expected = {
        "from_edges": "(sources, targets, n_states=None, *, weights=None, state_names=None, "
                      "inputs=None, outputs=None, nodes=None, model='given')",
        "from_named_edges": "(sources, targets, *, weights=None, states=None, inputs=None, "
                            "outputs=None, nodes=None, model='given')",
        "from_matrices": "(A, B=None, C=None, *, state_names=None, input_names=None, "
                         "output_names=None, nodes=None, weighted=True, model='given')",
        "from_networkx": "(graph, *, weight=None, inputs=None, model='given')",
        "from_igraph": "(graph, *, weight=None, inputs=None, model='given')",
    }
    for name, sig in expected.items():
        method = getattr(StructuredSystem, name)
        bare = inspect.signature(method).replace(return_annotation=inspect.Signature.empty)
        bare = bare.replace(parameters=[p.replace(annotation=inspect.Parameter.empty)
                                        for p in bare.parameters.values()])
        assert str(bare) == sig, name
        assert method.__doc__ and method.__doc__.startswith("Build a system from "), name
    assert "Raises\n" in StructuredSystem.from_edges.__doc__
