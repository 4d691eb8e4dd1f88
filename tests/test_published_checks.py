"""Published results reproduced on generated networks (each source named beside its test).

* Cowan, Chastain, Vilhena, Freudenberg & Bergstrom, "Nodal dynamics, not degree
  distributions, determine the structural controllability of complex networks",
  PLoS ONE 7(6):e38398 (2012) (details from memory): with self-dynamics on every node a
  single input suffices, whatever the degrees.
* Jia, Liu, Csóka, Pósfai, Slotine & Barabási, "Emergence of bimodality in controlling
  complex networks", Nat. Commun. 4:2002 (2013): above <k> = 2e (the core percolation
  threshold of directed Erdős–Rényi networks) the fraction of redundant nodes n_r of
  independent realisations of the same model falls into two separated modes
  (centralized / distributed control); below it, one mode (threshold from memory).
"""

from __future__ import annotations

import numpy as np
import pytest

from netctl import minimum_inputs
from netctl.generate import erdos_renyi, scale_free
from netctl.models import apply_model
from netctl.structural.roles import node_roles


@pytest.mark.parametrize("make", [lambda: erdos_renyi(3000, mean_degree=3, seed=1),
                                  lambda: scale_free(3000, mean_degree=4, exponent=2.2,
                                                     seed=2)],
                         ids=["erdos-renyi", "scale-free"])
def test_self_dynamics_give_one_input(make):
    g = make()
    assert minimum_inputs(g).n_inputs > 100  # without self-dynamics: many drivers
    assert minimum_inputs(apply_model(g, "self-loops")).n_inputs == 1  # Cowan et al. 2012


def test_bimodality_of_redundant_nodes_above_twice_e():
    def n_r(k, seed):
        return float(np.mean(node_roles(erdos_renyi(1500, mean_degree=k, seed=seed)).role == 2))

    above = np.sort([n_r(8.0, s) for s in range(24)])
    gaps = np.diff(above)
    i = int(np.argmax(gaps))
    low, high = above[:i + 1], above[i + 1:]
    # two modes, both occupied, far apart compared with their own widths
    assert low.size >= 3 and high.size >= 3, above
    assert gaps[i] > 5 * max(np.ptp(low), np.ptp(high)), above
    below = np.array([n_r(4.0, s) for s in range(12)])  # <k> = 4 < 2e: one mode
    assert np.ptp(below) < 0.2 and np.ptp(below) < gaps[i] / 3
