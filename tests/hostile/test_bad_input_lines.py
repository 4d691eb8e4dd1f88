"""Bad input is refused on the line to correct, for every reader that has lines.

The house rule (docs/HOSTILE.md): one line naming the file, the line and the fix, exit
status 2, no traceback, no output file. Each case below was refused before, but without
its line (graph files: NaN or infinite weights, a node id given twice) or on the wrong
line (an edge list whose first link line ends with an empty weight column was refused on
the next line). Besides the expected message, each test checks independently that the
line it names holds the offending text (the file is the reference, not the reader).
"""

from __future__ import annotations

import warnings
from pathlib import Path

import pytest

from netctl.cli import main
from netctl.errors import NetworkFileError
from netctl.io import read
from netctl.io.edgelist import read_edge_arrays

_GRAPHML = ('<?xml version="1.0" encoding="UTF-8"?>\n'
            '<graphml xmlns="http://graphml.graphdrawing.org/xmlns">\n'
            '  <key id="d0" for="edge" attr.name="weight" attr.type="{wtype}"/>\n'
            '  <key id="d1" for="node" attr.name="x" attr.type="double"/>\n'
            '  <graph edgedefault="{edges}">\n'
            '    <node id="a"><data key="d1">1.0</data></node>\n'
            '    <node id="b"/>\n'
            '    <node id="c"/>\n'
            '    <edge source="a" target="b"><data key="d0">1.5</data></edge>\n'
            '{extra}'
            '  </graph>\n</graphml>\n')


def _graphml(extra: str, wtype: str = "double", edges: str = "directed") -> str:
    return _GRAPHML.format(extra=extra, wtype=wtype, edges=edges)


_GML = ('graph [\n  directed 1\n  node [ id 0 label "a" ]\n  node [ id 1 label "b" ]\n'
        '  node [\n    id 2\n    label "c"\n  ]\n  edge [ source 0 target 1 weight 1.5 ]\n'
        '{extra}]\n')
_JSON = ('{{"directed": true,\n "nodes": [{{"id": "a"}},\n           {{"id": "b"}},\n'
         '           {{"id": "c"}}{nodes}],\n'
         ' "links": [{{"source": "a", "target": "b", "weight": 1.5}},\n'
         '           {{"source": "b", "target": "c", "weight": {w}}}]}}\n')

