"""GraphML, GML and Matrix Market written without networkx or scipy (issue 15, goal 1).

netctl builds these files itself (netctl/io/_graphtext.py, netctl.io.mtx.mtx_bytes), so
that a small ``convert`` or ``map`` does not import networkx or scipy. Checked here
against the reference libraries in two ways, on hand-made tricky networks and on many
random ones (names that need XML or GML escapes, quotes, non-ASCII and control
characters, names that look like numbers, isolated states, self-loops, weights,
node-table columns of every kind, disturbances and regulated outputs):

* the bytes equal what networkx 3 (``write_graphml``, ``write_gml``,
  ``generate_graphml``) and scipy (``scipy.io.mmwrite``) write for the same network, as
  netctl wrote them before;
* reading the file back with the reference readers (``networkx.read_graphml``,
  ``networkx.read_gml``, ``scipy.io.mmread``) gives every node, link, weight and
  attribute of the system.
"""

from __future__ import annotations

import io
import math

import networkx as nx
import numpy as np
import pytest
import scipy.io
import scipy.sparse as sp

from netctl.io import read, write
from netctl.io._signals import dedicated_regulated
from netctl.io.graphml import system_to_graph
from netctl.io.mtx import mtx_bytes, shortest_real
from netctl.system import StructuredSystem

#: names that need care: XML and GML escapes, quotes, non-ASCII, white space inside,
#: control characters XML can hold (tab, line feed), names that read as numbers
TRICKY = ["a&b", "<tag>", 'say "hi"', "it's", "Zürich", "東京", "emoji 🌍", "1", "1.0",
          "007", "-3", "1e5", "NaN", "true", "tab\there", "two\nlines", "semi;colon",
          "%percent", "#hash", "x y", "&amp;", "]]>"]


def _tricky_system(weighted: bool = True) -> StructuredSystem:
    """Every tricky name a state; an isolated state; self-loops; a node table with a
    float, a boolean, a text and an integer column (some values missing); two
    disturbances with their own table; regulated outputs on two states."""
    names = TRICKY + ["lonely"]
    n = len(names)
    src = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 4, 7]
    dst = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 4, 7]
    weights = [0.1, -2.5, 3e20, 1e-300, 1 / 3, 100.0, 2.0, -7.0, 0.5, 1.5, 4.0, 6.0, 8.0,
               1e16, 1e15, 123456789.125, 9.0, 10.0, 11.0, 12.0, 13.0, -1.0, 5e-324]
    x = [float(i) * 1.5 if i % 3 else math.nan for i in range(n)]
    kind = np.empty(n, object)
    kind[:] = [f"pump & valve <{i}> \"q\" ü" if i % 2 else None for i in range(n)]
    count = np.empty(n, object)
    count[:] = [i * 1000 if i % 4 else None for i in range(n)]
    big = np.empty(n, object)
    big[:] = [2**40 if i == 3 else None for i in range(n)]
    s = StructuredSystem.from_edges(src, dst, n, weights=weights if weighted else None,
                                    state_names=names,
                                    nodes={"x": x, "actuator": [i % 5 != 0 for i in range(n)],
                                           "kind": kind, "count": count, "big": big})
    wkind = np.empty(2, object)
    wkind[:] = ["weather ☀", None]
    s = s.with_disturbances({"w&1": ["a&b", "]]>"], "wind \"gust\"": ["東京"]},
                            nodes={"source": wkind})
    return s.with_regulated({"z:<tag>": ["<tag>"], "z:Zürich": ["Zürich"]})


