"""Placement under constraints: sites, costs, candidates, budgets, sensors.

External checks:
* optimality against brute force over every subset of sites / candidates on hundreds of
  seeded small instances; the brute force decides each subset with the generic rank of
  the controllability matrix over F_p (tests/_reference.py: Schwartz 1980 / Zippel 1979)
  or with netctl's Lin test (itself checked against that reference elsewhere);
* the unit-cost unconstrained case against the dedicated minimum count
  ``m_u + beta - alpha`` (Commault & Dion 2013; Pequito, Kar & Aguiar 2016) and the
  table of REFERENCES.md section 3, recomputed here by brute force;
* the min-cost construction of Pequito, Kar & Aguiar (Automatica 68:384-391, 2016).
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from netctl import (
    NetworkFileError,
    OptionError,
    StructuredSystem,
    controllability,
    minimum_inputs,
    minimum_sensors,
    observability,
)
from netctl.io.sites import parse_candidates, parse_sites, read_sites
from netctl.structural.placement import (
    Candidates,
    place_inputs,
    place_sensors,
    sites_from_nodes,
)
from tests import _reference as ref
from tests.conftest import from_edges, random_pattern


# ---------------------------------------------------------------------- helpers
def _random_system(rng, n_max=7):
    n = int(rng.integers(1, n_max + 1))
    edges = random_pattern(rng, n, float(rng.uniform(0.05, 0.5)), loops=bool(rng.random() < 0.3))
    return StructuredSystem.from_matrices(ref.pattern_from_edges(edges, n), weighted=False)


def _is_controllable(system, B):
    return controllability(system.with_inputs(B), dimension=False).controllable


def _dedicated_B(n, states):
    B = np.zeros((n, len(states)))
    for k, i in enumerate(states):
        B[i, k] = 1.0
    return B


def _brute_dedicated(system, eligible, cost):
    """Minimum cost over every subset of eligible states (None when none works)."""
    n = system.n_states
    best = None
    elig = [int(i) for i in np.flatnonzero(eligible)]
    for r in range(len(elig) + 1):
        for S in itertools.combinations(elig, r):
            c = float(sum(cost[i] for i in S))
            if best is not None and c >= best:
                continue
            if _is_controllable(system, _dedicated_B(n, S)):
                best = c
    return best


def _sites_text(system, eligible, cost):
    lines = ["state,cost"] + [f"{system.state_names[i]},{cost[i]}"
                              for i in np.flatnonzero(eligible)]
    return "\n".join(lines)


# ---------------------------------------------------------------------- site data
def test_sites_csv_round_trip(tmp_path):
    s = from_edges([(0, 1), (1, 2)], 3)
    f = tmp_path / "sites.csv"
    f.write_text("# actuator sites\nstate,cost\nx0,2.5\nx2,0\n")
    sites = read_sites(f, s)
    assert sites.eligible.tolist() == [True, False, True]
    assert sites.cost.tolist() == [2.5, np.inf, 0.0]  # not listed: infinite cost
    assert sites.source == str(f)


@pytest.mark.parametrize("text, line, words", [
    pytest.param("name,cost\nx0,1", 1, "expected the header 'state,cost'", id="bad-header"),
    pytest.param("state,cost\nnope,1", 2, "unknown state name 'nope'", id="unknown-state"),
    pytest.param("state,cost\nx0,1\nx0,2", 3, "listed twice (first on line 2)", id="repeated"),
    pytest.param("state,cost\nx0,abc", 2, "the cost 'abc' of state 'x0' is not a number",
                 id="not-a-number"),
    pytest.param("state,cost\nx0,-1", 2, "must be a finite number >= 0", id="negative"),
    pytest.param("state,cost\nx0,inf", 2, "must be a finite number >= 0", id="infinite"),
    pytest.param("state,cost\nx0,1,2", 2, "expected 2 field(s)", id="extra-field"),
])
def test_sites_errors_name_file_and_line(tmp_path, text, line, words):
    s = from_edges([(0, 1), (1, 2)], 3)
    f = tmp_path / "sites.csv"
    f.write_text(text)
    with pytest.raises(NetworkFileError) as exc:
        read_sites(f, s)
    assert str(exc.value).startswith(f"{f}:{line}: ")
    assert words in str(exc.value)
    assert exc.value.line == line


def test_sites_empty_file(tmp_path):
    f = tmp_path / "sites.csv"
    f.write_text("# nothing\n")
    with pytest.raises(NetworkFileError, match="the file is empty"):
        read_sites(f, from_edges([(0, 1)], 2))


def test_sites_from_node_table():
    s = StructuredSystem.from_edges([0, 1], [1, 2], 3, nodes={
        "actuator": [True, False, True], "actuator_cost": [2.0, 5.0, np.nan],
        "sensor": [False, True, True], "sensor_cost": [1.0, 3.0, 4.0]})
    a = sites_from_nodes(s)
    assert a.eligible.tolist() == [True, False, True]
    assert a.cost.tolist() == [2.0, np.inf, 1.0]  # NaN cost on an eligible state: unit cost
    z = sites_from_nodes(s, kind="sensor")
    assert z.cost.tolist() == [np.inf, 3.0, 4.0]
    d = sites_from_nodes(from_edges([(0, 1)], 2))  # no columns: all eligible, unit cost
    assert d.eligible.all() and d.cost.tolist() == [1.0, 1.0] and d.source == "default"


def test_sites_node_table_rejects_negative_cost():
    s = StructuredSystem.from_edges([0], [1], 2, nodes={"actuator_cost": [1.0, -2.0]})
    with pytest.raises(ValueError, match=r"state 'x1' has cost -2\.0"):
        sites_from_nodes(s)


def test_bad_options_are_rejected_with_choices():
    s = from_edges([(0, 1)], 2)
    with pytest.raises(OptionError, match="unknown method 'best'; choose one of 'auto'"):
        place_inputs(s, method="best")
    with pytest.raises(OptionError, match=r"budget must be a finite number >= 0, found -1"):
        place_inputs(s, budget=-1)
    with pytest.raises(OptionError, match="kind must be one of 'actuator', 'sensor'"):
        sites_from_nodes(s, kind="valve")
    with pytest.raises(OptionError, match="these are actuator sites but sensors"):
        place_sensors(s, sites=sites_from_nodes(s))


# ---------------------------------------------------------------------- dedicated, exact
def test_dedicated_min_cost_equals_brute_force():
    """Hundreds of seeded instances: random pattern, eligible sites and integer costs."""
    rng = np.random.default_rng(6001)
    n_infeasible = 0
    for trial in range(300):
        s = _random_system(rng, n_max=6)
        n = s.n_states
        eligible = rng.random(n) < 0.75
        cost = rng.integers(0, 6, n).astype(float)
        p = place_inputs(s, sites=parse_sites(_sites_text(s, eligible, cost), s))
        best = _brute_dedicated(s, eligible, cost)
        ctx = (trial, s.edges()[0].tolist(), s.edges()[1].tolist(), eligible.tolist(),
               cost.tolist())
        if best is None:
            n_infeasible += 1
            assert not p.feasible and not p.goal_met and p.reasons, ctx
            continue
        assert p.feasible and p.goal_met and p.optimal and p.gap == 0.0, ctx
        assert p.cost == pytest.approx(best), ctx
        assert set(p.sites.tolist()) <= set(np.flatnonzero(eligible).tolist()), ctx
        assert p.verified is True
        assert _is_controllable(s, _dedicated_B(n, p.sites.tolist())), ctx
    assert 10 < n_infeasible < 200  # both branches exercised


def test_dedicated_min_cost_against_finite_field_reference():
    """Independent of netctl's Lin test: generic rank of [B AB ...] over F_p."""
    rng = np.random.default_rng(6002)
    ref_rng = np.random.default_rng(17)
    for trial in range(60):
        n = int(rng.integers(1, 6))
        edges = random_pattern(rng, n, float(rng.uniform(0.1, 0.5)))
        A = ref.pattern_from_edges(edges, n)
        s = StructuredSystem.from_matrices(A, weighted=False)
        eligible = rng.random(n) < 0.8
        cost = rng.integers(1, 5, n).astype(float)
        best = None
        for r in range(n + 1):
            for S in itertools.combinations(np.flatnonzero(eligible).tolist(), r):
                c = float(cost[list(S)].sum())
                if (best is None or c < best) and ref.generic_controllable_dimension(
                        A, ref.dedicated_B(n, list(S)), ref_rng, trials=1) == n:
                    best = c
        p = place_inputs(s, sites=parse_sites(_sites_text(s, eligible, cost), s))
        assert p.feasible == (best is not None), trial
        if best is not None:
            assert p.cost == pytest.approx(best), (trial, edges.tolist())
            assert ref.generic_controllable_dimension(
                A, ref.dedicated_B(n, p.sites.tolist()), ref_rng) == n