#: (file name, content, the message's start after the path, text on the named line)
CASES = [
    pytest.param("w.graphml", _graphml('    <edge source="b" target="c"><data key="d0">NaN'
                                       '</data></edge>\n'),
                 ":10: the link 'b' -> 'c' has the weight nan, which is NaN or infinite; give "
                 "a finite weight.", "NaN", id="graphml-nan-weight"),
    pytest.param("w.graphml", _graphml('    <edge source="b" target="c"><data key="d0">-INF'
                                       '</data></edge>\n', edges="undirected"),
                 ":10: the link 'b' -> 'c' has the weight -inf", "-INF",
                 id="graphml-undirected-inf-weight"),
    pytest.param("w.graphml", _graphml('    <edge source="c" target="a"><data key="d0">2'
                                       '</data></edge>\n'
                                       '    <edge source="b" target="c"><data key="d0">inf'
                                       '</data></edge>\n', wtype="string"),
                 ":11: the link 'b' -> 'c' has the weight 'inf', which is NaN or infinite",
                 "inf", id="graphml-string-inf-weight"),
    pytest.param("x.graphml", _graphml('    <node id="d"><data key="d1">NaN</data></node>\n'),
                 ":10: attribute 'x' of node 'd' must be a finite number, found nan",
                 '"d"', id="graphml-nan-coordinate"),
    pytest.param("w.gml", _GML.format(extra="  edge [ source 1 target 2 weight NAN ]\n"),
                 ":10: the link 'b' -> 'c' has the weight nan, which is NaN or infinite",
                 "NAN", id="gml-nan-weight"),
    pytest.param("w.gml", _GML.format(extra="  edge [\n    source 2\n    target 0\n"
                                      "    weight -INF\n  ]\n"),
                 ":10: the link 'c' -> 'a' has the weight -inf", "edge [",
                 id="gml-multiline-inf-weight"),
    pytest.param("d.gml", _GML.format(extra='  node [ id 3 label "b" ]\n'),
                 ":10: a second node has the label 'b' (first on line 4); give every node "
                 "its own label.", 'label "b"', id="gml-duplicate-label"),
    pytest.param("d.gml", _GML.format(extra='  node [ id 1 label "d" ]\n'),
                 ":10: a second node has the id 1 (first on line 4); give every node its own "
                 "id.", "id 1", id="gml-duplicate-id"),
    pytest.param("w.json", _JSON.format(nodes="", w="NaN"),
                 ":6: the link 'b' -> 'c' has the weight nan, which is NaN or infinite",
                 "NaN", id="json-nan-weight"),
    pytest.param("w.json", _JSON.format(nodes="", w="1e999"),
                 ":6: the link 'b' -> 'c' has the weight inf", "1e999", id="json-overflow-weight"),
    pytest.param("w.json", _JSON.format(nodes="", w='"heavy"'),
                 ":6: the weight 'heavy' of the link 'b' -> 'c' is not a number", "heavy",
                 id="json-text-weight"),
    pytest.param("d.json", _JSON.format(nodes=',\n           {"id": "b"}', w="2"),
                 ":5: a second node has the name 'b' (as text; the first is on line 3); give "
                 "every node a distinct id.", '"b"', id="json-duplicate-id"),
    pytest.param("d.json", _JSON.format(nodes=',\n           {"id": 7},\n           '
                                        '{"id": "7"}', w="2"),
                 ":6: a second node has the name '7' (as text; the first is on line 5)",
                 '"7"', id="json-number-and-text-id"),
    pytest.param("u.json", _JSON.format(nodes="", w='2, "target": "ghost"'),
                 ":6: link 1 names the target 'ghost', which is not in \"nodes\"", "ghost",
                 id="json-unknown-node"),
    # a list item that is not an object was named by its position only
    pytest.param("n.json", _JSON.format(nodes=",\n           7", w="2"),
                 ":5: node 3 is 7, not an object; write each node as an object with an "
                 "\"id\", such as {\"id\": \"a\"}.", "7", id="json-node-not-an-object"),
    pytest.param("l.json", _JSON.replace('{{"source": "b", "target": "c", "weight": {w}}}',
                                         "{w}").format(nodes="", w="7"),
                 ":6: link 1 is 7, not an object; write each link as an object such as "
                 "{\"source\": \"a\", \"target\": \"b\"} (a \"weight\" is optional).", "7",
                 id="json-link-a-number"),
    pytest.param("l.json", _JSON.replace('{{"source": "b", "target": "c", "weight": {w}}}',
                                         "{w}").format(nodes="", w='["b", "c"]'),
                 ":6: link 1 is ['b', 'c'], not an object; write each link as an object",
                 '["b", "c"]', id="json-link-a-list"),
    pytest.param("l.json", _JSON.replace('"links"', '"edges"').format(
        nodes="", w='2}, null, {"source": "a", "target": "c"'),
        ":6: link 2 is None, not an object", "null", id="json-edges-null-item"),
    pytest.param("l.json", _JSON.format(nodes="", w='2, "to": "c"}, {"source": "a"'),
                 ":6: link 2 ({'source': 'a'}) needs \"source\" and \"target\"; give both "
                 "(ids from \"nodes\").", '"source": "a"}]', id="json-link-without-target"),
]


