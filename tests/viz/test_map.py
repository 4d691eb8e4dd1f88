"""Network maps: what is drawn matches the analysis, coordinates are honoured."""

from __future__ import annotations

import json
from pathlib import Path

import matplotlib
import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

from netctl import StructuredSystem, controllability, minimum_inputs  # noqa: E402
from netctl.cli import main  # noqa: E402
from netctl.errors import OptionError  # noqa: E402
from netctl.io import read  # noqa: E402
from netctl.viz import draw_map, map_marks, node_positions, save_figure  # noqa: E402

from tests.conftest import directed_cycle, directed_path, from_edges, out_star, random_pattern

ROOT = Path(__file__).resolve().parents[2]
BUNDLED = sorted(p for p in (ROOT / "networks").glob("*")
                 if p.is_file() and p.suffix.lower() not in (".py", ".md"))


def _offsets(ax, key):
    """Offsets of the collections drawn with gid netctl:<key>, as a set of rows."""
    rows = [c.get_offsets() for c in ax.collections if c.get_gid() == f"netctl:{key}"]
    if not rows:
        return set()
    return {tuple(np.round(r, 9)) for r in np.concatenate(rows)}


def _rows(pos, idx):
    return {tuple(np.round(r, 9)) for r in pos[np.asarray(idx, int)]}


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    plt.close("all")


def _readable(path):
    try:
        return read(path)
    except Exception:  # a bundled file of a format another verb owns
        return None


@pytest.mark.parametrize("path", BUNDLED, ids=[p.name for p in BUNDLED])
def test_bundled_networks_render(path, tmp_path):
    system = _readable(path)
    if system is None or system.n_states > 20000:
        pytest.skip(f"{path.name}: not a network file netctl.io.read takes, or too large "
                    "for a unit test")
    marks = map_marks(system)
    pos, _ = node_positions(system)
    ax = draw_map(system, marks, positions=pos)
    # the drivers drawn are exactly those of the analysis
    expected = (system.driven_states() if system.n_inputs
                else minimum_inputs(system).drivers)
    assert _offsets(ax, "driver") == _rows(pos, expected)
    out = tmp_path / "map.png"
    save_figure(ax.figure, out)
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_drivers_drawn_are_exactly_the_minimum_design():
    system = read(ROOT / "networks" / "heating_loop.csv")
    design = minimum_inputs(system)  # Liu, Slotine, Barabasi (2011): unmatched states
    pos, _ = node_positions(system)
    ax = draw_map(system, positions=pos)
    assert _offsets(ax, "driver") == _rows(pos, design.drivers)
    assert len(_offsets(ax, "state")) == system.n_states


@pytest.mark.parametrize("seed", range(6))
def test_drivers_and_trouble_spots_match_lin_on_random_designs(seed):
    rng = np.random.default_rng(seed)
    n = 25
    system = from_edges(random_pattern(rng, n, 0.07), n)
    chosen = sorted(rng.choice(n, size=3, replace=False).tolist())
    marks = map_marks(system, inputs=chosen)
    report = controllability(system.with_inputs(system.names_of(chosen)))
    pos, _ = node_positions(system, seed=seed)
    ax = draw_map(system, marks, positions=pos)
    assert _offsets(ax, "driver") == _rows(pos, chosen)
    assert _offsets(ax, "unreached") == _rows(pos, report.inaccessible)
    assert _offsets(ax, "suggested") == _rows(pos, report.fix)
    assert marks.controllable == report.controllable
    if report.dilation is not None:
        assert _offsets(ax, "dilation") == _rows(pos, report.dilation.states)


@pytest.mark.parametrize("seed", range(8))
def test_control_paths_are_a_maximum_matching(seed):
    # the matched links: each state has at most one matched in- and out-link, and their
    # number plus the links matched to inputs is the term rank of [A B] (scipy)
    rng = np.random.default_rng(100 + seed)
    n = 30
    system = from_edges(random_pattern(rng, n, 0.06, loops=bool(seed % 2)), n)
    marks = map_marks(system)
    s, t = marks.matched_sources, marks.matched_targets
    assert np.unique(s).size == s.size and np.unique(t).size == t.size
    A = system.A
    assert np.all(A[t, s] != 0) if s.size else True
    design = minimum_inputs(system).apply(system)
    AB = sp.hstack([design.A, design.B]).tocsr()
    rank = int(np.count_nonzero(maximum_bipartite_matching(sp.csr_matrix(AB),
                                                           perm_type="column") >= 0))
    assert rank == n  # the minimum design is controllable, so [A B] has full term rank
    # a matched link is on a cycle iff it closes a cycle among matched links (networkx)
    g = nx.DiGraph()
    g.add_edges_from(zip(s.tolist(), t.tolist()))
    on_cycle = {(u, v) for comp in nx.strongly_connected_components(g) for u in comp
                for v in comp if g.has_edge(u, v) and (len(comp) > 1 or u == v)}
    assert {(u, v) for u, v, c in zip(s.tolist(), t.tolist(), marks.on_cycle) if c} == on_cycle