DEDICATED = [  # REFERENCES.md section 3 table [C]; recomputed by brute force below
    pytest.param([(0, 1), (1, 0), (2, 3), (3, 2)], 4, 2, id="two-disjoint-2-cycles"),
    pytest.param([(0, i) for i in range(1, 5)], 5, 4, id="out-star-4"),
    pytest.param([(i, 0) for i in range(1, 5)], 5, 4, id="in-star-4"),
    pytest.param([(0, 1), (1, 2), (2, 3)], 4, 1, id="path-4"),
    pytest.param([(0, 1), (1, 2), (2, 3), (3, 0)], 4, 1, id="cycle-4"),
]


@pytest.mark.parametrize("edges, n, expected", DEDICATED)
def test_unit_cost_reproduces_dedicated_table(edges, n, expected):
    s = from_edges(edges, n)
    p = place_inputs(s)  # every state eligible at unit cost
    assert p.cost == expected == p.sites.size
    assert ref.brute_force_min_dedicated(ref.pattern_from_edges(np.array(edges), n),
                                         np.random.default_rng(3)) == expected


def test_unit_cost_reproduces_minimum_inputs_counts():
    rng = np.random.default_rng(6003)
    for trial in range(200):
        n = int(rng.integers(1, 40))
        edges = random_pattern(rng, n, float(rng.uniform(0.01, 0.2)), loops=bool(rng.random() < 0.3))
        s = StructuredSystem.from_matrices(ref.pattern_from_edges(edges, n), weighted=False)
        p = place_inputs(s)
        assert p.cost == minimum_inputs(s, dedicated=True).n_inputs == p.sites.size, trial
        q = place_sensors(s)
        assert q.cost == minimum_sensors(s, dedicated=True).n_inputs, trial
        assert q.verified is True


