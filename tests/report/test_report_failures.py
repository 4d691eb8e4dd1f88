"""The N-1 audit in reports and on maps, and disturbances in reports and static maps
(issue 24, item 4; issue 23, item 1).

Reference: brute force over single losses with networkx (Lin's theorem: every state
reached from an input and a matching of ``[A B]`` covering every state; Hopcroft--Karp and
breadth-first search in ``tests/structural/_failures_brute.py``); sensors by transposition.
"""

from __future__ import annotations

import json
from pathlib import Path

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402

from netctl import StructuredSystem  # noqa: E402
from netctl.cli import main  # noqa: E402
from netctl.report import build_report  # noqa: E402
from netctl.report.failures import disturbances_section, failures_section  # noqa: E402
from netctl.viz import draw_map, map_marks  # noqa: E402
from netctl.viz.interactive import map_payload  # noqa: E402
from netctl.viz.placement import map_placement  # noqa: E402
from tests.structural._failures_brute import controllable, random_pattern  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
HEATING = ROOT / "networks" / "heating_loop.csv"


def brute_critical(n, edges, sites):
    """Positions of the dedicated actuators whose loss alone breaks the design."""
    cols = [[s] for s in sites]
    if not controllable(n, edges, cols):
        return None
    return [k for k in range(len(sites))
            if not controllable(n, edges, [c for j, c in enumerate(cols) if j != k])]


def brute_lines(n, edges, sites):
    """Lines (unordered pairs, both directions) whose loss alone breaks the design."""
    cols = [[s] for s in sites]
    pairs = sorted({(min(u, v), max(u, v)) for u, v in edges if u != v})
    return [p for p in pairs if not controllable(
        n, [(u, v) for u, v in edges if {u, v} != set(p)], cols)]


def cases(count, seed):
    rng = np.random.default_rng(seed)
    out = []
    while len(out) < count:
        n = int(rng.integers(2, 8))
        edges = random_pattern(rng, n, float(rng.uniform(0.15, 0.5)))
        m = int(rng.integers(1, n + 1))
        sites = sorted(rng.choice(n, size=m, replace=False).tolist())
        osites = sorted(rng.choice(n, size=int(rng.integers(1, n + 1)),
                                   replace=False).tolist())
        out.append((n, edges, sites, osites))
    return out


def system_of(n, edges, sites, osites=()):
    src = [u for u, _ in edges]
    dst = [v for _, v in edges]
    s = StructuredSystem.from_edges(src, dst, n)
    s = s.with_inputs(list(sites))
    return s.with_outputs(list(osites)) if osites else s


@pytest.mark.parametrize("seed", range(4))
def test_report_lists_the_single_points_brute_force_finds(seed):
    for n, edges, sites, osites in cases(60, seed):
        s = system_of(n, edges, sites, osites)
        r = build_report(s, sections=[failures_section])
        sec = r.section("failures")
        crit = brute_critical(n, edges, sites)
        acts = sec.data["actuators"]
        if crit is None:
            assert not acts["works"] and sec.status == "info"
            continue
        got = [e["name"] for e in acts["elements"] if e["class"] == "critical"]
        assert got == [s.input_names[k] for k in crit], (n, edges, sites)
        # sensors: the dual, by transposition of every link
        scrit = brute_critical(n, [(v, u) for u, v in edges], osites)
        if scrit is not None:
            sgot = [e["name"] for e in sec.data["sensors"]["elements"]
                    if e["class"] == "critical"]
            assert sgot == [s.output_names[k] for k in scrit], (n, edges, osites)
        lines = brute_lines(n, edges, sites)
        names = s.state_names
        want = sorted(f"{names[a]} -- {names[b]}" if (a, b) in edges and (b, a) in edges
                      else (f"{names[a]} -> {names[b]}" if (a, b) in edges
                            else f"{names[b]} -> {names[a]}") for a, b in lines)
        assert sorted(x["line"] for x in sec.data["lines"]["breaking"]) == want
        n_bad = len(crit) + len(want) + (len(scrit) if scrit is not None else 0)
        assert sec.data["n_single_points"] == n_bad
        assert sec.status == ("warning" if n_bad else "ok")


