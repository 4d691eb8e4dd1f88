"""Edge-list reader and writer.

The compiled streaming reader is checked against a plain-Python reference parser written
here (brute force, one line at a time) on random files, and against Python's own
``float`` for every weight (the scanner's exact fast path must agree bit for bit).
"""

from __future__ import annotations

import gzip
import re

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from netctl.errors import MissingFileError, NetworkFileError
from netctl.io.edgelist import read_edge_arrays, read_edgelist, write_edgelist
from netctl.system import StructuredSystem


def write(tmp_path, text, name="net.csv", data=None):
    p = tmp_path / name
    if data is not None:
        p.write_bytes(data)
    else:
        p.write_text(text, encoding="utf-8")
    return p


# ---------------------------------------------------------------- reference parser
_SEP = re.compile(r"[,\t; \r\v\f]+")


def reference_parse(text):
    """Line-by-line pure-Python reading of the documented format (independent code)."""
    edges, weights, order = [], [], {}
    first = True
    for raw in text.split("\n"):
        f = [x for x in _SEP.split(raw.split("#", 1)[0].strip()) if x]
        if not f:
            continue
        if first:
            first = False
            if len(f) >= 2 and f[0].lower() in ("source", "from") and f[1].lower() in (
                    "target", "to"):
                continue
        for x in f[:2]:
            order.setdefault(x, len(order))
        if len(f) >= 2:
            edges.append((f[0], f[1]))
            if len(f) == 3:
                weights.append(float(f[2]))
    names = list(order)
    if all(re.fullmatch(r"-?(0|[1-9][0-9]*)", x) for x in names):
        names.sort(key=int)
    return names, edges, weights


def as_named(e):
    n = e.names
    return [(n[a], n[b]) for a, b in zip(e.sources.tolist(), e.targets.tolist())]


# ---------------------------------------------------------------- basics
def test_header_comments_weights_isolated(tmp_path):
    p = write(tmp_path, "# an invented network\nsource,target,weight\n1,2,0.5\n"
              "2;3;2   # inline comment\n3\t1\t-1e-3\n\n9\n")
    e = read_edge_arrays(p)
    assert e.names == ("1", "2", "3", "9")
    assert as_named(e) == [("1", "2"), ("2", "3"), ("3", "1")]
    assert e.weights.tolist() == [0.5, 2.0, -0.001]
    assert e.n_lines == 7


def test_string_names_first_appearance_order(tmp_path):
    p = write(tmp_path, "pump b\nb c\nlonely\nc pump\nzz_last_but_longer_than_8_bytes pump\n")
    e = read_edge_arrays(p)
    assert e.names == ("pump", "b", "c", "lonely", "zz_last_but_longer_than_8_bytes")
    assert as_named(e)[-1] == ("zz_last_but_longer_than_8_bytes", "pump")


def test_integer_names_with_leading_zeros_are_names_not_numbers(tmp_path):
    # "007" and "7" are different names; all-integer names still sort numerically
    p = write(tmp_path, "007 7\n7 10\n")
    e = read_edge_arrays(p)
    assert e.names == ("007", "7", "10")
    assert as_named(e) == [("007", "7"), ("7", "10")]


def test_crlf_bom_and_gzip(tmp_path):
    text = "\ufeffa,b\r\nb,c\r\n"
    plain = read_edge_arrays(write(tmp_path, text, "x.csv"))
    gz = read_edge_arrays(write(tmp_path, "", "x.csv.gz", gzip.compress(text.encode())))
    assert plain.names == gz.names == ("a", "b", "c")
    assert as_named(plain) == as_named(gz) == [("a", "b"), ("b", "c")]


def test_no_trailing_newline_and_negative_integers(tmp_path):
    e = read_edge_arrays(write(tmp_path, "-3 0\n0 5"))
    assert e.names == ("-3", "0", "5")
    assert as_named(e) == [("-3", "0"), ("0", "5")]


def test_late_string_name_switches_mode(tmp_path):
    lines = [f"{i} {i + 1}" for i in range(3000)] + ["x 0"]
    e = read_edge_arrays(write(tmp_path, "\n".join(lines) + "\n"), chunk_bytes=512)
    names, edges, _ = reference_parse("\n".join(lines))
    assert list(e.names) == names
    assert as_named(e) == edges


