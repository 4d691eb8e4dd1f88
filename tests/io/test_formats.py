"""Every format: round trips, agreement with reference readers, and bad input.

Reference readers: scipy.io.mmread / scipy.sparse.load_npz / numpy.load / networkx
read_graphml, read_gml and node_link_graph read the files netctl writes (and netctl reads
theirs), so the formats are the published ones, not a private dialect.
"""

from __future__ import annotations

import gzip
import json
import warnings

import networkx as nx
import numpy as np
import pytest
import scipy.io
import scipy.sparse as sp

from netctl.errors import NetworkFileError
from netctl.io import FORMATS, detect_format, read, write
from netctl.system import StructuredSystem

SUFFIX = {"edgelist": ".csv", "mtx": ".mtx", "system": ".toml", "npz": ".npz", "npy": ".npy",
          "matrix-csv": ".matrix.csv", "graphml": ".graphml", "gml": ".gml", "json": ".json"}
KEEPS_NODES = {"system", "graphml", "gml", "json"}
KEEPS_NAMES = {"edgelist", "system", "npz", "matrix-csv", "graphml", "gml", "json"}


def sample(weighted, rng):
    n = 9
    mask = rng.random((n, n)) < 0.3
    mask[8, :] = mask[:, 8] = False  # an isolated state
    mask[2, 2] = True  # a self-loop
    src, dst = np.nonzero(mask.T)
    w = np.round(rng.normal(size=src.size), 3) + 0.0001 if weighted else None
    nodes = {"x": np.linspace(0, 1, n), "y": np.r_[np.arange(n - 1.0), np.nan],
             "actuator": np.arange(n) % 3 != 0, "actuator_cost": np.full(n, 2.5),
             "kind": np.array(["bus"] * (n - 1) + ["spare"], dtype=object)}
    return StructuredSystem.from_edges(src, dst, n, weights=w, nodes=nodes,
                                       state_names=[f"b{i}" for i in range(n)])


#: read-only grid formats, tested in tests/io/test_grid_files.py
READ_ONLY = {"matpower": ".m", "pandapower": None}


def test_every_format_is_tested():
    assert set(SUFFIX) | set(READ_ONLY) == set(FORMATS)
    assert detect_format("case118.m") == "matpower"
    for fmt, suffix in SUFFIX.items():
        assert detect_format("net" + suffix) == fmt


@pytest.mark.parametrize("weighted", [False, True], ids=["pattern", "weighted"])
@pytest.mark.parametrize("fmt", list(SUFFIX))
def test_round_trip(tmp_path, fmt, weighted, rng):
    s = sample(weighted, rng)
    p = tmp_path / ("net" + SUFFIX[fmt])
    if fmt == "edgelist":  # names kept, node table not: it says so
        with pytest.warns(UserWarning, match=r"holds no node table; the columns actuator, "):
            write(s, p)
    elif fmt in KEEPS_NAMES:
        write(s, p)
    else:
        with pytest.warns(UserWarning, match=r"holds no state names \(they read back as x0, "
                          r"x1, \.\.\.\) and no node table \(the columns actuator, "):
            write(s, p)
    t = read(p)
    if fmt in KEEPS_NAMES:
        order = t.index_of(s.state_names)
    else:
        order = np.arange(s.n_states)
        assert t.n_states == s.n_states
    A = t.A.toarray()[np.ix_(order, order)]
    assert np.array_equal(A != 0, s.A.toarray() != 0)
    if weighted:
        assert t.weighted and np.array_equal(A, s.A.toarray())
    if fmt in KEEPS_NODES:
        for k, col in s.nodes.items():
            got = np.asarray(t.nodes[k])[order]
            if col.dtype.kind == "f":
                assert np.allclose(got.astype(float), col, equal_nan=True), k
            else:
                assert got.tolist() == col.tolist(), k