def test_report_section_in_every_format(tmp_path, capsys):
    inputs = "fuel_valve,bypass_valve,pipe_south,substation_school,substation_houses,pipe_north"
    out = tmp_path / "heat.json"
    assert main(["report", str(HEATING), "--inputs", inputs, "--out", str(out)]) == 0
    data = json.loads(out.read_text())
    sec = {s["key"]: s for s in data["sections"]}
    fail = sec["failures"]["data"]
    crit = [e["name"] for e in fail["actuators"]["elements"] if e["class"] == "critical"]
    # reference: brute force on the state graph read back from the file
    from netctl.io import read

    s = read(str(HEATING)).with_inputs(inputs.split(","))
    src, dst = s.edges()
    edges = list(zip(src.tolist(), dst.tolist()))
    sites = [int(i) for i in s.index_of(inputs.split(","))]
    want = brute_critical(s.n_states, edges, sites)
    assert crit == [s.input_names[k] for k in want] and want
    for fmt in ("html", "md"):
        path = tmp_path / f"heat.{fmt}"
        assert main(["report", str(HEATING), "--inputs", inputs, "--out", str(path)]) == 0
        text = path.read_text()
        assert "Single points of failure" in text
        for name in crit:
            assert name.split(":", 1)[1].replace("_", "\\_" if fmt == "md" else "_") in text
    # the disturbances: their own section, read back against the file's own lines
    lines = [ln.split(",") for ln in HEATING.read_text().splitlines()
             if ln and not ln.startswith("#") and ln != "source,target"]
    dist = {"outdoor_temp", "solar_collector"}
    want_acts = {w: [v for u, v in lines if u == w] for w in dist}
    got = sec["disturbances"]["data"]["disturbances"]
    assert {w: sorted(v) for w, v in got.items()} == {w: sorted(v)
                                                      for w, v in want_acts.items()}


def test_no_disturbance_section_without_disturbances():
    s = StructuredSystem.from_edges([0, 1], [1, 2], 3)
    assert build_report(s, sections=[disturbances_section]).sections == ()


def _offsets(ax, gid):
    for c in ax.collections:
        if c.get_gid() == f"netctl:{gid}":
            return {tuple(np.round(p, 6)) for p in c.get_offsets()}
    return set()


@pytest.mark.parametrize("seed", range(3))
def test_maps_mark_the_single_points_where_brute_force_puts_them(seed):
    for n, edges, sites, osites in cases(25, 100 + seed):
        s = system_of(n, edges, sites, osites)
        marks = map_marks(s)
        crit = brute_critical(n, edges, sites) or []
        scrit = brute_critical(n, [(v, u) for u, v in edges], osites) or []
        want = sorted({sites[k] for k in crit} | {osites[k] for k in scrit})
        assert marks.fragile.tolist() == want, (n, edges, sites, osites)
        payload = map_payload(s, marks, map_placement(s))
        assert payload["fragile"] == want
        assert any(L["key"] == "fragile" for L in payload["layers"])
        pos = np.arange(2 * n, dtype=float).reshape(n, 2)
        ax = draw_map(s, marks, positions=pos)
        try:
            assert _offsets(ax, "fragile") == {tuple(pos[i]) for i in want}
            texts = [t.get_text() for t in ax.get_legend().get_texts()] if \
                ax.get_legend() else [t.get_text() for t in ax.figure.legends[0].get_texts()]
            assert any(t.startswith("single point of failure") for t in texts) == bool(want)
        finally:
            plt.close(ax.figure)


def test_static_map_marks_disturbed_states():
    s = StructuredSystem.from_named_edges(list("abc"), list("bcd"))
    s = s.with_disturbances({"weather": ["b", "d"]})
    pos = np.array([[0.0, 0.0], [1.0, 0.0], [2.0, 0.0], [3.0, 0.0]])
    ax = draw_map(s, positions=pos)
    try:
        assert _offsets(ax, "disturbed") == {(1.0, 0.0), (3.0, 0.0)}
        texts = [t.get_text() for t in ax.figure.legends[0].get_texts()]
        assert "a disturbance acts here (not commanded) (2)" in texts
    finally:
        plt.close(ax.figure)


def test_a_long_list_of_single_points_shows_the_first_rows_and_counts_the_rest():
    # an in-star of 301 states with an actuator on every leaf: no link reaches a leaf,
    # so every actuator is the only one reaching its leaf and all 300 are critical
    # (checked by brute force); the table shows the first 200 (with their reasons) and
    # counts the other 100
    from netctl.report.failures import _ROWS

    n = 301
    edges = [(v, 0) for v in range(1, n)]
    leaves = list(range(1, n))
    s = StructuredSystem.from_edges(leaves, [0] * (n - 1), n, inputs=leaves)
    crit = brute_critical(n, edges, leaves)
    assert len(crit) == n - 1
    sec = build_report(s, sections=[failures_section]).section("failures")
    assert sec.data["n_single_points"] == len(crit) + len(brute_lines(n, edges, leaves))
    tab = next(b for b in sec.blocks if b.kind == "table")
    assert len(tab.rows) == _ROWS
    assert tab.more == sec.data["n_single_points"] - _ROWS
    assert all(row[3] != "-" for row in tab.rows)  # every row shown has its reasons
