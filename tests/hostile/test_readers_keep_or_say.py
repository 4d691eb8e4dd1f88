"""Nothing in a good file is dropped silently: each reader keeps it or says so with the
file and the line (docs/HOSTILE.md). Each case below was passed over silently, or said
without its line, before:

* ``.toml``: a link given twice named no entry; now the entry holding the repeat and
  the one it repeats (``[couplings] links`` entry and line, the coupling file's line,
  a tie, a ``self`` attribute).
* GraphML: a ``<default>`` of a key was not applied (a link without ``<data>`` got the
  weight 1.0, a node attribute NaN); graphs after the first, a graph nested in a node
  and ``<port>`` elements were passed over silently.
* GraphML, GML, node-link JSON: a link without a weight among weighted ones got 1.0
  silently.
* Matrix Market: an entry given twice and a stored zero named no line.
* node-link JSON: a file with both a ``links`` and an ``edges`` list lost one of them.
* ``.npz``: arrays other than those of ``A`` were passed over silently.
* matrix CSV: row labels that differ from the column names named no line.

Expected lines are found in the file's text here (the file is the reference).
"""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pytest

from netctl.cli import main
from netctl.errors import NetworkFileError
from netctl.io import read
from netctl.io.system_spec import read_spec


def _line_of(text: str, needle: str, nth: int = 1) -> int:
    """Line (from 1) of the ``nth`` line of ``text`` that holds ``needle``."""
    hits = [n for n, line in enumerate(text.splitlines(), start=1) if needle in line]
    return hits[nth - 1]


def _said(path: Path) -> tuple[object, list[str]]:
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        s = read(path)
    return s, [str(w.message) for w in caught]


# ---------------------------------------------------------------- TOML
_SPEC = """[system]
name = "loop"
description = "an invented heating loop"

[states]
boiler = {{ self = true }}
header = {{}}
{extra_states}
[couplings]
{file}links = [
  ["boiler", "header"],
  ["header", "return"],
  {repeat}
]
"""


@pytest.mark.parametrize("repeat, here, there, side", [
    pytest.param('["boiler", "header"],', "[couplings] links entry 3",
                 "[couplings] links entry 1", None, id="links-twice"),
    pytest.param('["boiler", "boiler"],', "the 'self' attribute of state 'boiler'",
                 "[couplings] links entry 3", None, id="self-and-a-link"),
    pytest.param('["return", "boiler"],', "[couplings] links entry 3",
                 "the coupling file {side} (line 3)", "source,target\nreturn,header\n"
                 "return,boiler\n", id="links-and-the-coupling-file"),
])
def test_toml_repeat_names_both_entries(tmp_path, repeat, here, there, side):
    side_path = tmp_path / "loop.edges.csv"
    if side:
        side_path.write_text(side)
    text = _SPEC.format(extra_states="", repeat=repeat,
                        file='file = "loop.edges.csv"\n' if side else "")
    p = tmp_path / "loop.toml"
    p.write_text(text)
    with pytest.warns(UserWarning) as caught:
        read_spec(p)
    said = [str(w.message) for w in caught if "duplicate" in str(w.message)]
    # the repeat's own line: the 'self' line, or the repeated entry's line (the last
    # line holding it)
    needle = "self = true" if "self" in here else repeat.rstrip(",")
    line = _line_of(text, needle, text.count(needle) if "self" not in here else 1)
    there = there.format(side=side_path)
    if "links entry" in there:
        first = text.splitlines().index(
            "  " + ('["boiler", "boiler"],' if "self" in here else repeat)) + 1
        there += f" (line {first})"
    assert len(said) == 1 and said[0] == (
        f"{p}:{line}: 1 duplicate link was merged: the link "
        f"{said[0].split('the link ')[1].split(' from ')[0]} from {here} repeats the one "
        f"from {there}. Give each link once."), said
    # the link named is the repeated one
    ends = repeat.strip("[],").replace('"', "").split(", ")
    assert f"the link {ends[0]!r} -> {ends[1]!r} from" in said[0], said


def test_toml_repeat_through_the_cli(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "loop.toml").write_text(_SPEC.format(
        extra_states="", file="", repeat='["boiler", "header"],'))
    assert main(["inspect", "loop.toml", "--json"]) == 0
    err = capsys.readouterr().err
    assert err == ("netctl: warning: loop.toml:13: 1 duplicate link was merged: the link "
                   "'boiler' -> 'header' from [couplings] links entry 3 repeats the one from "
                   "[couplings] links entry 1 (line 11). Give each link once.\n"), err