@pytest.mark.parametrize("name, text, message, on_line", CASES)
def test_graph_files_name_the_line(tmp_path, monkeypatch, capsys, name, text, message,
                                   on_line):
    monkeypatch.chdir(tmp_path)
    (tmp_path / name).write_text(text)
    assert main(["convert", name, "out.toml"]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"netctl: error: {name}{message}"), err
    assert err.count("\n") == 1 and "Traceback" not in err, err
    line = int(message.split(":")[1])
    assert on_line in text.splitlines()[line - 1], (line, text)
    assert sorted(p.name for p in tmp_path.iterdir()) == [name]  # no output file


def test_graphml_node_declared_twice_alike_is_said(tmp_path):
    """GraphML wants each node id once (GraphML primer, 'Nodes': the id is unique in
    the document); a repeat with the same attributes was merged by networkx silently.
    Nothing is lost, so it is read, with a warning naming both lines."""
    p = tmp_path / "t.graphml"
    p.write_text(_graphml('    <node id="b"/>\n'))
    with pytest.warns(UserWarning) as caught:
        s = read(p)
    assert s.state_names == ("a", "b", "c")
    msgs = [str(w.message) for w in caught]
    assert any(m.startswith(f"{p}:10: the node id 'b' is declared again, with the same "
                            "attributes (first on line 7); read as one node") for m in msgs), msgs


#: a link given twice in a graph file: (file name, content, line of the second, line of
#: the first, the weight kept); read with the weights summed, the warning names both lines
PARALLEL = [
    pytest.param("p.graphml", _graphml('    <edge source="b" target="c"><data key="d0">2'
                                       '</data></edge>\n'
                                       '    <edge source="a" target="b"><data key="d0">3'
                                       '</data></edge>\n'), 11, 9, 4.5, id="graphml"),
    pytest.param("p.graphml", _graphml('    <edge source="c" target="c"/>\n'
                                       '    <edge source="b" target="a"><data key="d0">3'
                                       '</data></edge>\n', edges="undirected"), 11, 9, 4.5,
                 id="graphml-undirected-reversed"),
    pytest.param("p.gml", _GML.replace("directed 1", "directed 1\n  multigraph 1").format(
        extra="  edge [ source 1 target 2 weight 2 ]\n  edge [ source 0 target 1 weight 3 ]\n"),
        12, 10, 4.5, id="gml-multigraph"),
    pytest.param("p.json", _JSON.replace('"weight": {w}}}]', '"weight": {w}}},\n'
                                         '           {{"source": "a", "target": "b", '
                                         '"weight": 3}}]').format(nodes="", w="2"),
                 7, 5, 4.5, id="node-link-json"),
]


@pytest.mark.parametrize("name, text, line, first, kept", PARALLEL)
def test_parallel_links_are_merged_with_the_line_of_the_second(tmp_path, name, text, line,
                                                               first, kept):
    """A second link between the same two nodes is merged (weights summed, nothing
    lost), and the warning names the file, the line of the second link, the line of the
    first and the fix (it named no line before)."""
    p = tmp_path / name
    p.write_text(text)
    with pytest.warns(UserWarning) as caught:
        s = read(p)
    msgs = [str(w.message) for w in caught]
    assert any(m.startswith(f"{p}:{line}: ") and "duplicate link" in m and
               f"here repeats the one on line {first}. Give each link once" in m
               for m in msgs), msgs
    assert kept in s.A.data.tolist()
    lines = text.splitlines()  # the file is the reference: both lines hold an a-b link
    for n in (line, first):
        held = lines[n - 1].replace('"', "").replace("source 0 target 1", "a b")
        assert any(f"source={u} target={v}" in held or f"source: {u}, target: {v}" in held
                   or f"{u} {v}" in held for u, v in (("a", "b"), ("b", "a"))), (n, held)


def test_parallel_link_warning_through_the_cli(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "p.graphml").write_text(PARALLEL[0].values[1])
    assert main(["convert", "p.graphml", "out.toml"]) == 0
    err = capsys.readouterr().err
    assert err.startswith("netctl: warning: p.graphml:11: 1 duplicate link was merged "
                          "(weights summed): the link 'a' -> 'b' here repeats the one on "
                          "line 9. Give each link once (one link with the summed weight, if "
                          "both were meant)."), err
    assert err.count("\n") == 1 and "Traceback" not in err


