"""Node-level control measures: control capacity, control centrality, drivers by degree.

* **Control capacity** (Jia & Barabási 2013): how often a state is a driver across the
  minimum driver sets (MDS) of the network, estimated by sampling MDSs uniformly at random.
* **Control centrality** (Liu, Slotine & Barabási 2012): the generic dimension of the
  controllable subspace when one state alone is driven (Hosoe's dimension).
* **Drivers by degree**: the driver fraction among states of each in- and out-degree.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``; the rows of ``A`` are the in-copies of
the states, and a state whose row a maximum matching leaves unmatched is a driver.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np


from netctl.errors import OptionError
from netctl.graph.components import reachable_from, strongly_connected_components
from netctl.graph.matching import maximum_matching, transpose_csr
from netctl.graph.stem_cycle import cycle_cover_prices, reach_sums, stem_gains
from netctl.structural._capacity_walk import (
    BLOCK,
    ONLY,
    alone,
    credit_all,
    credit_log,
    places,
    random_blocks,
    records,
    single,
    walk,
)
from netctl.structural.controllability import _hosoe_dimension_reference
from netctl.system import StructuredSystem

__all__ = [
    "ControlCapacity",
    "ControlCentrality",
    "DriversByDegree",
    "control_capacity",
    "control_centrality",
    "drivers_by_degree",
    "minimum_driver_sets",
]

Progress = Callable[[int, int], None]


def _pattern(system: StructuredSystem) -> tuple[np.ndarray, np.ndarray, int]:
    A = system.pattern("A")
    return (np.asarray(A.indptr, np.int64), np.asarray(A.indices, np.int64), system.n_states)


# ---------------------------------------------------------------- control capacity
@dataclass(frozen=True)
class ControlCapacity:
    """Outcome of :func:`control_capacity`.

    Attributes
    ----------
    capacity : ndarray of float, length n
        Estimated fraction of minimum driver sets that contain each state.
    standard_error : ndarray of float, length n
        Standard error of each estimate (batch means over the chain; 0 where the state
        never changed role, e.g. critical and redundant states).
    n_drivers : int
        Size of every minimum driver set, ``n - |M*|`` (0 with a perfect matching).
    sweeps : int
        Sampling sweeps after burn-in; a sweep is ``n_drivers`` steps of the chain.
    seed : int
    """

    state_names: Sequence[str]
    capacity: np.ndarray
    standard_error: np.ndarray
    n_drivers: int
    sweeps: int
    burn_in: int
    seed: int

    def to_dict(self) -> dict[str, Any]:
        return {"analysis": "control_capacity", "n_states": len(self.state_names),
                "n_drivers": self.n_drivers, "sweeps": self.sweeps, "burn_in": self.burn_in,
                "seed": self.seed,
                "capacity": {s: float(c) for s, c in zip(self.state_names, self.capacity)},
                "standard_error": {s: float(e) for s, e in
                                   zip(self.state_names, self.standard_error)}}


def control_capacity(system: StructuredSystem, *, sweeps: int = 400, burn_in: int = 50,
                     seed: int = 0) -> ControlCapacity:
    r"""Control capacity of every state: the fraction of minimum driver sets holding it.

    Parameters
    ----------
    system : StructuredSystem
        Its ``A`` pattern; inputs are ignored.
    sweeps : int
        Sampling length after burn-in, in sweeps of ``n_drivers`` chain steps.
    burn_in : int
        Sweeps discarded first.
    seed : int

    Returns
    -------
    ControlCapacity

    Notes
    -----
    Jia & Barabási [1]_ define the control capacity of a state as the fraction of the
    minimum driver sets (MDS) it belongs to, all MDSs weighted equally, and estimate it
    by random sampling. The MDSs are the complements of the bases of the transversal
    matroid of ``A``'s rows (rows coverable by one matching), so they are the bases of
    its dual matroid. The sampler is that matroid's down-up (basis-exchange) walk: take
    a driver ``d`` uniformly at random, find every state ``v`` reachable from ``d`` by an
    alternating path (``D - d + v`` is again an MDS exactly then; ``v = d`` included),
    move to one of them uniformly and flip the path. The walk is symmetric, hence uniform
    over MDSs at equilibrium, and mixes rapidly on any matroid [2]_. Estimates are time
    averages after burn-in; standard errors are batch means over 20 batches. Critical
    states (in-degree 0) get capacity 1 and redundant ones 0, as they must [3]_. One
    alternating search per step: O(sweeps x n_drivers x reach) time, O(n + links)
    memory (the random numbers are drawn block by block); a step that picks a critical
    state, or a leaf of an out-star (one column, matched to a row holding it alone),
    needs no search (:mod:`netctl.structural._capacity_walk`). With a perfect matching
    there is no unmatched state (``N_D = 1`` by convention) and every capacity is 0.

    References
    ----------
    .. [1] T. Jia, A.-L. Barabási, "Control capacity and a random sampling method in
       exploring controllability of complex networks", Sci. Rep. 3:2354, 2013.
       doi:10.1038/srep02354
    .. [2] N. Anari, K. Liu, S. Oveis Gharan, C. Vinzant, "Log-concave polynomials II:
       high-dimensional walks and an FPRAS for counting bases of a matroid", STOC 2019
       (from memory).
    .. [3] T. Jia, Y.-Y. Liu, E. Csóka, M. Pósfai, J.-J. Slotine, A.-L. Barabási,
       "Emergence of bimodality in controlling complex networks", Nat. Commun. 4:2002,
       2013. doi:10.1038/ncomms3002

    Examples
    --------
    Jia et al.'s five-node example (1 -> 2 -> 3, 4, 5): MDSs {1,3,4}, {1,3,5}, {1,4,5}.

    >>> s = StructuredSystem.from_edges([0, 1, 1, 1], [1, 2, 3, 4], 5)
    >>> c = control_capacity(s, sweeps=2000, seed=1).capacity
    >>> c[:2].tolist(), bool(np.all(abs(c[2:] - 2 / 3) < 0.05))
    ([1.0, 0.0], True)
    """
    for value, name in ((sweeps, "sweeps"), (burn_in, "burn_in")):
        if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 0:
            raise OptionError(f"{name} must be a whole number >= 0, found {value!r}.")
    if sweeps < 1:
        raise OptionError(f"sweeps must be at least 1, found {sweeps!r}.")
    indptr, indices, n = _pattern(system)
    row_match, col_match = maximum_matching(indptr, indices, n)
    drivers = np.flatnonzero(row_match < 0).astype(np.int64)
    nd = int(drivers.size)
    cap = np.zeros(n)
    se = np.zeros(n)
    if nd:
        burn = int(burn_in) * nd
        steps = burn + int(sweeps) * nd
        n_batches = 20 if sweeps * nd >= 20 else 1
        time_in, batch_len = _walk(indptr, indices, row_match.copy(), col_match.copy(),
                                   drivers.copy(), steps, burn, n_batches, int(seed))
        total = steps - burn
        cap = time_in.sum(axis=0) / total
        if n_batches > 1:
            lengths = np.full(n_batches, float(batch_len))
            lengths[-1] = total - batch_len * (n_batches - 1)
            means = time_in / lengths[:, None]
            se = means.std(axis=0, ddof=1) / np.sqrt(n_batches)
    return ControlCapacity(state_names=tuple(system.state_names), capacity=cap,
                           standard_error=se, n_drivers=nd, sweeps=int(sweeps),
                           burn_in=int(burn_in), seed=int(seed))


def _walk(indptr: np.ndarray, indices: np.ndarray, row_match: np.ndarray,
          col_match: np.ndarray, drivers: np.ndarray, steps: int, burn: int,
          n_batches: int, seed: int) -> tuple[np.ndarray, int]:
    """The basis-exchange walk of ``steps`` steps (:mod:`._capacity_walk`), block by
    block; ``time_in[b, v]``: steps of batch ``b`` (after ``burn``) that ``v`` drove."""
    n = row_match.size
    batch_len = max((steps - burn) // n_batches, 1)
    time_in = np.zeros((n_batches, n), np.float64)
    only = single(indptr, indices)
    pl = places(drivers, only, burn)
    if not np.all(pl[:, ONLY] == -2):  # else every driver has an empty row: no move
        rec = records(indptr, indices, only)
        col_alone = alone(col_match, only)
        queue = np.empty(n, np.int64)
        log = np.empty((min(BLOCK, steps), 3), np.int64)
        first = 0
        for rand_d, rand_v in random_blocks(seed, steps):
            count = walk(rec, indices, col_match, col_alone, pl, log, queue, first,
                         rand_d, rand_v, burn)
            credit_log(time_in, log, count, burn, batch_len)
            first += rand_d.size
    credit_all(time_in, pl, steps, burn, batch_len)
    return time_in, batch_len


def minimum_driver_sets(system: StructuredSystem, *, limit: int = 20) -> list[tuple[int, ...]]:
    """Every minimum driver set, by exhaustive search (small systems only).

    Tries every set of ``n - |M*|`` states and keeps those whose complement a matching
    covers completely (scipy's maximum bipartite matching as the test). ``limit`` caps
    ``n`` (the search is combinatorial). With a perfect matching the only minimum set of
    unmatched states is empty: ``[()]``.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011 (minimum input theorem).
       doi:10.1038/nature10011
    .. [2] T. Jia, Y.-Y. Liu, E. Csóka, M. Pósfai, J.-J. Slotine, A.-L. Barabási,
       "Emergence of bimodality in controlling complex networks", Nat. Commun. 4:2002,
       2013 (minimum driver sets). doi:10.1038/ncomms3002

    Examples
    --------
    >>> s = StructuredSystem.from_edges([0, 1, 1, 1], [1, 2, 3, 4], 5)
    >>> minimum_driver_sets(s)
    [(0, 2, 3), (0, 2, 4), (0, 3, 4)]
    """
    from itertools import combinations

    import scipy.sparse as sp
    from scipy.sparse.csgraph import maximum_bipartite_matching

    n = system.n_states
    if n > limit:
        raise OptionError(f"minimum_driver_sets enumerates subsets and is for at most "
                          f"{limit} states, found {n}; use control_capacity to sample.")
    A = sp.csr_matrix(system.A)
    size = int(np.count_nonzero(maximum_bipartite_matching(A, perm_type="column") >= 0))
    out = []
    for drivers in combinations(range(n), n - size):
        keep = np.setdiff1d(np.arange(n), drivers)
        sub = A[keep]
        if np.count_nonzero(maximum_bipartite_matching(sub, perm_type="column") >= 0) == size:
            out.append(tuple(int(d) for d in drivers))
    return out


# ---------------------------------------------------------------- control centrality
@dataclass(frozen=True)
class ControlCentrality:
    """Outcome of :func:`control_centrality`.

    Attributes
    ----------
    centrality : ndarray of int, length n
        Generic dimension of the controllable subspace with one input at each state
        (``-1`` for states not asked for).
    """

    state_names: Sequence[str]
    centrality: np.ndarray

    def to_dict(self) -> dict[str, Any]:
        return {"analysis": "control_centrality", "n_states": len(self.state_names),
                "centrality": {s: int(c) for s, c in zip(self.state_names, self.centrality)
                               if c >= 0}}


def control_centrality(system: StructuredSystem, *, states: Any = None,
                       progress: Progress | None = None) -> ControlCentrality:
    r"""Control centrality: the generic controllable dimension from one driven state.

    Parameters
    ----------
    system : StructuredSystem
        Its ``A`` pattern (self-loops count); inputs are ignored.
    states : array_like of int, optional
        Which states (default: all).
    progress : callable(done, total), optional
        Called after each hundredth of the states (the command line prints it on a
        terminal).

    Returns
    -------
    ControlCentrality

    Notes
    -----
    Liu, Slotine & Barabási [1]_ define the control centrality of state ``i`` as the
    generic dimension of the controllable subspace of ``(A, e_i)``. By Hosoe's theorem
    [2]_ it is the largest number of states covered by a stem-cycle disjoint subgraph
    whose stem starts at the input, in the part ``R(i)`` of the network reachable from
    ``i``.

    All states at once: every cycle lies in one strong component, and ``R(i)`` is a union
    of strong components, so over the whole network the best "stem from ``i`` plus
    disjoint cycles" covers ``C(i)`` plus the largest cycle cover of the states outside
    ``R(i)``. Hence ``C(i) = cyc(R(i)) + g(i)``, where ``cyc`` counts the states on a
    largest set of disjoint cycles (it adds up over strong components) and ``g(i)`` is
    what an input at ``i`` adds to the largest cycle cover of the whole network. The
    cycle cover is one minimum-cost assignment with optimal dual prices (Jonker &
    Volgenant [3]_); adding the input column is one more shortest augmenting path, so
    ``g(i)`` is one Dijkstra search on reduced costs per state, and ``cyc(R(i))`` one
    search of the condensation per strong component
    (:mod:`netctl.graph.stem_cycle`). Exact; near-linear per state in practice.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Control centrality and hierarchical
       structure in complex networks", PLoS ONE 7(9):e44459, 2012.
       doi:10.1371/journal.pone.0044459
    .. [2] S. Hosoe, "Determination of generic dimensions of controllable subspaces and
       its application", IEEE TAC 25(6):1192-1196, 1980.
    .. [3] R. Jonker, A. Volgenant, "A shortest augmenting path algorithm for dense and
       sparse linear assignment problems", Computing 38:325-340, 1987.
       doi:10.1007/BF02278710

    Examples
    --------
    The hub of a directed star has control centrality 2 for any size [1]_:

    >>> s = StructuredSystem.from_edges([0, 0, 0, 0], [1, 2, 3, 4], 5)
    >>> control_centrality(s).centrality.tolist()
    [2, 1, 1, 1, 1]
    """
    A = system.pattern("A")
    n = system.n_states
    pick = np.arange(n) if states is None else np.unique(np.asarray(states, np.int64))
    if pick.size and (pick.min() < 0 or pick.max() >= n):
        raise OptionError(f"states must be indices in [0, {n}), found "
                          f"{int(pick.min())}..{int(pick.max())}.")
    cent = np.full(n, -1, np.int64)
    if n == 0 or pick.size == 0:
        return ControlCentrality(state_names=tuple(system.state_names), centrality=cent)
    indptr = np.asarray(A.indptr, np.int64)
    indices = np.asarray(A.indices, np.int64)
    # out-adjacency: columns of A are sources; A^T as CSR lists each state's targets
    optr, oind = transpose_csr(indptr, indices, n)
    rows = np.repeat(np.arange(n), np.diff(indptr))
    has_loop = np.zeros(n, bool)
    has_loop[rows[rows == indices]] = True
    prices = cycle_cover_prices(indptr, indices, n, has_loop)
    k, labels = strongly_connected_components(optr, oind)
    on_cycle = np.bincount(labels, weights=1 - prices.cost, minlength=k).astype(np.int64)
    wanted, where = np.unique(labels[pick], return_inverse=True)
    cycles_reached = reach_sums(optr, oind, labels, k, on_cycle, wanted)[where]
    step = max(int(pick.size) // 100, 1)
    for lo in range(0, int(pick.size), step):
        part = pick[lo:lo + step]
        cent[part] = cycles_reached[lo:lo + step] + stem_gains(optr, oind, has_loop,
                                                               prices, part)
        if progress is not None:
            progress(min(lo + step, int(pick.size)), int(pick.size))
    return ControlCentrality(state_names=tuple(system.state_names), centrality=cent)


def _control_centrality_by_assignments(system: StructuredSystem, *,
                                       states: Any = None) -> np.ndarray:
    """Reference: one minimum-cost assignment per state on the states it reaches
    (REFERENCES.md §1 construction); slow, for cross-checks and the benchmark."""
    import scipy.sparse as sp

    A = system.A
    n = system.n_states
    At = A.T.tocsr()
    optr, oind = np.asarray(At.indptr, np.int64), np.asarray(At.indices, np.int64)
    cent = np.full(n, -1, np.int64)
    for i in (range(n) if states is None else np.asarray(states, np.int64)):
        mask = np.zeros(n, bool)
        mask[reachable_from(optr, oind, np.array([i], np.int64))] = True
        B = sp.csr_array((np.ones(1), (np.array([i]), np.array([0]))), shape=(n, 1))
        cent[i] = _hosoe_dimension_reference(A, B, mask)
    return cent


# ---------------------------------------------------------------- drivers by degree
@dataclass(frozen=True)
class DriversByDegree:
    """Outcome of :func:`drivers_by_degree`: per degree value, states and drivers.

    ``in_degree``/``out_degree`` rows are ``(degree, n_states, mean capacity)``: the mean
    control capacity of the states with that degree, i.e. the expected driver fraction
    among them in a uniformly random minimum driver set.
    """

    in_degree: tuple[tuple[int, int, float], ...]
    out_degree: tuple[tuple[int, int, float], ...]

    def to_dict(self) -> dict[str, Any]:
        def rows(t: tuple[tuple[int, int, float], ...]) -> list[dict[str, Any]]:
            return [{"degree": k, "n_states": m, "driver_fraction": f} for k, m, f in t]
        return {"analysis": "drivers_by_degree", "in_degree": rows(self.in_degree),
                "out_degree": rows(self.out_degree)}


def drivers_by_degree(system: StructuredSystem, capacity: ControlCapacity
                      ) -> DriversByDegree:
    """Driver fraction by in- and out-degree from control capacities (links between
    distinct states counted; a self-loop is self-dynamics, not a degree).

    References
    ----------
    .. [1] T. Jia, A.-L. Barabási, "Control capacity and a random sampling method in
       exploring controllability of complex networks", Sci. Rep. 3:2354, 2013 (driver
       statistics by degree from control capacities; details from memory).
       doi:10.1038/srep02354

    Examples
    --------
    >>> s = StructuredSystem.from_edges([0, 1, 1, 1], [1, 2, 3, 4], 5)
    >>> t = drivers_by_degree(s, control_capacity(s, sweeps=2000, seed=1))
    >>> [(k, m, round(f, 1)) for k, m, f in t.in_degree]
    [(0, 1, 1.0), (1, 4, 0.5)]
    """
    src, dst = system.edges()
    keep = src != dst
    n = system.n_states
    indeg = np.bincount(dst[keep], minlength=n)
    outdeg = np.bincount(src[keep], minlength=n)

    def table(deg: np.ndarray) -> tuple[tuple[int, int, float], ...]:
        ks, inv, counts = np.unique(deg, return_inverse=True, return_counts=True)
        sums = np.bincount(inv, weights=capacity.capacity, minlength=ks.size)
        return tuple((int(k), int(c), float(s / c)) for k, c, s in zip(ks, counts, sums))

    return DriversByDegree(in_degree=table(indeg), out_degree=table(outdeg))