def _random_system(rng: np.random.Generator) -> StructuredSystem:
    n = int(rng.integers(1, 30))
    pool = TRICKY + [f"s{i}" for i in range(40)]
    names = [pool[i] for i in rng.permutation(len(pool))[:n]]
    k = int(rng.integers(0, 3 * n))
    src, dst = rng.integers(0, n, k), rng.integers(0, n, k)
    key = np.unique(src * n + dst)
    src, dst = key // n, key % n
    symmetric = rng.random() < 0.3
    if symmetric:  # an undirected network: the Matrix Market file says 'symmetric'
        src, dst = np.concatenate([src, dst]), np.concatenate([dst, src])
        key = np.unique(src * n + dst)
        src, dst = key // n, key % n
    weighted = rng.random() < 0.6
    weights = None
    if weighted:
        w = rng.standard_normal(src.size) * 10.0 ** rng.integers(-5, 6, src.size)
        if symmetric:  # equal weights both ways (and sometimes opposite: skew)
            sign = -1.0 if rng.random() < 0.3 else 1.0
            lookup = dict(zip((src * n + dst).tolist(), w.tolist()))
            w = np.array([lookup[min(u, v) * n + max(u, v)] * (sign if u > v else 1.0)
                          for u, v in zip(src.tolist(), dst.tolist())])
            if sign < 0:
                keep = src != dst
                src, dst, w = src[keep], dst[keep], w[keep]
        weights = w
    nodes = {}
    if rng.random() < 0.7:
        nodes["y"] = np.where(rng.random(n) < 0.8, rng.standard_normal(n), np.nan)
        nodes["sensor"] = rng.random(n) < 0.5
        label = np.empty(n, object)
        label[:] = [pool[int(i)] if rng.random() < 0.6 else None
                    for i in rng.integers(0, len(pool), n)]
        nodes["tag"] = label
        level = np.empty(n, object)
        level[:] = [int(v) if rng.random() < 0.5 else None for v in rng.integers(-50, 50, n)]
        nodes["level"] = level
    s = StructuredSystem.from_edges(src, dst, n, weights=weights, state_names=names,
                                    nodes=nodes)
    if rng.random() < 0.5:
        hit = sorted(set(rng.integers(0, n, 2).tolist()))
        s = s.with_disturbances({"w:x": [names[i] for i in hit]})
    if rng.random() < 0.5:
        z = int(rng.integers(0, n))
        s = s.with_regulated({f"z:{names[z]}": [names[z]]})
    return s


def _cases():
    rng = np.random.default_rng(2026)
    out = [pytest.param(_tricky_system(True), id="tricky-weighted"),
           pytest.param(_tricky_system(False), id="tricky-pattern"),
           pytest.param(StructuredSystem.from_edges([], [], 3, state_names=["a", "b", "c"]),
                        id="no-links"),
           pytest.param(StructuredSystem.from_edges([0, 1], [1, 0], 2), id="two-way")]
    out += [pytest.param(_random_system(rng), id=f"random-{i}") for i in range(40)]
    return out


CASES = _cases()


def _nx_bytes(fn, g) -> bytes:
    buf = io.BytesIO()
    fn(g, buf)
    return buf.getvalue()


# --------------------------------------------------------------------------- GraphML
@pytest.mark.parametrize("system", CASES)
def test_graphml_bytes_equal_networkx(system, tmp_path):
    out = tmp_path / "n.graphml"
    write(system, out)
    assert out.read_bytes() == _nx_bytes(nx.write_graphml_xml, system_to_graph(system))


def _expected_nodes(system: StructuredSystem, *, gml: bool) -> dict[str, dict]:
    """Every node the file must hold, with its attributes as the reader gives them
    (GML holds booleans as 1/0)."""
    want: dict[str, dict] = {}
    regulated = set(dedicated_regulated(system) or ())
    for i, name in enumerate(system.state_names):
        row = {}
        for k, col in system.nodes.items():
            v = col[i]
            if v is None or (isinstance(v, float) and math.isnan(v)):
                continue
            row[k] = v.item() if isinstance(v, np.generic) else v
        if name in regulated:
            row["regulated"] = True
        want[name] = row
    for j, name in enumerate(system.disturbance_names):
        row = {"disturbance": True}
        for k, col in system.disturbance_nodes.items():
            if col[j] is not None:
                row[k] = col[j]
        want[name] = row
    if gml:
        want = {u: {k: int(v) if isinstance(v, bool) else v for k, v in row.items()}
                for u, row in want.items()}
    return want


