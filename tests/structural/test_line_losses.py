"""Every line lost in turn (`audit_links`), against a recomputation by NetworkX.

The reference removes each line's links, then applies Lin's two conditions directly:
the generic rank of ``[A B]`` as a maximum bipartite matching (NetworkX's Hopcroft–Karp)
and input reachability as NetworkX's breadth-first descendants [1]_. The audit itself
never recomputes per line (one matching, one dominator tree), so these tests check its
shortcuts, including lines that cannot be merged into one vertex (searched alone).

.. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from netctl import StructuredSystem
from netctl.models import second_order
from netctl.structural.failures import audit_links, line_elements


def _reference(system: StructuredSystem, kind: str) -> tuple[list[bool], list[bool],
                                                             list[set[int]], bool]:
    """Per line: breaks the design, rank lost, states unreached (by NetworkX)."""
    work = system.dual() if kind == "sensors" else system
    n, m = work.n_states, work.n_inputs
    src, tgt = system.edges()
    if kind == "sensors":
        src, tgt = tgt, src  # the dual's links are the reversed ones
    B = work.B.tocoo()
    groups, _ = line_elements(system)

    def lin(drop: set[int]) -> tuple[bool, set[int]]:
        keep = [k for k in range(src.size) if k not in drop]
        g = nx.Graph()
        rows = [("r", v) for v in range(n)]
        g.add_nodes_from(rows)
        g.add_nodes_from(("c", c) for c in range(n + m))
        g.add_edges_from((("r", int(tgt[k])), ("c", int(src[k]))) for k in keep)
        g.add_edges_from((("r", int(i)), ("c", n + int(j))) for i, j in zip(B.row, B.col))
        match = nx.bipartite.hopcroft_karp_matching(g, top_nodes=rows)
        rank = sum(1 for r in rows if r in match)
        d = nx.DiGraph()
        d.add_nodes_from(range(n))
        d.add_edges_from((int(src[k]), int(tgt[k])) for k in keep)
        reached: set[int] = set()
        for s in set(int(i) for i in B.row):
            reached |= {s} | nx.descendants(d, s)
        return rank < n, set(range(n)) - reached

    lost0, un0 = lin(set())
    works = not lost0 and not un0
    brk, rk, un = [], [], []
    for g in groups:
        if not works:
            brk.append(False), rk.append(False), un.append(set())
            continue
        r_lost, unreached = lin(set(int(p) for p in g))
        brk.append(r_lost or bool(unreached))
        rk.append(r_lost)
        un.append(unreached)
    return brk, rk, un, works


def _agree(system: StructuredSystem, kind: str) -> None:
    got = audit_links(system, kind=kind)
    brk, rk, un, works = _reference(system, kind)
    assert got.works == works
    assert got.breaking.tolist() == brk
    assert got.rank_lost.tolist() == rk
    for k, want in enumerate(un):
        assert set(got.unreached[k].tolist()) == want
        assert got.unreached.n_lost(k) == len(want)
        first = got.unreached.first(k, 3)
        assert len(first) == min(3, len(want)) and set(first.tolist()) <= want


@st.composite
def _designs(draw, max_n=9):
    n = draw(st.integers(2, max_n))
    pairs = draw(st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)),
                          max_size=3 * n, unique=True))
    both = draw(st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)),
                         max_size=n, unique=True))
    links = set(pairs) | set(both) | {(b, a) for a, b in both}
    src = [a for a, _ in sorted(links)]
    tgt = [b for _, b in sorted(links)]
    ins = draw(st.lists(st.integers(0, n - 1), min_size=1, max_size=3, unique=True))
    outs = draw(st.lists(st.integers(0, n - 1), min_size=1, max_size=3, unique=True))
    return StructuredSystem.from_edges(src, tgt, n, inputs=ins, outputs=outs)


@settings(max_examples=120, deadline=None)
@given(_designs(), st.sampled_from(["inputs", "sensors"]))
def test_every_line_lost_agrees_with_networkx(system, kind):
    _agree(system, kind)


@pytest.mark.filterwarnings("ignore:second-order model")  # self-loops become own terms
@settings(max_examples=40, deadline=None)
@given(_designs(max_n=5))
def test_second_order_lines_agree_with_networkx(network):
    # a line holds a:pos -> b:vel and b:pos -> a:vel; the model's own a:pos -> a:vel
    # lets it be merged into one vertex
    _agree(second_order(network).with_inputs(
        [2 * int(i) + 1 for i in network.driven_states()]), "inputs")


def test_lines_that_cannot_be_merged_are_searched_alone():
    # nodes a, b, c with states a:p, a:v, b:p, b:v, c:p, c:v (a second-order layout
    # without the own p -> v links). The line a -- b = {b:p -> a:v, a:p -> b:v} merged
    # into one vertex would add the path b:p -> line -> b:v, which the graph does not
    # have; losing the line c -> a (c:v -> a:p) would then seem to cut off a:p alone,
    # while b:v (fed only by a:p) is lost too
    names = ["a:p", "a:v", "b:p", "b:v", "c:p", "c:v"]
    src = [5, 2, 0, 5, 5, 0, 3, 4]
    tgt = [2, 1, 3, 0, 4, 0, 3, 4]  # the last three: self-loops (own dynamics)
    s = StructuredSystem.from_edges(
        src, tgt, 6, state_names=names, inputs=[5],
        nodes={"node": ["a", "a", "b", "b", "c", "c"]})._replace(model="second-order")
    _agree(s, "inputs")
    got = audit_links(s)
    assert got.labels == ("a -- b", "c -> a", "c -> b")
    assert got.unreached[1].tolist() == [0, 3]
    assert got.breaking.tolist() == [True, True, True]


def test_a_chain_lists_what_each_line_cuts_off_nearest_first():
    # a chain's lines cut off n - 1, n - 2, ... states: counted in one tree, listed
    # on demand in the dominator tree's order (the states right after the line first)
    n = 3000
    s = StructuredSystem.from_edges(np.arange(n - 1), np.arange(1, n), n, inputs=[0])
    got = audit_links(s)
    # each state has one feeder: every loss also leaves a state without one (rank)
    assert got.breaking.all() and got.rank_lost.all()
    counts = [got.unreached.n_lost(k) for k in range(n - 1)]
    assert counts == list(range(n - 1, 0, -1))
    assert got.unreached.first(10, 4).tolist() == [11, 12, 13, 14]
    assert got.unreached[n - 3].tolist() == [n - 2, n - 1]
    reason = got.reasons(0)[1]  # after the dilation
    assert reason.startswith(f"{n - 1} state(s) reached by no actuator: x1, x2,")
