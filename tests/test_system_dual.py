"""The dual system: assembled without a second validation pass, identical in every field
to what the validating constructor builds, and an involution."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
import scipy.sparse as sp

import netctl.system as system_module
from netctl import InvalidSystemError, StructuredSystem


def _random_system(rng: np.random.Generator) -> StructuredSystem:
    n = int(rng.integers(1, 9))
    m, p, q, r = (int(rng.integers(0, 4)) for _ in range(4))
    density = float(rng.uniform(0.0, 0.6))

    def pattern(rows: int, cols: int) -> np.ndarray:
        M = (rng.random((rows, cols)) < density) * rng.integers(1, 5, (rows, cols))
        return M.astype(float)

    nodes = {"x": rng.random(n), "actuator": rng.random(n) < 0.5,
             "station": np.array([f"st{i % 3}" for i in range(n)], dtype=object)}
    return StructuredSystem(
        A=pattern(n, n), B=pattern(n, m), C=pattern(p, n),
        state_names=[f"s{i}" for i in range(n)], input_names=[f"u{k}" for k in range(m)],
        output_names=[f"y{k}" for k in range(p)], nodes=nodes,
        weighted=bool(rng.integers(0, 2)), model=str(rng.choice(["given", "self-loops"])),
        E=pattern(n, q), H=pattern(r, n), disturbance_names=[f"w{k}" for k in range(q)],
        regulated_names=[f"z{k}" for k in range(r)], elements=None)


def _assert_identical(a: StructuredSystem, b: StructuredSystem) -> None:
    """Every dataclass field equal, matrices in the same stored form (dtypes, sorted,
    read-only), node tables equal column by column."""
    for f in dataclasses.fields(StructuredSystem):
        x, y = getattr(a, f.name), getattr(b, f.name)
        if f.name == "_index":
            continue
        if f.name in ("A", "B", "C", "E", "H"):
            assert x.shape == y.shape, f.name
            for part in ("data", "indices", "indptr"):
                u, v = getattr(x, part), getattr(y, part)
                assert u.dtype == v.dtype and np.array_equal(u, v), (f.name, part)
                assert not u.flags.writeable, (f.name, part)
            assert x.has_canonical_format and y.has_canonical_format, f.name
        elif f.name in ("nodes", "disturbance_nodes"):
            assert list(x) == list(y), f.name
            for k in x:
                assert x[k].dtype == y[k].dtype and x[k].shape == y[k].shape, (f.name, k)
                if x[k].dtype.kind == "f":
                    assert np.array_equal(x[k], y[k], equal_nan=True), (f.name, k)
                else:
                    assert list(x[k]) == list(y[k]), (f.name, k)
                assert not x[k].flags.writeable, (f.name, k)
        elif f.name == "elements":
            assert x is y
        else:
            assert type(x) is type(y) and tuple(x) == tuple(y) if isinstance(x, tuple) \
                else x == y, f.name


def _validated_dual(s: StructuredSystem) -> StructuredSystem:
    """The dual as the validating constructor builds it (the path before the trusted one)."""
    return StructuredSystem(A=s.A.T.tocsr(), B=s.C.T.tocsr(), C=s.B.T.tocsr(),
                            state_names=s.state_names, input_names=s.output_names,
                            output_names=s.input_names, nodes=s.nodes, weighted=s.weighted,
                            model=s.model, E=s.H.T.tocsr(), H=s.E.T.tocsr(),
                            disturbance_names=s.regulated_names,
                            regulated_names=s.disturbance_names, elements=s.elements)


def test_dual_equals_the_validated_dual_and_numpy_transposes_on_random_systems():
    rng = np.random.default_rng(20261204)
    for _ in range(300):
        s = _random_system(rng)
        d = s.dual()
        # reference: numpy's dense transpose of every part
        assert np.array_equal(d.A.toarray(), s.A.toarray().T)
        assert np.array_equal(d.B.toarray(), s.C.toarray().T)
        assert np.array_equal(d.C.toarray(), s.B.toarray().T)
        assert np.array_equal(d.E.toarray(), s.H.toarray().T)
        assert np.array_equal(d.H.toarray(), s.E.toarray().T)
        _assert_identical(d, _validated_dual(s))
        _assert_identical(d.dual(), s)


def test_dual_of_dual_is_the_original_in_every_field():
    s = StructuredSystem.from_named_edges(
        ["a", "b", "c", "c"], ["b", "c", "a", "d"], weights=[2.0, 0.5, 1.5, 4.0],
        nodes={"x": [0.0, 1.0, np.nan, 2.0], "sensor": [True, False, True, True]},
    ).with_inputs(["a"]).with_outputs({"level": ["c", "d"]}).with_disturbances(
        {"rain": ["a", "d"]}).with_regulated({"quality": ["d"]})
    _assert_identical(s.dual().dual(), s)
    assert s.dual().dual().same_as(s)
    assert s.dual().dual().index_of(["d", "a"]).tolist() == [3, 0]


def test_dual_does_not_validate_again(monkeypatch):
    s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"]).with_inputs(
        ["a"]).with_outputs(["c"]).with_regulated(["b"])

    def refuse(*args, **kwargs):
        raise AssertionError("dual() ran the constructor's validation")

    monkeypatch.setattr(StructuredSystem, "__post_init__", refuse)
    for name in ("canonical_csr", "_names", "_table", "_share_canonical"):
        if hasattr(system_module, name):
            monkeypatch.setattr(system_module, name, refuse)
    d = s.dual()
    assert d.state_names == s.state_names and d.input_names == ("y:c",)
    assert d.dual().A.nnz == s.A.nnz


def test_dual_keeps_the_one_check_that_can_newly_fail():
    # a regulated output may share a state's name, but as the dual's disturbance it may not
    s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"]).with_regulated(
        {"b": ["c"]})
    with pytest.raises(InvalidSystemError, match="'b' is both a state and a disturbance"):
        s.dual()


def test_dual_of_large_empty_parts_shares_the_empty_pattern():
    n = 5000
    s = StructuredSystem.from_edges(np.arange(n - 1), np.arange(1, n), n)
    d = s.dual()
    assert d.B.shape == (n, 0) and d.C.shape == (0, n) and d.B.nnz == d.C.nnz == 0
    assert sp.isspmatrix_csr(d.A) or isinstance(d.A, sp.csr_array)
    assert d.A.indices.dtype == np.int64 and d.A.indptr.dtype == np.int64


def test_with_outputs_keeps_the_disturbances_table():
    # with_outputs goes through the dual twice; nothing in a good system may be dropped
    # silently (project rule), so the disturbances' own node table must survive
    s = StructuredSystem.from_named_edges(["a", "b"], ["b", "c"])
    s = s.with_disturbances(["a"], names=["weather"], nodes={"x": [1.0], "kind": ["sun"]})
    t = s.with_outputs(["c"])
    assert t.output_names == ("y:c",)
    assert t.disturbance_names == ("weather",)
    assert list(t.disturbance_nodes["x"]) == [1.0]
    assert list(t.disturbance_nodes["kind"]) == ["sun"]