def _expected_links(system: StructuredSystem) -> dict[tuple[str, str], float]:
    names = system.state_names
    A = system.A.tocoo()
    out = {(names[int(u)], names[int(v)]): float(w) for v, u, w in zip(A.row, A.col, A.data)}
    E = system.E.tocoo()
    out.update({(system.disturbance_names[int(j)], names[int(i)]): float(w)
                for i, j, w in zip(E.row, E.col, E.data)})
    return out


def _check_graph(g, system: StructuredSystem, *, gml: bool) -> None:
    want = _expected_nodes(system, gml=gml)
    assert g.is_directed()
    assert list(g.nodes) == list(want)  # every node, isolated ones too, in order
    for u, row in want.items():
        got = dict(g.nodes[u])
        if gml:
            got.pop("id", None)
        assert got == row, u
        for k, v in row.items():  # same type, not only the same value (True != 1 here)
            assert type(got[k]) is type(v), (u, k)
    links = _expected_links(system)
    got = {(u, v): d for u, v, d in g.edges(data=True)}
    assert set(got) == set(links)  # self-loops included
    for e, w in links.items():
        if system.weighted:
            assert got[e] == {"weight": w}, e
        else:
            assert got[e] == {}, e


@pytest.mark.parametrize("system", CASES)
def test_graphml_read_back_with_networkx(system, tmp_path):
    out = tmp_path / "n.graphml"
    write(system, out)
    _check_graph(nx.read_graphml(out), system, gml=False)


# --------------------------------------------------------------------------- GML
@pytest.mark.parametrize("system", CASES)
def test_gml_bytes_equal_networkx(system, tmp_path):
    out = tmp_path / "n.gml"
    write(system, out)
    g = system_to_graph(system)
    for _, d in g.nodes(data=True):
        for k, v in list(d.items()):
            if isinstance(v, bool):
                d[k] = int(v)
    assert out.read_bytes() == _nx_bytes(nx.write_gml, g)


@pytest.mark.parametrize("system", CASES)
def test_gml_read_back_with_networkx(system, tmp_path):
    out = tmp_path / "n.gml"
    write(system, out)
    g = nx.read_gml(out, label="label")
    big = {u: {k: v for k, v in row.items() if isinstance(v, int) and not
               -(2**31) <= v < 2**31} for u, row in _expected_nodes(system, gml=True).items()}
    for u, row in big.items():  # GML holds 32-bit integers: larger ones are written as text
        for k, v in row.items():
            assert g.nodes[u][k] == str(v)
            g.nodes[u][k] = v
    _check_graph(g, system, gml=True)


def test_gml_refuses_a_column_that_is_no_gml_key(tmp_path):
    """A node-table column GML cannot name is refused in one line, before any file is
    written (networkx raised a traceback); GML keys, Himsolt (1997), the GML grammar."""
    from netctl.errors import InvalidSystemError

    s = StructuredSystem.from_edges([0], [1], 2, nodes={"pipe size": [1.0, 2.0]})
    with pytest.raises(InvalidSystemError, match=r"'pipe size' is not a GML key.*rename"):
        write(s, tmp_path / "n.gml")
    assert list(tmp_path.iterdir()) == []


def test_gml_says_that_a_label_column_is_not_kept(tmp_path):
    """GML uses 'id' and 'label' for the node's number and name: a node-table column of
    either name is not written, and a warning says so (it was dropped silently)."""
    label = np.empty(2, object)
    label[:] = ["first", "second"]
    s = StructuredSystem.from_edges([0], [1], 2, nodes={"label": label, "x": [1.0, 2.0]})
    with pytest.warns(UserWarning, match=r"'label' was not written: GML gives"):
        write(s, tmp_path / "n.gml")
    g = nx.read_gml(tmp_path / "n.gml", label="label")
    assert list(g.nodes) == ["x0", "x1"] and g.nodes["x1"]["x"] == 2.0


