"""Reading a large system description: the compiled TOML parser path against the
standard library's, the side file of a grid with disturbances, one batch of disturbance
marks, and the terms look-up that does not parse the file twice.

The reference for every parse is Python's own ``tomllib`` (the standard library's TOML
1.0 parser): the description read through rtoml must equal, part by part and column by
column, the one read through ``tomllib``.
"""

from __future__ import annotations

import numpy as np
import pytest

import netctl.io._spec_parts as parts
import netctl.io.system_spec as spec_mod
import netctl.io.system_writer as writer_mod
from netctl.errors import NetworkFileError
from netctl.io import read
from netctl.io.system_spec import declared_terms, read_spec, write_system

PLANT = """
[system]
name = "feeder test"
terms = "engineering"

[states]
a = { x = 1, bus = 1, part = "pos", y = 2.5, actuator = false, sensor = true }
b = { bus = "B2", part = "vel", x = 3.0, y = 4.0, self = -1.0, rated = 0.5 }
c = { flag = true, actuator_cost = 2 }
"load 1" = { disturbance = true, kind = "load" }
"load 2" = { disturbance = true }

[couplings]
links = [["a", "b", 2.0], ["b", "c", -1.5], ["c", "a", 0.5], ["load 1", "b", 1.0],
         ["load 2", "c", 3.0]]
"""


def _same(s, t):
    assert s.same_as(t)
    assert list(s.nodes) == list(t.nodes)  # column order too
    for k in s.nodes:
        assert s.nodes[k].dtype == t.nodes[k].dtype, k
        assert [repr(v) for v in s.nodes[k].tolist()] == \
            [repr(v) for v in t.nodes[k].tolist()], k
    assert list(s.disturbance_nodes) == list(t.disturbance_nodes)


def test_compiled_parser_gives_what_the_standard_library_gives(tmp_path, monkeypatch):
    pytest.importorskip("rtoml")
    p = tmp_path / "plant.toml"
    p.write_text(PLANT)
    fast = read_spec(p).system
    monkeypatch.setattr(parts, "_fast_loads", lambda text: None)  # tomllib only
    slow = read_spec(p).system
    _same(fast, slow)
    assert fast.disturbance_names == ("load 1", "load 2")
    assert fast.nodes["bus"].tolist() == [1, "B2", None]  # mixed types kept as they are
    assert fast.nodes["x"].tolist()[:2] == [1.0, 3.0]
    # columns in the order the file first names them (self is A's diagonal, not a column)
    assert list(fast.nodes) == ["x", "bus", "part", "y", "actuator", "sensor", "rated",
                                "flag", "actuator_cost", "kind"]
    assert fast.nodes["actuator"].tolist() == [False, True, True]  # not said: allowed
    assert fast.A.diagonal().tolist() == [0.0, -1.0, 0.0]


def test_bad_toml_keeps_line_and_column_with_the_compiled_parser(tmp_path):
    pytest.importorskip("rtoml")
    p = tmp_path / "bad.toml"
    p.write_text('[states]\na = {}\nb = { x = 1.0\n')
    with pytest.raises(NetworkFileError, match=r"bad\.toml:3: not valid TOML, column \d+"):
        read(p)


def test_side_file_keeps_disturbances_with_spaces_in_their_names(tmp_path, monkeypatch):
    # a grid's loads are disturbances named "load 0"...: the edge list beside a large
    # description holds state links only; the disturbances' links stay in the TOML
    monkeypatch.setattr(writer_mod, "INLINE_LINKS", 1)
    p = tmp_path / "plant.toml"
    p.write_text(PLANT)
    s = read(p)
    out = tmp_path / "copy.toml"
    write_system(s, out)
    assert (tmp_path / "copy.edges.csv").exists()
    assert "load" not in (tmp_path / "copy.edges.csv").read_text()
    t = read(out)
    assert t.disturbance_names == s.disturbance_names
    assert np.array_equal(t.E.toarray(), s.E.toarray())
    assert np.array_equal(t.A.toarray(), s.A.toarray())


def test_second_disturbance_refused_names_its_own_line(tmp_path):
    p = tmp_path / "bad.toml"
    p.write_text(PLANT.replace('["load 2", "c", 3.0]]', '["load 2", "c", 3.0], '
                               '["a", "load 2", 1.0]]'))
    with pytest.raises(NetworkFileError, match=r"bad\.toml:11: 'load 2' is marked as a "
                                               r"disturbance but has 1 incoming link"):
        read(p)


def test_terms_are_not_parsed_twice_but_a_changed_file_is(tmp_path, monkeypatch):
    p = tmp_path / "plant.toml"
    p.write_text(PLANT)
    read_spec(p)

    def refuse(path):
        raise AssertionError("parsed again")

    monkeypatch.setattr(spec_mod, "_Doc", refuse)
    assert declared_terms(p) == "engineering"
    monkeypatch.undo()
    import os
    st = os.stat(p)
    p.write_text(PLANT.replace('terms = "engineering"', 'terms = "network"    '))
    os.utime(p, ns=(st.st_atime_ns, st.st_mtime_ns + 10**9))
    assert declared_terms(p) == "network"