# ---------------------------------------------------------------- GraphML
_GRAPHML = """<?xml version="1.0" encoding="UTF-8"?>
<graphml xmlns="http://graphml.graphdrawing.org/xmlns">
  <key id="w" for="edge" attr.name="weight" attr.type="double"><default>2.5</default></key>
  <key id="x" for="node" attr.name="x" attr.type="double"><default>4.0</default></key>
  <graph edgedefault="directed">
    <node id="a"><data key="x">1.0</data></node>
    <node id="b"{inside}
    <edge source="a" target="b"/>
    <edge source="b" target="a"><data key="w">1.5</data></edge>
  </graph>
{after}</graphml>
"""


def _graphml(inside: str = "/>", after: str = "") -> str:
    return _GRAPHML.format(inside=inside, after=after)


def test_graphml_defaults_are_applied(tmp_path):
    """GraphML Primer (W3C-style spec at graphml.graphdrawing.org), section 2.4.3, from
    memory: a <default> holds for every element of the key's domain without <data> of
    that key. The reference library agrees once its kept-aside defaults are applied."""
    import networkx as nx

    p = tmp_path / "d.graphml"
    p.write_text(_graphml())
    s, said = _said(p)
    assert not said, said
    i = s.index_of(["a", "b"])
    assert s.A[i[1], i[0]] == 2.5 and s.A[i[0], i[1]] == 1.5  # a -> b by default
    assert s.nodes["x"].tolist() == [1.0, 4.0]
    g = nx.read_graphml(p)  # the reference keeps the defaults aside, in g.graph
    assert g.graph["edge_default"] == {"weight": 2.5}
    assert g.graph["node_default"] == {"x": 4.0}


@pytest.mark.parametrize("inside, after, needle, said", [
    pytest.param("/>", '  <graph id="second" edgedefault="directed">\n    <node id="z"/>\n'
                 '  </graph>\n', '<graph id="second"',
                 "the file holds 2 graphs; only the first (line 5) was read, and the nodes "
                 "and links of the other graph are not kept. Put each network in a file of "
                 "its own.", id="second-graph"),
    pytest.param('>\n      <graph id="inner" edgedefault="directed"><node id="b::x"/></graph>'
                 '\n    </node>', "", '<graph id="inner"',
                 "the graph nested in node 'b' was not read: its nodes and links are not "
                 "kept (a nested graph is read only in a yFiles group node). Move its nodes "
                 "and links into the top-level graph.", id="nested-graph"),
    pytest.param('><port name="p1"/><port name="p2"/></node>', "", "<port",
                 "<port> elements are not kept (2 in all): each link is read as joining its "
                 "two nodes. Remove the ports to silence this.", id="ports"),
])
def test_graphml_what_is_not_read_is_said(tmp_path, inside, after, needle, said):
    text = _graphml(inside, after)
    p = tmp_path / "g.graphml"
    p.write_text(text)
    s, got = _said(p)
    assert got == [f"{p}:{_line_of(text, needle)}: {said}"], got
    assert s.state_names == ("a", "b")


def test_graphml_second_graph_through_the_cli(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "g.graphml").write_text(_graphml(
        after='  <graph id="second" edgedefault="directed">\n    <node id="z"/>\n  </graph>\n'))
    assert main(["inspect", "g.graphml", "--json"]) == 0
    err = capsys.readouterr().err
    assert err.startswith("netctl: warning: g.graphml:11: the file holds 2 graphs; only the "
                          "first (line 5) was read"), err
    assert err.count("\n") == 1, err


# ---------------------------------------------------------------- links without a weight
_UNWEIGHTED = {
    "g.graphml": ('<?xml version="1.0" encoding="UTF-8"?>\n'
                  '<graphml xmlns="http://graphml.graphdrawing.org/xmlns">\n'
                  '  <key id="w" for="edge" attr.name="weight" attr.type="double"/>\n'
                  '  <graph edgedefault="directed">\n'
                  '    <node id="a"/>\n    <node id="b"/>\n    <node id="c"/>\n'
                  '    <edge source="a" target="b"><data key="w">2</data></edge>\n'
                  '    <edge source="b" target="c"/>\n'
                  '    <edge source="c" target="a"/>\n'
                  '  </graph>\n</graphml>\n', 'target="c"/>'),
    "g.gml": ('graph [\n  directed 1\n  node [ id 0 label "a" ]\n  node [ id 1 label "b" ]\n'
              '  node [ id 2 label "c" ]\n  edge [ source 0 target 1 weight 2 ]\n'
              '  edge [ source 1 target 2 ]\n  edge [ source 2 target 0 ]\n]\n',
              "source 1 target 2"),
    "g.json": ('{"directed": true,\n "nodes": [{"id": "a"}, {"id": "b"}, {"id": "c"}],\n'
               ' "links": [{"source": "a", "target": "b", "weight": 2},\n'
               '           {"source": "b", "target": "c"},\n'
               '           {"source": "c", "target": "a"}]}\n', '"source": "b"'),
}


