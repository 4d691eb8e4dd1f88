"""Large second-order maps lay out buses, not states: a bus's two states sit together.

The check is geometric (common practice, no source): on a 40 x 30 lattice of buses
(2,400 states in the swing model, above the 2,000 states where the grouping starts)
the two states of every bus are a fifth of the median bus-to-bus link length apart,
while a small map still lays out every state on its own.
"""

from __future__ import annotations

import networkx as nx
import numpy as np

from netctl import StructuredSystem
from netctl.models import second_order
from netctl.viz.layout import node_positions


def _lattice(rows, cols):
    g = nx.convert_node_labels_to_integers(nx.grid_2d_graph(rows, cols))
    e = np.array([(u, v) for a, b in g.edges() for u, v in ((a, b), (b, a))])
    return StructuredSystem.from_edges(e[:, 0], e[:, 1], g.number_of_nodes())


def test_large_swing_map_places_both_states_of_a_bus_together():
    net = _lattice(40, 30)
    s = second_order(net)
    assert s.n_states == 2400
    pos, how = node_positions(s, seed=3)
    assert how == "fr-grid" and np.isfinite(pos).all()
    pairs = np.hypot(*(pos[0::2] - pos[1::2]).T)  # b:pos and b:vel of each bus
    src, dst = net.edges()
    bus_xy = (pos[0::2] + pos[1::2]) / 2
    links = np.hypot(*(bus_xy[src] - bus_xy[dst]).T)
    assert np.allclose(pairs, 0.2 * np.median(links), rtol=1e-6)
    # the same seed gives the same map
    assert np.array_equal(pos, node_positions(s, seed=3)[0])


def test_small_swing_map_lays_out_every_state():
    s = second_order(_lattice(6, 5))
    pos, how = node_positions(s, seed=0)
    pairs = np.hypot(*(pos[0::2] - pos[1::2]).T)
    assert how == "fr" and pairs.std() > 0  # placed by the forces, not on a fixed ring