# --------------------------------------------------------------------------- Matrix Market
def _scipy_mtx(system: StructuredSystem) -> bytes:
    buf = io.BytesIO()
    scipy.io.mmwrite(buf, sp.coo_matrix(system.A),
                     field="real" if system.weighted else "pattern",
                     comment=" netctl: A[i, j] != 0 means state j influences state i")
    return buf.getvalue()


def _scipy_writes_shortest_scientific() -> bool:
    """Whether this scipy build writes shortest round-trip reals as ``1E-1`` (Ryu or
    Dragonbox; the layout mtx_bytes follows) and not through another formatter."""
    buf = io.BytesIO()
    scipy.io.mmwrite(buf, sp.coo_matrix(np.array([[0.1, 100.0]])))
    return buf.getvalue().splitlines()[-2:] == [b"1 1 1E-1", b"1 2 1E2"]


@pytest.mark.parametrize("system", CASES)
def test_mtx_bytes_equal_scipy(system):
    if system.weighted and not _scipy_writes_shortest_scientific():
        pytest.skip("this scipy build formats reals another way; the read-back test "
                    "still checks every value")
    assert mtx_bytes(system) == _scipy_mtx(system)


@pytest.mark.parametrize("system", CASES)
def test_mtx_read_back_with_scipy(system, tmp_path):
    out = tmp_path / "n.mtx"
    with pytest.warns(UserWarning) if (system.n_disturbances or any(
            a != f"x{i}" for i, a in enumerate(system.state_names)) or system.nodes
            or system.n_regulated) else _no_warning():
        write(system, out)
    M = scipy.io.mmread(out)
    assert M.shape == (system.n_states, system.n_states)
    assert np.array_equal(np.asarray(sp.csr_array(M).toarray()), system.A.toarray())
    assert out.read_bytes().split(b"\n")[0].split()[3] in (b"pattern", b"real")
    # as scipy writes it, a matrix without entries says 'real' (no values to tell it by)
    assert (out.read_bytes().split(b"\n")[0].split()[3] == b"real") == (
        system.weighted or system.A.nnz == 0)


class _no_warning:
    def __enter__(self):
        import warnings

        self._c = warnings.catch_warnings()
        self._c.__enter__()
        warnings.simplefilter("error")

    def __exit__(self, *exc):
        return self._c.__exit__(*exc)


SHORTEST = [  # value, as scipy >= 1.12 writes it (checked against scipy.io.mmwrite)
    (0.1, "1E-1"), (1.0, "1"), (-2.5, "-2.5"), (100.0, "1E2"), (3e20, "3E20"),
    (1.2345678901234567, "1.2345678901234567"), (123456789012345678.0, "1.2345678901234568E17"),
    (5e-324, "5E-324"), (1 / 3, "3.333333333333333E-1"), (1e15, "1E15"), (-0.0, "-0"),
    (7e-05, "7E-5"), (1.7976931348623157e308, "1.7976931348623157E308"), (12.5, "1.25E1"),
]


@pytest.mark.parametrize("value, text", SHORTEST, ids=[t for _, t in SHORTEST])
def test_shortest_real_known_values(value, text):
    assert shortest_real(value) == text
    assert float(text) == value  # reads back as the same double


def test_shortest_real_matches_scipy_on_random_doubles():
    if not _scipy_writes_shortest_scientific():
        pytest.skip("this scipy build formats reals another way")
    rng = np.random.default_rng(3)
    vals = np.concatenate([rng.standard_normal(4000) * 10.0 ** rng.integers(-300, 300, 4000),
                           rng.integers(-10**6, 10**6, 1000).astype(float),
                           rng.random(1000)])
    buf = io.BytesIO()
    scipy.io.mmwrite(buf, sp.coo_matrix((vals, (np.zeros(vals.size, int),
                                                 np.arange(vals.size))),
                                        shape=(1, vals.size)))
    written = [line.split()[2].decode() for line in buf.getvalue().splitlines()[3:]]
    assert [shortest_real(v) for v in vals.tolist()] == written