@pytest.mark.parametrize("chunk", [1, 5, 64, 1 << 20])
def test_chunk_size_does_not_change_the_result(tmp_path, chunk):
    rng = np.random.default_rng(3)
    lines = ["# header comment", "from to"]
    for _ in range(400):
        u, v = rng.integers(0, 60, 2)
        lines.append(f"n{u}\tn{v}" if rng.random() < 0.9 else f"n{u}")
    text = "\n".join(lines) + "\n"
    e = read_edge_arrays(write(tmp_path, text), chunk_bytes=chunk)
    names, edges, _ = reference_parse(text)
    assert list(e.names) == names
    assert as_named(e) == edges


_name = st.one_of(st.integers(-50, 500).map(str),
                  st.text("abcdefghijklmnopqrstuvwxyz_0123456789.-:é", min_size=1, max_size=14)
                  .filter(lambda s: s[0] != "#"))
_weight = st.one_of(st.floats(allow_nan=False, allow_infinity=False, width=64).map(repr),
                    st.decimals(allow_nan=False, allow_infinity=False, places=4).map(str),
                    st.integers(-10**6, 10**6).map(str),
                    st.floats(1e-30, 1e30).map(lambda x: f"{x:.6e}"))


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(edges=st.lists(st.tuples(_name, _name, _weight), min_size=1, max_size=40),
       sep=st.sampled_from([",", "\t", " ", ";", " , "]), chunk=st.sampled_from([3, 17, 4096]))
def test_matches_reference_parser(tmp_path, edges, sep, chunk):
    text = "".join(f"{u}{sep}{v}{sep}{w}\n" for u, v, w in edges)
    p = tmp_path / "h.csv"
    p.write_text(text, encoding="utf-8")
    e = read_edge_arrays(p, chunk_bytes=chunk)
    names, ref_edges, ref_w = reference_parse(text)
    assert list(e.names) == names
    assert as_named(e) == ref_edges
    # bit-for-bit equal to Python's correctly rounded float()
    assert e.weights.tobytes() == np.array(ref_w, dtype=np.float64).tobytes()


# ---------------------------------------------------------------- system building
def test_duplicates_merged_with_count(tmp_path):
    p = write(tmp_path, "a b 1\na b 2\nb c 1\na b 0.5\n")
    with pytest.warns(UserWarning, match=r"net\.csv:2: 2 duplicate links were merged "
                      r"\(weights summed\)"):
        s = read_edgelist(p)
    assert s.A[1, 0] == 3.5 and s.n_links == 2


def _first_repeat_by_hand(text: str) -> tuple[str, str, int, int] | None:
    """The earliest line whose (source, target) appeared on an earlier line, and the
    lines of both: a plain scan of the text with a dict, links of weight 0 skipped (they
    are not links)."""
    seen: dict[tuple[str, ...], int] = {}
    for n, line in enumerate(text.splitlines(), start=1):
        cells = line.split()
        if len(cells) > 2 and float(cells[2]) == 0:
            continue
        if tuple(cells[:2]) in seen:
            return cells[0], cells[1], n, seen[tuple(cells[:2])]
        seen[tuple(cells[:2])] = n
    return None


@pytest.mark.parametrize("text", [
    "a b 1\na b 2\nb c 1\na b 0.5\n",
    "a b\nb c\nc a\nb c\na b\n",
    "a b 0\nb c 1\na b 1\nc a 1\nb c 2\n",  # the 0-weight a b is no link: b c repeats
    "x y\ny x\nx y\n",
])
@pytest.mark.parametrize("chunk", [None, 5])  # the small-file path, the compiled scanner
def test_duplicate_warning_names_the_first_repeat(tmp_path, text, chunk):
    """The warning names the file, the line of the first repeated link, its names and
    the line of the link it repeats (it named no line before)."""
    import warnings

    p = write(tmp_path, text)
    a, b, line, first = _first_repeat_by_hand(text)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        if chunk is None:
            read_edgelist(p)
        else:
            from netctl.io.edgelist import _system_from_arrays

            _system_from_arrays(read_edge_arrays(p, chunk_bytes=chunk), p, model="given")
    said = [str(w.message) for w in caught if "duplicate link" in str(w.message)]
    assert len(said) == 1 and said[0].startswith(f"{p}:{line}: "), said
    assert f": the link {a!r} -> {b!r} here repeats the one on line {first}. Give each link " \
        "once" in said[0], said