@pytest.mark.parametrize("name", sorted(_UNWEIGHTED))
def test_links_without_a_weight_among_weighted_ones_are_said(tmp_path, name):
    text, needle = _UNWEIGHTED[name]
    p = tmp_path / name
    p.write_text(text)
    s, said = _said(p)
    assert said == [f"{p}:{_line_of(text, needle)}: 2 links without a weight were given the "
                    "weight 1.0, because other links have weights (the first: 'b' -> 'c'). "
                    "Give every link a weight (or none)."], said
    assert sorted(s.A.data.tolist()) == [1.0, 1.0, 2.0]  # kept, as said


# ---------------------------------------------------------------- Matrix Market
def test_matrix_market_repeat_and_zero_name_their_lines(tmp_path, monkeypatch, capsys):
    text = ("%%MatrixMarket matrix coordinate real general\n% an invented plant\n3 3 5\n"
            "2 1 1.0\n3 2 0.0\n3 2 2.0\n1 3 1.0\n3 2 0.5\n")
    p = tmp_path / "a.mtx"
    p.write_text(text)
    s, said = _said(p)
    assert said == [
        f"{p}:6: 2 entries given twice were merged (values summed): the entry (row 3, column "
        "2) here repeats the one on line 5. Give each entry once (one entry with the summed "
        "value, if both were meant).",
    ], said  # the 0.0 is summed into the entry (2.5): no zero entry is left
    lines = text.splitlines()
    assert lines[5].startswith("3 2") and lines[4].startswith("3 2")
    text = text.replace("3 2 0.5", "2 2 0")
    p.write_text(text)
    s, said = _said(p)
    assert f"{p}:8: 1 explicitly stored zero entry is no link and was left out (the first on " \
           "this line)." in said[-1], said
    monkeypatch.chdir(tmp_path)
    assert main(["inspect", "a.mtx", "--json"]) == 0
    err = capsys.readouterr().err
    assert "netctl: warning: a.mtx:6: 1 entry given twice was merged" in err, err
    assert "netctl: warning: a.mtx:8: 1 explicitly stored zero entry" in err, err


def test_matrix_market_symmetric_repeat_counts_the_mirror(tmp_path):
    """In a symmetric file, (3, 1) also stores (1, 3) (Matrix Market format, NIST, from
    memory): a later (1, 3) repeats the mirror of line 3."""
    p = tmp_path / "s.mtx"
    p.write_text("%%MatrixMarket matrix coordinate real symmetric\n3 3 2\n3 1 2.0\n1 3 1.0\n")
    s, said = _said(p)
    assert said[0].startswith(f"{p}:4: 2 entries given twice were merged (values summed): "
                              "the entry (row 1, column 3) here repeats the one on line 3."), said


# ---------------------------------------------------------------- node-link JSON
def test_json_with_links_and_edges_is_refused(tmp_path, monkeypatch, capsys):
    text = ('{"directed": true, "nodes": [{"id": "a"}, {"id": "b"}],\n'
            ' "links": [{"source": "a", "target": "b"}],\n'
            ' "edges": [{"source": "b", "target": "a"}]}\n')
    monkeypatch.chdir(tmp_path)
    (tmp_path / "n.json").write_text(text)
    assert main(["convert", "n.json", "out.toml"]) == 2
    err = capsys.readouterr().err
    assert err == ('netctl: error: n.json:3: the file holds both a "links" list (1 item) and '
                   'an "edges" list (1 item); netctl reads one list of links and would pass '
                   'over the other. Put all links in "links".\n'), err
    assert not list(tmp_path.glob("out*"))  # no output file, not even a partial one
    with pytest.raises(NetworkFileError, match=r"n\.json:3: the file holds both"):
        read(tmp_path / "n.json")


# ---------------------------------------------------------------- .npz
def test_npz_arrays_not_read_are_said(tmp_path, monkeypatch, capsys):
    import scipy.sparse as sp

    p = tmp_path / "m.npz"
    A = sp.csr_array(np.array([[0.0, 1.0], [0.0, 0.0]]))
    np.savez(p, format=np.array(b"csr"), shape=np.array(A.shape), data=A.data,
             indices=A.indices, indptr=A.indptr, B=np.array([[1.0], [0.0]]))
    s, said = _said(p)
    assert said == [f"{p}: the arrays 'B' are not read: an .npz holds the matrix A only "
                    "(scipy.sparse.save_npz's arrays, with state_names and weighted). Write "
                    "inputs, outputs and node tables to a .toml description to keep them."]
    assert s.n_links == 1
    sp.save_npz(tmp_path / "plain.npz", A)  # the reference writer's arrays: silent
    assert _said(tmp_path / "plain.npz")[1] == []
    monkeypatch.chdir(tmp_path)
    assert main(["inspect", "m.npz", "--json"]) == 0
    assert capsys.readouterr().err.startswith("netctl: warning: m.npz: the arrays 'B' are "
                                              "not read")


