"""Node roles (Jia et al. 2013) and link roles (Liu et al. 2011) against brute force.

Brute force here never uses netctl's matching engine: term ranks come from
scipy.sparse.csgraph.maximum_bipartite_matching, generic Kalman ranks from exact
arithmetic modulo a prime with random weights (Schwartz–Zippel), and minimum driver sets
are enumerated over all subsets.
"""

from __future__ import annotations

import itertools

import networkx as nx
import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching

from netctl import StructuredSystem
from netctl.errors import UnknownNameError
from netctl.structural.roles import LINK_ROLES, NODE_ROLES, link_roles, node_roles
from tests.conftest import directed_cycle, directed_path, from_edges, in_star, out_star

P = 1_000_003  # prime modulus for the generic-rank brute force


def term_rank(M: np.ndarray) -> int:
    """Size of a maximum matching of the rows and columns of a boolean matrix (scipy)."""
    if M.size == 0 or not M.any():
        return 0
    m = maximum_bipartite_matching(sp.csr_matrix(M.astype(np.int8)), perm_type="column")
    return int(np.count_nonzero(m >= 0))


def rank_mod_p(M: np.ndarray) -> int:
    M = M.copy() % P
    r = 0
    rows, cols = M.shape
    for c in range(cols):
        piv = next((i for i in range(r, rows) if M[i, c]), None)
        if piv is None:
            continue
        M[[r, piv]] = M[[piv, r]]
        inv = pow(int(M[r, c]), P - 2, P)
        M[r] = (M[r] * inv) % P
        for i in range(rows):
            if i != r and M[i, c]:
                M[i] = (M[i] - M[i, c] * M[r]) % P
        r += 1
        if r == rows:
            break
    return r


def generic_kalman_rank(A: np.ndarray, B: np.ndarray, rng: np.random.Generator) -> int:
    """Generic rank of [B, AB, ..., A^(n-1)B] for the patterns A, B (max over 2 draws)."""
    n = A.shape[0]
    best = 0
    for _ in range(2):
        Aw = np.where(A, rng.integers(1, P, A.shape), 0).astype(np.int64)
        Bw = np.where(B, rng.integers(1, P, B.shape), 0).astype(np.int64)
        blocks = [Bw]
        for _ in range(n - 1):
            blocks.append((Aw @ blocks[-1]) % P)
        best = max(best, rank_mod_p(np.hstack(blocks)))
    return best


def brute_node_roles(A: np.ndarray, rng: np.random.Generator) -> list[int]:
    """Roles from every minimum driver set, enumerated.

    Not perfect: the sets S of N_D = n - |M*| states with term rank [A I_S] = n (Liu et
    al. 2011: the unmatched states of a maximum matching). Perfect: the smallest sets S
    such that one input acting on all of S makes (A, b) controllable (generic Kalman rank).
    """
    n = A.shape[0]
    nu = term_rank(A)
    I = np.eye(n, dtype=bool)
    if nu < n:
        sets = [set(S) for S in itertools.combinations(range(n), n - nu)
                if term_rank(np.hstack([A, I[:, list(S)]])) == n]
    else:
        sets = []
        for size in range(1, n + 1):
            sets = [set(S) for S in itertools.combinations(range(n), size)
                    if generic_kalman_rank(A, I[:, list(S)].any(axis=1, keepdims=True),
                                           rng) == n]
            if sets:
                break
    assert sets
    every = set.intersection(*sets)
    some = set.union(*sets)
    return [0 if i in every else 1 if i in some else 2 for i in range(n)]


def random_system(rng: np.random.Generator, undirected: bool) -> StructuredSystem:
    n = int(rng.integers(1, 7))
    D = rng.random((n, n)) < rng.uniform(0.1, 0.6)
    if not rng.random() < 0.3:
        np.fill_diagonal(D, False)
    if undirected:
        D = D | D.T
    return StructuredSystem.from_matrices(D, weighted=False)


