"""Random small structured systems for the brute-force cross-checks (reproducible).

Case ``k`` comes from ``numpy.random.default_rng([RANDOM_START, k])``, so every case can
be rebuilt alone from its number (``case(k)``) and the fast suite's cases are the first
ones of the slow suite's.

The mix is meant to reach the corners where structural answers change: directed and
undirected (symmetric) patterns, sparse and dense, no / some / all self-loops, isolated
states, existing inputs and outputs that act on one or several states (in some cases also one
input in every source component, so that dilations alone decide), actuator and
sensor sites with some states forbidden and integer costs (zero included), candidate
actuators acting on several states, and a budget.

Orientation as in netctl: edge ``u -> v`` iff ``A[v, u]`` is nonzero.
"""

from __future__ import annotations

from dataclasses import dataclass

import networkx as nx
import numpy as np

__all__ = ["Case", "RANDOM_START", "case", "N_MAX"]

RANDOM_START = 20261204
N_MAX = 7


@dataclass(frozen=True)
class Case:
    """One random small system with everything the checks need (plain numpy, no netctl)."""

    number: int
    A: np.ndarray          # n x n bool, A[v, u]: edge u -> v
    B: np.ndarray          # n x m bool, existing inputs
    C: np.ndarray          # p x n bool, existing outputs
    act_eligible: np.ndarray  # n bool
    act_cost: np.ndarray      # n int
    sen_eligible: np.ndarray  # n bool
    sen_cost: np.ndarray      # n int
    candidates: tuple[tuple[int, ...], ...]  # candidate actuator columns (states)
    cand_cost: np.ndarray     # int per candidate
    budget: int

    @property
    def n(self) -> int:
        return int(self.A.shape[0])

    def edges(self) -> tuple[np.ndarray, np.ndarray]:
        """(sources, targets) of every link, self-loops included."""
        v, u = np.nonzero(self.A)
        return u, v

    def describe(self) -> str:
        """Everything needed to rebuild the case by hand (for a failure message)."""
        u, v = self.edges()
        links = ", ".join(f"{a}->{b}" for a, b in zip(u.tolist(), v.tolist())) or "none"
        cols = [np.flatnonzero(self.B[:, k]).tolist() for k in range(self.B.shape[1])]
        rows = [np.flatnonzero(self.C[r]).tolist() for r in range(self.C.shape[0])]
        return (f"case {self.number}: n={self.n}; links {links}; inputs act on {cols}; "
                f"outputs read {rows}; actuator sites "
                f"{ {int(i): int(self.act_cost[i]) for i in np.flatnonzero(self.act_eligible)} }; "
                f"sensor sites "
                f"{ {int(i): int(self.sen_cost[i]) for i in np.flatnonzero(self.sen_eligible)} }; "
                f"candidates {list(self.candidates)} costs {self.cand_cost.tolist()}; "
                f"budget {self.budget}")


def _columns(rng: np.random.Generator, n: int, k: int) -> np.ndarray:
    """n x k bool: each column acts on 1 state (often) or on 2-3 states."""
    M = np.zeros((n, k), bool)
    for j in range(k):
        size = 1 if n == 1 or rng.random() < 0.5 else int(rng.integers(2, min(3, n) + 1))
        M[rng.choice(n, size=size, replace=False), j] = True
    return M


def _at_sources(rng: np.random.Generator, A: np.ndarray) -> np.ndarray:
    """One dedicated input on a random state of every source strongly connected component
    (networkx condensation: a component no link enters from outside)."""
    n = A.shape[0]
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    v, u = np.nonzero(A)
    g.add_edges_from(zip(u.tolist(), v.tolist()))
    cond = nx.condensation(g)
    picks = [int(rng.choice(sorted(cond.nodes[c]["members"])))
             for c in sorted(cond.nodes) if cond.in_degree(c) == 0]
    B = np.zeros((n, len(picks)), bool)
    B[picks, np.arange(len(picks))] = True
    return B


def case(number: int) -> Case:
    """Random case ``number`` (the same for the same number, on every machine)."""
    rng = np.random.default_rng([RANDOM_START, number])
    n = int(rng.integers(1, N_MAX + 1))
    density = float(rng.choice([0.08, 0.15, 0.25, 0.4, 0.6]))
    A = rng.random((n, n)) < density
    if rng.random() < 0.25:                      # undirected couplings
        A = A | A.T
    loops = rng.choice(3, p=[0.45, 0.35, 0.2])   # none / some / all self-loops
    np.fill_diagonal(A, False if loops == 0 else
                     (rng.random(n) < 0.4) if loops == 1 else True)
    if n > 1 and rng.random() < 0.3:             # isolated states (a self-loop may stay)
        iso = rng.choice(n, size=int(rng.integers(1, n)), replace=False)
        keep = np.diag(A).copy()
        A[iso, :] = False
        A[:, iso] = False
        A[iso, iso] = keep[iso] & (rng.random(iso.size) < 0.5)
    B = _columns(rng, n, int(rng.choice(4, p=[0.4, 0.3, 0.2, 0.1])))
    if rng.random() < 0.3:                       # inputs reach everything: only dilations
        B = np.hstack([B, _at_sources(rng, A)])  # (or nothing) can stop control
    C = _columns(rng, n, int(rng.choice(4, p=[0.4, 0.3, 0.2, 0.1]))).T
    act_eligible = rng.random(n) < float(rng.choice([0.5, 0.8, 1.0]))
    sen_eligible = rng.random(n) < float(rng.choice([0.5, 0.8, 1.0]))
    act_cost = rng.integers(0, 6, size=n) if rng.random() < 0.2 else rng.integers(1, 6, size=n)
    sen_cost = rng.integers(1, 6, size=n)
    k = int(rng.integers(0, 5))
    cand = _columns(rng, n, k)
    candidates = tuple(tuple(np.flatnonzero(cand[:, j]).tolist()) for j in range(k))
    cand_cost = rng.integers(1, 7, size=k)
    budget = int(rng.integers(0, 3 * n + 1))
    return Case(number=number, A=A, B=B, C=C, act_eligible=act_eligible,
                act_cost=act_cost.astype(np.int64), sen_eligible=sen_eligible,
                sen_cost=sen_cost.astype(np.int64), candidates=candidates,
                cand_cost=cand_cost.astype(np.int64), budget=budget)
