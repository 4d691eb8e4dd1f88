"""Contingency sweeps, sampled losses, attack curves and what-if against brute force.

Brute force recomputes every loss from scratch with reference libraries: the term rank of
[A B] with scipy.sparse.csgraph.maximum_bipartite_matching and accessibility with
networkx, i.e. Lin's (1974) conditions, and N_D = max(n - |M*|, 1) (Liu et al. 2011).
"""

from __future__ import annotations

from pathlib import Path

import matplotlib
import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching

from netctl import StructuredSystem, minimum_inputs
from netctl.errors import InvalidSystemError, OptionError, UnknownNameError
from netctl.io import read
from netctl.structural.robustness import (
    attack_curve,
    contingency_sweep,
    sampled_losses,
    what_if,
)
from netctl.viz import plot_attack_curves
from tests.conftest import directed_cycle, directed_path, from_edges

matplotlib.use("Agg")

ROOT = Path(__file__).resolve().parents[2]
HEATING = ROOT / "networks" / "heating_loop.csv"


def term_rank(M: np.ndarray) -> int:
    if M.size == 0 or not M.any():
        return 0
    m = maximum_bipartite_matching(sp.csr_matrix(M.astype(np.int8)), perm_type="column")
    return int(np.count_nonzero(m >= 0))


def n_d(A: np.ndarray) -> int:
    n = A.shape[0]
    return max(n - term_rank(A), 1) if n else 0


def reached(A: np.ndarray, B: np.ndarray) -> set[int]:
    g = nx.DiGraph()
    n = A.shape[0]
    g.add_nodes_from(range(n))
    g.add_edges_from((int(u), int(v)) for v, u in zip(*np.nonzero(A)))
    out: set[int] = set()
    for d in np.flatnonzero(B.any(axis=1)).tolist():
        out |= {d} | nx.descendants(g, d)
    return out


def lin(A: np.ndarray, B: np.ndarray) -> bool:
    """Lin (1974): accessibility and generic rank [A B] = n."""
    n = A.shape[0]
    return term_rank(np.hstack([A, B])) == n and len(reached(A, B)) == n


def random_design(rng: np.random.Generator) -> StructuredSystem:
    n = int(rng.integers(1, 8))
    D = rng.random((n, n)) < rng.uniform(0.1, 0.5)
    if rng.random() < 0.5:
        np.fill_diagonal(D, False)
    if rng.random() < 0.3:
        D = D | D.T
    s = StructuredSystem.from_matrices(D, weighted=False)
    m = int(rng.integers(0, 4))
    if m:
        s = s.with_inputs(sorted(rng.choice(n, size=min(m, n), replace=False).tolist()))
    return s


@pytest.mark.parametrize("seed", range(3))
def test_link_sweep_equals_recomputation(seed):
    rng = np.random.default_rng(300 + seed)
    for _ in range(120):
        s = random_design(rng)
        A = s.A.toarray() != 0
        B = s.B.toarray() != 0
        sw = contingency_sweep(s, elements="links")
        before = reached(A, B)
        if s.n_inputs:
            assert sw.controllable_before == lin(A, B)
        for k, (u, v) in enumerate(zip(sw.sources.tolist(), sw.targets.tolist())):
            A2 = A.copy()
            A2[v, u] = False
            assert sw.n_inputs_after[k] == n_d(A2)
            if s.n_inputs:
                assert sw.controllable_after[k] == lin(A2, B), (A.astype(int), u, v)
                assert sw.rank_lost[k] == (term_rank(np.hstack([A2, B])) < s.n_states)
                lost = before - reached(A2, B)
                assert sw.cut_off[k] == len(lost)
                assert set(sw.cut_off_states(k).tolist()) == lost


@pytest.mark.parametrize("seed", range(3))
def test_node_sweep_equals_recomputation(seed):
    rng = np.random.default_rng(400 + seed)
    for _ in range(120):
        s = random_design(rng)
        A = s.A.toarray() != 0
        B = s.B.toarray() != 0
        n = s.n_states
        sw = contingency_sweep(s, elements="nodes")
        before = reached(A, B)
        for w in range(n):
            keep = np.arange(n) != w
            A2, B2 = A[keep][:, keep], B[keep]
            assert sw.n_inputs_after[w] == n_d(A2), (A.astype(int), w)
            if s.n_inputs:
                assert sw.controllable_after[w] == lin(A2, B2), (A.astype(int), w)
                names = np.flatnonzero(keep)
                lost = {int(names[i]) for i in range(n - 1)} - {
                    int(names[i]) for i in reached(A2, B2)}
                newly = lost & before
                assert set(sw.cut_off_states(w).tolist()) == newly