def test_existing_inputs_are_kept_at_no_cost():
    # path 0 -> 1 -> 2 with an input already on 0: nothing to add
    s = from_edges([(0, 1), (1, 2)], 3).with_inputs([0])
    p = place_inputs(s)
    assert p.cost == 0 and p.sites.size == 0 and p.goal_met
    # out-star with an input on the hub: one leaf of the two still needs one
    s = from_edges([(0, 1), (0, 2)], 3).with_inputs([0])
    p = place_inputs(s, sites=parse_sites("state,cost\nx1,4\nx2,3", s))
    assert p.site_names == ["x2"] and p.cost == 3


def test_infeasible_source_component_is_named():
    # 0 -> 1 -> 2 and an isolated pair 3 <-> 4 with no eligible site
    s = from_edges([(0, 1), (1, 2), (3, 4), (4, 3)], 5)
    p = place_inputs(s, sites=parse_sites("state,cost\nx0,1\nx2,1", s))
    assert not p.feasible and not p.goal_met and p.best_effort and not p.optimal
    assert any("source component {x3, x4}" in r and "make one of them eligible" in r
               for r in p.reasons), p.reasons


def test_infeasible_dilation_is_named():
    # out-star 0 -> 1, 2, 3: the leaves share one in-neighbour; only x0 and x1 eligible
    s = from_edges([(0, 1), (0, 2), (0, 3)], 4)
    p = place_inputs(s, sites=parse_sites("state,cost\nx0,1\nx1,1", s))
    assert not p.feasible
    text = " ".join(p.reasons)
    assert "dilation no eligible site can fix" in text and "x2" in text and "x3" in text
    assert "1 more independent eligible site(s)" in text


# ---------------------------------------------------------------------- candidates
def _random_candidates(rng, n, k):
    names, states, costs = [], [], []
    for j in range(k):
        size = int(rng.integers(1, min(n, 3) + 1))
        states.append(rng.choice(n, size=size, replace=False))
        names.append(f"c{j}")
        costs.append(float(rng.integers(1, 6)))
    return Candidates.from_lists(names, states, costs)


def _brute_candidates(system, cands):
    n = system.n_states
    best = None
    for r in range(cands.n_candidates + 1):
        for S in itertools.combinations(range(cands.n_candidates), r):
            c = float(cands.cost[list(S)].sum())
            if best is not None and c >= best:
                continue
            if _is_controllable(system, cands.matrix(np.array(S, np.int64), n)):
                best = c
    return best


