"""The notebook map's arrowheads and its views of placements, decoupling, what-if changes
and contingency sweeps.

What should be marked comes from outside netctl wherever it can: networkx (which links
are one-way, which states separate the disturbances from the outputs, whether the chosen
sites make the system controllable by Lin's theorem, the minimum number of drivers by
Liu, Slotine & Barabasi's matching rule), the test's own inputs (candidate sites, the
change asked for) and the standard library's XML parser for validity.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

import networkx as nx
import numpy as np
import pytest

import netctl
from netctl import StructuredSystem
from netctl.records import Candidates
from netctl.viz.small_map import result_map_html
from tests.structural._failures_brute import controllable

SVG = "{http://www.w3.org/2000/svg}"


def _svg(page: str) -> ET.Element:
    assert page.count("<svg") == 1, page[:300]
    return ET.fromstring(page[page.index("<svg"):page.index("</svg>") + len("</svg>")])


def _circles(svg: ET.Element) -> dict[str, tuple[float, float]]:
    out = {}
    for c in svg.find(f"{SVG}g[@class='states']"):
        out[c.find(f"{SVG}title").text] = (float(c.get("cx")), float(c.get("cy")))
    return out


def _marked(svg: ET.Element, key: str) -> set[str]:
    group = svg.find(f"{SVG}g[@class='marks']")
    return {p.find(f"{SVG}title").text.split(" \u2014 ")[0]
            for p in group.iter(f"{SVG}path") if p.get("class") == f"mark {key}"}


def _segments(d: str) -> list[tuple[float, float, float, float]]:
    out = []
    for piece in d.split("M")[1:]:
        a, b = piece.split("L")
        x1, y1 = map(float, a.split())
        x2, y2 = map(float, b.split())
        out.append((x1, y1, x2, y2))
    return out


def _drawn_links(svg: ET.Element, key: str, circles) -> set[tuple[str, str]]:
    """Highlighted links of class ``key`` as (source, target) names, by their ends."""
    path = svg.find(f"{SVG}path[@class='{key}']")
    if path is None:
        return set()
    names = list(circles)
    xy = np.array([circles[k] for k in names])

    def at(x, y):
        d = np.hypot(xy[:, 0] - x, xy[:, 1] - y)
        assert d.min() < 0.08, (x, y, d.min())
        return names[int(d.argmin())]

    return {(at(x1, y1), at(x2, y2)) for x1, y1, x2, y2 in _segments(path.get("d"))}


# ---------------------------------------------------------------------- arrowheads
def _cross(a, b) -> float:
    return float(a[0] * b[1] - a[1] * b[0])


@pytest.fixture(scope="module")
def mixed():
    """60 states at random coordinates; random links, a quarter of them both ways."""
    rng = np.random.default_rng(11)
    n = 60
    pairs = {(int(a), int(b)) for a, b in rng.integers(0, n, (140, 2)) if a != b}
    back = {(b, a) for a, b in list(pairs)[::4]}
    edges = sorted(pairs | back)
    xy = rng.uniform(0.0, 100.0, (n, 2))
    s = StructuredSystem.from_edges([e[0] for e in edges], [e[1] for e in edges], n,
                                    nodes={"x": xy[:, 0], "y": xy[:, 1]})
    return s, edges


def test_one_way_links_get_one_arrowhead_each_at_their_target(mixed):
    system, edges = mixed
    G = nx.DiGraph(edges)
    one_way = {(u, v) for u, v in G.edges if not G.has_edge(v, u)}
    two_way = {frozenset((u, v)) for u, v in G.edges if G.has_edge(v, u)}
    assert one_way and two_way
    page = netctl.minimum_inputs(system)._repr_html_()
    svg = _svg(page)
    # one marker definition, the only id, used by the group of one-way links
    markers = list(svg.iter(f"{SVG}marker"))
    assert len(markers) == 1
    assert [el.get("id") for el in svg.iter() if el.get("id")] == [markers[0].get("id")]
    arrows = svg.find(f"{SVG}g[@class='arrows']")
    assert arrows.get("marker-end") == f"url(#{markers[0].get('id')})"
    circles = _circles(svg)
    names = system.state_names
    xy = {i: np.array(circles[names[i]]) for i in range(system.n_states)}
    drawn = set()
    for p in arrows:
        ((x1, y1, x2, y2),) = _segments(p.get("d"))
        start = np.array([x1, y1])
        u = min(xy, key=lambda i: np.hypot(*(xy[i] - start)))
        assert np.hypot(*(xy[u] - start)) < 0.08
        # the target: on the ray from u through the end point, the end a few px short
        end = np.array([x2, y2])
        hits = [v for v in G.successors(u) if v != u and
                np.hypot(*(xy[v] - end)) < 9.0 and
                abs(_cross(end - start, xy[v] - start)) <
                0.2 * np.hypot(*(end - start)) + 0.2]
        assert len(hits) == 1, (u, hits)
        drawn.add((u, hits[0]))
    assert drawn == one_way
    # links both ways: one plain line each, no head
    plain = _segments(svg.find(f"{SVG}path[@class='links']").get("d"))
    assert len(plain) == len(two_way)


def test_arrowheads_have_a_cap_and_links_keep_theirs(mixed):
    system, edges = mixed
    result = netctl.minimum_inputs(system)
    svg = _svg(result_map_html(result, system, max_heads=10))
    assert svg.find(f"{SVG}g[@class='arrows']") is None and not list(svg.iter(f"{SVG}marker"))
    pairs = {frozenset(e) for e in edges}
    assert len(_segments(svg.find(f"{SVG}path[@class='links']").get("d"))) == len(pairs)
    assert "drawn without arrowheads" in ET.tostring(svg, encoding="unicode")
    svg = _svg(result_map_html(result, system, max_links=10))
    assert svg.find(f"{SVG}g[@class='arrows']") is None and not list(svg.iter(f"{SVG}marker"))


def test_two_maps_on_one_page_do_not_share_a_marker_name(mixed):
    system, _ = mixed
    other = StructuredSystem.from_edges([0, 1], [1, 2], 3)
    a = _svg(netctl.minimum_inputs(system)._repr_html_())
    b = _svg(netctl.minimum_inputs(other)._repr_html_())
    ida = next(a.iter(f"{SVG}marker")).get("id")
    idb = next(b.iter(f"{SVG}marker")).get("id")
    assert ida != idb
    # the same map twice: the same name, and the same definition (harmless on a page)
    again = _svg(netctl.minimum_inputs(other)._repr_html_())
    assert next(again.iter(f"{SVG}marker")).get("id") == idb


# ---------------------------------------------------------------------- placement
def test_placement_marks_its_chosen_and_candidate_sites():
    # a chain x0 -> ... -> x5 and a branch x2 -> x6: three candidate actuators (the
    # test's own data); the result must pick a set that works by Lin's theorem
    edges = [(0, 1), (1, 2), (2, 3), (3, 4), (4, 5), (2, 6)]
    n = 7
    s = StructuredSystem.from_edges(*zip(*edges), n)
    cand_states = [[0], [0, 6], [6], [3]]
    cands = Candidates.from_lists(["a", "b", "c", "d"], cand_states, [1.0, 1.5, 1.0, 1.0])
    result = netctl.place_inputs(s, candidates=cands)
    chosen = [cand_states[int(k)] for k in result.chosen]
    assert controllable(n, edges, chosen)
    svg = _svg(result._repr_html_())
    names = s.state_names
    sites = {names[i] for c in chosen for i in c}
    assert _marked(svg, "driver") == sites
    every = {names[i] for c in cand_states for i in c}
    assert _marked(svg, "candidate") == every - sites
    legend = ET.tostring(svg.find(f"{SVG}g[@class='legend']"), encoding="unicode")
    assert "chosen site" in legend and "candidate site" in legend


# ---------------------------------------------------------------------- decoupling
def test_decoupling_marks_a_bottleneck_that_separates_disturbances_from_outputs():
    # u -> x0 -> x1 -> x2 -> x3 (read by z); w enters at x4 -> x5 -> x2: the
    # disturbance reaches z sooner than any correction can
    edges = [(0, 1), (1, 2), (2, 3), (4, 5), (5, 2)]
    s = StructuredSystem.from_edges(*zip(*edges), 6, inputs=[0])
    s = s.with_disturbances({"w": ["x4"]}).with_regulated({"z": ["x3"]})
    result = netctl.decoupling(s)
    assert not result.state_feedback.solvable
    svg = _svg(result._repr_html_())
    marked = _marked(svg, "bottleneck")
    assert marked
    # networkx: without the marked states no path leads from the disturbance's entry
    # to the state the output reads, and no smaller set does that (minimum node cut)
    G = nx.DiGraph([(f"x{u}", f"x{v}") for u, v in edges])
    G.add_edges_from([("w", "x4"), ("x3", "z")])
    cut = G.copy()
    cut.remove_nodes_from(marked)
    assert not nx.has_path(cut, "w", "z")
    assert len(marked) == len(nx.minimum_node_cut(G, "w", "z"))


# ---------------------------------------------------------------------- what-if
def _n_drivers(n: int, edges) -> int:
    """Liu, Slotine & Barabasi (2011): N_D = max(n - |maximum matching|, 1), by networkx."""
    H = nx.Graph()
    top = [("o", i) for i in range(n)]
    H.add_nodes_from(top)
    H.add_nodes_from(("i", i) for i in range(n))
    H.add_edges_from((("o", u), ("i", v)) for u, v in edges)
    M = nx.bipartite.hopcroft_karp_matching(H, top_nodes=top)
    return max(n - sum(1 for t in top if t in M), 1)


def test_what_if_shows_the_change_and_the_drivers_before_and_after():
    edges = [(0, 1), (1, 2), (2, 3), (1, 4), (4, 5)]
    n = 6
    x = [0.0, 1.0, 2.0, 3.0, 1.5, 2.5]
    y = [0.0, 0.0, 0.0, 0.0, 1.0, 1.0]
    s = StructuredSystem.from_edges(*zip(*edges), n, nodes={"x": x, "y": y})
    removed, added = [("x1", "x2")], [("x5", "x3"), ("x3", "new")]
    w = netctl.what_if(s, remove_links=removed, add_links=added, remove_nodes=["x0"])
    page = w._repr_html_()
    assert "WhatIf" in page
    svg = _svg(page)
    circles = _circles(svg)
    assert set(circles) == set(s.state_names) | {"new"}
    assert _drawn_links(svg, "removed_link", circles) == set(removed)
    assert _drawn_links(svg, "added_link", circles) == set(added)
    assert _marked(svg, "removed_state") == {"x0"}
    # drivers: the counts by networkx's matching; the marks are the result's sets
    after = nx.DiGraph([(f"x{u}", f"x{v}") for u, v in edges])
    after.add_nodes_from(f"x{i}" for i in range(n))
    after.remove_edges_from(removed)
    after.add_edges_from(added)
    after.remove_node("x0")
    order = sorted(after)
    idx = {v: i for i, v in enumerate(order)}
    assert len(_marked(svg, "driver")) == _n_drivers(
        len(order), [(idx[u], idx[v]) for u, v in after.edges])
    assert _marked(svg, "driver") == set(w.drivers_after)
    assert _marked(svg, "former_driver") == set(w.drivers_before) - set(w.drivers_after)
    assert _n_drivers(n, edges) == len(w.drivers_before)
    # above the cap: no map, the counts of the change
    note = result_map_html(w, s, max_states=n)
    assert "<svg" not in note and "link added by the change: 2" in note


# ---------------------------------------------------------------------- contingency
def test_contingency_sweep_marks_the_links_whose_loss_breaks_the_design():
    # a chain with a side loop, driven at x0: which single link losses break the design
    # comes from brute force (networkx: reachability and Hopcroft-Karp, Lin 1974)
    edges = [(0, 1), (1, 2), (2, 3), (3, 1), (2, 4), (0, 5), (5, 4)]
    n = 6
    inputs = [[0], [5]]
    s = StructuredSystem.from_edges(*zip(*edges), n, inputs=[0, 5])
    assert controllable(n, edges, inputs)
    breaking = {(f"x{u}", f"x{v}") for k, (u, v) in enumerate(edges)
                if not controllable(n, edges[:k] + edges[k + 1:], inputs)}
    assert breaking
    sweep = netctl.contingency_sweep(s)
    svg = _svg(sweep._repr_html_())
    circles = _circles(svg)
    assert _drawn_links(svg, "fragile_link", circles) == breaking
    nodes = netctl.contingency_sweep(s, elements="nodes")
    svg = _svg(nodes._repr_html_())

    def without(i):  # lose state i: drop it and renumber
        keep = [j for j in range(n) if j != i]
        pos = {j: k for k, j in enumerate(keep)}
        es = [(pos[u], pos[v]) for u, v in edges if u != i and v != i]
        cols = [[pos[j] for j in c if j != i] for c in inputs]
        return controllable(n - 1, es, [c for c in cols if c])

    assert _marked(svg, "fragile") == {f"x{i}" for i in range(n) if not without(i)}


# ---------------------------------------------------------------------- the docs' picture
def test_the_picture_in_the_docs_is_what_the_script_draws():
    """docs/notebook_map.svg is redrawn by docs/build_notebook_map.py (run it when the
    notebook map changes on purpose); the picture is valid XML with its marks."""
    import importlib.util
    from pathlib import Path

    docs = Path(__file__).resolve().parents[2] / "docs"
    spec = importlib.util.spec_from_file_location("build_notebook_map",
                                                  docs / "build_notebook_map.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    text = mod.notebook_map()
    assert (docs / "notebook_map.svg").read_text(encoding="utf-8") == text + "\n", (
        "docs/notebook_map.svg is stale: run python3 docs/build_notebook_map.py")
    svg = ET.fromstring(text)
    assert svg.find(f"{SVG}g[@class='arrows']") is not None
    assert _marked(svg, "driver") == {"boiler", "misting_line"}