@pytest.mark.parametrize("seed", range(3))
def test_node_sweep_on_larger_sparse_networks_equals_recomputation(seed):
    # many strongly connected components in the alternating graph (chains both ways,
    # sparse random links), where the reachability questions of a state's loss are
    # pruned by interval labels: minimum inputs after each loss against a fresh
    # maximum matching (SciPy's Hopcroft–Karp) of what is left
    rng = np.random.default_rng(700 + seed)
    for _ in range(12):
        n = int(rng.integers(20, 60))
        D = rng.random((n, n)) < 1.5 / n
        if rng.random() < 0.5:  # a chain both ways, as grids and feeders have
            i = np.arange(n - 1)
            D[i + 1, i] = D[i, i + 1] = True
        np.fill_diagonal(D, False)
        s = StructuredSystem.from_matrices(D, weighted=False)
        sw = contingency_sweep(s, elements="nodes")
        for w in range(n):
            keep = np.arange(n) != w
            assert sw.n_inputs_after[w] == n_d(D[keep][:, keep]), (seed, n, w)


def test_sweep_path_example_and_text():
    # A driven path needs every link (each is its successor's only feeder): Lin 1974.
    s = directed_path(4).with_inputs(["x0"])
    sw = contingency_sweep(s)
    assert sw.breaking.tolist() == [0, 1, 2]
    assert any("cuts 2 state(s) off every input: x2, x3" in r for r in sw.reasons(1))
    d = sw.to_dict()
    assert d["breaking"] == ["x0 -> x1", "x1 -> x2", "x2 -> x3"]
    assert d["losses"][0]["cut_off_states"] == ["x1", "x2", "x3"]
    with pytest.raises(OptionError, match="elements must be one of 'links', 'nodes'"):
        contingency_sweep(s, elements="edges")


def test_sweep_without_design_and_cycle():
    # A directed cycle has a perfect matching (N_D = 1); losing any link leaves a path,
    # still N_D = 1 (Liu et al. 2011: N_D = max(n - |M*|, 1)).
    sw = contingency_sweep(directed_cycle(5))
    assert not sw.has_design and sw.breaking.size == 0
    assert sw.n_inputs == 1 and sw.n_inputs_after.tolist() == [1] * 5


def test_sampled_losses_recomputed_and_seeded():
    rng = np.random.default_rng(11)
    s = None
    while s is None or s.n_links < 6 or s.n_inputs == 0:
        s = random_design(rng)
    r1 = sampled_losses(s, k=2, samples=30, seed=5)
    r2 = sampled_losses(s, k=2, samples=30, seed=5)
    assert np.array_equal(r1.lost, r2.lost)
    A = s.A.toarray() != 0
    B = s.B.toarray() != 0
    src, tgt = s.edges()
    for i in range(r1.n_samples):
        A2 = A.copy()
        for j in r1.lost[i]:
            A2[tgt[j], src[j]] = False
        assert r1.n_inputs_after[i] == n_d(A2)
        assert r1.controllable_after[i] == lin(A2, B)
    rn = sampled_losses(s, elements="nodes", k=2, samples=20, seed=1)
    for i in range(rn.n_samples):
        keep = np.ones(s.n_states, bool)
        keep[rn.lost[i]] = False
        assert rn.n_inputs_after[i] == n_d(A[keep][:, keep])
        assert rn.controllable_after[i] == lin(A[keep][:, keep], B[keep])
    d = r1.to_dict()
    assert d["k"] == 2 and d["seed"] == 5 and len(d["samples"]) == 30


def test_sampled_losses_bad_options():
    s = directed_path(3)
    with pytest.raises(OptionError, match="k=5 exceeds the number of links"):
        sampled_losses(s, k=5)
    with pytest.raises(OptionError, match="samples must be an integer >= 1, found 0"):
        sampled_losses(s, samples=0)