def test_candidates_milp_equals_brute_force_and_greedy_respects_its_bound():
    rng = np.random.default_rng(6004)
    seen_feasible = 0
    for trial in range(120):
        s = _random_system(rng, n_max=6)
        n = s.n_states
        cands = _random_candidates(rng, n, int(rng.integers(1, 8)))
        best = _brute_candidates(s, cands)
        p = place_inputs(s, candidates=cands)
        g = place_inputs(s, candidates=cands, method="greedy")
        assert p.feasible == g.feasible == (best is not None), trial
        if best is None:
            assert p.reasons and not p.goal_met
            continue
        seen_feasible += 1
        assert p.method == "milp" and p.optimal and p.cost == pytest.approx(best), trial
        assert p.verified is True and g.verified is True
        # the greedy design works, and its reported lower bound is valid
        assert g.method == "greedy" and g.cost >= best - 1e-9
        assert g.lower_bound <= best + 1e-9, trial
        assert g.gap == pytest.approx((g.cost - g.lower_bound) / g.cost if g.cost else 0.0)
    assert seen_feasible > 30


def test_candidates_file_parsing_and_errors(tmp_path):
    s = from_edges([(0, 1), (0, 2)], 3, state_names=["a", "b", "c"])
    c = parse_candidates("name,cost,states\nv1,2,a\nv2,1.5,b;c\n", s)
    assert c.names == ("v1", "v2") and c.states_of(1).tolist() == [1, 2]
    for text, words in [("name,cost\nv,1", "expected the header 'name,cost,states'"),
                        ("name,cost,states\nv,1,zz", "unknown state name 'zz'"),
                        ("name,cost,states\nv,1,a\nv,2,b", "used twice (first on line 2)"),
                        ("name,cost,states\nv,x,a", "the cost 'x' of 'v' is not a number"),
                        ("name,cost,states\nv,1,a,b", "separate the states with spaces")]:
        with pytest.raises(NetworkFileError, match=words.replace("(", r"\(").replace(")", r"\)")):
            parse_candidates(text, s, source="c.csv")


# ---------------------------------------------------------------------- best effort
def test_budget_too_small_gives_the_best_affordable_dimension():
    """Exhaustive best effort equals brute force over affordable subsets (F_p dimension)."""
    rng = np.random.default_rng(6005)
    ref_rng = np.random.default_rng(23)
    for trial in range(60):
        n = int(rng.integers(2, 6))
        edges = random_pattern(rng, n, float(rng.uniform(0.1, 0.5)))
        A = ref.pattern_from_edges(edges, n)
        s = StructuredSystem.from_matrices(A, weighted=False)
        cost = rng.integers(1, 4, n).astype(float)
        full = place_inputs(s, sites=parse_sites(_sites_text(s, np.ones(n, bool), cost), s))
        budget = float(full.cost) - 1.0
        if budget < 0:
            continue
        p = place_inputs(s, sites=parse_sites(_sites_text(s, np.ones(n, bool), cost), s),
                         budget=budget)
        assert p.best_effort and not p.goal_met and p.reasons and p.cost <= budget
        best = 0
        for r in range(n + 1):
            for S in itertools.combinations(range(n), r):
                if cost[list(S)].sum() <= budget:
                    best = max(best, ref.generic_controllable_dimension(
                        A, ref.dedicated_B(n, list(S)), ref_rng, trials=1))
        assert p.dimension == best, (trial, edges.tolist(), cost.tolist(), budget)
        assert p.optimal and p.gap == 0.0


def test_best_effort_greedy_bound_holds():
    rng = np.random.default_rng(6006)
    for trial in range(40):
        s = _random_system(rng, n_max=7)
        n = s.n_states
        cost = rng.integers(1, 4, n).astype(float)
        text = _sites_text(s, np.ones(n, bool), cost)
        budget = float(rng.integers(1, 4))
        ex = place_inputs(s, sites=parse_sites(text, s), budget=budget, method="exact")
        gr = place_inputs(s, sites=parse_sites(text, s), budget=budget, method="greedy")
        if ex.goal_met:
            continue
        assert gr.dimension <= ex.dimension <= gr.upper_bound + 1e-9, trial
        assert gr.dimension >= (1 - np.exp(-1)) / 2 * ex.dimension - 1e-9, trial


