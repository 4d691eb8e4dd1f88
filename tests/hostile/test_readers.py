"""Hostile files through the command line: each ends in one line naming the file (and the
line where the format has lines), exit status 2, no traceback, no output file, and memory
guards refuse before allocating.

Common practice for tools that read other people's files, no source: refuse declared
sizes the content cannot hold, cap decompression, nesting and number length, quote at
most a short excerpt of a line.
"""

from __future__ import annotations

import gzip
import io

import numpy as np
import pytest

from netctl.cli import main


def _npz(shape):
    buf = io.BytesIO()
    np.savez(buf, format=np.array(b"csr"), shape=shape, data=np.ones(1),
             indices=np.zeros(1, np.int32), indptr=np.array([0, 1, 1], np.int32))
    return buf.getvalue()


def _npy_header_only(shape):
    buf = io.BytesIO()
    np.lib.format.write_array_header_1_0(buf, {"descr": "<f8", "fortran_order": False,
                                               "shape": shape})
    return buf.getvalue() + b"\0" * 16


DEEP = 50_000
CASES = [
    pytest.param("d.json", b'{"nodes": ' + b"[" * DEEP + b"]" * DEEP + b', "links": []}',
                 "d.json: the file nests lists or groups more deeply", id="deep-json"),
    pytest.param("d.gml", b"graph [ " + b"a [ " * DEEP + b" ]" * DEEP + b" ]",
                 "d.gml: the file nests lists or groups more deeply", id="deep-gml"),
    pytest.param("d.toml", b"[states]\na = { x = " + b"[" * DEEP + b"]" * DEEP + b" }\n",
                 "d.toml: the file nests lists or groups more deeply", id="deep-toml"),
    pytest.param("i.toml", b"[states]\na = { x = " + b"9" * 400 + b" }\n",
                 "i.toml:2: a number is too large", id="toml-400-digit-int"),
    pytest.param("i.json", b'{"nodes": [{"id": ' + b"9" * 5000 + b'}], "links": []}',
                 "i.json:1: a number has more digits than netctl reads", id="json-5000-digit-id"),
    pytest.param("n.npz", _npz(np.array([np.nan, 3.0])),
                 "n.npz: the 'shape' array must hold two non-negative whole numbers",
                 id="npz-nan-shape"),
    pytest.param("s.npz", _npz(np.array(["a", "b"])),
                 "s.npz: the 'shape' array must hold two non-negative whole numbers",
                 id="npz-string-shape"),
    pytest.param("b.npz", _npz(np.array([300_000_000, 300_000_000])),
                 "b.npz: the file declares 300,000,000 states", id="npz-huge-shape"),
    pytest.param("h.npy", _npy_header_only((20_000, 20_000)),
                 "h.npy: the header claims a 20000 x 20000 array of float64 (3,200,000,000 "
                 "bytes) but the file holds 16 bytes", id="npy-header-over-content"),
    pytest.param("m.mtx", b"%%MatrixMarket matrix coordinate real general\n"
                 b"100000000 100000000 1\n1 2 1.0\n",
                 "m.mtx:2: the file declares 100,000,000 states", id="mtx-huge-declared"),
    pytest.param("g.csv.gz", gzip.compress(b"a,b\n" + b"x" * 3_000_000, 9),
                 "g.csv.gz:2: the line is longer than 1,048,576 bytes", id="gzip-endless-line"),
    pytest.param("l.csv", b"a,b\n" + b"x" * 2_000_000 + b",y,z,w\n",
                 "... (2,000,006 characters)", id="long-line-excerpt"),
    pytest.param("l.matrix.csv", b",a,b\na,0,1\nb," + b"1" * 2_000_000 + b",0\n",
                 "... (2,000,000 characters)", id="long-cell-excerpt"),
]