def test_attack_curve_matches_recomputation_and_plots():
    rng = np.random.default_rng(21)
    s = StructuredSystem.from_edges(*np.nonzero(rng.random((30, 30)) < 0.08), 30)
    A = s.A.toarray() != 0
    for elements in ("nodes", "links"):
        for strategy in ("random", "degree", "role"):
            c = attack_curve(s, elements=elements, strategy=strategy, steps=5, seed=3)
            assert c.n_removed[0] == 0 and c.n_inputs[0] == n_d(A)
            assert c.n_removed[-1] == (30 if elements == "nodes" else s.n_links)
            assert c.n_inputs[-1] == (0 if elements == "nodes" else 30)
            assert len(c.csv_lines()) == c.n_removed.size
    again = attack_curve(s, strategy="random", steps=5, seed=3)
    assert again.n_inputs.tolist() == attack_curve(s, strategy="random", steps=5,
                                                   seed=3).n_inputs.tolist()
    import matplotlib.pyplot as plt

    ax = plot_attack_curves([again])
    assert len(ax.lines) == 1 and "share of states removed" in ax.get_xlabel()
    fig, ax2 = plt.subplots()
    assert plot_attack_curves([again], ax=ax2, fraction=False) is ax2
    plt.close("all")
    with pytest.raises(OptionError, match="strategy must be one of 'random', 'degree', 'role'"):
        attack_curve(s, strategy="betweenness")


def test_attack_by_degree_on_out_star_raises_inputs_fast():
    # Removing the hub of an out-star first leaves k isolated states: N_D = k (Liu 2011).
    s = from_edges([(0, i) for i in range(1, 6)], 6)
    c = attack_curve(s, elements="nodes", strategy="degree", steps=6)
    assert c.n_inputs[1] == 5


def heating_design() -> StructuredSystem:
    system = read(HEATING)
    design = minimum_inputs(system, dedicated=True)
    return design.apply(system)


def test_what_if_on_bundled_network_must_break():
    # Removing supply_header leaves pipe_north with no feeder at all; unless an input acts
    # on it, Lin's accessibility condition fails, so the design must break.
    s = heating_design()
    assert "pipe_north" not in s.names_of(s.driven_states())
    w = what_if(s, remove_nodes=["supply_header"])
    assert w.controllable_before is True and w.controllable_after is False
    assert w.breaks_design
    assert "pipe_north" in w.fix_after


def test_what_if_on_bundled_network_must_not_break():
    # Adding links never breaks structural controllability: accessibility only gains
    # paths and the generic rank of [A B] cannot fall when entries are added (Lin 1974).
    s = heating_design()
    w = what_if(s, add_links=[("storage_tank", "pipe_north"), ("boiler_temp", "pipe_south")])
    assert w.controllable_before and w.controllable_after and not w.breaks_design
    assert w.n_inputs_after <= w.n_inputs_before


def test_what_if_equals_recomputation():
    rng = np.random.default_rng(31)
    for _ in range(60):
        s = random_design(rng)
        if s.n_links == 0 or s.n_states < 2:
            continue
        src, tgt = s.edges()
        k = int(rng.integers(src.size))
        u, v = s.state_names[src[k]], s.state_names[tgt[k]]
        w = what_if(s, remove_links=[(u, v)], add_links=[(s.state_names[0], "new")])
        A = s.A.toarray() != 0
        A2 = A.copy()
        A2[tgt[k], src[k]] = False
        n = s.n_states
        A3 = np.zeros((n + 1, n + 1), bool)
        A3[:n, :n] = A2
        A3[n, 0] = True
        assert w.n_inputs_after == n_d(A3)
        assert w.n_inputs_before == n_d(A)
        if s.n_inputs:
            B3 = np.vstack([s.B.toarray() != 0, np.zeros((1, s.n_inputs), bool)])
            assert w.controllable_after == lin(A3, B3)
        assert w.new_states == ("new",)


def test_what_if_errors_and_inputs_lost():
    s = directed_path(3).with_inputs(["x0"])
    with pytest.raises(UnknownNameError, match="no link 'x2' -> 'x0' to remove"):
        what_if(s, remove_links=[("x2", "x0")])
    with pytest.raises(InvalidSystemError, match="'x0' -> 'x1' is already there"):
        what_if(s, add_links=[("x0", "x1")])
    with pytest.raises(UnknownNameError, match="unknown state name 'x9'"):
        what_if(s, remove_nodes=["x9"])
    w = what_if(s, remove_nodes=["x0"])
    assert w.inputs_lost == ("u:x0",) and w.controllable_after is False
    d = w.to_dict()
    assert d["change"]["inputs_lost"] == ["u:x0"] and d["breaks_design"] is True


