"""Brute-force references for the failure analyses, built on networkx only.

Lin's theorem (C.-T. Lin, "Structural controllability", IEEE TAC 19(3), 1974): a pattern
``(A, B)`` is structurally controllable iff every state is reached from an input and the
bipartite graph of ``[A B]`` has a matching covering every state. Both are recomputed
here with networkx (Hopcroft--Karp and breadth-first search), independently of netctl's
engine.
"""

from __future__ import annotations

import itertools

import networkx as nx
import numpy as np


def controllable(n: int, edges: list[tuple[int, int]], cols: list[list[int]]) -> bool:
    """``edges``: (u, v) meaning u influences v; ``cols``: states each input acts on."""
    if n == 0:
        return True
    G = nx.DiGraph()
    G.add_nodes_from(range(n))
    G.add_edges_from(edges)
    reached: set[int] = set()
    for c in cols:
        for i in c:
            reached |= {i} | nx.descendants(G, i)
    if len(reached) < n:
        return False
    H = nx.Graph()
    rows = [("r", v) for v in range(n)]
    H.add_nodes_from(rows, bipartite=0)
    for u, v in edges:
        H.add_edge(("r", v), ("c", u))
    for k, c in enumerate(cols):
        for i in c:
            H.add_edge(("r", i), ("u", k))
    M = nx.bipartite.hopcroft_karp_matching(H, top_nodes=rows)
    return sum(1 for r in rows if r in M) == n


def classes(n: int, edges: list[tuple[int, int]], cols: list[list[int]]) -> list[str] | None:
    """Critical / useful / useless per input by enumerating every subset (None when the
    whole design does not work)."""
    m = len(cols)
    if not controllable(n, edges, cols):
        return None
    works = {}
    for r in range(m + 1):
        for S in itertools.combinations(range(m), r):
            works[S] = controllable(n, edges, [cols[k] for k in S])
    minimal = [S for S, ok in works.items() if ok and
               all(not works[tuple(x for x in S if x != k)] for k in S)]
    out = []
    full = tuple(range(m))
    for k in range(m):
        if not works[tuple(x for x in full if x != k)]:
            out.append("critical")
        elif any(k in S for S in minimal):
            out.append("useful")
        else:
            out.append("useless")
    return out


def fewest_breaking(n: int, edges: list[tuple[int, int]], cols: list[list[int]]) -> int | None:
    """Smallest number of inputs whose joint loss breaks a working design."""
    m = len(cols)
    if not controllable(n, edges, cols):
        return 0
    for r in range(1, m + 1):
        for F in itertools.combinations(range(m), r):
            if not controllable(n, edges, [cols[k] for k in range(m) if k not in F]):
                return r
    return None


def random_pattern(rng: np.random.Generator, n: int, p: float) -> list[tuple[int, int]]:
    mask = rng.random((n, n)) < p
    return [(int(u), int(v)) for u, v in zip(*np.nonzero(mask))]
