"""Small edge lists read in plain Python give exactly what the compiled scanner gives.

``netctl.io._edgesmall`` reads small well-formed files without numba; on anything else it
hands over to the scanner. The scanner (``netctl.io._edgescan``, itself checked against an
independent reference parser and Python's ``float`` in ``test_edgelist.py``) is the
reference here: random files, both readers, every field of the result compared, weights
bit for bit.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from netctl.io import _edgesmall
from netctl.io.edgelist import _INT, _is_header, read_edge_arrays

_names = st.one_of(
    st.integers(-30, 30).map(str),
    st.sampled_from(["a", "b", "pump_2", "Ω", "007", "-0", "+3", "1e3",
                     "123456789012345678901", "x.y", "12345678901234567890"]),
)
_weights = st.one_of(
    st.floats(allow_nan=False, allow_infinity=False).map(repr),
    st.sampled_from(["0", "0.0", "-0", "1e-3", ".5", "5.", "+2", "1_0", "nan", "inf",
                     "abc", "1e400", "0x10"]),
)
_line = st.one_of(
    st.tuples(_names, _names).map(" ".join),
    st.tuples(_names, _names, _weights).map(lambda t: ",".join(t)),
    _names,
    st.sampled_from(["", "# a comment", "  ", "a b c d", "source,target", "from to weight",
                     "a\tb # note", "\r", "a;b;;", "x y z w v",
                     "source target weight extra", "u,v,0.0", "u,u,1", "from,to,w",
                     "source target 0.5", "From To", "c,", "d;;", "\te", "f\t # x",
                     "g, ,", "h ,"]),
)


def _scanner(path):
    """The compiled scanner alone (a chunk size other than the default skips the small
    path); its warning about lines of one name beside a separator is compared as data."""
    import warnings

    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", ".*holds one name and a separator")
        return read_edge_arrays(path, chunk_bytes=(1 << 24) - 1)


def _same(a, b):
    assert a.names == b.names
    assert a.sources.tolist() == b.sources.tolist()
    assert a.targets.tolist() == b.targets.tolist()
    assert (a.weights is None) == (b.weights is None)
    if a.weights is not None:
        assert a.weights.tobytes() == b.weights.tobytes()
    assert a.n_lines == b.n_lines
    assert a.first_zero_line == b.first_zero_line
    assert a.lone_separated == b.lone_separated  # count, first line, its text
    assert a.header == b.header


@settings(max_examples=400, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(lines=st.lists(_line, max_size=25), end=st.sampled_from(["", "\n", "\r\n"]),
       bom=st.booleans())
def test_small_path_equals_scanner(tmp_path, lines, end, bom):
    text = "\n".join(lines) + end
    p = tmp_path / "net.txt"
    p.write_bytes((b"\xef\xbb\xbf" if bom else b"") + text.encode("utf-8"))
    small = _edgesmall.read_small(p, _is_header, _INT)
    try:
        ref = _scanner(p)
    except Exception as exc:  # the scanner reports a problem: the small path must defer
        assert small is None, (text, exc)
        return
    if small is not None:
        _same(small, ref)


@pytest.mark.parametrize("text", ["a b\nb c\n", "1 2 0.5\n2 3 1e-3\n", "# x\nsource target\n"
                                  "3 1\n1 2\n7\n", "a b 0\nb c 2\n",
                                  "a b\n\te\nf\t # x\ng;\n"])
def test_small_path_taken_on_plain_files(tmp_path, text):
    import warnings

    p = tmp_path / "net.txt"
    p.write_text(text)
    small = _edgesmall.read_small(p, _is_header, _INT)
    assert small is not None
    _same(small, _scanner(p))
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", ".*holds one name and a separator")
        _same(read_edge_arrays(p), _scanner(p))


@pytest.mark.parametrize("data", [b"a b\nb c d e\n", b"a b 1\nb c\n", b"a b nan\n",
                                  b"a\x00b\n", b"\xff\xfea", b"a \xe9\n", b""])
def test_small_path_defers_on_anything_to_report(tmp_path, data):
    p = tmp_path / "net.txt"
    p.write_bytes(data)
    assert _edgesmall.read_small(p, _is_header, _INT) is None


def test_large_files_go_to_the_scanner(tmp_path):
    p = tmp_path / "net.txt"
    p.write_text("".join(f"{i} {i + 1}\n" for i in range(_edgesmall.SMALL_BYTES // 4)))
    assert _edgesmall.read_small(p, _is_header, _INT) is None
    e = read_edge_arrays(p)
    assert e.sources.size == _edgesmall.SMALL_BYTES // 4
    assert np.array_equal(e.targets - e.sources, np.ones(e.sources.size, np.int64))
