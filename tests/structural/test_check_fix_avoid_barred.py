"""``check``'s smallest fix (the states to give a dedicated input when a design fails)
holds as few states the node table bars (``actuator`` = false) as any fix of its size.

Reference outside the project, by brute force over subsets with networkx: a fix ``F``
works when Lin's conditions hold for ``(A, [B I_F])`` (C.-T. Lin, "Structural
controllability", IEEE TAC 19(3):201-208, 1974; Y.-Y. Liu, J.-J. Slotine,
A.-L. Barabási, Nature 473:167-173, 2011, doi:10.1038/nature10011): every state is
reachable from an input, and a maximum matching of the bipartite graph of ``[A B I_F]``
covers every state (generic rank n).
"""

from __future__ import annotations

import itertools
import warnings

import networkx as nx
import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.structural import controllability, minimum_inputs


def _works(n, edges, driven, fix):
    G = nx.DiGraph()
    G.add_nodes_from(range(n))
    G.add_edges_from(edges)
    roots = set(driven) | set(fix)
    reach = set(roots)
    for r in roots:
        reach |= nx.descendants(G, r)
    if len(reach) < n:
        return False
    B = nx.Graph()
    top = [("i", i) for i in range(n)]
    B.add_nodes_from(top)
    B.add_edges_from((("o", a), ("i", b)) for a, b in edges)
    B.add_edges_from((("u", k), ("i", b)) for k, b in enumerate(driven))
    B.add_edges_from((("f", b), ("i", b)) for b in fix)
    M = nx.bipartite.hopcroft_karp_matching(B, top_nodes=top)
    return all(v in M for v in top)


def _cases(rng, count, kind):
    """Small random systems: ``kind`` "acyclic" (links from lower to higher rank, ranks
    shuffled), "random" (uniform links), or "cycles" (uniform links plus one to three
    planted directed cycles of 1-4 states, so that unreached source components of
    several states, and self-loops, are common)."""
    for _ in range(count):
        n = int(rng.integers(3, 10))
        m = int(rng.integers(0, 2 * n))
        src, dst = rng.integers(0, n, m), rng.integers(0, n, m)
        if kind == "acyclic":
            keep = src < dst
            perm = rng.permutation(n)
            src, dst = perm[src[keep]], perm[dst[keep]]
        elif kind == "cycles":
            for _ in range(int(rng.integers(1, 4))):
                ring = rng.permutation(n)[:int(rng.integers(1, 5))]
                src = np.concatenate([src, ring])
                dst = np.concatenate([dst, np.roll(ring, -1)])
        barred = rng.random(n) < rng.random()
        driven = sorted(set(rng.integers(0, n, int(rng.integers(0, 3))).tolist()))
        Bm = np.zeros((n, len(driven)))
        for k, b in enumerate(driven):
            Bm[b, k] = 1
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # duplicate links merged
            s = StructuredSystem.from_edges(src, dst, n_states=n,
                                            nodes={"actuator": ~barred}).with_inputs(Bm)
            plain = StructuredSystem.from_edges(src, dst, n_states=n).with_inputs(Bm)
        yield n, set(zip(src.tolist(), dst.tolist())), driven, barred, s, plain


def _fewest(n, edges, driven, barred, size):
    """Brute force: the fewest barred states of any working fix of ``size`` states, and
    whether a working fix of ``size - 1`` states exists."""
    smaller = any(_works(n, edges, driven, F)
                  for F in itertools.combinations(range(n), size - 1))
    best = min(int(barred[list(F)].sum())
               for F in itertools.combinations(range(n), size)
               if _works(n, edges, driven, F))
    return best, smaller


def _compare(kind, seed, count):
    """(cases that fail, cases whose fix holds more barred states than the fewest)."""
    tried = worse = 0
    for n, edges, driven, barred, s, plain in _cases(np.random.default_rng(seed), count,
                                                     kind):
        r = controllability(s)
        if r.controllable:
            continue
        tried += 1
        fix = r.fix.tolist()
        assert len(fix) == controllability(plain).fix.size  # the size is unchanged
        assert _works(n, edges, driven, fix)
        best, smaller = _fewest(n, edges, driven, barred, len(fix))
        assert not smaller  # it is the smallest
        assert int(barred[fix].sum()) >= best
        worse += int(barred[fix].sum()) > best
    return tried, worse


def test_acyclic_fix_holds_fewest_barred_states_by_brute_force():
    """Acyclic: every unreached source component is one state with no in-link, always
    unmatched, so the fix is the unmatched set of the matching alone, which leaves the
    fewest barred states of any maximum matching (transversal matroid, Edmonds &
    Fulkerson 1965, from memory): exact."""
    tried, worse = _compare("acyclic", 7, 300)
    assert tried > 100 and worse == 0