def test_what_if_new_states_follow_the_self_loop_model():
    # Under self-dynamics on every state, a new unit gets its self-loop too; with a
    # self-loop on every state A has a perfect matching, so N_D stays 1 (Liu et al. 2011).
    s = directed_path(3).with_self_loops()
    w = what_if(s, add_links=[("x2", "tank")])
    A = w.after.A.toarray() != 0
    assert A[3, 3] and A[3, 2] and w.after.n_links == s.n_links + 2
    assert w.n_inputs_after == n_d(A) == 1
    plain = what_if(directed_path(3), add_links=[("x2", "tank")])
    assert plain.after.n_self_loops == 0


def test_what_if_role_changes_match_a_name_by_name_comparison():
    from netctl.structural.roles import link_roles, node_roles

    rng = np.random.default_rng(77)
    for _ in range(60):
        s = random_design(rng)
        if s.n_states < 3 or s.n_links == 0:
            continue
        gone = s.state_names[int(rng.integers(s.n_states))]
        src, tgt = s.edges()
        k = int(rng.integers(src.size))
        rem = (s.state_names[src[k]], s.state_names[tgt[k]])
        w = what_if(s, remove_nodes=[gone], remove_links=[rem],
                    add_links=[(s.state_names[0], s.state_names[-1])]
                    if not s.A[s.n_states - 1, 0] and gone not in (
                        s.state_names[0], s.state_names[-1]) else None)
        nb, na = node_roles(s).to_dict()["nodes"], node_roles(w.after).to_dict()["nodes"]
        expect = {x: (nb[x], na[x]) for x in nb if x in na and nb[x] != na[x]}
        assert w.role_changes == expect
        lb = {(d["source"], d["target"]): d["role"] for d in link_roles(s).to_dict()["links"]}
        la = {(d["source"], d["target"]): d["role"]
              for d in link_roles(w.after).to_dict()["links"]}
        expect_l = {e: (lb[e], la[e]) for e in lb if e in la and lb[e] != la[e]}
        assert w.link_role_changes == expect_l


def test_dominators_equal_networkx():
    # The dominator tree behind cut-off states, against networkx.immediate_dominators
    # (Cooper, Harvey & Kennedy's algorithm there as well, written independently).
    from netctl.structural.robustness.contingency import _reach_structure

    rng = np.random.default_rng(9)
    for _ in range(5):
        n = 400
        m = int(n * 1.3)
        key = np.unique(rng.integers(0, n, m) * n + rng.integers(0, n, m))
        s = StructuredSystem.from_edges(key % n, key // n, n)
        drivers = rng.choice(n, 4, replace=False)
        s = s.with_inputs(sorted(drivers.tolist()))
        r = _reach_structure(s.A, s.B)
        g = nx.DiGraph()
        g.add_nodes_from(range(n + 1))
        u, v = s.edges()
        g.add_edges_from(zip(u.tolist(), v.tolist()))
        g.add_edges_from((n, int(d)) for d in drivers)
        idom = nx.immediate_dominators(g, n)
        assert [idom.get(i, -1) for i in range(n)] == r.idom.tolist()


def test_attack_curve_leaves_the_undefined_end_point_out():
    # With every node removed N_D / N is 0/0: undefined, so no 0 is plotted there; the
    # JSON says null and the CSV leaves the cell empty (arithmetic, no source needed).
    import math

    from netctl import StructuredSystem
    from netctl.structural.robustness import attack_curve

    s = StructuredSystem.from_edges([0, 1, 2], [1, 2, 3], 4)
    c = attack_curve(s, elements="nodes", strategy="random", steps=4, seed=1)
    assert c.states_left[-1] == 0 and math.isnan(c.driver_fraction[-1])
    assert not np.isnan(c.driver_fraction[:-1]).any()
    assert c.to_dict()["points"][-1]["driver_fraction"] is None
    assert c.csv_lines()[-1].endswith(",0,")
    x, y = c.xy()
    assert math.isnan(y[-1])