# ---------------------------------------------------------------------- sensors
def test_sensors_min_cost_equals_brute_force_on_the_dual():
    rng = np.random.default_rng(6007)
    for trial in range(150):
        s = _random_system(rng, n_max=6)
        n = s.n_states
        eligible = rng.random(n) < 0.8
        cost = rng.integers(0, 5, n).astype(float)
        p = place_sensors(s, sites=parse_sites(_sites_text(s, eligible, cost), s, kind="sensor"))
        best = _brute_dedicated(s.dual(), eligible, cost)
        assert p.feasible == (best is not None), trial
        if best is not None:
            assert p.cost == pytest.approx(best) and p.kind == "sensors"
            obs = observability(s.with_outputs(p.sites.tolist()), dimension=False)
            assert obs.controllable, trial
            assert p.verified is True


def test_candidates_best_effort_equals_brute_force():
    """Budget too small for candidate actuators: the largest affordable dimension,
    brute force over affordable subsets with the F_p generic rank (tests/_reference.py)."""
    rng = np.random.default_rng(6008)
    ref_rng = np.random.default_rng(29)
    checked = 0
    for trial in range(80):
        n = int(rng.integers(2, 6))
        edges = random_pattern(rng, n, float(rng.uniform(0.1, 0.5)))
        A = ref.pattern_from_edges(edges, n)
        s = StructuredSystem.from_matrices(A, weighted=False)
        cands = _random_candidates(rng, n, int(rng.integers(1, 6)))
        budget = float(rng.integers(1, 5))
        p = place_inputs(s, candidates=cands, budget=budget)
        if p.goal_met:
            assert p.cost <= budget and p.verified
            continue
        checked += 1
        best = 0
        for r in range(cands.n_candidates + 1):
            for S in itertools.combinations(range(cands.n_candidates), r):
                if cands.cost[list(S)].sum() <= budget:
                    B = cands.matrix(np.array(S, np.int64), n).toarray() != 0
                    best = max(best, ref.generic_controllable_dimension(A, B, ref_rng, trials=1))
        assert p.best_effort and p.cost <= budget and p.reasons
        assert p.dimension == best, (trial, edges.tolist(), budget)
    assert checked > 20


def test_sensor_candidates_and_budget():
    # path 0 -> 1 -> 2: one sensor at the end suffices; a sensor reading {0, 1} does not
    s = from_edges([(0, 1), (1, 2)], 3)
    cands = Candidates.from_lists(["front", "end"], [[0, 1], [2]], [1.0, 4.0])
    p = place_sensors(s, candidates=cands)
    assert [cands.names[k] for k in p.chosen] == ["end"] and p.cost == 4.0 and p.optimal
    q = place_sensors(s, candidates=cands, budget=2.0)
    assert q.best_effort and not q.goal_met and q.cost == 1.0 and q.dimension == 2
    assert observability(q.apply(s), dimension=True).controllable_dimension == 2


def test_edge_cases_empty_isolated_and_self_loops():
    empty = StructuredSystem.from_edges([], [], 0)
    assert place_inputs(empty).goal_met and place_inputs(empty).cost == 0
    isolated = StructuredSystem.from_edges([], [], 3)  # each state is its own source
    assert place_inputs(isolated).site_names == ["x0", "x1", "x2"]
    loops = StructuredSystem.from_edges([0, 1, 2], [0, 1, 2], 3)  # self-loops: rank full
    assert place_inputs(loops).cost == 3  # still three source components
    p = place_inputs(isolated, budget=0)
    assert p.best_effort and p.cost == 0 and p.dimension == 0 and not p.goal_met
    with pytest.raises(OptionError, match=r"candidate costs must be one finite number >= 0"):
        place_inputs(isolated, candidates=Candidates.from_lists(["a"], [[0]], [np.inf]))
    p = place_inputs(isolated, candidates=Candidates.from_lists(["a"], [[0]], [1.0]))
    assert not p.feasible
    assert "source component {x1}" in p.reasons[0]
    assert "add a candidate actuator acting on one of them" in p.reasons[0]


def test_milp_time_limit_still_gives_a_checked_design_and_valid_bound():
    rng = np.random.default_rng(6009)
    for trial in range(15):
        s = _random_system(rng, n_max=6)
        cands = _random_candidates(rng, s.n_states, 6)
        best = _brute_candidates(s, cands)
        p = place_inputs(s, candidates=cands, method="exact", time_limit=1e-9)
        if best is None:
            assert not p.feasible
            continue
        assert p.verified is True and p.cost >= best - 1e-9
        assert p.lower_bound <= best + 1e-9 and p.method in ("milp", "greedy")