def test_good_graph_files_read_without_the_line_search(tmp_path):
    """The line search runs only on an error: good files read as before."""
    for name, text in (("g.graphml", _graphml("")), ("g.gml", _GML.format(extra="")),
                       ("g.json", _JSON.format(nodes="", w="2"))):
        p = tmp_path / name
        p.write_text(text)
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            s = read(p)
        assert set(s.state_names) == {"a", "b", "c"}
        assert s.weighted and 1.5 in s.A.data.tolist()


# ---------------------------------------------------------------- edge lists
SEPARATORS = [pytest.param(",", id="comma"), pytest.param(";", id="semicolon"),
              pytest.param("\t", id="tab")]
#: chunk sizes: the plain-Python path for small files (None), then the compiled scanner
#: with lines cut across chunks and with one chunk for all
CHUNKS = [None, 7, 64, (1 << 24) - 1]


def _message(path: Path, chunk: int | None) -> str:
    with pytest.raises(NetworkFileError) as exc:
        read_edge_arrays(path) if chunk is None else read_edge_arrays(path, chunk_bytes=chunk)
    return str(exc.value)


@pytest.mark.parametrize("sep", SEPARATORS)
@pytest.mark.parametrize("pad", [0, 3000], ids=["small", "past-the-small-path"])
def test_empty_weight_first_is_named_not_the_next_line(tmp_path, sep, pad):
    """'a,b,' then 'b,c,1': the first line's weight is empty (a trailing separator); it
    was refused on line 2, which is right. Both readers and every chunking agree."""
    tail = "".join(f"n{i}{sep}n{i + 1}{sep}1\n" for i in range(pad))
    p = tmp_path / "e.csv"
    p.write_text(f"source,target,weight\n# wiring\na{sep}b{sep}\nb{sep}c{sep}1\n{tail}")
    said = {_message(p, chunk) for chunk in CHUNKS}
    assert len(said) == 1, said
    msg = said.pop()
    assert msg.startswith(f"{p}:3: the weight column of this line is empty "
                          f"({f'a{sep}b{sep}'!r} ends with a separator), but line 4 gives a "
                          f"weight ({f'b{sep}c{sep}1'!r})."), msg


@pytest.mark.parametrize("sep", SEPARATORS + [pytest.param(" ", id="space")])
@pytest.mark.parametrize("end", ["\n", "", "\r\n"], ids=["lf", "no-final-break", "crlf"])
def test_empty_weight_after_weights_is_its_own_line(tmp_path, sep, end):
    p = tmp_path / "e.csv"
    brk = end or "\n"  # the empty weight on the last line, with or without a break
    p.write_text(f"a{sep}b{sep}1{brk}c{sep}d{sep}2{brk}b{sep}c{sep}{end}")
    said = {_message(p, chunk) for chunk in CHUNKS}
    assert len(said) == 1, said
    msg = said.pop()
    what = "this line has 2 columns" if sep == " " else "the weight column of this line is empty"
    assert msg.startswith(f"{p}:3: {what}: "), msg
    assert "(the first: line 1, " in msg, msg


def test_space_separated_empty_weight_names_both_lines(tmp_path):
    """A trailing space is layout, not a column: the line that gives a weight is named,
    with the first link line that set two columns."""
    p = tmp_path / "e.txt"
    p.write_text("a b \nb c 1\n")
    said = {_message(p, chunk) for chunk in CHUNKS}
    assert said == {f"{p}:2: this line has 3 columns: 'b c 1', but earlier link lines have 2 "
                    "(the first: line 1, 'a b'). Give a weight on every link line or on none "
                    "(a line with one name declares a state)."}, said


