"""``decouple``, ``convert`` to GraphML, GML and Matrix Market, and ``map --out
x.graphml`` on a two-line file load neither scipy nor networkx (issue 15, goal 1).

Each run is a fresh interpreter (tests/_probe.py) that lists the modules it loaded:
scipy's import (scipy.sparse alone, with its array-API layer, about 0.1 s) and
networkx's cost more than the rest of such a run (benchmarks/RESULTS.md, small writers).
Times are measured by benchmarks/bench_small_io.py, not here (no timed unit tests); what
the files hold is checked against networkx and scipy in tests/io/test_small_writers.py.
"""

from __future__ import annotations

import pytest

from tests._probe import exit_and_modules

#: a module under one of these means the run loaded scipy or networkx
HEAVY = ("scipy", "networkx")

#: (argv with {two}: a 2-line edge list, {three}: the same with a disturbance w -> a and
#: c regulated, {d}: a scratch folder; the exit status; the file written, if any)
RUNS = [
    pytest.param(["decouple", "{three}"], 1, None, id="decouple"),
    pytest.param(["decouple", "{three}", "--no-fix"], 1, None, id="decouple-no-fix"),
    pytest.param(["decouple", "{three}", "--against", "regulated", "--json"], 1, None,
                 id="decouple-json"),
    pytest.param(["decouple", "{two}"], 2, None, id="decouple-refused"),
    pytest.param(["convert", "{two}", "{d}/out.graphml"], 0, "out.graphml", id="graphml"),
    pytest.param(["convert", "{three}", "{d}/out.graphml"], 0, "out.graphml",
                 id="graphml-disturbance"),
    pytest.param(["convert", "{two}", "{d}/out.gml"], 0, "out.gml", id="gml"),
    pytest.param(["convert", "{three}", "{d}/out.gml"], 0, "out.gml", id="gml-disturbance"),
    pytest.param(["convert", "{two}", "{d}/out.mtx"], 0, "out.mtx", id="mtx"),
    pytest.param(["convert", "{two}", "{d}/out.mtx.gz"], 0, "out.mtx.gz", id="mtx-gz"),
    pytest.param(["map", "{two}", "--out", "{d}/m.graphml"], 0, "m.graphml",
                 id="map-graphml"),
]


@pytest.fixture
def files(tmp_path):
    two = tmp_path / "two.csv"
    two.write_text("a,b\nb,c\n")
    three = tmp_path / "three.csv"
    three.write_text("# disturbances: w\n# regulated: c\na,b\nb,c\nw,a\n")
    return {"two": two, "three": three, "d": tmp_path}


@pytest.mark.parametrize("argv, status, written", RUNS)
def test_small_run_loads_no_scipy_or_networkx(files, argv, status, written):
    args = [a.format(**files) for a in argv]
    code, loaded = exit_and_modules(args, HEAVY)
    assert code == status, args
    assert loaded == [], (args, loaded)
    if written is not None:  # the run did its work (what it holds: test_small_writers)
        assert (files["d"] / written).stat().st_size > 0


def test_the_small_runs_give_the_known_answers(files, capsys):
    """The same runs in this process give the answers worked by hand, so the check above
    cannot pass by a run that stopped early. a -> b -> c with w entering a and z reading
    c, no input: w reaches z through 3 states and no input reaches it, so neither
    question is answered yes, and one more input on c or b (nearer z than w) solves
    both (Commault, Dion & Perez, IEEE TAC 36(7):884-887 (1991)); the files hold the
    three states and the two links (the disturbance as a marked node with its link)."""
    import json

    import networkx as nx
    import scipy.io

    from netctl.cli import main

    assert main(["decouple", str(files["three"]), "--json"]) == 1
    d = json.loads(capsys.readouterr().out)
    assert d["state_feedback"]["solvable"] is False and d["measured_disturbance"][
        "solvable"] is False
    assert d["reach"][0]["outputs"] == [{"output": "z:c", "states": 3,
                                         "nearest_input_states": None}]
    both = [x["state"] for x in d["fixes"] if len(x["solves"]) == 2]
    assert both == ["c", "b"]
    out = files["d"]
    for suffix in ("graphml", "gml"):
        main(["convert", str(files["three"]), str(out / f"t.{suffix}")])
        g = (nx.read_graphml if suffix == "graphml" else nx.read_gml)(out / f"t.{suffix}")
        assert sorted(g.edges) == [("a", "b"), ("b", "c"), ("w", "a")], suffix
        assert g.nodes["w"]["disturbance"] in (True, 1) and g.nodes["c"]["regulated"] in (
            True, 1), suffix
    main(["convert", str(files["two"]), str(out / "t.mtx")])
    assert scipy.io.mmread(out / "t.mtx").toarray().tolist() == [[0, 0, 0], [1, 0, 0],
                                                                 [0, 1, 0]]