# ---------------------------------------------------------------- matrix CSV
def test_matrix_csv_row_label_mismatch_names_its_line(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "m.matrix.csv").write_text(",a,b,c\na,0,1,0\nc,0,0,1\nb,0,0,0\n")
    assert main(["convert", "m.matrix.csv", "out.json"]) == 2
    err = capsys.readouterr().err
    assert err == ("netctl: error: m.matrix.csv:3: the row label 'c' differs from the name of "
                   "column 2 ('b'); a state matrix has the same states, in the same order, on "
                   "both sides. Put the rows in the order of the columns.\n"), err
    assert not list(tmp_path.glob("out*"))


# ---------------------------------------------------------------- TOML weights of 0
_WEIGHTS = """[system]
name = "w"
description = "an invented three-tank line"

[couplings]
{file}links = [
  ["a", "b", 0],
  ["b", "c", 1.0],
  ["c", "a", 2],
  ["c", "a", -2],
]
"""


def test_toml_zero_weight_and_cancelled_links_are_said(tmp_path, monkeypatch, capsys):
    """A link of weight 0 is no link (left out, as edge lists say), and repeats whose
    weights sum to 0 leave no link: both were left out silently."""
    text = _WEIGHTS.format(file="")
    p = tmp_path / "w.toml"
    p.write_text(text)
    with pytest.warns(UserWarning) as caught:
        s = read_spec(p).system
    said = [str(w.message) for w in caught]
    line = _line_of(text, '["a", "b", 0]')
    assert said[0] == (f"{p}:{line}: 1 link with weight 0 is "
                       "not a link and was left out (the first: 'a' -> 'b' from [couplings] "
                       "links entry 1). Remove it, or give the weight it has."), said
    assert said[2] == (f"{p}: 1 link given more than once with weights that sum to 0 was left "
                       "out (no link is left where weights cancel); give each link once, with "
                       "its weight."), said
    assert "1 duplicate link was merged (weights summed): the link 'c' -> 'a' from " \
           "[couplings] links entry 4" in said[1], said
    assert s.n_links == 1  # b -> c only
    monkeypatch.chdir(tmp_path)
    assert main(["inspect", "w.toml", "--json"]) == 0
    err = capsys.readouterr().err.splitlines()
    assert err[0].startswith("netctl: warning: w.toml:7: 1 link with weight 0"), err
    assert len(err) == 3, err


def test_toml_coupling_file_zero_weight_is_said(tmp_path):
    (tmp_path / "w.edges.csv").write_text("source,target,weight\nx,y,1\ny,z,0\n")
    p = tmp_path / "w.toml"
    p.write_text('[system]\nname = "w"\ndescription = "d"\n\n[couplings]\n'
                 'file = "w.edges.csv"\nlinks = [["z", "x", 0]]\n')
    with pytest.warns(UserWarning) as caught:
        s = read_spec(p).system
    assert [str(w.message) for w in caught] == [  # the file's links come first
        f"{p}: 2 links with weight 0 are not a link and were left out (the first: 'y' -> 'z' "
        f"from the coupling file {tmp_path / 'w.edges.csv'} (line 3)). Remove them, or give "
        "the weight each has."]
    assert s.state_names == ("x", "y", "z") and s.n_links == 1  # the states stay


def test_graphml_hyperedge_refused_on_its_line(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "h.graphml").write_text(
        '<?xml version="1.0"?>\n<graphml xmlns="http://graphml.graphdrawing.org/xmlns">\n'
        '  <graph edgedefault="directed">\n    <node id="a"/><node id="b"/>\n'
        '    <hyperedge><endpoint node="a"/><endpoint node="b"/></hyperedge>\n'
        '  </graph>\n</graphml>\n')
    assert main(["convert", "h.graphml", "out.json"]) == 2
    err = capsys.readouterr().err
    assert err == ("netctl: error: h.graphml:5: not a GraphML graph netctl can read: GraphML "
                   "reader doesn't support hyperedges. A link joins two states: write the "
                   "hyperedge as <edge> elements from each source to each target.\n"), err
    assert not list(tmp_path.glob("out*"))