def test_empty_weight_through_the_cli(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "e.csv").write_text("a,b,\nb,c,1\nc,a,2\n")
    assert main(["convert", "e.csv", "out.json"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("netctl: error: e.csv:1: the weight column of this line is empty"), err
    assert err.count("\n") == 1
    assert sorted(p.name for p in tmp_path.iterdir()) == ["e.csv"]


#: a line with a cell left empty: (line text, the empty column, the names read if the
#: separators were run together -- what the reader did before)
EMPTY_CELLS = [
    pytest.param("a{s}{s}1", "target", id="empty-target"),
    pytest.param("{s}a{s}b", "source", id="empty-source"),
    pytest.param("a{s} {s}b", "target", id="blank-between"),
    pytest.param("a{s}b{s}{s}1", "weight", id="empty-weight-before-a-value"),
]


@pytest.mark.parametrize("sep", [pytest.param(",", id="comma"),
                                 pytest.param(";", id="semicolon")])
@pytest.mark.parametrize("names", ["text", "integers"])
@pytest.mark.parametrize("weighted", [False, True], ids=["two-columns", "three-columns"])
@pytest.mark.parametrize("pad", [0, 3000], ids=["small", "past-the-small-path"])
@pytest.mark.parametrize("bad, column", EMPTY_CELLS)
def test_empty_cell_is_refused_not_run_together(tmp_path, sep, names, weighted, pad, bad,
                                                 column):
    """'a,,1' (a spreadsheet's empty cell) was read as the link a -> 1 in a file without
    weights (the two separators run together), and as a column-count mismatch naming 2
    columns in one with weights. Now every reader path (the plain-Python one, the compiled
    scanner with text and integer names, any chunking) refuses it on its line, saying
    which column is empty, what is expected and the fix."""
    def name(k: int) -> str:
        return str(k + 10) if names == "integers" else f"n{k}"

    w = f"{sep}2" if weighted else ""
    good = [f"{name(k)}{sep}{name(k + 1)}{w}" for k in range(pad + 3)]
    bad_line = bad.format(s=sep).replace("a", name(0)).replace("b", name(1))
    lines = good[:2] + [bad_line] + good[2:]
    p = tmp_path / "e.csv"
    p.write_text("\n".join(lines) + "\n")
    said = {_message(p, chunk) for chunk in CHUNKS}
    assert len(said) == 1, said
    msg = said.pop()
    assert msg == (f"{p}:3: the {column} column is empty in {bad_line!r}; expected 'source "
                   "target [weight]' with a name in each of the first two columns. Write the "
                   f"missing {column} (or remove the line); two commas or semicolons in a row "
                   "leave a column empty (only spaces and tabs may repeat)."), msg
    assert p.read_text().splitlines()[2] == bad_line  # the named line is the bad one


@pytest.mark.parametrize("text", ["a,b,,\nb,c,,\n", "a;b;;\n", "a , b\nb\t\tc\n",
                                  "a, ,\n", ",,\na,b\n", "a,b # c,,d\n"],
                         ids=["trailing-run", "trailing-semicolons", "spaces-and-tabs",
                              "no-name-after", "separators-only", "in-a-comment"])
def test_what_is_not_an_empty_cell_reads_as_before(tmp_path, text):
    # separators at the end of a line, runs of spaces and tabs, lines of separators only
    # and comments are not cells left empty: the same arrays as the old rule gives
    import re

    import contextlib

    p = tmp_path / "e.csv"
    p.write_text(text)
    links = [tuple(f for f in re.split(r"[,;\s]+", ln.split("#")[0]) if f)
             for ln in text.splitlines()]
    # a single name beside a separator ('a, ,') is kept as a state, with a warning
    lone = any(len(x) == 1 for x in links)
    with (pytest.warns(UserWarning, match="holds one name and a separator") if lone
          else contextlib.nullcontext()):
        got = {_arrays(p, chunk) for chunk in CHUNKS}
    assert len(got) == 1, got
    assert got.pop() == tuple(sorted(x for x in links if len(x) == 2))


def _arrays(path: Path, chunk: int | None) -> tuple[tuple[str, ...], ...]:
    e = read_edge_arrays(path) if chunk is None else read_edge_arrays(path, chunk_bytes=chunk)
    return tuple(sorted((e.names[a], e.names[b]) for a, b in
                        zip(e.sources.tolist(), e.targets.tolist())))


def test_empty_cell_through_the_cli(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "e.csv").write_text("source,target,weight\na,b,1\na,,1\n")
    assert main(["convert", "e.csv", "out.json"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("netctl: error: e.csv:3: the target column is empty in 'a,,1'; "
                          "expected 'source target [weight]'"), err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["e.csv"]


def test_tabs_in_a_row_that_leave_a_column_short_say_so(tmp_path):
    # tabs are layout (a run counts as one), so 'a<tab><tab>1' after weighted lines is a
    # column-count mismatch; the message says that two tabs count as one
    p = tmp_path / "e.tsv"
    p.write_text("a\tb\t1\na\t\t1\n")
    said = {_message(p, chunk) for chunk in CHUNKS}
    assert len(said) == 1, said
    msg = said.pop()
    assert msg.startswith(f"{p}:2: this line has 2 columns: 'a\\t\\t1'"), msg
    assert msg.endswith("Two tabs in a row count as one: write a name in every column."), msg


# ---------------------------------------------------------------- coupling files
#: a description whose wiring is a coupling file; 'weather' is a disturbance, 'level' is
#: read by a regulated output (invented plant)
_SPEC = ('[states]\nweather = { disturbance = true }\n\n[couplings]\nfile = "wiring.csv"\n\n'
         '[inputs]\npump = ["tank"]\n\n[regulated]\nz_level = ["level"]\n')
_WIRING = "source,target\nweather,tank\ntank,level\nlevel,valve\n"


def _run_spec(tmp_path, monkeypatch, capsys, wiring: str) -> tuple[int, str]:
    monkeypatch.chdir(tmp_path)
    (tmp_path / "plant.toml").write_text(_SPEC)
    (tmp_path / "wiring.csv").write_text(wiring)
    code = main(["convert", "plant.toml", "out.json"])
    return code, capsys.readouterr().err


@pytest.mark.parametrize("marks", ["", "# disturbances: weather\n", "# regulated: level\n",
                                   "# disturbances: weather\n# regulated: level\n"],
                         ids=["none", "same-disturbance", "same-regulated", "both"])
def test_coupling_file_marks_that_repeat_the_description_are_read(tmp_path, monkeypatch,
                                                                  capsys, marks):
    """netctl's own bundled heating loop is so: its edge list marks the weather and the
    sun, which the description declares too."""
    code, err = _run_spec(tmp_path, monkeypatch, capsys, marks + _WIRING)
    assert code == 0, err
    s = read(tmp_path / "plant.toml")
    assert s.disturbance_names == ("weather",) and s.regulated_names == ("z_level",)


COUPLING_MARKS = [
    pytest.param("# disturbances: weather, valve\n" + _WIRING,
                 "wiring.csv:1: the '# disturbances:' line names 'valve', but the description "
                 "plant.toml does not declare it a disturbance", "Declare it there ([states] "
                 "valve = { disturbance = true }), or take 'valve' off the mark line.",
                 id="disturbance-not-declared"),
    pytest.param("# wiring of the tank\n# regulated: tank\n" + _WIRING,
                 "wiring.csv:2: the '# regulated:' line names 'tank', but the description "
                 "plant.toml has no regulated output reading it", "Add a regulated output "
                 "reading it there ([regulated] z_tank = [\"tank\"]), or take 'tank' off the "
                 "mark line.", id="regulated-not-declared"),
    pytest.param(_WIRING + "# disturbances: weather\n",
                 "wiring.csv:5: the '# disturbances:' line comes after the first link",
                 "move the '# disturbances:' line above the first link", id="late-mark"),
]


@pytest.mark.parametrize("wiring, message, fix", COUPLING_MARKS)
def test_coupling_file_marks_are_never_read_as_comments(tmp_path, monkeypatch, capsys,
                                                        wiring, message, fix):
    """A mark line of a coupling file was read as a plain comment: a node it marked, and
    the description did not, stayed a state, silently. Now it is refused on its line,
    as an edge list read alone refuses a mark it cannot keep (the late mark)."""
    code, err = _run_spec(tmp_path, monkeypatch, capsys, wiring)
    assert code == 2
    assert err.startswith(f"netctl: error: {message}"), err
    assert fix in err and err.count("\n") == 1, err
    line = int(message.split(":")[1])
    assert "# " in wiring.splitlines()[line - 1]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plant.toml", "wiring.csv"]


def test_coupling_file_repeated_header_is_said(tmp_path):
    """The checks of an edge list read alone run on a coupling file too: a header row
    pasted again further down is read as a link, and said (it was silent)."""
    (tmp_path / "plant.toml").write_text('[couplings]\nfile = "wiring.csv"\n')
    (tmp_path / "wiring.csv").write_text("source,target\nsource,a\na,target\n"
                                         "source,target\nb,a\n")
    with pytest.warns(UserWarning, match=r"wiring\.csv:4: the header row 'source target' "
                      "appears again"):
        s = read(tmp_path / "plant.toml")
    assert s.n_links == 4


# ---------------------------------------------------------------- found by the fuzzing
# More random starts and damage kinds of tests/hostile/test_cli_fuzz.py (a number taken
# out with its separator kept, a line repeated, a mark line, a value of another type, an
# id copied over another) gave these messages without a line; each names it now.
_MTX = "%%MatrixMarket matrix coordinate real general\n% a comment\n3 3 {n}\n1 2 1.0\n{tail}"
_GML_HEAD = 'graph [\n  directed 1\n  node [ id 0 label "a" ]\n  node [ id 1 label "b" ]\n'
FOUND = [
    pytest.param("x.mtx", _MTX.format(n=2, tail="2 3 1.0\n3 1 2.0\n"),
                 ":6: could not read the entries: the size line (line 3) claims 2 entries, and "
                 "this is entry 3 ('3 1 2.0'); correct the count", "3 1 2.0",
                 id="mtx-more-entries-than-claimed"),
    pytest.param("x.mtx", _MTX.format(n=3, tail="2 3 1.0\n"),
                 ":3: could not read the entries: the size line claims 3 entries but the file "
                 "has 2; correct the count, or restore the missing entries", "3 3 3",
                 id="mtx-fewer-entries-than-claimed"),
    pytest.param("x.mtx", _MTX.format(n=2, tail="2 3 1_0\n"),
                 ":5: could not read the entries: expected numbers, found '2 3 1_0'", "1_0",
                 id="mtx-python-digit-separator"),  # scipy 1.17 read it as 1, silently
    pytest.param("x.mtx", _MTX.format(n=2, tail="2 3 2.5x\n"),
                 ":5: could not read the entries: expected numbers, found '2 3 2.5x'", "2.5x",
                 id="mtx-trailing-letter"),  # scipy 1.17 read it as 2.5, silently
    pytest.param("x.mtx", _MTX.format(n=2, tail="2 3 +inf\n"),
                 ":5: could not read the entries: invalid floating-point value (found "
                 "'2 3 +inf')", "+inf", id="mtx-plus-inf"),
    pytest.param("x.toml", "[states]\na = { x = 1 }\nb = { x = " + "9" * 5000 + " }\n",
                 ":3: a number has more digits than netctl reads (4300); write it with fewer",
                 "b = ", id="toml-5000-digits"),
    pytest.param("x.toml", '[states]\na = {}\nb = {}\n\n[couplings]\nlinks = [\n  ["a", "b"],\n'
                 '  "a",\n]\n', ':8: each coupling must be ["source", "target"] or ["source", '
                 '"target", weight], found \'a\'.', '"a",', id="toml-coupling-not-a-pair"),
    pytest.param("x.gml", _GML_HEAD + "  node [ id " + "7" * 5000 + ' label "c" ]\n]\n',
                 ":5: a number has more digits than netctl reads", "label \"c\"",
                 id="gml-5000-digit-id"),
    pytest.param("x.gml", _GML_HEAD + "  edge [ source 0 target 1 ]\n"
                 "  edge [ source 0 target 1 ]\n]\n",
                 ":6: malformed GML: edge #1 (0->1) is duplicated. Give each link once.",
                 "edge", id="gml-edge-twice"),
    pytest.param("x.gml", _GML_HEAD + "  edge [ source 0 target 1 ]\n"
                 "  edge [ source 1 target 9 ]\n]\n",
                 ":6: malformed GML: edge #1 has undefined target 9. Declare that node",
                 "target 9", id="gml-undeclared-target"),
    pytest.param("x.gml", _GML_HEAD + "  edge [\n    source 0\n    target 1\n    source 1\n"
                 "  ]\n]\n", ":5: this edge gives 'source' twice; give each edge one "
                 "'source'.", "edge [", id="gml-source-twice"),
    pytest.param("x.gml", _GML_HEAD + "  edge [ source 0 target 1 ]\n  edge [ target 0 ]\n]\n",
                 ":6: malformed GML: edge #1 has no 'source' attribute. Every node needs an id "
                 "and a label, every edge a source and a target.", "target 0",
                 id="gml-edge-without-source"),
    pytest.param("x.graphml", _graphml('    <edge source="b" target="c"><data key="d0">nan(1)'
                                       '</data></edge>\n'),
                 ":10: not a GraphML graph netctl can read: could not convert string to float: "
                 "'nan(1)'. Give a value of the key's attr.type", "nan(1)",
                 id="graphml-value-not-of-its-type"),
    pytest.param("x.graphml", _graphml('    <edge source="b" target="c"><data key="d7">2'
                                       '</data></edge>\n'),
                 ":10: not a GraphML graph netctl can read: Bad GraphML data: no key d7. "
                 "Declare the key", "d7", id="graphml-undeclared-key"),
    pytest.param("x.matrix.csv", "0,1,0\n1,0,1\n# the last row\n0,1,0\n0,1,0\n",
                 ":5: the matrix is 4 x 3; a state matrix A must be square (n x n), and this is "
                 "row 4 of rows of 3 numbers", "0,1,0", id="matrix-csv-row-too-many"),
    pytest.param("x.matrix.csv", "0,1,0\n1,0,1\n\n",
                 ":2: the matrix is 2 x 3; a state matrix A must be square (n x n), and the "
                 "rows end here", "1,0,1", id="matrix-csv-rows-missing"),
]


@pytest.mark.parametrize("name, text, message, on_line", FOUND)
def test_fuzz_findings_name_the_line(tmp_path, monkeypatch, capsys, name, text, message,
                                     on_line):
    test_graph_files_name_the_line(tmp_path, monkeypatch, capsys, name, text, message,
                                   on_line)


def test_pandapower_bus_reference_that_is_an_object(tmp_path, monkeypatch, capsys):
    """A line's from_bus given as {} (a value of another type) ended in 'cannot be read as
    pandapower (TypeError: unhashable type)'; it is named like any unknown bus now."""
    from tests.hostile.test_fuzz import _pandapower_seed

    good = _pandapower_seed()
    bad = good.replace("[[0, 1, 1.0, 0.4, true]", "[[{}, 1, 1.0, 0.4, true]", 1)
    assert bad != good
    monkeypatch.chdir(tmp_path)
    (tmp_path / "g.json").write_text(bad)
    assert main(["convert", "g.json", "out.toml"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("netctl: error: g.json:"), err
    assert "table 'line', row 0: from_bus names bus {}, which is not in the bus table" in err
    line = int(err.split(":")[3])  # the line of the table (its rows are one JSON string)
    assert '"line"' in bad.splitlines()[line - 1]