@pytest.mark.parametrize("kind, seed, count", [
    # random starts 7, 11 and 18 of this generator each held one case where the earlier
    # heuristic (extra columns first on states not barred) left one barred state more
    pytest.param("random", 7, 100, id="random-7"),
    pytest.param("random", 11, 100, id="random-11"),
    pytest.param("random", 18, 100, id="random-18"),
    pytest.param("random", 40, 500, id="random-40"),
    pytest.param("cycles", 41, 2000, id="planted-cycles-41"),
])
def test_fix_holds_fewest_barred_states_by_brute_force(kind, seed, count):
    """With cycles, exact too: successive shortest paths on the extra columns of the
    unreached source components (netctl.graph.costmatch); no case may hold one barred
    state more than the fewest among fixes of the smallest size."""
    tried, worse = _compare(kind, seed, count)
    assert tried > count // 2 and worse == 0


def test_drivers_hold_fewest_barred_states_by_brute_force():
    """``drivers`` (minimum_inputs, dedicated) on the same networks without inputs: the
    same completion, so the same guarantee: fewest drivers, then fewest barred ones."""
    # random start 50: the earlier heuristic put one barred driver too many in 2 of 1,000
    rng = np.random.default_rng(50)
    tried = worse = 0
    for n, edges, _, barred, s, plain in _cases(rng, 1000, "cycles"):
        d = minimum_inputs(s.with_inputs(np.zeros((n, 0))), dedicated=True).drivers.tolist()
        assert len(d) == minimum_inputs(plain.with_inputs(np.zeros((n, 0))),
                                        dedicated=True).drivers.size
        assert _works(n, edges, [], d)
        best, smaller = _fewest(n, edges, [], barred, len(d))
        assert not smaller
        tried += 1
        worse += int(barred[d].sum()) > best
    assert tried == 1000 and worse == 0


def _lsa_fewest_barred(n, edges, driven, barred):
    """Fewest inputs, then fewest barred among them, by scipy's linear_sum_assignment
    (Crouse 2016, a shortest augmenting path method) on the assignment form of the same
    problem: each state takes one in-neighbour (a link ``u -> v`` lets ``v`` take column
    ``u``), an input of ``driven``, the extra column of the unreached source component
    it lies in (then it gets an input and the component is reached), or nothing (it
    gets an input). Weights: ``BIG`` for every column taken, plus 1 where a barred state
    takes a real column or the extra column of a component barred throughout. Unreached
    source components from networkx's condensation. Returns (fix size, barred in fix)."""
    from scipy.optimize import linear_sum_assignment

    G = nx.DiGraph()
    G.add_nodes_from(range(n))
    G.add_edges_from(edges)
    C = nx.condensation(G)
    reached = set(driven)
    for d in driven:
        reached |= nx.descendants(G, d)
    comps = [sorted(C.nodes[c]["members"]) for c in C if C.in_degree(c) == 0
             and not set(C.nodes[c]["members"]) & reached]
    BIG = 4 * n + 4
    ncol = n + len(driven) + len(comps) + n  # states, inputs, extra, "nothing"
    W = np.full((n, ncol), -10**9, np.int64)
    for u, v in edges:
        W[v, u] = BIG + int(barred[v])
    for k, d in enumerate(driven):
        W[d, n + k] = BIG + int(barred[d])
    for j, comp in enumerate(comps):
        full = all(barred[comp])
        for v in comp:
            W[v, n + len(driven) + j] = BIG + int(full and barred[v])
    W[np.arange(n), n + len(driven) + len(comps) + np.arange(n)] = 0
    rows, cols = linear_sum_assignment(W, maximize=True)
    real = {int(r) for r, c in zip(rows, cols) if c < n + len(driven)}
    taken = {int(c) - n - len(driven) for c in cols
             if n + len(driven) <= c < n + len(driven) + len(comps)}
    fix = [v for v in range(n) if v not in real]
    cost = int(barred[fix].sum())
    for j, comp in enumerate(comps):
        if j not in taken:  # one more input, on a state not barred if there is one
            fix.append(comp[0])
            cost += int(all(barred[comp]))
    return len(fix), cost


def test_medium_networks_fix_matches_assignment_optimum():
    """Networks of 150-400 states with planted source cycles, too large for subsets:
    the fix's size and barred count equal the optimum of the assignment form, solved by
    scipy (no brute force; the form is argued in netctl.structural._engine.completion)."""
    rng = np.random.default_rng(17)
    for _ in range(12):
        n = int(rng.integers(150, 400))
        src, dst = rng.integers(0, n, 2 * n), rng.integers(0, n, 2 * n)
        ring_states = rng.permutation(n)[: n // 5]
        keep = ~np.isin(dst, ring_states)
        src, dst = list(src[keep]), list(dst[keep])
        for k in range(0, ring_states.size, 3):
            ring = ring_states[k:k + int(rng.integers(1, 4))]
            src += list(ring)
            dst += list(np.roll(ring, -1))
        src, dst = np.array(src), np.array(dst)
        barred = rng.random(n) < 0.4
        driven = sorted(rng.choice(n, 2, replace=False).tolist())
        Bm = np.zeros((n, 2))
        Bm[driven, [0, 1]] = 1
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            s = StructuredSystem.from_edges(src, dst, n_states=n,
                                            nodes={"actuator": ~barred}).with_inputs(Bm)
        fix = controllability(s, dimension=False).fix
        edges = set(zip(src.tolist(), dst.tolist()))
        assert (fix.size, int(barred[fix].sum())) == _lsa_fewest_barred(n, edges, driven,
                                                                         barred)