def test_zero_weights_warned_and_left_out(tmp_path):
    p = write(tmp_path, "a b 1\nb c 0\nc a 0.0\n")
    with pytest.warns(UserWarning, match=r"2 links with weight 0 are not a link and were "
                      r"left out \(the first on line 2\)"):
        s = read_edgelist(p)
    assert s.n_links == 1 and s.n_states == 3  # the states stay


def test_cancelling_duplicates_warned(tmp_path):
    p = write(tmp_path, "a b 1\na b -1\nb a 1\n")
    with pytest.warns(UserWarning) as rec:
        s = read_edgelist(p)
    msgs = [str(w.message) for w in rec]
    assert any("duplicate weights sum to 0 were left out" in m for m in msgs)
    assert s.n_links == 1


def test_self_loops_and_isolated_kept(tmp_path):
    s = read_edgelist(write(tmp_path, "a a\na b\nc\n"))
    assert s.n_self_loops == 1 and s.state_names == ("a", "b", "c")


@pytest.mark.parametrize("weighted", [False, True])
def test_write_read_round_trip(tmp_path, weighted, rng):
    n = 30
    src = rng.integers(0, n, 80)
    dst = rng.integers(0, n, 80)
    w = rng.normal(size=80) if weighted else None
    with pytest.warns(UserWarning, match="duplicate"):
        s = StructuredSystem.from_edges(np.r_[src, 0], np.r_[dst, 0], n + 2,
                                        weights=None if w is None else np.r_[w, 1.0],
                                        state_names=[f"s{i}" for i in range(n + 2)])
    p = tmp_path / "rt.csv"
    write_edgelist(s, p)
    t = read_edgelist(p)
    order = t.index_of(s.state_names)
    A = t.A.toarray()[np.ix_(order, order)]
    assert np.array_equal(A, s.A.toarray())  # exact: weights written with repr
    assert t.weighted == weighted and set(t.state_names) == set(s.state_names)


def test_writer_refuses_names_with_separators(tmp_path):
    s = StructuredSystem.from_edges([0], [1], 2, state_names=["a b", "c"])
    with pytest.raises(ValueError, match=r"the state name 'a b' contains a separator"):
        write_edgelist(s, tmp_path / "x.csv")
    assert not (tmp_path / "x.csv").exists()


# ---------------------------------------------------------------- bad input
BAD = [
    pytest.param("a b\nb c d e\n", r"net\.csv:2: expected 'source target \[weight\]', found 4 "
                 r"columns in 'b c d e'\. Columns are separated", id="too-many-columns"),
    pytest.param("a b\nb c 1\n", r"net\.csv:2: this line has 3 columns: 'b c 1', but earlier "
                 r"link lines have 2 \(the first: line 1, 'a b'\)\. Give a weight on every link "
                 r"line", id="mixed-columns"),
    pytest.param("1 2 0.5\n2 3 heavy\n", r"net\.csv:2: the weight 'heavy' is not a number\. "
                 r"Use a decimal number", id="bad-weight"),
    pytest.param("1 2 nan\n", r"net\.csv:1: the weight 'nan' is not a finite number",
                 id="nan-weight"),
    pytest.param("1 2 1\n\n2 3 -inf\n", r"net\.csv:3: the weight '-inf' is not a finite",
                 id="inf-weight"),
    pytest.param("# only a comment\n\n", r"net\.csv: the file holds no links and no states",
                 id="empty"),
    pytest.param("source,target,weight,colour\n1,2,3,red\n", r"net\.csv:1: the header names 4 "
                 r"columns", id="wide-header"),
]


@pytest.mark.parametrize("text, message", BAD)
def test_bad_input_messages(tmp_path, text, message):
    with pytest.raises(NetworkFileError, match=message):
        read_edgelist(write(tmp_path, text))


def test_not_utf8_name_is_located(tmp_path):
    p = write(tmp_path, "", data=b"a b\nb caf\xe9\n")
    with pytest.raises(NetworkFileError, match=r"net\.csv:2: the name b'caf\\xe9' is not "
                       r"UTF-8 text\. Save the file as UTF-8"):
        read_edgelist(p)


def test_utf16_file_is_refused(tmp_path):
    p = write(tmp_path, "", data="a b\n".encode("utf-16"))
    with pytest.raises(NetworkFileError, match=r"net\.csv:1: the file is UTF-16 text; save "
                       "it as UTF-8"):
        read_edgelist(p)


