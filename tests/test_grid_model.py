"""Grids are analysed with the swing (second-order) model by default (issue 25, item 3).

References: the swing equation ``M_i d2(theta_i)/dt2 + D_i d(theta_i)/dt = P_i -
sum_j b_ij (theta_i - theta_j)`` linearized with DC power flow (P. Kundur, "Power System
Stability and Control", McGraw-Hill 1994, ch. 3 and 12; from memory); the branch
susceptance ``b_ij = 1/x_ij`` per unit (DC power flow, ibid.). Matchings are checked
against networkx's Hopcroft-Karp (a general-purpose reference library).
"""

from __future__ import annotations



import networkx as nx
import numpy as np
import pytest

from netctl.cli import main
from netctl.io import read
from netctl.models import SWING_DEFAULTS, resolve_model, second_order
from netctl.structural import minimum_inputs

from .io.test_grid_files import _case, _mfile, _row


def _tiny(tmp_path):
    return _case(tmp_path, _row(1, 2, 0.1) + _row(1, 2, 0.2) + _row(2, 3, 0.05))


def test_grid_defaults_to_swing_model(tmp_path, capsys):
    f = _tiny(tmp_path)
    assert main(["drivers", str(f)]) == 0
    out = capsys.readouterr()
    assert "6 states, model second-order" in out.out
    assert "driven states (1): bus 1 frequency" in out.out  # a generator bus, its frequency
    # the usual caution for grids (issue 25): a linearized model, not operating decisions
    assert "Grid: results concern a linearized model of the grid, not operating " \
        "decisions" in out.out
    assert "warning" not in out.err


def test_first_order_on_a_grid_warns(tmp_path, capsys):
    f = _tiny(tmp_path)
    assert main(["drivers", str(f), "--model", "first-order"]) == 0
    err = capsys.readouterr().err
    assert "first-order model has no self-dynamics" in err and "not physical" in err


def test_plain_network_keeps_first_order(tmp_path, capsys):
    f = tmp_path / "net.csv"
    f.write_text("a,b\nb,c\n")
    assert main(["drivers", str(f)]) == 0
    cap = capsys.readouterr()
    assert "model first-order" in cap.out and "warning" not in cap.err


def test_model_stored_in_system_description(tmp_path, capsys):
    f = _tiny(tmp_path)
    toml = tmp_path / "grid.toml"
    assert main(["convert", str(f), str(toml)]) == 0
    assert 'model = "second-order"' in toml.read_text()
    s = resolve_model(read(toml), None)
    assert s.model == "second-order" and s.n_states == 6  # not doubled again
    capsys.readouterr()
    assert main(["drivers", str(toml), "--model", "first-order"]) == 2
    assert "already under the 'second-order' model" in capsys.readouterr().err


def test_swing_parameters_from_the_case(tmp_path):
    """Couplings b_ij = 1/x_ij (parallel circuits add); default inertia and damping."""
    s = second_order(read(_tiny(tmp_path)))
    ix = {n: i for i, n in enumerate(s.state_names)}
    A = s.A.toarray()
    M, D = SWING_DEFAULTS["inertia"], SWING_DEFAULTS["damping"]
    assert A[ix["2:vel"], ix["1:pos"]] == pytest.approx((1 / 0.1 + 1 / 0.2) / M)
    assert A[ix["3:vel"], ix["2:pos"]] == pytest.approx(20.0 / M)
    assert A[ix["2:vel"], ix["2:pos"]] == pytest.approx(-(15.0 + 20.0) / M)
    assert A[ix["1:vel"], ix["1:vel"]] == pytest.approx(-D / M)
    assert A[ix["1:pos"], ix["1:vel"]] == 1.0


def test_inertia_and_damping_columns_are_used(tmp_path):
    net = read(_tiny(tmp_path))
    net = net._replace(nodes={**net.nodes, "inertia": np.array([2.0, 4.0, 8.0]),
                              "damping": np.array([0.5, 1.0, 2.0])})
    s = second_order(net)
    ix = {n: i for i, n in enumerate(s.state_names)}
    A = s.A.toarray()
    assert A[ix["2:vel"], ix["2:vel"]] == pytest.approx(-1.0 / 4.0)
    assert A[ix["2:vel"], ix["1:pos"]] == pytest.approx(15.0 / 4.0)
    assert A[ix["2:vel"], ix["2:pos"]] == pytest.approx(-(15.0 + 20.0) / 4.0)


@pytest.mark.parametrize("case", ["case118", "case300"])
def test_swing_minimum_inputs_against_networkx(case):
    """On a connected grid the swing pattern needs one input (every state has a
    self-loop or an own-partner match; networkx's maximum matching agrees)."""
    s = resolve_model(read(_mfile(case)), None)
    assert s.model == "second-order"
    d = minimum_inputs(s)
    src, dst = s.edges()
    g = nx.Graph()
    top = [("o", i) for i in range(s.n_states)]
    g.add_nodes_from(top)
    g.add_nodes_from(("i", i) for i in range(s.n_states))
    g.add_edges_from((("o", int(a)), ("i", int(b))) for a, b in zip(src, dst))
    size = len(nx.bipartite.hopcroft_karp_matching(g, top_nodes=top)) // 2
    assert d.n_inputs == max(s.n_states - size, 1) == 1
    assert nx.is_connected(nx.Graph(list(zip(src.tolist(), dst.tolist()))))
    # the input acts on a generator bus's frequency (velocity) state
    name = s.state_names[int(d.drivers[0])]
    assert name.endswith(":vel") and bool(s.nodes["generation"][int(d.drivers[0])])