@pytest.mark.parametrize("fmt", ["edgelist", "mtx", "json"])
def test_gzip_round_trip(tmp_path, fmt, rng):
    s = sample(True, rng)
    p = tmp_path / ("net" + SUFFIX[fmt] + ".gz")
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", ".*format holds no state names")
        warnings.filterwarnings("ignore", ".*format holds no node table")
        write(s, p)
    assert p.read_bytes()[:2] == b"\x1f\x8b"
    t = read(p)
    order = t.index_of(s.state_names) if fmt != "mtx" else np.arange(s.n_states)
    assert np.array_equal(t.A.toarray()[np.ix_(order, order)], s.A.toarray())


def test_inputs_not_storable_in_graph_formats_warn(tmp_path):
    s = StructuredSystem.from_edges([0], [1], 2, inputs=[0])
    with pytest.warns(UserWarning, match=r"the GraphML format holds the network only; the 1 "
                      r"input\(s\) and 0 output\(s\) were not written"):
        write(s, tmp_path / "x.graphml")


# ---------------------------------------------------------------- reference readers
def test_reference_readers_read_our_files(tmp_path, rng):
    s = sample(True, rng)
    for fmt in ("mtx", "npz", "npy", "graphml", "gml", "json"):
        with warnings.catch_warnings():
            warnings.filterwarnings("ignore", ".* format holds no state names")
            write(s, tmp_path / ("n" + SUFFIX[fmt]))
    A = s.A.toarray()
    assert np.array_equal(scipy.io.mmread(tmp_path / "n.mtx").toarray(), A)
    assert np.array_equal(sp.load_npz(tmp_path / "n.npz").toarray(), A)
    assert np.array_equal(np.load(tmp_path / "n.npy"), A)
    for g in (nx.read_graphml(tmp_path / "n.graphml"), nx.read_gml(tmp_path / "n.gml"),
              nx.node_link_graph(json.loads((tmp_path / "n.json").read_text()), edges="links")):
        assert g.number_of_nodes() == s.n_states and g.number_of_edges() == s.n_links
        assert g.nodes["b1"]["kind"] == "bus"


def test_we_read_reference_writers(tmp_path):
    g = nx.Graph()
    g.add_node("a", x=1.5, sensor=False)
    g.add_edge("a", "b", weight=2.0)
    g.add_edge("b", "c", weight=0.5)
    g.add_node("lonely")
    nx.write_graphml(g, tmp_path / "g.graphml")
    nx.write_gml(g, tmp_path / "g.gml")
    (tmp_path / "g.json").write_text(json.dumps(nx.node_link_data(g, edges="links")))
    M = sp.random_array((6, 6), density=0.4, rng=np.random.default_rng(1), format="csc")
    sp.save_npz(tmp_path / "m.npz", M)
    scipy.io.mmwrite(tmp_path / "m.mtx", sp.coo_matrix(M))
    for ext in ("graphml", "gml", "json"):
        s = read(tmp_path / f"g.{ext}")
        assert s.n_states == 4 and s.n_links == 4  # undirected: both directions
        i = s.index_of(["a", "b"])
        assert s.A[i[1], i[0]] == 2.0 and s.A[i[0], i[1]] == 2.0
        assert s.nodes["x"][i[0]] == 1.5
    for ext in ("npz", "mtx"):
        s = read(tmp_path / f"m.{ext}")
        assert np.allclose(s.A.toarray(), M.toarray())


def test_symmetric_mtx_is_expanded(tmp_path):
    p = tmp_path / "s.mtx"
    p.write_text("%%MatrixMarket matrix coordinate pattern symmetric\n3 3 2\n2 1\n3 3\n")
    s = read(p)
    assert s.A.toarray().tolist() == [[0, 1, 0], [1, 0, 0], [0, 0, 1]]
    assert not s.weighted
    p.write_text("%%MatrixMarket matrix coordinate integer general\n2 2 1\n2 1 7\n")
    assert read(p).A.toarray().tolist() == [[0, 0], [7, 0]]


