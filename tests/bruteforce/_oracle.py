"""Brute-force references for the structural answers, built without netctl's engine.

Nothing here imports netctl. Every answer is decided from its *definition*, by trying
every candidate, with generic ranks decided by random weights over F_p (``_field``) and
reachability by networkx:

* structural controllability (Lin 1974, IEEE TAC 19(3):201-208): ``(A, B)`` is
  structurally controllable iff the controllability matrix ``[B AB ... A^{n-1}B]`` has
  generic rank ``n`` (Kalman's rank test at generic weights); its generic rank is the
  generic controllable dimension (Hosoe 1980, IEEE TAC 25(6):1192-1196);
* inaccessible states: states no directed path reaches from a state an input acts on
  (networkx descendants); source components from networkx's condensation;
* dilations (Lin 1974): a set S of states whose in-neighbours in ``[A B]`` (states and
  inputs) number fewer than ``|S|``; one exists iff the generic rank of ``[A B]`` is below
  ``n`` (Hall / König, from memory). The over-determined region (Dulmage & Mendelsohn
  1958, from memory) is the set of rows some maximum matching leaves free: the rows
  whose deletion keeps the generic rank of ``[A B]``;
* minimum inputs (Liu, Slotine & Barabási 2011, Nature 473:167-173): the fewest input
  columns of *any* pattern that control ``A``; structural controllability only grows
  when free entries are added to ``B``, so the dense pattern is the best of each width
  and the brute force tries dense ``n x m`` for m = 1, 2, ...; dedicated inputs
  (Commault & Dion 2013, Automatica 49(11):3322-3328, from memory): every set of
  driven states of increasing size;
* minimum driver sets and node roles (Jia et al. 2013, Nat. Commun. 4:2002): with
  ``|M*| < n`` the sets of states left unmatched by the maximum matchings of ``A``; a
  set S of size ``n - |M*|`` is one iff ``[A  I_S]`` has generic rank ``n`` (its rows
  outside S are then matched within ``A``), so every S of that size is tried; with a
  perfect matching, the smallest sets S such that *one* input acting on S controls the
  system (every such set tried);
* link roles (Liu et al. 2011): a link is in every maximum matching iff deleting it
  lowers the generic rank of ``A``, in some iff deleting its row and column lowers it by
  exactly one;
* minimum-cost placement (Pequito, Kar & Aguiar 2016, Automatica 68:384-391): every
  subset of eligible sites (every subset of candidate columns) tried, the cheapest that
  controls kept; best effort under a budget: the largest generic controllable dimension
  of an affordable subset.

Sensors are the dual: ``(A, C)`` is observable iff ``(A^T, C^T)`` is controllable
(Kalman 1960 duality; Lin 1974), so every sensor reference is the input reference on the
transposed pattern.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from functools import cached_property

import networkx as nx
import numpy as np

from tests.bruteforce import _field as F

__all__ = ["Oracle", "popcount_masks"]


def popcount_masks(k: int) -> tuple[np.ndarray, np.ndarray]:
    """All bit masks over k items and their popcounts."""
    masks = np.arange(1 << k, dtype=np.int64)
    counts = np.array([bin(int(q)).count("1") for q in masks], np.int64)
    return masks, counts


def _members(mask: int, items: list[int]) -> list[int]:
    return [items[b] for b in range(len(items)) if (mask >> b) & 1]


@dataclass
class Oracle:
    """References for the pattern ``(A, B)`` (A[v, u]: edge u -> v) at one random draw.

    ``rng`` supplies the field weights; a fresh ``rng`` gives an independent draw.
    """

    A: np.ndarray
    B: np.ndarray
    rng: np.random.Generator
    _cache: dict = field(default_factory=dict, repr=False)

    # ------------------------------------------------------------------ weights
    @property
    def n(self) -> int:
        return int(self.A.shape[0])

    @cached_property
    def Aw(self) -> np.ndarray:
        return F.random_weights(self.A, self.rng)

    @cached_property
    def Bw(self) -> np.ndarray:
        return F.random_weights(self.B, self.rng)

    @cached_property
    def unit_krylov(self) -> np.ndarray:
        """Block i: the Krylov columns e_i, A e_i, ... (a dedicated input at state i)."""
        n = self.n
        K = F.krylov(self.Aw, np.eye(n, dtype=np.int64))
        return np.stack([K[:, i::n] for i in range(n)]) if n else np.zeros((0, 0, 0), np.int64)

    @cached_property
    def base_krylov(self) -> np.ndarray:
        return F.krylov(self.Aw, self.Bw)

    def ctrb_rank_of(self, Bpattern: np.ndarray) -> int:
        """Generic rank of the controllability matrix for an input pattern (fresh weights)."""
        Bp = np.asarray(Bpattern, bool).reshape(self.n, -1)
        if Bp.shape[1] == 0:
            return 0
        return int(F.rank(F.krylov(self.Aw, F.random_weights(Bp, self.rng))))

    # ------------------------------------------------------------------ Lin's test
    @cached_property
    def dimension(self) -> int:
        """Generic rank of [B AB ... A^{n-1}B] (Kalman; Hosoe's dimension)."""
        return int(F.rank(self.base_krylov)) if self.B.shape[1] else 0

    @cached_property
    def controllable(self) -> bool:
        return self.dimension == self.n

    @cached_property
    def graph(self) -> nx.DiGraph:
        g = nx.DiGraph()
        g.add_nodes_from(range(self.n))
        v, u = np.nonzero(self.A)
        g.add_edges_from(zip(u.tolist(), v.tolist()))
        return g

    @cached_property
    def reached(self) -> set[int]:
        driven = np.flatnonzero(self.B.any(axis=1)).tolist()
        out = set(driven)
        for s in driven:
            out |= nx.descendants(self.graph, s)
        return out

    def graph_descendants(self, x: int) -> set[int]:
        """States reached from ``x`` (``x`` included)."""
        return nx.descendants(self.graph, x) | {x}

    @cached_property
    def inaccessible(self) -> list[int]:
        return sorted(set(range(self.n)) - self.reached)

    @cached_property
    def unreached_sources(self) -> list[frozenset[int]]:
        """Source strongly connected components (no link enters from outside) no input acts on."""
        cond = nx.condensation(self.graph)
        out = []
        for c in cond.nodes:
            if cond.in_degree(c) == 0:
                members = frozenset(cond.nodes[c]["members"])
                if not members & self.reached:
                    out.append(members)
        return out

    @cached_property
    def AB_pattern(self) -> np.ndarray:
        return np.hstack([self.A, self.B])

    @cached_property
    def ABw(self) -> np.ndarray:
        return np.hstack([self.Aw, self.Bw]).astype(np.int64)

    @cached_property
    def structural_rank(self) -> int:
        return int(F.rank(self.ABw))

    @cached_property
    def region(self) -> list[int]:
        """Rows of [A B] that some maximum matching leaves free (rank kept without them)."""
        r = self.structural_rank
        if r == self.n:
            return []
        out = []
        for i in range(self.n):
            M = self.ABw.copy()
            M[i, :] = 0
            if F.rank(M) == r:
                out.append(i)
        return out

    def in_neighbours(self, rows: np.ndarray) -> list[int]:
        """Columns of [A B] (state u, or n + k for input k) with a link into ``rows``."""
        rows = np.asarray(rows, np.int64)
        if rows.size == 0:
            return []
        return np.flatnonzero(self.AB_pattern[rows].any(axis=0)).tolist()

    @cached_property
    def fix_ranks(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Rank of the controllability matrix with dedicated inputs added on every state set."""
        masks, counts = popcount_masks(self.n)
        ranks = F.masked_ranks(self.base_krylov if self.B.shape[1] else
                               np.zeros((self.n, 0), np.int64), self.unit_krylov, masks)
        return masks, counts, ranks

    @cached_property
    def n_fix(self) -> int:
        """Fewest dedicated inputs to add for controllability (every state set tried)."""
        _, counts, ranks = self.fix_ranks
        return int(counts[ranks == self.n].min())

    # ------------------------------------------------------------------ minimum inputs
    @cached_property
    def rank_A(self) -> int:
        return int(F.rank(self.Aw))

    @cached_property
    def n_shared(self) -> int:
        """Fewest input columns (any pattern; dense is best) that control A."""
        for m in range(1, self.n + 1):
            Bd = F.random_weights(np.ones((self.n, m), bool), self.rng)
            if F.rank(F.krylov(self.Aw, Bd)) == self.n:
                return m
        raise AssertionError("n dense inputs always control")  # pragma: no cover

    @cached_property
    def dedicated_ranks(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        masks, counts = popcount_masks(self.n)
        ranks = F.masked_ranks(np.zeros((self.n, 0), np.int64), self.unit_krylov, masks)
        return masks, counts, ranks

    @cached_property
    def n_dedicated(self) -> int:
        """Fewest driven states, one input each, that control A (every set tried)."""
        _, counts, ranks = self.dedicated_ranks
        return int(counts[ranks == self.n].min())

    # ------------------------------------------------------------------ roles
    @cached_property
    def driver_sets(self) -> tuple[str, list[frozenset[int]]]:
        """Every minimum driver set, and which definition applied."""
        n = self.n
        masks, counts = popcount_masks(n)
        if self.rank_A < n:
            nd = n - self.rank_A
            pick = masks[counts == nd]
            ranks = F.masked_ranks(self.Aw, F.unit_blocks(n), pick)
            sets = [frozenset(_members(int(q), list(range(n)))) for q in pick[ranks == n]]
            return "matching", sets
        w = F.random_weights(np.ones((n, 1), bool), self.rng)
        good: list[frozenset[int]] = []
        for size in range(1, n + 1):
            for S in itertools.combinations(range(n), size):
                b = np.zeros((n, 1), np.int64)
                b[list(S), 0] = w[list(S), 0]
                if F.rank(F.krylov(self.Aw, b)) == n:
                    good.append(frozenset(S))
            if good:
                return "source-components", good
        raise AssertionError("one input on every state controls A with a perfect matching")

    @cached_property
    def node_roles(self) -> list[int]:
        """0 critical (in every minimum driver set), 1 intermittent (some), 2 redundant."""
        _, sets = self.driver_sets
        out = []
        for i in range(self.n):
            k = sum(i in S for S in sets)
            out.append(0 if k == len(sets) else 1 if k else 2)
        return out

    @cached_property
    def link_roles(self) -> dict[tuple[int, int], tuple[int, int]]:
        """(u, v) -> (role, N_D after losing the link); role 0 critical (in every maximum
        matching of A), 1 ordinary (some), 2 redundant (none)."""
        r = self.rank_A
        out = {}
        v_idx, u_idx = np.nonzero(self.A)
        for v, u in zip(v_idx.tolist(), u_idx.tolist()):
            M = self.Aw.copy()
            M[v, u] = 0
            r_loss = int(F.rank(M))
            M = self.Aw.copy()
            M[v, :] = 0
            M[:, u] = 0
            some = int(F.rank(M)) == r - 1
            role = 0 if r_loss < r else 1 if some else 2
            out[(u, v)] = (role, max(self.n - r_loss, 1))
        return out

    # ------------------------------------------------------------------ placement
    def site_costs(self, eligible: np.ndarray, cost: np.ndarray
                   ) -> tuple[list[int], np.ndarray, np.ndarray, np.ndarray]:
        """Every subset of eligible sites: (sites, masks, total costs, generic dimensions)."""
        items = np.flatnonzero(eligible).tolist()
        masks, _ = popcount_masks(len(items))
        blocks = (self.unit_krylov[items] if items else
                  np.zeros((0, self.n, self.n), np.int64))
        base = self.base_krylov if self.B.shape[1] else np.zeros((self.n, 0), np.int64)
        ranks = F.masked_ranks(base, blocks, masks)
        c = np.array([sum(int(cost[items[b]]) for b in range(len(items)) if (q >> b) & 1)
                      for q in masks.tolist()], np.int64)
        return items, masks, c, ranks

    def candidate_costs(self, candidates: tuple[tuple[int, ...], ...], cost: np.ndarray
                        ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Every subset of candidate columns: (masks, total costs, generic dimensions)."""
        k = len(candidates)
        masks, _ = popcount_masks(k)
        blocks = np.zeros((k, self.n, self.n), np.int64)
        for j, states in enumerate(candidates):
            col = np.zeros((self.n, 1), bool)
            col[list(states), 0] = True
            blocks[j] = F.krylov(self.Aw, F.random_weights(col, self.rng))
        base = self.base_krylov if self.B.shape[1] else np.zeros((self.n, 0), np.int64)
        ranks = F.masked_ranks(base, blocks, masks)
        c = np.array([sum(int(cost[b]) for b in range(k) if (q >> b) & 1)
                      for q in masks.tolist()], np.int64)
        return masks, c, ranks