def test_nul_byte_is_refused(tmp_path):
    p = write(tmp_path, "", data=b"a b\nb c\n\x00\x01\x02")
    with pytest.raises(NetworkFileError, match=r"net\.csv:3: found a NUL byte: this is not "
                       "a text edge list"):
        read_edgelist(p)


def test_truncated_gzip(tmp_path):
    data = gzip.compress(("".join(f"{i} {i + 1}\n" for i in range(20000))).encode())
    p = write(tmp_path, "", "t.csv.gz", data[: len(data) // 2])
    with pytest.raises(NetworkFileError, match=r"t\.csv\.gz:\d+: the gzip stream is damaged "
                       r"or truncated here .*Compress the file again"):
        read_edgelist(p)


def test_missing_file(tmp_path):
    with pytest.raises(MissingFileError, match=r"nope\.csv: no such file"):
        read_edgelist(tmp_path / "nope.csv")


@pytest.mark.parametrize("text, names", [("5 6\n6 7\n8\n", ("5", "6", "7", "8")),  # dense
                                         ("5 6\n6 7\n9\n", ("5", "6", "7", "9")),  # gap
                                         ("5 6\n6 -7000000000000\n", ("-7000000000000", "5",
                                                                      "6"))])  # sparse
def test_integer_factorization_paths(tmp_path, text, names):
    e = read_edge_arrays(write(tmp_path, text))
    assert e.names == names
    ref_names, ref_edges, _ = reference_parse(text)
    assert list(e.names) == ref_names and as_named(e) == ref_edges


@pytest.mark.parametrize("weighted", [False, True])
def test_compiled_csr_builder_matches_scipy(rng, weighted):
    import scipy.sparse as sp

    from netctl.io._edgescan import build_csr

    for _ in range(20):
        n = int(rng.integers(1, 30))
        m = int(rng.integers(0, 120))
        r, c = rng.integers(0, n, m), rng.integers(0, n, m)
        v = rng.integers(-2, 3, m).astype(float)  # small integers: sums cancel exactly
        indptr, indices, data, n_dup, n_cancel = build_csr(r, c, v, n, weighted)
        if weighted:  # zero-weight entries are skipped, not merged
            nz = v != 0
            r, c, v, m = r[nz], c[nz], v[nz], int(nz.sum())
        ref = sp.coo_array((v if weighted else np.ones(m), (r, c)), shape=(n, n)).tocsr()
        ref.sum_duplicates()
        assert n_dup == m - ref.nnz
        if not weighted:
            ref.data[:] = 1.0
        ref.eliminate_zeros()
        ref.sort_indices()
        assert n_cancel == (m - n_dup) - ref.nnz
        assert indptr.tolist() == ref.indptr.tolist()
        assert indices.tolist() == ref.indices.tolist() and data.tolist() == ref.data.tolist()


PARALLEL_CASES = [
    pytest.param("".join(f"{i} {i + 1}\n" for i in range(400)), None, id="plain"),
    pytest.param("".join(f"{i} {i + 1} 0.{i}\n" for i in range(400)), None, id="weighted"),
    pytest.param("".join(f"{i} {i + 1} {0.1 * i!r}\n" for i in range(400)) + "7\n", None,
                 id="fallback-weights-and-lone-name"),
    pytest.param("".join(f"{i} {i + 1}\n" for i in range(300)) + "5 6 1\n"
                 + "".join(f"{i} {i + 1} 2\n" for i in range(100)),
                 r"net\.csv:301: this line has 3 columns: '5 6 1', but earlier link lines "
                 r"have 2 \(the first: line 1, '0 1'\)",
                 id="columns-change-in-second-half"),
    pytest.param("".join(f"{i} {i + 1}\n" for i in range(300)) + "1 2 3 4\n"
                 + "".join(f"{i} {i + 1} 2 3 4\n" for i in range(100)),
                 r"net\.csv:301: expected 'source target \[weight\]', found 4", id="error-b"),
    pytest.param("".join(f"{i} {i + 1}\n" for i in range(300)) + "x y\n", None,
                 id="string-name-in-second-half"),
]


@pytest.mark.parametrize("text, error", PARALLEL_CASES)
def test_two_thread_scan_equals_one_thread(tmp_path, monkeypatch, text, error):
    import netctl.io._edgechunks as mod

    p = write(tmp_path, text)
    monkeypatch.setattr(mod, "PARALLEL_MIN_BYTES", 1 << 30)
    if error:
        with pytest.raises(NetworkFileError, match=error):
            read_edge_arrays(p, chunk_bytes=1000)
        monkeypatch.setattr(mod, "PARALLEL_MIN_BYTES", 16)
        with pytest.raises(NetworkFileError, match=error):
            read_edge_arrays(p, chunk_bytes=1000)
        return
    one = read_edge_arrays(p, chunk_bytes=1000)
    monkeypatch.setattr(mod, "PARALLEL_MIN_BYTES", 16)
    two = read_edge_arrays(p, chunk_bytes=1000)
    assert one.names == two.names and as_named(one) == as_named(two)
    assert (one.weights is None) == (two.weights is None)
    if one.weights is not None:
        assert one.weights.tobytes() == two.weights.tobytes()
    ref_names, ref_edges, ref_w = reference_parse(text)
    assert list(two.names) == ref_names and as_named(two) == ref_edges


def test_names_of_every_length_around_the_inline_key_sizes(tmp_path):
    # names of 1..40 bytes sharing prefixes: the hash table keeps names up to 16 bytes
    # inline and compares longer ones byte by byte
    names = ["n" * k for k in range(1, 41)] + ["n" * k + "x" for k in range(1, 40)]
    text = "".join(f"{a} {b}\n" for a, b in zip(names, names[1:] + names[:1])) * 2
    e = read_edge_arrays(write(tmp_path, text), chunk_bytes=64)
    ref_names, ref_edges, _ = reference_parse(text)
    assert list(e.names) == ref_names and as_named(e) == ref_edges


@pytest.mark.parametrize("chunk", [97, 4096, 1 << 20])
def test_many_string_names_through_batches_and_table_growth(tmp_path, chunk):
    """Thousands of names (the name table doubles many times, in the middle of the
    batched fast path), short and long (> 16 bytes: the general path) names, comment
    and single-name lines, weights (some only Python's float reads exactly), CRLF line
    ends: same names, order of first appearance, links and weights as the reference
    parser."""
    rng = np.random.default_rng(17)
    pool = [f"st{k}" for k in range(6000)] + [f"long-station-name-{k:05d}" for k in range(800)]
    lines = ["source,target,weight"]
    for i in range(20000):
        u, v = rng.integers(0, len(pool), 2)
        w = repr(float(rng.random())) if rng.random() < 0.1 else f"{rng.random():.4f}"
        lines.append(f"{pool[u]},{pool[v]},{w}")
        if i % 997 == 0:
            lines.append("# a comment line")
        if i % 1499 == 0:
            lines.append(f"{pool[rng.integers(0, len(pool))]}")
    text = "\r\n".join(lines) + "\r\n"
    e = read_edge_arrays(write(tmp_path, text), chunk_bytes=chunk)
    names, ref_edges, ref_w = reference_parse(text)
    assert list(e.names) == names
    assert as_named(e) == ref_edges
    assert e.weights.tobytes() == np.array(ref_w, dtype=np.float64).tobytes()


def test_name_buffer_growth_alone(tmp_path, monkeypatch):
    """Start with a name table large enough for every name and a name buffer of a few
    bytes, so that the buffer's own room check is the only thing that makes it grow."""
    from netctl.io import edgelist

    init = edgelist._Scan.__init__

    def small_buffer(self, *args, **kwargs):
        init(self, *args, **kwargs)
        self.names_buf = np.zeros(8, np.uint8)
        self.table = np.full((1 << 15, 3), -1, np.int64)
        self.name_pos = np.zeros((1 << 14, 2), np.int64)
        self.name_line = np.zeros(1 << 14, np.int64)

    monkeypatch.setattr(edgelist._Scan, "__init__", small_buffer)
    rng = np.random.default_rng(18)
    text = "".join(f"node-{u:07d} node-{v:07d}\n" for u, v in rng.integers(0, 10**6, (3000, 2)))
    for chunk in (256, 1 << 20):
        e = read_edge_arrays(write(tmp_path, text), chunk_bytes=chunk)
        names, ref_edges, _ = reference_parse(text)
        assert list(e.names) == names and as_named(e) == ref_edges