def test_chains_and_cycles_on_textbook_shapes():
    # a directed path is one stem, a directed cycle one cycle (Liu et al. 2011, Fig. 1)
    p = map_marks(directed_path(6))
    assert p.matched_sources.size == 5 and not p.on_cycle.any()
    c = map_marks(directed_cycle(6))
    assert c.matched_sources.size == 6 and c.on_cycle.all()
    ax = draw_map(directed_cycle(6), c)
    kinds = {a.get_gid() for a in ax.patches}
    assert kinds == {"netctl:cycle"}


def test_coordinates_are_honoured():
    xs = np.array([0.0, 3.0, 1.5, -2.0, 10.0])
    ys = np.array([1.0, 0.0, 4.0, 2.5, -1.0])
    s = StructuredSystem.from_edges([0, 1, 2, 3], [1, 2, 3, 4], 5, nodes={"x": xs, "y": ys})
    pos, how = node_positions(s)
    assert how == "coordinates"
    np.testing.assert_array_equal(pos, np.column_stack([xs, ys]))
    ax = draw_map(s)  # positions from the node table
    assert _offsets(ax, "state") == {tuple(np.round(r, 9)) for r in np.column_stack([xs, ys])}


def test_missing_coordinates_are_placed_with_a_warning():
    s = StructuredSystem.from_edges([0, 1], [1, 2], 3,
                                    nodes={"x": [0.0, np.nan, 2.0], "y": [0.0, 1.0, 2.0]})
    with pytest.warns(UserWarning, match="1 of 3 states have no x/y coordinates"):
        pos, how = node_positions(s)
    assert how == "coordinates+fr"
    np.testing.assert_array_equal(pos[[0, 2]], [[0.0, 0.0], [2.0, 2.0]])
    assert np.all((pos[1] >= 0) & (pos[1] <= 2))


def test_layout_is_deterministic_and_options_are_checked():
    s = out_star(8)
    a, _ = node_positions(s, seed=3)
    b, _ = node_positions(s, seed=3)
    np.testing.assert_array_equal(a, b)
    with pytest.raises(OptionError, match="unknown layout 'spring'; choose one of auto"):
        node_positions(s, layout="spring")
    with pytest.raises(OptionError, match="needs x and y columns"):
        node_positions(s, layout="coordinates")
    with pytest.raises(OptionError, match="unknown map layer 'colours'"):
        map_marks(s, show=["colours"])


def test_roles_layer_matches_the_role_analysis():
    # Jia et al. (2013) Fig. 1 worked example (REFERENCES.md section 4): 1->2, 2->3,4,5:
    # node 1 critical, node 2 redundant, nodes 3, 4, 5 intermittent; link 1->2 critical
    s = StructuredSystem.from_named_edges(["1", "2", "2", "2"], ["2", "3", "4", "5"])
    marks = map_marks(s, show=["roles", "critical-links"])
    roles = marks.to_dict()["roles"]
    assert roles == {"critical": ["1"], "intermittent": ["3", "4", "5"], "redundant": ["2"]}
    assert marks.to_dict()["critical_links"] == [{"source": "1", "target": "2"}]
    pos, _ = node_positions(s)
    ax = draw_map(s, marks, positions=pos)
    i = s.index_of(["1"])
    assert _offsets(ax, "role_critical") == _rows(pos, i)
    assert {a.get_gid() for a in ax.patches} >= {"netctl:critical_link"}


def test_names_are_drawn_as_typed(tmp_path):
    s = StructuredSystem.from_named_edges(["$x$", "<b>alert(1)</b>"],
                                          ["<b>alert(1)</b>", "a_b"])
    ax = draw_map(s)
    texts = sorted(t.get_text() for t in ax.texts if t.get_gid() == "netctl:label")
    assert texts == sorted(["$x$", "<b>alert(1)</b>", "a_b"])
    save_figure(ax.figure, tmp_path / "names.png")  # no mathtext error on "$x$"


def test_large_map_rasterizes_plain_links():
    rng = np.random.default_rng(5)
    n, m = 6000, 15000
    e = np.unique(np.column_stack([rng.integers(0, n, m), rng.integers(0, n, m)]), axis=0)
    s = StructuredSystem.from_edges(e[:, 0], e[:, 1], n)
    pos = rng.random((n, 2))
    ax = draw_map(s, positions=pos)
    links = [c for c in ax.collections if c.get_gid() == "netctl:link"]
    assert len(links) == 1 and links[0].get_rasterized()
    assert not ax.patches  # no per-link arrows at this size
    assert not [t for t in ax.texts if t.get_gid() == "netctl:label"]
    assert _offsets(ax, "driver") == _rows(pos, minimum_inputs(s).drivers)


