"""A grid's N-1 over elements in a notebook: ``ElementSweep.to_frame()`` has one row per
element, and its small map highlights the branches (and marks the buses and generators)
whose loss alone breaks the design.

External references: the bus graph of the bundled (invented) island grid parsed by the
independent PyPI package ``matpowercaseframes``, its swing-model state graph and Lin's
conditions (C.-T. Lin, IEEE TAC 19(3), 1974) recomputed with networkx
(``_swing_answer`` in ``tests/structural/test_grid_elements.py``).
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest

import netctl
from netctl.models import resolve_model
from netctl.viz.small_marks import result_lines, result_marks

from .structural.test_grid_elements import _swing_answer

ISLAND = "networks/island_grid.m"


@pytest.fixture(scope="module")
def grid():
    return resolve_model(netctl.io.read(ISLAND), None).with_inputs(["1:vel"])


def _bus_graph():
    cf = pytest.importorskip("matpowercaseframes").CaseFrames(ISLAND)
    g = nx.MultiGraph()
    g.add_nodes_from(int(b) for b in cf.bus["BUS_I"])
    for k, (f, t) in enumerate(zip(cf.branch["F_BUS"], cf.branch["T_BUS"])):
        g.add_edge(int(f), int(t), key=f"branch {k + 1}")
    return g


def test_frame_has_one_row_per_element_as_the_json(grid):
    pytest.importorskip("pandas")
    r = netctl.element_sweep(grid)
    frame = r.to_frame()
    rows = r.to_dict()["losses"]
    assert list(frame["element"]) == [x["element"] for x in rows]
    assert list(frame["kind"]) == [x["kind"] for x in rows]
    assert list(frame["n_inputs_after"]) == [x["n_inputs_after"] for x in rows]
    assert list(frame["controllable_after"]) == [x["controllable_after"] for x in rows]
    assert list(frame["no_change"]) == [x["no_structural_change"] for x in rows]
    assert sorted(frame.loc[frame["breaking"], "element"]) == sorted(r.to_dict()["breaking"])
    assert frame.attrs["n_breaking"] == len(r.to_dict()["breaking"])


def test_map_highlights_the_branches_whose_loss_breaks_the_design(grid):
    """The highlighted links are exactly both directions of the branches whose outage
    makes the networkx swing model uncontrollable from bus 1."""
    g = _bus_graph()
    expected = set()
    for u, v, key in g.edges(keys=True):
        h = g.copy()
        h.remove_edge(u, v, key=key)
        if not _swing_answer(h, [1])[1]:
            expected.add(frozenset((u, v)))
    assert expected  # the island grid has radial branches: the check can fail
    r = netctl.element_sweep(grid)
    lines = {key: (s, t) for key, _, s, t in result_lines(r, grid)}
    names = grid.state_names
    got = {frozenset((int(names[a].split(":")[0]), int(names[b].split(":")[0])))
           for a, b in zip(*lines["fragile_link"])}
    assert got == expected
    marks = {key: idx for key, _, idx in result_marks(r, grid)}
    fragile_buses = {int(names[i].split(":")[0]) for i in marks["fragile"]}
    for eid in r.to_dict()["breaking"]:
        if eid.startswith("bus "):
            assert int(eid.split()[1]) in fragile_buses


def test_notebook_view_draws_the_map_only_with_the_system(grid):
    from netctl.structural.robustness import element_sweep

    html = netctl.element_sweep(grid)._repr_html_()
    assert "<svg" in html and "fragile_link" in html and "branch 7" in html
    bare = element_sweep(grid)._repr_html_()
    assert "<svg" not in bare and "branch 7" in bare
    assert "<svg" in element_sweep(grid).with_system(grid)._repr_html_()
    assert np.array_equal(netctl.element_sweep(grid).breaking, element_sweep(grid).breaking)
