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

from netctl import StructuredSystem
from netctl.structural import controllability


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


def _cases(rng, count, acyclic):
    for _ in range(count):
        n = int(rng.integers(3, 10))
        m = int(rng.integers(0, 2 * n))
        src, dst = rng.integers(0, n, m), rng.integers(0, n, m)
        if acyclic:  # links from lower to higher rank, ranks shuffled
            keep = src < dst
            perm = rng.permutation(n)
            src, dst = perm[src[keep]], perm[dst[keep]]
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


def _compare(acyclic, seed, count):
    """(cases that fail, cases whose fix holds more barred states than the fewest)."""
    tried = worse = 0
    for n, edges, driven, barred, s, plain in _cases(np.random.default_rng(seed), count,
                                                     acyclic):
        r = controllability(s)
        if r.controllable:
            continue
        tried += 1
        fix = r.fix.tolist()
        assert len(fix) == controllability(plain).fix.size  # the size is unchanged
        assert _works(n, edges, driven, fix)
        assert not any(_works(n, edges, driven, F)  # and it is the smallest
                       for F in itertools.combinations(range(n), len(fix) - 1))
        best = min(int(barred[list(F)].sum())
                   for F in itertools.combinations(range(n), len(fix))
                   if _works(n, edges, driven, F))
        assert int(barred[fix].sum()) >= best
        worse += int(barred[fix].sum()) > best
    return tried, worse


def test_acyclic_fix_holds_fewest_barred_states_by_brute_force():
    """Acyclic: every unreached source component is one state with no in-link, always
    unmatched, so the fix is the unmatched set of the matching alone, which leaves the
    fewest barred states of any maximum matching (transversal matroid, Edmonds &
    Fulkerson 1965, from memory): exact."""
    tried, worse = _compare(True, 7, 300)
    assert tried > 100 and worse == 0


def test_fix_holds_fewest_barred_states_in_nearly_every_case():
    """With cycles, which unreached source component holds an unmatched state is chosen
    by a heuristic (netctl.structural._engine.completion): measured 3 cases of 1,900 with
    one barred state more than the fewest (random starts 0-19 of this generator), 61 of
    1,900 before the fix followed the node table. The bound, 1 %, is ours (common
    practice, no source)."""
    tried, worse = _compare(False, 11, 400)
    assert tried > 200 and worse <= tried // 100
