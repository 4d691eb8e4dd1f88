"""Bad input through the command line: a message with file, line and fix, exit status 2,
and no output file (not even a partial or temporary one)."""

from __future__ import annotations

import gzip

import pytest

from netctl.cli import main

CASES = [
    pytest.param("e.csv", b"a b\nb c\nc d e f\n", "e.csv:3: expected 'source target [weight]'",
                 id="edgelist-columns"),
    pytest.param("e.csv", b"a b\nb \xff\xfe\n", "e.csv:2: the name b'\\xff\\xfe' is not UTF-8",
                 id="edgelist-encoding"),
    pytest.param("e.csv", "a b\n".encode("utf-16"), "e.csv:1: the file is UTF-16 text",
                 id="edgelist-utf16"),
    pytest.param("e.csv.gz", gzip.compress(b"a b\n" * 5000)[:60],
                 "e.csv.gz:1: the gzip stream is damaged or truncated", id="edgelist-gzip"),
    pytest.param("s.toml", b"[states]\na = { x = 1 }\nb = { x = \xe9 }\n",
                 "s.toml:3: the bytes b'\\xe9 }\\n' are not UTF-8 text", id="toml-encoding"),
    pytest.param("s.toml", b"[states]\na = { colour = [1] }\n",
                 "s.toml:2: attribute 'colour' of state 'a' has the type list",
                 id="toml-attribute-type"),
    pytest.param("g.graphml", b'<?xml version="1.0"?>\n<!DOCTYPE x [<!ENTITY a "b">]>\n<graphml/>',
                 "g.graphml:2: the file declares a document type or entities", id="xml-entity"),
    pytest.param("m.mtx", b"%%MatrixMarket matrix coordinate real general\n"
                 b"1000000000 1000000000 1000000000000\n",
                 "m.mtx:2: the header claims 1000000000 states and 1000000000000 entries",
                 id="mtx-absurd"),
    pytest.param("j.json", b'{"nodes": [{"id": "a", "pos": {"x": 1}}], "links": []}',
                 "attribute 'pos' of node 'a' has the type dict", id="json-attribute-type"),
]


@pytest.mark.parametrize("name, data, message", CASES)
@pytest.mark.parametrize("verb", ["inspect", "convert"])
def test_bad_input_exit_2_with_location_and_no_output(tmp_path, capsys, name, data, message,
                                                      verb):
    src = tmp_path / name
    src.write_bytes(data)
    out = tmp_path / "out.graphml"
    argv = [verb, str(src)] + ([str(out)] if verb == "convert" else [])
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.startswith("netctl: error: ") and message in err
    assert sorted(p.name for p in tmp_path.iterdir()) == [name]


def test_missing_file_exit_2(tmp_path, capsys):
    assert main(["inspect", str(tmp_path / "nowhere.csv")]) == 2
    assert "nowhere.csv: no such file" in capsys.readouterr().err