@pytest.mark.parametrize("name, data, message", CASES)
def test_hostile_file_one_line_exit_2(tmp_path, monkeypatch, capsys, name, data, message):
    monkeypatch.chdir(tmp_path)
    (tmp_path / name).write_bytes(data)
    assert main(["convert", name, "out.json"]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and err.count("\n") == 1, err[:500]
    assert message in err, err[:500]
    assert len(err) < 800  # a short excerpt, never the whole line
    assert sorted(p.name for p in tmp_path.iterdir()) == [name]


def test_decompressed_size_is_capped_and_the_limit_can_be_raised(tmp_path, monkeypatch,
                                                                   capsys):
    """A small gzip file that expands past the limit is refused, naming the limit and the
    variable that raises it; raised, the same file reads."""
    monkeypatch.chdir(tmp_path)
    body = b"".join(b"s%d s%d\n" % (i, i + 1) for i in range(20_000))
    (tmp_path / "x.mtx.gz").write_bytes(gzip.compress(
        b"%%MatrixMarket matrix coordinate pattern general\n" + b"% padding\n" * 40_000
        + b"3 3 2\n1 2\n2 3\n"))
    (tmp_path / "y.csv.gz").write_bytes(gzip.compress(body))
    monkeypatch.setenv("NETCTL_MAX_BYTES", "100K")
    for name in ("x.mtx.gz", "y.csv.gz"):
        assert main(["inspect", name]) == 2
        err = capsys.readouterr().err
        assert "the decompressed content" in err and "NETCTL_MAX_BYTES" in err
        assert "102,400 bytes" in err
    monkeypatch.setenv("NETCTL_MAX_BYTES", "10M")
    assert main(["inspect", "x.mtx.gz"]) == 0
    assert main(["inspect", "y.csv.gz"]) == 0


@pytest.mark.parametrize("text, names, n_links, zero_warned", [
    pytest.param("u,u,0.0\n", ("u",), 0, True, id="zero-self-loop-only"),
    pytest.param("u,v,0.0\nv,w,1\n", ("u", "v", "w"), 1, True, id="zero-link-first-line"),
    pytest.param("u,v,0.5\n", ("u", "v"), 1, False, id="weighted-link-named-like-a-header"),
    pytest.param("source,target,weight\nu,v,2\n", ("u", "v"), 1, False, id="real-header"),
])
def test_first_line_with_a_number_is_a_link_not_a_header(tmp_path, text, names, n_links,
                                                         zero_warned):
    """Nothing in a good file is dropped silently: a zero-weight link is left out with a
    warning, and its states are kept (the project's rule; no outside source)."""
    import warnings

    from netctl.io import read

    p = tmp_path / "e.csv"
    p.write_text(text)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        s = read(p)
    assert s.state_names == names and s.n_links == n_links
    assert any("weight 0" in str(w.message) for w in caught) == zero_warned


@pytest.mark.parametrize("ref", ["../secret.csv", "/ABS/secret.csv", "link.csv"],
                         ids=["dot-dot", "absolute", "symlink-out"])
def test_coupling_file_confined_to_the_description_folder(tmp_path, monkeypatch, capsys,
                                                           ref):
    """A description's coupling file outside its folder is refused (and not quoted) unless
    NETCTL_ALLOW_OUTSIDE_FILES=1 (common practice against path traversal, no source)."""
    secret = tmp_path / "secret.csv"
    secret.write_text("TOPSECRET,b,c,d,e\n")
    sub = tmp_path / "plant"
    sub.mkdir()
    (sub / "link.csv").symlink_to(secret)
    ref = ref.replace("/ABS", str(tmp_path))
    (sub / "p.toml").write_text(f'[states]\nb = {{}}\n\n[couplings]\nfile = "{ref}"\n')
    monkeypatch.chdir(sub)
    assert main(["inspect", "p.toml"]) == 2
    err = capsys.readouterr().err
    assert "p.toml:5: the coupling file" in err and "lies outside the folder" in err
    assert "TOPSECRET" not in err
    monkeypatch.setenv("NETCTL_ALLOW_OUTSIDE_FILES", "1")
    assert main(["inspect", "p.toml"]) == 2  # now read: a bad line, quoted
    assert "TOPSECRET" in capsys.readouterr().err


def test_coupling_file_beside_the_description_is_read(tmp_path, monkeypatch, capsys):
    (tmp_path / "deep").mkdir()
    (tmp_path / "deep" / "e.csv").write_text("a,b\n")
    (tmp_path / "p.toml").write_text('[states]\na = {}\n\n[couplings]\nfile = "deep/e.csv"\n')
    monkeypatch.chdir(tmp_path)
    assert main(["inspect", "p.toml"]) == 0


_GRAPHML = (b'<?xml version="1.0"?>\n<graphml xmlns="http://graphml.graphdrawing.org/xmlns">\n'
            b'<key id="c" for="node" attr.name="cost" attr.type="double"/>\n'
            b'<graph edgedefault="directed">\n<node id="a"><data key="c">1</data></node>\n'
            b'<node id="b"/>\n%s\n<edge source="a" target="b"/>\n</graph></graphml>\n')
STRICT = [
    pytest.param("d.graphml", _GRAPHML % b'<node id="a"><data key="c">2</data></node>',
                 "d.graphml:7: the node id 'a' is declared again with different attributes "
                 "(first on line 5)", id="graphml-duplicate-conflicting"),
    pytest.param("u.graphml", _GRAPHML % b'<edge source="b" target="ghost"/>',
                 "u.graphml:7: an edge names the node 'ghost', which no <node> declares",
                 id="graphml-undeclared-node"),
    pytest.param("n.mtx", b"%%MatrixMarket matrix coordinate real general\n% c\n3 3 2\n"
                 b"1 2 1.0\n2 3 nan\n", "n.mtx:5: a value is NaN or infinite",
                 id="mtx-nan-with-line"),
    pytest.param("h.matrix.csv", b",a,a\na,0,1\na,1,0\n",
                 "h.matrix.csv:1: the header names the state 'a' twice",
                 id="matrix-csv-duplicate-header"),
    pytest.param("i.csv", b"a,b,1e308\na,b,1e308\n", "i.csv: A has 1 NaN or infinite entry",
                 id="weights-sum-to-infinity"),
    # extra numbers on an entry line: scipy's parser reads '1 2 3.0' and ignores the 7
    pytest.param("x.mtx", b"%%MatrixMarket matrix coordinate real general\n% c\n3 3 2\n"
                 b"1 2 3.0 7\n2 3 1.0\n", "x.mtx:4: expected 3 numbers, found '1 2 3.0 7'",
                 id="mtx-extra-number-real"),
    pytest.param("x.mtx", b"%%MatrixMarket matrix coordinate real general\n3 3 2\n"
                 b"1 2 3.0\n2 3 1.0 0.5\n", "x.mtx:4: expected 3 numbers, found '2 3 1.0 0.5'",
                 id="mtx-extra-number-last-line"),
    pytest.param("p.mtx", b"%%MatrixMarket matrix coordinate pattern general\n3 3 2\n"
                 b"1 2\n2 3 1\n", "p.mtx:4: expected 2 numbers, found '2 3 1'",
                 id="mtx-pattern-with-value"),
    pytest.param("a.mtx", b"%%MatrixMarket matrix array real general\n2 2\n1\n0\n0 2\n",
                 "a.mtx:5: could not read the entries: expected 1 number, found '0 2'", id="mtx-array-two-on-a-line"),
    # lone surrogates: half of a UTF-16 pair is no character; refused at read, with the line
    pytest.param("s.json", b'{"directed": true, "nodes": [{"id": "a"},\n{"id": "b\\ud800"}],'
                 b'\n"links": [{"source": "a", "target": "b\\ud800"}]}',
                 "s.json:2: the name 'b\\ud800' holds a lone surrogate", id="json-lone-surrogate"),
    pytest.param("s.json", b'{"directed": true, "nodes": [{"id": "a"},\n{"id": "\\udc00b"}],'
                 b'\n"links": []}',
                 "s.json:2: the name '\\udc00b' holds a lone surrogate", id="json-lone-low-half"),
    pytest.param("s.gml", b'graph [\n directed 1\n node [ id 0 label "a" ]\n'
                 b' node [ id 1 label "b&#55296;" ]\n edge [ source 0 target 1 ]\n]\n',
                 "s.gml:4: the name 'b\\ud800' holds a lone surrogate", id="gml-lone-surrogate"),
    pytest.param("s.npz", b"", "s.npz: the name 'b\\ud800' holds a lone surrogate",
                 id="npz-lone-surrogate"),
    # ... and in the node table (attribute values and names): refused at read like a name
    # (they were refused only when writing, so inspect read them)
    pytest.param("v.json", b'{"directed": true, "nodes": [{"id": "a"},\n{"id": "b", '
                 b'"tag": "x\\ud800"}],\n"links": [{"source": "a", "target": "b"}]}',
                 "v.json:2: the value 'x\\ud800' of the attribute 'tag' of state 'b' holds "
                 "a lone surrogate", id="json-node-value-lone-surrogate"),
    pytest.param("k.json", b'{"directed": true, "nodes": [{"id": "a"},\n{"id": "b", '
                 b'"t\\udc00": 1}],\n"links": []}',
                 "k.json:2: the node attribute name 't\\udc00' holds a lone surrogate",
                 id="json-node-key-lone-surrogate"),
    pytest.param("v.gml", b'graph [\n directed 1\n node [ id 0 label "a" ]\n'
                 b' node [ id 1 label "b" tag "x&#55296;" ]\n edge [ source 0 target 1 ]\n]\n',
                 "v.gml:4: the value 'x\\ud800' of the attribute 'tag' of state 'b' holds a "
                 "lone surrogate", id="gml-node-value-lone-surrogate"),
]


def _npz_named(names):
    buf = io.BytesIO()
    np.savez(buf, format=np.array(b"csr"), shape=np.array([2, 2]), data=np.ones(1),
             indices=np.array([0]), indptr=np.array([0, 0, 1]),
             state_names=np.array(names), weighted=np.array(False))
    return buf.getvalue()


STRICT = [pytest.param(p.values[0], _npz_named(["a", "b\ud800"]), *p.values[2:], id=p.id)
          if p.id == "npz-lone-surrogate" else p for p in STRICT]


@pytest.mark.parametrize("name, data, message", [p for p in STRICT if "node-" in p.id])
def test_node_table_lone_surrogate_refused_by_inspect(tmp_path, monkeypatch, capsys, name,
                                                      data, message):
    """Reading alone refuses it (inspect writes nothing): exit 2, one line."""
    monkeypatch.chdir(tmp_path)
    (tmp_path / name).write_bytes(data)
    assert main(["inspect", name, "--json"]) == 2
    err = capsys.readouterr().err
    assert message in err and err.count("\n") == 1, err


def test_a_whole_utf16_pair_is_a_character(tmp_path):
    """The escape of a character outside the BMP (a surrogate pair) reads as that one
    character (RFC 8259, section 7): only a lone half is refused."""
    from netctl.io import read

    p = tmp_path / "ok.json"
    p.write_bytes(b'{"directed": true, "nodes": [{"id": "a\\ud83d\\ude00"}, {"id": "b"}],'
                  b'"links": [{"source": "a\\ud83d\\ude00", "target": "b"}]}')
    assert read(p).state_names == ("a\U0001f600", "b")


def test_matrix_market_symmetric_files_from_scipy_read(tmp_path):
    """The entry-line count knows how many entries symmetric and skew-symmetric files
    store (scipy.io.mmwrite as the reference writer)."""
    import scipy.io
    import scipy.sparse as sp

    from netctl.io import read

    S = np.array([[1.0, 2, 0], [2, 0, 6], [0, 6, 9]])
    K = np.array([[0.0, 2, 3], [-2, 0, 6], [-3, -6, 0]])
    for sym, M in (("symmetric", S), ("skew-symmetric", K), ("general", S)):
        for dense in (True, False):
            p = tmp_path / f"{sym}-{dense}.mtx"
            scipy.io.mmwrite(p, M if dense else sp.coo_matrix(M), symmetry=sym)
            got = read(p).A.toarray()
            assert np.array_equal(got != 0, M != 0), (sym, dense)


@pytest.mark.parametrize("name, data, message", STRICT)
def test_strict_reads_name_file_and_line(tmp_path, monkeypatch, capsys, name, data, message):
    """Never a silent merge, an invented state or a message without its file."""
    monkeypatch.chdir(tmp_path)
    (tmp_path / name).write_bytes(data)
    assert main(["convert", name, "out.json"]) == 2
    err = capsys.readouterr().err
    assert message in err, err
    assert "Traceback" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == [name]


@pytest.mark.parametrize("tail", [b"2 3 1E-", b"2 3 1.38\x0015"], ids=["cut-exponent", "nul"])
def test_matrix_market_inputs_that_crashed_scipy(tmp_path, tail):
    """Found by the fuzzer: scipy 1.17's Matrix Market parser crashed the process
    (segmentation fault) on these; netctl guards it. Run in a child process, so that a
    regression fails this test instead of killing the run."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    (tmp_path / "c.mtx").write_bytes(b"%%MatrixMarket matrix coordinate real general\n"
                                     b"3 3 2\n1 2 1.0\n" + tail)
    root = Path(__file__).resolve().parents[2]
    r = subprocess.run([sys.executable, "-m", "netctl", "inspect", "c.mtx"], cwd=tmp_path,
                       capture_output=True, text=True,
                       env={**os.environ, "PYTHONPATH": str(root)})
    assert r.returncode in (0, 2), r.stderr[-500:]
    assert "Traceback" not in r.stderr
