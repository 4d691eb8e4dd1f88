"""Interactive map data, placement, size limit and exports (no browser needed)."""

from __future__ import annotations

import json
from html.parser import HTMLParser
from pathlib import Path

import networkx as nx
import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.cli import main
from netctl.io import read
from netctl.viz import map_marks
from netctl.viz.export import graphml_text, to_geojson
from netctl.viz.interactive import (
    MapTooLargeError,
    check_map_size,
    map_html,
    map_payload,
    script_json,
)
from netctl.viz.placement import CoordinateError, map_placement

ROOT = Path(__file__).resolve().parents[2]
GRID = ROOT / "networks" / "regional_grid.toml"
HEATING = ROOT / "networks" / "heating_loop.csv"
NASTY = ["</script><script>alert(1)</script>", "<!--", "a\u2028b\u2029c", "x & y > z",
         '"><img src=x onerror=alert(2)>', "</SCRIPT >"]


class Scripts(HTMLParser):
    """Collect every script element and every attribute that could fetch something."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.scripts: list[tuple[dict, str]] = []
        self.fetching: list[tuple[str, str]] = []
        self._open: dict | None = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        for k in ("src", "href", "data", "action"):
            if k in a:
                self.fetching.append((tag, k))
        if tag == "script":
            self._open = a
            self.scripts.append((a, ""))

    def handle_data(self, data):
        if self._open is not None:
            a, text = self.scripts[-1]
            self.scripts[-1] = (a, text + data)

    def handle_endtag(self, tag):
        if tag == "script":
            self._open = None


def test_script_json_cannot_close_its_element_and_reads_back():
    text = script_json({"names": NASTY})
    for bad in ("<", ">", "&", "\u2028", "\u2029"):
        assert bad not in text
    assert json.loads(text) == {"names": NASTY}  # Python's json as the reference reader


def test_page_holds_exactly_its_two_scripts_and_fetches_nothing():
    s = StructuredSystem.from_named_edges(NASTY[:-1], NASTY[1:])
    page = map_html(map_payload(s, map_marks(s), map_placement(s)))
    p = Scripts()
    p.feed(page)
    p.close()
    # an HTML parser (the standard library's) sees the data element end where we end it
    assert [a.get("type") for a, _ in p.scripts] == ["application/json", None]
    assert json.loads(p.scripts[0][1])["names"] == list(s.state_names)
    assert p.fetching == []
    assert "http:" not in page and "https:" not in page


def _bfs_dist(system, drivers):
    g = nx.DiGraph()
    g.add_nodes_from(range(system.n_states))
    g.add_edges_from(zip(*(a.tolist() for a in system.edges())))
    g.add_edges_from(("src", int(d)) for d in drivers)
    return {k: v - 1 for k, v in nx.single_source_shortest_path_length(g, "src").items()
            if k != "src"}


@pytest.mark.parametrize("seed", range(5))
def test_nearest_input_tree_matches_networkx_bfs(seed):
    # reference: networkx breadth-first distances from a virtual source at all drivers
    rng = np.random.default_rng(seed)
    n = 60
    pairs = np.unique(rng.integers(0, n, (90, 2)), axis=0)
    s = StructuredSystem.from_edges(pairs[:, 0], pairs[:, 1], n)
    marks = map_marks(s, inputs=[0, 1])
    d = map_payload(s, marks, map_placement(s))
    want = _bfs_dist(s, marks.drivers)
    bpred = np.array(d["bpred"])
    for v in range(n):
        steps, u = 0, v
        while bpred[u] >= 0:
            assert (int(bpred[u]), u) in set(zip(*(a.tolist() for a in s.edges())))
            u, steps = int(bpred[u]), steps + 1
        if v in want:
            assert u in marks.drivers.tolist() and steps == want[v]
        else:
            assert steps == 0 and v in marks.unreached.tolist()


def test_payload_links_partition_the_network():
    s = read(GRID)
    marks = map_marks(s)
    d = map_payload(s, marks, map_placement(s))
    pairs = lambda a: set(zip(a[0::2], a[1::2]))  # noqa: E731
    total = pairs(d["links"]) | pairs(d["paths"]) | pairs(d["cycles"])
    assert total == set(zip(*(a.tolist() for a in s.edges())))
    assert len(d["links"]) + len(d["paths"]) + len(d["cycles"]) == 2 * s.n_links
    # every matched link is a control path or cycle link, and mpred names its source
    for u, v in zip(marks.matched_sources.tolist(), marks.matched_targets.tolist()):
        assert d["mpred"][v] == u
    # all 162 buses are intermittent: the role is not drawn, only said once
    m2 = map_marks(s, show=["roles"])
    d2 = map_payload(s, m2, map_placement(s))
    assert d2["roles"] is None and d2["role_all"] == "intermittent"


def test_lat_lon_partial_and_bad_coordinates(tmp_path, capsys):
    s = StructuredSystem.from_edges([0, 1, 2], [1, 2, 3], 4,
                                    nodes={"lat": [50.0, 50.2, None, 50.6],
                                           "lon": [4.0, 4.1, None, 4.3]})
    p = map_placement(s)
    assert p.geographic and p.n_laid_out == 1 and p.how == "geographic+layout"
    # the missing state sits between its placed neighbours
    assert 4.05 < p.xy[2, 0] < 4.35 and 50.1 < p.xy[2, 1] < 50.7
    assert "1 of 4 states have no longitude/latitude" in p.note()
    bad = StructuredSystem.from_edges([0], [1], 2, nodes={"lat": [50.0, "north"],
                                                          "lon": [4.0, 5.0]})
    with pytest.raises(CoordinateError, match=r"node 'x1': coordinate 'lat' must be a "
                                              r"number, found 'north'"):
        map_placement(bad)
    far = StructuredSystem.from_edges([0], [1], 2, nodes={"lat": [50.0, 95.0],
                                                          "lon": [4.0, 5.0]})
    with pytest.raises(CoordinateError, match=r"lat must lie in \[-90, 90\]"):
        map_placement(far)


def test_cli_bad_coordinates_exit_2_without_output(tmp_path, capsys):
    f = tmp_path / "net.graphml"
    f.write_text('<?xml version="1.0"?><graphml xmlns="http://graphml.graphdrawing.org/'
                 'xmlns"><key id="a" for="node" attr.name="lat" attr.type="string"/>'
                 '<key id="b" for="node" attr.name="lon" attr.type="string"/>'
                 '<graph edgedefault="directed"><node id="p"><data key="a">50</data>'
                 '<data key="b">4</data></node><node id="q"><data key="a">high</data>'
                 '<data key="b">5</data></node><edge source="p" target="q"/></graph>'
                 '</graphml>')
    out = tmp_path / "m.html"
    assert main(["map", str(f), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert str(f) in err and "node 'q'" in err and "'high'" in err
    assert not out.exists()


def test_partial_coordinates_are_counted_on_stderr(tmp_path, capsys):
    f = tmp_path / "net.toml"
    f.write_text('[states]\na = { x = 0.0, y = 0.0 }\nb = { x = 1.0, y = 0.0 }\nc = {}\n'
                 '[couplings]\nlinks = [["a", "b"], ["b", "c"]]\n')
    out = tmp_path / "m.html"
    code = main(["map", str(f), "--out", str(out)])
    err = capsys.readouterr().err
    assert code in (0, 1) and out.exists()
    assert "1 of 3 states have no x/y coordinates" in err


def test_size_limit_refuses_before_work(tmp_path, capsys):
    with pytest.raises(MapTooLargeError, match="--max-states 10000000"):
        check_map_size(10**7)
    out = tmp_path / "m.html"
    assert main(["map", str(GRID), "--out", str(out), "--max-states", "100"]) == 2
    err = capsys.readouterr().err
    assert "162 states" in err and "--max-states 162" in err and not out.exists()
    assert main(["map", str(GRID), "--out", str(out), "--max-states", "162"]) == 0


def test_geojson_is_valid_rfc7946_with_roles():
    # reference validator: the python-geojson library (RFC 7946 objects)
    geojson = pytest.importorskip("geojson")
    s = StructuredSystem.from_edges([0, 1, 1], [1, 2, 3], 4,
                                    nodes={"lat": [50.0, 50.1, 50.2, 50.3],
                                           "lon": [4.0, 4.1, 4.2, 4.3]})
    marks = map_marks(s)
    g = to_geojson(s, marks, map_placement(s))
    obj = geojson.loads(json.dumps(g))
    assert obj.is_valid, obj.errors()
    pts = [f for f in g["features"] if f["geometry"]["type"] == "Point"]
    lines = [f for f in g["features"] if f["geometry"]["type"] == "LineString"]
    assert len(pts) == 4 and len(lines) == 3
    # RFC 7946 section 3.1.1: longitude first
    assert pts[2]["geometry"]["coordinates"] == [4.2, 50.2]
    assert [p["properties"]["name"] for p in pts if p["properties"]["driver"]] == \
        marks.names(marks.drivers)
    kinds = sorted(f["properties"]["kind"] for f in lines)
    assert kinds.count("control path") == marks.matched_sources.size
    assert g["netctl"]["coordinates"] == "WGS 84 longitude/latitude"


def test_graphml_export_reads_back_with_networkx(tmp_path):
    s = read(HEATING)
    marks = map_marks(s, inputs=["fuel_valve"], show=["roles", "critical-links"])
    f = tmp_path / "m.graphml"
    f.write_text(graphml_text(s, marks, map_placement(s)))
    g = nx.read_graphml(f)   # networkx's GraphML reader as the reference
    assert g.number_of_nodes() == s.n_states and g.number_of_edges() == s.n_links
    assert sorted(v for v, a in g.nodes(data=True) if a["driver"]) == ["fuel_valve"]
    assert sorted(v for v, a in g.nodes(data=True) if a["unreached"]) == \
        sorted(marks.names(marks.unreached))
    roles = {v: a["role"] for v, a in g.nodes(data=True)}
    assert set(roles.values()) <= {"critical", "intermittent", "redundant"}
    crit = {(u, v) for u, v, a in g.edges(data=True) if a["critical"]}
    assert len(crit) == marks.critical_sources.size


def test_cli_writes_each_export(tmp_path, capsys):
    for suffix in ("html", "geojson", "graphml"):
        out = tmp_path / f"m.{suffix}"
        assert main(["map", str(HEATING), "--out", str(out)]) == 0
        assert out.stat().st_size > 500
    assert "planar map positions" in capsys.readouterr().err  # no lat/lon in the file