def test_dimension_oracle_matches_finite_field_reference():
    """The best-effort oracle (Hosoe's assignment, per component) against the generic
    rank of [B AB ...] over F_p (tests/_reference.py) and netctl's controllability."""
    from netctl.structural.placement._budget import DimensionOracle as _DimensionOracle

    rng = np.random.default_rng(6010)
    ref_rng = np.random.default_rng(31)
    for trial in range(120):
        n = int(rng.integers(1, 8))
        edges = random_pattern(rng, n, float(rng.uniform(0.05, 0.5)), loops=bool(rng.random() < 0.4))
        A = ref.pattern_from_edges(edges, n)
        s = StructuredSystem.from_matrices(A, weighted=False)
        cands = _random_candidates(rng, n, 4)
        oracle = _DimensionOracle(s, cands)
        S = sorted(rng.choice(4, size=int(rng.integers(0, 5)), replace=False).tolist())
        B = cands.matrix(np.array(S, np.int64), n)
        expected = ref.generic_controllable_dimension(A, B.toarray() != 0, ref_rng)
        assert oracle(S) == expected, (trial, edges.tolist(), S)
        if S:
            assert controllability(s.with_inputs(B)).controllable_dimension == expected


def test_infeasible_sites_give_the_best_effort_design_against_brute_force():
    """When no design on the eligible sites is controllable, the result is the design of
    largest generic controllable dimension (then fewest sites, when exhaustive), never
    called optimal. Brute force: every subset of the eligible sites, each dimension the
    generic rank of [B AB ... A^(n-1)B] over F_p (tests/_reference.py; Schwartz 1980 /
    Zippel 1979).
    """
    rng = np.random.default_rng(2025)
    ref_rng = np.random.default_rng(11)
    tried = 0
    while tried < 60:
        s = _random_system(rng)
        n = s.n_states
        eligible = rng.random(n) < 0.4
        cost = np.ones(n)
        sites = parse_sites(_sites_text(s, eligible, cost), s) if eligible.any() else None
        if sites is None or _brute_dedicated(s, eligible, cost) is not None:
            continue  # feasible (or nothing eligible): not this test's case
        tried += 1
        A = ref.pattern_from_edges(np.argwhere(s.A.toarray().T != 0), n)
        elig = [int(i) for i in np.flatnonzero(eligible)]
        dims = {S: ref.generic_controllable_dimension(A, ref.dedicated_B(n, S), ref_rng)
                for r in range(len(elig) + 1) for S in itertools.combinations(elig, r)}
        best = max(dims.values())
        fewest = min(len(S) for S, d in dims.items() if d == best)
        for method in ("auto", "greedy"):
            p = place_inputs(s, sites=sites, method=method)
            assert not p.feasible and not p.goal_met and p.best_effort and not p.optimal
            assert p.reasons
            assert p.dimension == best, (method, elig, s.A.toarray().tolist())
            assert dims[tuple(p.sites.tolist())] == best
            if method == "auto":  # exhaustive below EXHAUSTIVE_MAX_CANDIDATES sites
                assert p.sites.size == fewest and p.cost == fewest


def test_small_and_large_paths_place_the_same_design(monkeypatch):
    """The small-network path (NumPy patterns, NumPy union-find for the components of
    the assignment; no scipy unless a component has several rows) and the large one
    (scipy, forced with the size threshold at 0) choose the same sites at the same cost,
    dedicated and greedy, actuators and sensors, on random cases; the costs are also
    checked against brute force above (Pequito, Kar & Aguiar 2016, exact minimum)."""
    import netctl._csr as csr

    rng = np.random.default_rng(6021)
    for trial in range(150):
        s = _random_system(rng, n_max=8)
        n = s.n_states
        eligible = rng.random(n) < 0.8
        cost = rng.integers(0, 4, n).astype(float)  # ties between sites on purpose
        sites = parse_sites(_sites_text(s, eligible, cost), s)
        runs = []
        for small in (True, False):
            with monkeypatch.context() as m:
                if not small:
                    m.setattr(csr, "SMALL_ENTRIES", 0)
                runs.append([place_inputs(s, sites=sites).to_dict(),
                             place_inputs(s, sites=sites, method="greedy").to_dict(),
                             place_sensors(s).to_dict()])
        assert runs[0] == runs[1], (trial, s.edges()[0].tolist(), s.edges()[1].tolist())