@pytest.mark.parametrize("undirected", [False, True], ids=["directed", "undirected"])
@pytest.mark.parametrize("seed", range(4))
def test_node_roles_equal_brute_force(seed, undirected):
    # Jia et al. 2013 definitions (critical / intermittent / redundant = in all / some /
    # none of the minimum driver sets), checked by enumeration on 60 graphs per case.
    rng = np.random.default_rng(1000 + seed + 10 * undirected)
    for _ in range(60):
        s = random_system(rng, undirected)
        A = s.A.toarray() != 0
        got = node_roles(s)
        assert got.role.tolist() == brute_node_roles(A, rng), A.astype(int)
        assert got.n_inputs == max(s.n_states - term_rank(A), 1)
        assert got.perfect_matching == (term_rank(A) == s.n_states)


@pytest.mark.parametrize("undirected", [False, True], ids=["directed", "undirected"])
@pytest.mark.parametrize("seed", range(4))
def test_link_roles_equal_brute_force(seed, undirected):
    # Liu et al. 2011 link classes: critical iff its removal lowers the term rank; in
    # some maximum matching iff deleting its two ends lowers the term rank by exactly one.
    rng = np.random.default_rng(2000 + seed + 10 * undirected)
    for _ in range(80):
        s = random_system(rng, undirected)
        A = s.A.toarray() != 0
        nu = term_rank(A)
        got = link_roles(s)
        for k, (u, v) in enumerate(zip(got.sources.tolist(), got.targets.tolist())):
            B = A.copy()
            B[v, u] = False
            critical = term_rank(B) == nu - 1
            in_some = term_rank(np.delete(np.delete(A, v, 0), u, 1)) == nu - 1
            expected = 0 if critical else (1 if in_some else 2)
            assert got.role[k] == expected, (A.astype(int), u, v)
            n = s.n_states
            assert got.n_inputs_after_loss[k] == max(n - term_rank(B), 1)


def test_link_roles_against_all_maximum_matchings_enumerated():
    # A second, definitional brute force: enumerate every maximum matching of small graphs.
    rng = np.random.default_rng(7)
    for _ in range(60):
        s = random_system(rng, undirected=False)
        A = s.A.toarray() != 0
        n = s.n_states
        nu = term_rank(A)
        edges = [(v, u) for v in range(n) for u in range(n) if A[v, u]]
        matchings = []
        for combo in itertools.combinations(edges, nu):
            if len({e[0] for e in combo}) == nu and len({e[1] for e in combo}) == nu:
                matchings.append(set(combo))
        got = link_roles(s)
        for k, (u, v) in enumerate(zip(got.sources.tolist(), got.targets.tolist())):
            count = sum((v, u) in m for m in matchings)
            expected = 0 if count == len(matchings) else (2 if count == 0 else 1)
            assert got.role[k] == expected


# Jia et al. (2013), Nat. Commun. 4:2002, Fig. 1: five nodes, N_D = 3, minimum driver
# sets {1,3,4}, {1,3,5}, {1,4,5}; node 1 critical, 2 redundant, 3-5 intermittent. The
# edge list 1->2, 2->3, 2->4, 2->5 is a reconstruction that reproduces those numbers.
JIA = StructuredSystem.from_edges([0, 1, 1, 1], [1, 2, 3, 4],
                                  state_names=["1", "2", "3", "4", "5"])


def test_jia_worked_example():
    r = node_roles(JIA)
    assert r.n_inputs == 3
    assert {n: r.role_of(n) for n in "12345"} == {
        "1": "critical", "2": "redundant", "3": "intermittent", "4": "intermittent",
        "5": "intermittent"}
    # the published minimum driver sets, recomputed by enumeration
    A = JIA.A.toarray() != 0
    I = np.eye(5, dtype=bool)
    sets = {S for S in itertools.combinations(range(5), 3)
            if term_rank(np.hstack([A, I[:, list(S)]])) == 5}
    assert sets == {(0, 2, 3), (0, 2, 4), (0, 3, 4)}
    lr = link_roles(JIA)
    assert lr.role_of("1", "2") == "critical"
    assert [lr.role_of("2", x) for x in "345"] == ["ordinary"] * 3