# ---------------------------------------------------------------- bad input
BOMB = """<?xml version="1.0"?>
<!DOCTYPE lolz [
 <!ENTITY lol "lol">
 <!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">
 <!ENTITY lol3 "&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;">
]>
<graphml xmlns="http://graphml.graphdrawing.org/xmlns"><graph edgedefault="directed">
<node id="&lol3;"/></graph></graphml>
"""
EXTERNAL = """<?xml version="1.0"?>
<!DOCTYPE g [<!ENTITY secret SYSTEM "file:///etc/passwd">]>
<graphml xmlns="http://graphml.graphdrawing.org/xmlns"><graph edgedefault="directed">
<node id="&secret;"/></graph></graphml>
"""
GRAPHML_HEAD = ('<?xml version="1.0"?>\n<graphml xmlns="http://graphml.graphdrawing.org/'
                'xmlns">\n')

BAD = [
    pytest.param("x.graphml", BOMB, r"x\.graphml:2: the file declares a document type or "
                 r"entities .*which netctl refuses", id="xml-bomb"),
    pytest.param("x.graphml", EXTERNAL, r"x\.graphml:2: the file declares a document type",
                 id="xml-external-entity"),
    pytest.param("x.graphml", GRAPHML_HEAD + '<key id="d0" for="node" attr.name="v" '
                 'attr.type="vector"/>\n<graph edgedefault="directed"><node id="a"><data '
                 'key="d0">1</data></node></graph></graphml>\n',
                 r"unknown GraphML attribute type 'vector'; use boolean, int", id="graphml-type"),
    pytest.param("x.graphml", GRAPHML_HEAD + '<graph edgedefault="directed">\n<node id="a">\n'
                 '</graph></graphml>\n', r"x\.graphml:5: malformed XML at column 2: mismatched tag\. Check",
                 id="graphml-unclosed"),
    pytest.param("x.gml", 'graph [\n node [ id 0 label "a" ]\n edge [ source 0 \n',
                 r"x\.gml:4: malformed GML", id="gml-truncated"),
    pytest.param("x.gml", 'graph [\n node [ id 0 label "a" pos [ x 1 y 2 ] ]\n]\n',
                 r"attribute 'pos' of node 'a' has the type dict", id="gml-nested-attribute"),
    pytest.param("x.json", '{"nodes": [{"id": "a"}], "links": [{"source": "a", "target": "b"}]}',
                 r"x\.json:1: link 0 names the target 'b', which is not in \"nodes\"",
                 id="json-unknown-node"),
    pytest.param("x.json", '{"nodes": [\n{"id": "a",}\n]}', r"x\.json:2: invalid JSON at column",
                 id="json-syntax"),
    pytest.param("x.json", '{"nodes": [{"id": "a", "tags": ["p", "q"]}], "links": []}',
                 r"attribute 'tags' of node 'a' has the type list", id="json-list-attribute"),
    pytest.param("x.json", '{"nodes": [{"id": "a", "x": "north"}], "links": []}',
                 r"attribute 'x' of node 'a' must be a finite number, found 'north'",
                 id="json-x-not-number"),
    pytest.param("x.json", '{"nodes": [{"id": "a"}, {"id": "b"}], "links": [{"source": "a", '
                 '"target": "b", "weight": "heavy"}]}', r"x\.json:1: the weight 'heavy' of the "
                 r"link 'a' -> 'b' is not a number", id="json-bad-weight"),
    pytest.param("x.mtx", "%%MatrixMarket matrix coordinate real general\n"
                 "1000000 1000000 1000000000000\n1 1 1.0\n",
                 r"x\.mtx:2: the header claims 1000000 states and 1000000000000 entries, more "
                 r"than netctl reads", id="mtx-absurd-size"),
    pytest.param("x.mtx", "%%MatrixMarket matrix coordinate real general\n"
                 "1000 1000 100000000\n1 1 1.0\n", r"x\.mtx:2: the header claims 100000000 "
                 r"entries but the file \(\d+ bytes\) has room for at most \d+",
                 id="mtx-claims-more-than-file"),
    pytest.param("x.mtx", "%%MatrixMarket matrix coordinate real general\n3 3 2\n1 1 1.0\n"
                 "2 x 1.0\n", r"x\.mtx:4: could not read the entries: expected numbers, found "
                 r"'2 x 1\.0'", id="mtx-bad-entry"),
    pytest.param("x.mtx", "%%MatrixMarket matrix coordinate real general\n3 3 2\n1 1 1.0\n"
                 "4 1 1.0\n", r"x\.mtx:4: could not read the entries: the index \(4, 1\) is "
                 r"outside 1\.\.3", id="mtx-out-of-range"),
    pytest.param("x.mtx", "%%MatrixMarket matrix coordinate complex general\n1 1 1\n1 1 1 0\n",
                 r"x\.mtx:1: the field 'complex' is not supported", id="mtx-complex"),
    pytest.param("x.mtx", "%%MatrixMarket matrix coordinate real general\n2 3 1\n1 1 1.0\n",
                 r"x\.mtx:2: the matrix is 2 x 3; a state matrix A must be square",
                 id="mtx-not-square"),
    pytest.param("x.matrix.csv", "a,b\n0,1\n1,zz\n", r"x\.matrix\.csv:3: column 2: expected a "
                 r"finite number, found 'zz'", id="matrix-csv-cell"),
    pytest.param("x.matrix.csv", "0,1\n1,0,1\n", r"x\.matrix\.csv:2: this row has 3 numbers "
                 r"but the first row has 2", id="matrix-csv-ragged"),
]