# ---------------------------------------------------------------------- command line
def test_cli_map_minimum_design(tmp_path, capsys):
    out = tmp_path / "m.svg"
    code = main(["map", str(ROOT / "networks" / "heating_loop.csv"), "--out", str(out),
                 "--json"])
    assert code == 0
    d = json.loads(capsys.readouterr().out)
    system = read(ROOT / "networks" / "heating_loop.csv")
    assert d["drivers"] == minimum_inputs(system).driver_names
    assert d["controllable"] is True and d["figure"] == str(out)
    assert out.read_text().lstrip().startswith("<?xml")


def test_cli_map_failing_design_exits_1(tmp_path, capsys):
    out = tmp_path / "m.png"
    code = main(["map", str(ROOT / "networks" / "heating_loop.csv"), "--inputs",
                 "fuel_valve,substation_park", "--out", str(out)])
    assert code == 1
    text = capsys.readouterr().out
    assert "structurally controllable: NO (3 more dedicated input(s) needed" in text
    assert out.exists()


@pytest.mark.parametrize("args, message", [
    (["--out", "m.jpg"], "the file name must end in one of .html, .htm, .png, .svg, .pdf, .geojson, .graphml"),
    ([], "map needs --out FILE"),
    (["--out", "m.png", "--inputs", "nowhere"], "unknown state name 'nowhere'"),
    (["--out", "m.png", "--show", "everything"], "unknown map layer 'everything'"),
])
def test_cli_map_bad_usage_exits_2_without_output(args, message, tmp_path, capsys,
                                                   monkeypatch):
    monkeypatch.chdir(tmp_path)
    code = main(["map", str(ROOT / "networks" / "heating_loop.csv"), *args])
    assert code == 2
    assert message in capsys.readouterr().err
    assert not list(tmp_path.iterdir())


def test_cli_map_bad_file_exits_2(tmp_path, capsys):
    bad = tmp_path / "bad.csv"
    bad.write_text("a,b\nc,d,e,f\n")
    code = main(["map", str(bad), "--out", str(tmp_path / "m.png")])
    assert code == 2
    assert "bad.csv:2" in capsys.readouterr().err
    assert not (tmp_path / "m.png").exists()


def test_legend_explains_every_mark_drawn():
    # the bundled plant has self-loops, chains, cycles, unreached states, a dilation and
    # a fix; with roles and critical links every kind of mark is on the map
    from netctl.viz.style import MARKS

    path = ROOT / "networks" / "chemical_plant.toml"
    if not path.exists():
        pytest.skip("the bundled chemical plant is not in this checkout")
    # since the utilities are disturbances the plant's own valves reach every state; a
    # design with the coolant valve alone leaves the feed section unreached
    s = read(path)
    s = s.with_inputs({"coolant_valve": ["coolant_flow"]})
    ax = draw_map(s, map_marks(s, show=["roles", "critical-links"]))
    drawn = {a.get_gid().removeprefix("netctl:")
             for a in [*ax.collections, *ax.patches, *ax.lines]
             if a.get_gid() and a.get_gid() != "netctl:label"}
    legend_text = " | ".join(t.get_text() for leg in ax.figure.legends for t in leg.get_texts())
    for key in drawn:
        wanted = "self-loop" if key in ("self_loop", "cycle_loop") else MARKS[key].label
        assert wanted in legend_text, (key, legend_text)
    assert {"driver", "chain", "cycle", "unreached", "dilation", "suggested",
            "critical_link", "self_loop"} <= drawn


def _driver_sizes(system):
    import matplotlib.pyplot as plt

    from netctl.viz import draw_map

    ax = draw_map(system, legend=False)
    try:
        return [float(c.get_sizes()[0]) for c in ax.collections
                if c.get_gid() == "netctl:driver"]
    finally:
        plt.close(ax.figure)


def test_driver_marks_never_shrink_with_graph_size():
    # common practice, no source: a flagged mark is sized in points, not by map density
    small = StructuredSystem.from_edges(np.arange(19), np.arange(1, 20), 20)
    big = StructuredSystem.from_edges(np.arange(4999), np.arange(1, 5000), 5000)
    assert _driver_sizes(small) == _driver_sizes(big) and _driver_sizes(small)[0] >= 150


def test_a_role_shared_by_every_state_is_said_once_not_drawn():
    import matplotlib.pyplot as plt

    from netctl.viz import draw_map, map_marks

    cycle = StructuredSystem.from_edges(np.arange(8), (np.arange(8) + 1) % 8, 8)
    marks = map_marks(cycle, show=["roles"])
    # a directed cycle: one input anywhere suffices, so every state is intermittent
    # (Jia et al. 2013, Nat. Commun. 4:2002: intermittent = in some minimum sets)
    assert set(marks.roles.tolist()) == {1}
    ax = draw_map(cycle, marks)
    try:
        gids = {c.get_gid() for c in ax.collections}
        assert not any(g.startswith("netctl:role_") for g in gids)
        texts = [t.get_text() for t in ax.figure.legends[0].get_texts()]
        assert "state: every one is intermittent (8)" in texts
        assert not any(t.startswith(("critical:", "redundant:")) for t in texts)
    finally:
        plt.close(ax.figure)