KNOWN_NODES = [
    # Liu et al. 2011: a directed path has one driver, its head (in-degree 0).
    pytest.param(directed_path(4), ["critical", "redundant", "redundant", "redundant"],
                 id="path-head-critical"),
    # Out-star: hub has in-degree 0 (always a driver); any k-1 leaves drive the rest.
    pytest.param(out_star(3), ["critical", "intermittent", "intermittent", "intermittent"],
                 id="out-star"),
    # In-star: leaves have in-degree 0, the hub is always matched.
    pytest.param(in_star(3), ["redundant", "critical", "critical", "critical"],
                 id="in-star"),
    # Perfect matching, one source component (the whole cycle): any state can take the
    # single input (Liu et al. 2011: N_D = 1).
    pytest.param(directed_cycle(3), ["intermittent"] * 3, id="cycle-perfect"),
]


@pytest.mark.parametrize("system, expected", KNOWN_NODES)
def test_node_roles_known(system, expected):
    r = node_roles(system)
    assert [NODE_ROLES[c] for c in r.role] == expected


def test_perfect_matching_roles_follow_source_components():
    # 0 (self-loop) -> 1 <-> 2: perfect matching; the only source component is {0}, so
    # the single input must act on 0 (critical) and 1, 2 are never needed.
    s = from_edges([(0, 0), (0, 1), (1, 2), (2, 1)], 3)
    r = node_roles(s)
    assert r.basis == "source-components"
    assert r.names(r.critical) == ["x0"] and r.names(r.redundant) == ["x1", "x2"]
    assert r.n_inputs == 1


def test_directed_path_and_cycle_links_all_critical():
    # The matching of a path or a cycle is unique, so every link is in every maximum
    # matching (Liu et al. 2011 definition of critical).
    for s in (directed_path(5), directed_cycle(5)):
        r = link_roles(s)
        assert [LINK_ROLES[c] for c in r.role] == ["critical"] * s.n_links


def test_self_loops_are_links():
    # Self-loops x0 -> x0, x1 -> x1 and the link x0 -> x1: the only perfect matching uses
    # the two self-loops (critical); x0 -> x1 is in no maximum matching (redundant).
    s = from_edges([(0, 0), (1, 1), (0, 1)], 2)
    r = link_roles(s)
    roles = dict(zip(r.link_names(range(r.n_links)), (LINK_ROLES[c] for c in r.role)))
    assert roles == {("x0", "x0"): "critical", ("x1", "x1"): "critical",
                     ("x0", "x1"): "redundant"}
    # with only one self-loop and a shared feeder, both links are ordinary
    s2 = from_edges([(0, 0), (0, 1)], 2)
    assert link_roles(s2).role.tolist() == [1, 1]


def test_edge_cases_empty_and_isolated():
    empty = StructuredSystem.from_edges([], [], 0)
    assert node_roles(empty).n_inputs == 0 and node_roles(empty).role.size == 0
    assert link_roles(empty).n_links == 0
    iso = StructuredSystem.from_edges([], [], 3)
    r = node_roles(iso)
    assert r.n_inputs == 3 and r.critical.tolist() == [0, 1, 2]


def test_undirected_from_networkx_star():
    # An undirected star K_{1,3}: each edge is a link both ways. A maximum matching has
    # size 2 (hub matched to one leaf and one leaf to the hub), so N_D = 2.
    g = nx.star_graph(3)
    s = StructuredSystem.from_networkx(g)
    A = s.A.toarray() != 0
    r = node_roles(s)
    assert r.n_inputs == max(4 - term_rank(A), 1) == 2
    assert r.role.tolist() == brute_node_roles(A, np.random.default_rng(3))


def test_to_dict_and_lookups():
    r = node_roles(JIA)
    d = r.to_dict()
    assert d["nodes"] == {"1": "critical", "2": "redundant", "3": "intermittent",
                          "4": "intermittent", "5": "intermittent"}
    assert d["counts"] == {"critical": 1, "intermittent": 3, "redundant": 1}
    links = link_roles(JIA).to_dict()["links"]
    assert {"source": "1", "target": "2", "role": "critical"} in links
    with pytest.raises(UnknownNameError, match="unknown state name 'nine'"):
        r.role_of("nine")
    with pytest.raises(UnknownNameError, match="no link '3' -> '1'"):
        link_roles(JIA).role_of("3", "1")


def test_roles_ignore_existing_inputs():
    plain = node_roles(JIA)
    driven = node_roles(JIA.with_inputs(["2"]))
    assert plain.role.tolist() == driven.role.tolist()