@pytest.mark.parametrize("name, text, message", BAD)
def test_bad_files(tmp_path, name, text, message):
    p = tmp_path / name
    p.write_text(text)
    with pytest.raises(NetworkFileError, match=message):
        read(p)


def test_npy_with_pickle_is_refused(tmp_path):
    p = tmp_path / "o.npy"
    np.save(p, np.array([[{"a": 1}, None], [None, None]], dtype=object), allow_pickle=True)
    with pytest.raises(NetworkFileError, match=r"o\.npy: the array holds Python objects \(a "
                       r"pickle\), which netctl never loads"):
        read(p)


def test_npz_with_pickle_is_refused(tmp_path):
    p = tmp_path / "o.npz"
    np.savez(p, format=np.array(b"csr"), shape=np.array([2, 2]),
             data=np.array([object()], dtype=object), indices=np.array([0]),
             indptr=np.array([0, 1, 1]))
    with pytest.raises(NetworkFileError, match=r"o\.npz: the file holds pickled Python "
                       r"objects, which netctl never loads"):
        read(p)


def test_npy_header_claiming_absurd_size_is_refused_before_reading(tmp_path):
    p = tmp_path / "big.npy"
    header = {"descr": "<f8", "fortran_order": False, "shape": (10**6, 10**6)}
    with open(p, "wb") as fh:
        np.lib.format.write_array_header_1_0(fh, header)
        fh.write(b"\x00" * 64)
    with pytest.raises(NetworkFileError, match=r"big\.npy: the header claims a 1000000 x "
                       r"1000000 dense array \(8e\+03 GB\)"):
        read(p)


def test_npz_absurd_shape(tmp_path):
    p = tmp_path / "big.npz"
    np.savez(p, format=np.array(b"csr"), shape=np.array([10**12, 10**12]),
             data=np.array([1.0]), indices=np.array([0]), indptr=np.array([0, 1]))
    with pytest.raises(NetworkFileError, match=r"big\.npz: the file claims 1000000000000 "
                       "states, more than netctl reads"):
        read(p)


def test_truncated_gzip_in_byte_formats(tmp_path):
    data = gzip.compress(b"%%MatrixMarket matrix coordinate pattern general\n3 3 2\n1 2\n2 3\n"
                         * 50)
    p = tmp_path / "t.mtx.gz"
    p.write_bytes(data[:-20])
    with pytest.raises(NetworkFileError, match=r"t\.mtx\.gz: the gzip stream is damaged or "
                       "truncated"):
        read(p)