@pytest.mark.parametrize("weighted, limit", [(True, 22), (False, 2)])
def test_large_mtx_still_goes_through_scipy(tmp_path, monkeypatch, weighted, limit):
    """Above SMALL_WRITE weighted entries (ten times as many for a pattern) scipy's
    compiled writer is used, with the same bytes as the small writer."""
    from netctl.io import mtx

    s = _tricky_system(weighted)  # 23 entries
    want = mtx_bytes(s)

    def refuse(system):
        raise AssertionError("the small writer ran above SMALL_WRITE")

    monkeypatch.setattr(mtx, "SMALL_WRITE", limit)
    monkeypatch.setattr(mtx, "mtx_bytes", refuse)
    out = tmp_path / "n.mtx"
    with pytest.warns(UserWarning):
        write(s, out)
    assert out.read_bytes() == want
    monkeypatch.setattr(mtx, "SMALL_WRITE", limit + 1)  # at the limit: the small writer
    with pytest.raises(AssertionError, match="small writer ran"), pytest.warns(UserWarning):
        write(s, out)


# --------------------------------------------------------------------------- the map's export
@pytest.mark.parametrize("system", CASES[:12])
def test_map_graphml_equals_networkx_and_reads_back(system):
    from netctl.viz import map_marks
    from netctl.viz.export import graphml_text, link_kinds, node_flags
    from netctl.viz.placement import map_placement

    marks, place = map_marks(system), map_placement(system)
    text = graphml_text(system, marks, place)
    g = nx.read_graphml(io.BytesIO(text.encode("utf-8")))
    names = list(system.state_names)
    assert list(g.nodes) == names
    flags = node_flags(system, marks)
    for i, u in enumerate(names):
        assert g.nodes[u]["x"] == float(place.xy[i, 0]) and g.nodes[u]["y"] == float(
            place.xy[i, 1])
        for k, col in flags.items():
            assert g.nodes[u][k] == col[i], (u, k)
    src, dst, kind, critical = link_kinds(system, marks)
    assert {(names[u], names[v]): {"kind": k, "critical": bool(c)} for u, v, k, c in
            zip(src.tolist(), dst.tolist(), kind.tolist(), critical.tolist())} == {
        (u, v): d for u, v, d in g.edges(data=True)}
    # the same text networkx gave (the export before), built from the same graph
    ref = nx.DiGraph()
    for u in names:
        ref.add_node(u, **{k: v for k, v in g.nodes[u].items()})
    for u, v in zip(src.tolist(), dst.tolist()):
        ref.add_edge(names[u], names[v], **g.edges[names[u], names[v]])
    assert text == "\n".join(nx.generate_graphml(ref, prettyprint=False)) + "\n"


def test_unusual_values_go_through_networkx(tmp_path):
    """A node-table value of a type the small writers do not write (here a NumPy
    integer in a text column) is written by networkx, exactly as before."""
    col = np.empty(2, object)
    col[:] = [np.int64(3), "text"]
    s = StructuredSystem.from_edges([0], [1], 2, nodes={"mixed": col})
    write(s, tmp_path / "n.graphml")
    assert (tmp_path / "n.graphml").read_bytes() == _nx_bytes(nx.write_graphml_xml,
                                                              system_to_graph(s))
    assert b'attr.type="int"' in (tmp_path / "n.graphml").read_bytes()


def test_written_files_read_back_with_netctl(tmp_path):
    """And netctl's own readers give the system back from each file."""
    s = _tricky_system(True)
    for suffix in ("graphml", "gml"):
        write(s, tmp_path / f"n.{suffix}")
        back = read(tmp_path / f"n.{suffix}")
        assert list(back.state_names) == list(s.state_names), suffix
        assert back.n_links == s.n_links and back.n_disturbances == 2, suffix
        assert np.array_equal(back.A.toarray(), s.A.toarray()), suffix
