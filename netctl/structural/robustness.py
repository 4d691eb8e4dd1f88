"""What a failure or a proposed change does: contingency sweeps, attack curves, what-if.

* :func:`contingency_sweep` -- every single link (or state) lost in turn: the minimum
  number of inputs afterwards and, when the system carries an input design, whether the
  design stays structurally controllable and why not. Computed from one maximum matching
  of ``A`` (and one of ``[A B]``) plus dominators of the input-reachability graph, not by
  one recomputation per element.
* :func:`sampled_losses` -- ``k > 1`` simultaneous losses, sampled with a seed and
  recomputed exactly.
* :func:`attack_curve` -- the minimum number of inputs as states or links are removed at
  random or by a targeting rule; :func:`plot_attack_curves` draws them.
* :func:`what_if` -- before and after a proposed change (links added or removed, states
  removed), side by side.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.sparse as sp
from numba import njit

from netctl.errors import InvalidSystemError, OptionError, UnknownNameError
from netctl.graph.components import reachable_from
from netctl.graph.matching import maximum_matching
from netctl.structural._engine import stack_AB
from netctl.structural.controllability import controllability
from netctl.structural.inputs import minimum_inputs
from netctl.structural.roles import (
    LINK_ROLES,
    NODE_ROLES,
    edge_classes,
    link_roles,
    matching_facts,
    matching_loss_after_node_removal,
    node_role_codes,
    node_roles,
)
from netctl.system import StructuredSystem

__all__ = [
    "ATTACK_STRATEGIES",
    "AttackCurve",
    "ContingencySweep",
    "SampledLosses",
    "WhatIf",
    "attack_curve",
    "contingency_sweep",
    "plot_attack_curves",
    "sampled_losses",
    "what_if",
]

ELEMENTS: tuple[str, ...] = ("links", "nodes")
#: Orders in which :func:`attack_curve` removes elements.
ATTACK_STRATEGIES: tuple[str, ...] = ("random", "degree", "role")

Progress = Callable[[int, int], None]


def _check_elements(elements: str) -> None:
    if elements not in ELEMENTS:
        raise OptionError(f"elements must be one of {', '.join(map(repr, ELEMENTS))}, "
                          f"found {elements!r}.")


def _n_d(n: int, size: int) -> int:
    return max(n - size, 1) if n else 0


# ---------------------------------------------------------------------- dominators
@njit(cache=True, nogil=True)
def _dominators(out_indptr, out_indices, in_indptr, in_indices, driven):  # pragma: no cover
    """Immediate dominators from a virtual root ``n`` that feeds every driven state.

    Cooper, Harvey & Kennedy's iterative algorithm over reverse postorder. Returns
    ``idom`` (``-1`` for unreachable states, ``n`` for the root), the dominator-tree
    preorder number ``pre`` and subtree size ``size`` of every vertex (root included).
    """
    n = out_indptr.size - 1
    N = n + 1
    po = np.full(N, -1, np.int64)
    order = np.empty(N, np.int64)  # vertices in postorder
    # iterative DFS from the root
    stack_v = np.empty(N, np.int64)
    stack_k = np.empty(N, np.int64)
    seen = np.zeros(N, np.bool_)
    roots = np.flatnonzero(driven)
    top = 0
    stack_v[0] = n
    stack_k[0] = 0
    seen[n] = True
    count = 0
    while top >= 0:
        v = stack_v[top]
        k = stack_k[top]
        if v == n:
            end = roots.size
        else:
            end = out_indptr[v + 1] - out_indptr[v]
        if k < end:
            stack_k[top] = k + 1
            w = roots[k] if v == n else out_indices[out_indptr[v] + k]
            if not seen[w]:
                seen[w] = True
                top += 1
                stack_v[top] = w
                stack_k[top] = 0
        else:
            po[v] = count
            order[count] = v
            count += 1
            top -= 1
    idom = np.full(N, -1, np.int64)
    idom[n] = n
    changed = True
    while changed:
        changed = False
        for j in range(count - 2, -1, -1):  # reverse postorder, root excluded
            v = order[j]
            new = -1
            npred = in_indptr[v + 1] - in_indptr[v] + (1 if driven[v] else 0)
            for t in range(npred):
                p = n if t == in_indptr[v + 1] - in_indptr[v] else in_indices[in_indptr[v] + t]
                if idom[p] == -1:
                    continue
                if new == -1:
                    new = p
                else:
                    a = p
                    b = new
                    while a != b:
                        while po[a] < po[b]:
                            a = idom[a]
                        while po[b] < po[a]:
                            b = idom[b]
                    new = a
            if new != idom[v]:
                idom[v] = new
                changed = True
    # dominator tree: children lists, preorder and subtree sizes
    cnt = np.zeros(N + 1, np.int64)
    for v in range(n):
        if idom[v] >= 0:
            cnt[idom[v] + 1] += 1
    for v in range(N):
        cnt[v + 1] += cnt[v]
    fill = cnt[:-1].copy()
    kids = np.empty(cnt[N], np.int64)
    for v in range(n):
        if idom[v] >= 0:
            kids[fill[idom[v]]] = v
            fill[idom[v]] += 1
    pre = np.full(N, -1, np.int64)
    size = np.zeros(N, np.int64)
    top = 0
    stack_v[0] = n
    stack_k[0] = 0
    c = 0
    pre[n] = c
    c += 1
    while top >= 0:
        v = stack_v[top]
        k = stack_k[top]
        if k < cnt[v + 1] - cnt[v]:
            stack_k[top] = k + 1
            w = kids[cnt[v] + k]
            pre[w] = c
            c += 1
            top += 1
            stack_v[top] = w
            stack_k[top] = 0
        else:
            size[v] = c - pre[v]
            top -= 1
    return idom, pre, size


@dataclass(frozen=True)
class _Reach:
    reachable: np.ndarray  # bool per state
    idom: np.ndarray  # per state: -1 unreachable, n the virtual input root
    pre: np.ndarray
    size: np.ndarray  # states dominated (itself included); 0 when unreachable


def _reach_structure(A: sp.csr_array, B: sp.csr_array) -> _Reach:
    n = A.shape[0]
    At = A.T.tocsr()
    At.sort_indices()
    driven = np.zeros(n, np.bool_)
    driven[np.flatnonzero(np.diff(B.indptr))] = True
    idom, pre, size = _dominators(At.indptr.astype(np.int64), At.indices.astype(np.int64),
                                  A.indptr.astype(np.int64), A.indices.astype(np.int64),
                                  driven)
    reach = idom[:n] >= 0
    return _Reach(reachable=reach, idom=idom[:n], pre=pre, size=np.where(reach, size[:n], 0))


def _bridges(A: sp.csr_array, r: _Reach) -> np.ndarray:
    """Bool per link of ``A`` (CSR order): losing it cuts its target off every input.

    Edge ``x -> v`` is such a bridge iff ``x`` is the immediate dominator of ``v`` and
    every other edge into ``v`` from a reachable state comes from a state ``v``
    dominates (Tarjan; Italiano, Laura, Santaroni 2012).
    """
    n = A.shape[0]
    v = np.repeat(np.arange(n, dtype=np.int64), np.diff(A.indptr))
    x = A.indices.astype(np.int64)
    live = r.reachable[x] & r.reachable[v]
    is_idom = live & (r.idom[v] == x)
    dom_x = (r.pre[x] >= r.pre[v]) & (r.pre[x] < r.pre[v] + r.size[v])
    other = live & ~is_idom & ~dom_x
    n_other = np.bincount(v[other], minlength=n)
    return is_idom & (n_other[v] == 0)


# ---------------------------------------------------------------------- single losses
@dataclass(frozen=True)
class ContingencySweep:
    """Effect of losing each single link (or state), see :func:`contingency_sweep`.

    Attributes
    ----------
    elements : {"links", "nodes"}
    sources, targets : ndarray of int
        For links: the lost link ``sources[k] -> targets[k]`` (order of
        :meth:`StructuredSystem.edges`). For nodes: ``sources`` holds the lost state and
        ``targets`` equals it.
    role : ndarray of int8
        Link role (:data:`~netctl.structural.roles.LINK_ROLES`) or node role
        (:data:`~netctl.structural.roles.NODE_ROLES`) of each element.
    n_inputs : int
        Minimum number of inputs ``N_D`` of the intact system.
    n_inputs_after : ndarray of int
        ``N_D`` after the loss (exact).
    has_design : bool
        Whether the system carried inputs (a design) to check.
    controllable_before : bool or None
    controllable_after : ndarray of bool
        The design is still structurally controllable after the loss (all True/absent
        when ``has_design`` is false).
    rank_lost : ndarray of bool
        After the loss the generic rank of ``[A B]`` is below the number of states (a
        dilation: some states share too few feeders).
    cut_off : ndarray of int
        States that no input reaches any more because of the loss (0 if none).
    """

    elements: str
    n_states: int
    sources: np.ndarray
    targets: np.ndarray
    role: np.ndarray
    n_inputs: int
    n_inputs_after: np.ndarray
    has_design: bool
    controllable_before: bool | None
    controllable_after: np.ndarray
    rank_lost: np.ndarray
    cut_off: np.ndarray
    state_names: Sequence[str] = field(repr=False)
    model: str = "given"
    _dom_pre: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64), repr=False)
    _dom_size: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64), repr=False)
    _dom_order: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64), repr=False)

    #: At most this many names per loss in :meth:`rows` (``cut_off`` has the full count).
    MAX_LISTED = 50

    @property
    def n_elements(self) -> int:
        return int(self.sources.size)

    @property
    def breaking(self) -> np.ndarray:
        """Positions of the losses that break a controllable design (sorted)."""
        if not self.has_design or not self.controllable_before:
            return np.zeros(0, np.int64)
        return np.flatnonzero(~self.controllable_after)

    @property
    def costly(self) -> np.ndarray:
        """Positions of the losses that raise the minimum number of inputs (sorted)."""
        return np.flatnonzero(self.n_inputs_after > self.n_inputs)

    def label(self, k: int) -> str:
        """Readable name of element ``k``: ``'a -> b'`` for a link, the state name."""
        names = self.state_names
        if self.elements == "links":
            return f"{names[int(self.sources[k])]} -> {names[int(self.targets[k])]}"
        return names[int(self.sources[k])]

    def cut_off_states(self, k: int) -> np.ndarray:
        """Sorted states that loss ``k`` cuts off from every input (removed state excluded).

        The dominator subtree of the lost state (or of the lost link's target): a
        contiguous range of the dominator-tree preorder, so the cost is its size.
        """
        if not self.has_design or not self.cut_off[k]:
            return np.zeros(0, np.int64)
        head = int(self.targets[k])
        lo = int(self._dom_pre[head])
        hi = lo + int(self._dom_size[head])
        inside = self._dom_order[lo:hi]
        inside = inside[(inside < self.n_states)]
        if self.elements == "nodes":
            inside = inside[inside != head]
        return np.sort(inside)

    def reasons(self, k: int) -> list[str]:
        """Why loss ``k`` breaks the design (empty when it does not)."""
        out = []
        if self.has_design and self.rank_lost[k]:
            out.append("dilation: without it the generic rank of [A B] falls below the "
                       "number of states (some states have fewer distinct feeders than "
                       "members)")
        if self.has_design and self.cut_off[k]:
            cut = self.cut_off_states(k)
            names = [self.state_names[int(i)] for i in cut[:8]]
            shown = ", ".join(names) + (f", ... ({cut.size - 8} more)" if cut.size > 8 else "")
            out.append(f"cuts {cut.size} state(s) off every input: {shown}")
        return out

    def rows(self) -> list[dict[str, Any]]:
        """One JSON-ready row per element."""
        roles = LINK_ROLES if self.elements == "links" else NODE_ROLES
        names = self.state_names
        out = []
        for k in range(self.n_elements):
            row: dict[str, Any] = (
                {"source": names[int(self.sources[k])], "target": names[int(self.targets[k])]}
                if self.elements == "links" else {"state": names[int(self.sources[k])]})
            row["role"] = roles[int(self.role[k])]
            row["n_inputs_after"] = int(self.n_inputs_after[k])
            if self.has_design:
                row["controllable_after"] = bool(self.controllable_after[k])
                row["rank_lost"] = bool(self.rank_lost[k])
                row["cut_off"] = int(self.cut_off[k])
                row["cut_off_states"] = [names[int(i)] for i in
                                         self.cut_off_states(k)[: self.MAX_LISTED]]
                row["reasons"] = self.reasons(k)
            out.append(row)
        return out

    def to_dict(self, *, rows: bool = True) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices); ``rows=False`` leaves out the
        per-element ``losses`` (large networks)."""
        out = {
            "analysis": "contingency_sweep",
            "elements": self.elements,
            "n_states": self.n_states,
            "model": self.model,
            "n_inputs": self.n_inputs,
            "n_elements": self.n_elements,
            "n_costly": int(self.costly.size),
            "has_design": self.has_design,
            "controllable_before": self.controllable_before,
            "n_breaking": int(self.breaking.size),
            "breaking": [self.label(k) for k in self.breaking.tolist()],
        }
        if rows:
            out["losses"] = self.rows()
        return out


def contingency_sweep(system: StructuredSystem, *, elements: str = "links") -> ContingencySweep:
    r"""Lose every single link (or state) in turn: minimum inputs, and the given design.

    Parameters
    ----------
    system : StructuredSystem
        Its inputs (``B``), if any, are the design to check.
    elements : {"links", "nodes"}
        Lose links of ``A`` (self-loops included) or states (with all their links and
        the input connections acting on them).

    Returns
    -------
    ContingencySweep

    Notes
    -----
    Efficient, exact method (no recomputation per element):

    * Minimum inputs ``N_D = max(n - |M*|, 1)`` [1]_. A link's loss lowers ``|M*|`` iff
      the link is in every maximum matching (a *critical* link, :func:`link_roles`). A
      state's loss deletes its row and column of the bipartite graph; whether ``|M*|``
      drops by 0, 1 or 2 follows from the alternating reachability of that row and
      column and, in the remaining case, from one pruned search in the alternating graph
      (:func:`~netctl.structural.roles.matching_loss_after_node_removal`).
    * The design ``(A, B)`` (Lin's theorem [2]_): the rank condition fails after a link
      loss iff the link is in every maximum matching of ``[A B]`` (critical in the
      ``[A B]`` sense), and after a state loss by the same row-and-column rule on
      ``[A B]``. Accessibility fails after a state loss iff the state dominates another
      one in the graph from the inputs, and after a link loss iff the link is a bridge of
      that flow graph (the immediate dominator of its target, with every other entering
      link coming from a state the target dominates) [3]_, [4]_. Dominators by Cooper,
      Harvey and Kennedy's iterative method.

    Cost: two maximum matchings, alternating searches, strongly connected components and
    the dominator tree, near-linear in practice; the state-loss rule may add pruned
    searches for states that every maximum matching covers both as row and as column.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    .. [3] K. D. Cooper, T. J. Harvey, K. Kennedy, "A simple, fast dominance algorithm",
       Software Practice & Experience 4:1-10, 2001.
    .. [4] G. F. Italiano, L. Laura, F. Santaroni, "Finding strong bridges and strong
       articulation points in linear time", Theor. Comput. Sci. 447:74-84, 2012.
       doi:10.1016/j.tcs.2011.11.011

    Examples
    --------
    A path ``0 -> 1 -> 2`` driven at its head: every link and every state but the last
    is needed.

    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], inputs=[0])
    >>> sw = contingency_sweep(s, elements="links")
    >>> sw.n_inputs_after.tolist(), [sw.label(k) for k in sw.breaking]
    ([2, 2], ['x0 -> x1', 'x1 -> x2'])
    >>> contingency_sweep(s, elements="nodes").controllable_after.tolist()
    [False, False, True]
    """
    _check_elements(elements)
    A, B = system.A, system.B
    n, m = system.n_states, system.n_inputs
    fA = matching_facts(A.indptr, A.indices, n)
    has_design = m > 0
    if elements == "links":
        src, tgt = system.edges()
        role = edge_classes(fA) if A.nnz else np.zeros(0, np.int8)
        after = np.where(role == 0, _n_d(n, fA.matching_size - 1), _n_d(n, fA.matching_size))
    else:
        src = np.arange(n, dtype=np.int64)
        tgt = src.copy()
        role = node_role_codes(fA.indptr, fA.indices, fA.col_match)[0] if n else \
            np.zeros(0, np.int8)
        loss = matching_loss_after_node_removal(fA, src) if n else np.zeros(0, np.int64)
        after = np.maximum(n - 1 - (fA.matching_size - loss), 1 if n > 1 else 0)
    k = src.size
    ok_after = np.ones(k, bool)
    rank_lost = np.zeros(k, bool)
    cut = np.zeros(k, np.int64)
    ok_before: bool | None = None
    dom_pre = dom_size = dom_order = np.zeros(0, np.int64)
    if has_design:
        indptr, indices, n_cols = stack_AB(A, B)
        fAB = matching_facts(indptr, indices, n_cols)
        rank_ok = fAB.matching_size == n
        r = _reach_structure(A, B)
        dom_pre, dom_size = r.pre, np.concatenate([r.size, [n + 1]])
        live = np.flatnonzero(r.pre >= 0)
        dom_order = np.full(n + 1, n, np.int64)
        dom_order[r.pre[live]] = live
        unreached = int(np.count_nonzero(~r.reachable))
        ok_before = bool(rank_ok and unreached == 0)
        if elements == "links":
            cls = edge_classes(fAB)
            cls_A = cls[indices < n]
            rank_lost = ~np.full(k, rank_ok) | (cls_A == 0)
            br = _bridges(A, r)
            cut = np.where(br, r.size[tgt], 0).astype(np.int64)
            ok_after = ~rank_lost & (unreached == 0) & ~br
        else:
            lossAB = matching_loss_after_node_removal(fAB, src) if n else np.zeros(0, np.int64)
            rank_lost = (fAB.matching_size - lossAB) < n - 1
            cut = np.where(r.reachable, r.size - 1, 0).astype(np.int64)
            still_unreached = unreached - (~r.reachable).astype(np.int64)
            ok_after = ~rank_lost & (cut == 0) & (still_unreached == 0)
    return ContingencySweep(
        elements=elements, n_states=n, sources=src, targets=tgt, role=role,
        n_inputs=_n_d(n, fA.matching_size), n_inputs_after=np.asarray(after, np.int64),
        has_design=has_design, controllable_before=ok_before, controllable_after=ok_after,
        rank_lost=rank_lost, cut_off=cut, state_names=system.state_names,
        model=system.model, _dom_pre=dom_pre, _dom_size=dom_size, _dom_order=dom_order)


# ---------------------------------------------------------------------- k losses
def _remove_links(A: sp.csr_array, drop: np.ndarray) -> sp.csr_array:
    keep = np.ones(A.nnz, bool)
    keep[drop] = False
    n = A.shape[0]
    rows = np.repeat(np.arange(n, dtype=np.int64), np.diff(A.indptr))[keep]
    ptr = np.zeros(n + 1, np.int64)
    np.cumsum(np.bincount(rows, minlength=n), out=ptr[1:])
    return sp.csr_array((A.data[keep], A.indices[keep], ptr), shape=A.shape)


def _design_ok(A: sp.csr_array, B: sp.csr_array) -> tuple[bool, int, int]:
    """(controllable, rank of [A B], number of inaccessible states), recomputed."""
    n = A.shape[0]
    indptr, indices, n_cols = stack_AB(A, B)
    rm, _ = maximum_matching(indptr, indices, n_cols)
    rank = int(np.count_nonzero(rm >= 0))
    At = A.T.tocsr()
    reach = reachable_from(At.indptr, At.indices, np.flatnonzero(np.diff(B.indptr)))
    unreached = int(n - np.count_nonzero(reach))
    return bool(rank == n and unreached == 0), rank, unreached


def _matching_size(A: sp.csr_array) -> int:
    if A.shape[0] == 0:
        return 0
    rm, _ = maximum_matching(A.indptr, A.indices, A.shape[1])
    return int(np.count_nonzero(rm >= 0))


@dataclass(frozen=True)
class SampledLosses:
    """``k`` simultaneous losses, sampled (see :func:`sampled_losses`).

    ``lost[s]`` holds the positions lost in sample ``s`` (link positions in
    :meth:`StructuredSystem.edges` order, or states); ``n_inputs_after[s]`` the minimum
    number of inputs afterwards; ``controllable_after[s]`` whether the system's design
    survives (all True when it has no inputs).
    """

    elements: str
    k: int
    seed: int
    n_states: int
    n_inputs: int
    lost: np.ndarray
    n_inputs_after: np.ndarray
    has_design: bool
    controllable_before: bool | None
    controllable_after: np.ndarray
    sources: np.ndarray = field(repr=False)
    targets: np.ndarray = field(repr=False)
    state_names: Sequence[str] = field(repr=False)

    @property
    def n_samples(self) -> int:
        return int(self.lost.shape[0])

    def fraction_costly(self) -> float:
        """Share of samples whose losses raise the minimum number of inputs."""
        return float(np.mean(self.n_inputs_after > self.n_inputs)) if self.n_samples else 0.0

    def fraction_breaking(self) -> float:
        """Share of samples whose losses break the (controllable) design."""
        if not self.has_design or not self.controllable_before or not self.n_samples:
            return 0.0
        return float(np.mean(~self.controllable_after))

    def labels(self, s: int) -> list[str]:
        names = self.state_names
        if self.elements == "links":
            return [f"{names[int(self.sources[j])]} -> {names[int(self.targets[j])]}"
                    for j in self.lost[s]]
        return [names[int(j)] for j in self.lost[s]]

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "sampled_losses",
            "elements": self.elements,
            "k": self.k,
            "seed": self.seed,
            "n_samples": self.n_samples,
            "n_inputs": self.n_inputs,
            "n_inputs_after": {"mean": float(np.mean(self.n_inputs_after))
                               if self.n_samples else None,
                               "max": int(self.n_inputs_after.max()) if self.n_samples
                               else None},
            "fraction_costly": self.fraction_costly(),
            "has_design": self.has_design,
            "controllable_before": self.controllable_before,
            "fraction_breaking": self.fraction_breaking(),
            "samples": [{"lost": self.labels(s), "n_inputs_after": int(self.n_inputs_after[s]),
                         **({"controllable_after": bool(self.controllable_after[s])}
                            if self.has_design else {})}
                        for s in range(self.n_samples)],
        }


def sampled_losses(system: StructuredSystem, *, elements: str = "links", k: int = 2,
                   samples: int = 100, seed: int = 0,
                   progress: Progress | None = None) -> SampledLosses:
    """``k`` links (or states) lost at once, ``samples`` times at random, recomputed exactly.

    Parameters
    ----------
    system : StructuredSystem
        Its inputs, if any, are the design to check.
    elements : {"links", "nodes"}
    k : int
        Elements lost together in each sample (``1 <= k <=`` number of elements).
    samples : int
        Number of samples (>= 1).
    seed : int
        Seed of ``numpy.random.default_rng``; the same seed gives the same samples.
    progress : callable, optional
        Called as ``progress(done, total)`` after each sample.

    Returns
    -------
    SampledLosses

    Notes
    -----
    Each sample removes ``k`` distinct elements drawn uniformly without replacement and
    recomputes one maximum matching of ``A`` (warm-started from the intact matching for
    link losses), and, with a design, one of ``[A B]`` and a breadth-first search:
    ``samples`` near-linear recomputations. Exact per sample; the shares are estimates.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 2], [1, 2, 0], inputs=[0])   # 3-cycle
    >>> r = sampled_losses(s, k=2, samples=5, seed=1)
    >>> r.n_inputs, sorted(set(r.n_inputs_after.tolist())), r.fraction_breaking()
    (1, [2], 1.0)
    """
    _check_elements(elements)
    for name, val, low in (("k", k, 1), ("samples", samples, 1)):
        if not isinstance(val, (int, np.integer)) or isinstance(val, bool) or val < low:
            raise OptionError(f"{name} must be an integer >= {low}, found {val!r}.")
    A, B = system.A, system.B
    n = system.n_states
    total = A.nnz if elements == "links" else n
    if k > total:
        raise OptionError(f"k={k} exceeds the number of {elements} ({total}); choose "
                          f"k <= {total}.")
    rng = np.random.default_rng(seed)
    size0 = _matching_size(A)
    has_design = system.n_inputs > 0
    ok_before = _design_ok(A, B)[0] if has_design else None
    rm0, cm0 = maximum_matching(A.indptr, A.indices, n) if n else (
        np.zeros(0, np.int64), np.zeros(0, np.int64))
    src, tgt = system.edges()
    lost = np.empty((samples, k), np.int64)
    nd = np.empty(samples, np.int64)
    ok = np.ones(samples, bool)
    for s in range(samples):
        pick = np.sort(rng.choice(total, size=k, replace=False))
        lost[s] = pick
        if elements == "links":
            A2 = _remove_links(A, pick)
            rm = rm0.copy()
            cm = cm0.copy()
            gone = tgt[pick][rm0[tgt[pick]] == src[pick]]
            cm[rm[gone]] = -1
            rm[gone] = -1
            rmx, _ = maximum_matching(A2.indptr, A2.indices, n, row_match=rm, col_match=cm)
            size = int(np.count_nonzero(rmx >= 0))
            nd[s] = _n_d(n, size)
            if has_design:
                ok[s] = _design_ok(A2, B)[0]
        else:
            keep = np.ones(n, bool)
            keep[pick] = False
            A2 = A[keep][:, keep].tocsr()
            nd[s] = _n_d(n - k, _matching_size(A2))
            if has_design:
                ok[s] = _design_ok(A2, B[keep].tocsr())[0]
        if progress is not None:
            progress(s + 1, samples)
    return SampledLosses(elements=elements, k=int(k), seed=int(seed), n_states=n,
                         n_inputs=_n_d(n, size0), lost=lost, n_inputs_after=nd,
                         has_design=has_design, controllable_before=ok_before,
                         controllable_after=ok, sources=src, targets=tgt,
                         state_names=system.state_names)


# ---------------------------------------------------------------------- attack curves
@dataclass(frozen=True)
class AttackCurve:
    """Minimum inputs as elements are removed in one order (see :func:`attack_curve`)."""

    strategy: str
    elements: str
    seed: int
    n_states: int
    n_links: int
    n_removed: np.ndarray
    fraction_removed: np.ndarray
    states_left: np.ndarray
    links_left: np.ndarray
    n_inputs: np.ndarray

    @property
    def driver_fraction(self) -> np.ndarray:
        """``n_inputs / states_left`` (0 where no state is left)."""
        return np.where(self.states_left > 0,
                        self.n_inputs / np.maximum(self.states_left, 1), 0.0)

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "attack_curve", "strategy": self.strategy, "elements": self.elements,
            "seed": self.seed, "n_states": self.n_states, "n_links": self.n_links,
            "points": [{"n_removed": int(a), "fraction_removed": float(b),
                        "states_left": int(c), "links_left": int(d), "n_inputs": int(e),
                        "driver_fraction": float(f)}
                       for a, b, c, d, e, f in zip(self.n_removed, self.fraction_removed,
                                                   self.states_left, self.links_left,
                                                   self.n_inputs, self.driver_fraction)],
        }

    def xy(self, *, fraction: bool = True) -> tuple[np.ndarray, np.ndarray]:
        """``(share removed, N_D / states left)`` (or ``N_D`` with ``fraction=False``),
        the ``(x, y)`` pair that :func:`netctl.viz.plot_attack_curves` draws."""
        return self.fraction_removed, (self.driver_fraction if fraction else
                                       self.n_inputs.astype(np.float64))

    CSV_HEADER = ("strategy,elements,n_removed,fraction_removed,states_left,links_left,"
                  "n_inputs,driver_fraction")

    def csv_lines(self) -> list[str]:
        """CSV rows (no header; see ``AttackCurve.CSV_HEADER``)."""
        return [f"{self.strategy},{self.elements},{p['n_removed']},"
                f"{p['fraction_removed']:.6g},{p['states_left']},{p['links_left']},"
                f"{p['n_inputs']},{p['driver_fraction']:.6g}"
                for p in self.to_dict()["points"]]


def _attack_order(system: StructuredSystem, elements: str, strategy: str,
                  rng: np.random.Generator) -> np.ndarray:
    A = system.A
    n = system.n_states
    indeg = np.diff(A.indptr)
    outdeg = np.bincount(A.indices, minlength=n)
    deg = indeg + outdeg
    if elements == "nodes":
        if strategy == "random":
            return rng.permutation(n)
        if strategy == "degree":
            return np.lexsort((np.arange(n), -deg))
        roles = node_roles(system).role  # redundant (2) first, then intermittent, critical
        return np.lexsort((np.arange(n), -deg, -roles.astype(np.int64)))
    src, tgt = system.edges()
    E = src.size
    if strategy == "random":
        return rng.permutation(E)
    score = deg[src] + deg[tgt]
    if strategy == "degree":
        return np.lexsort((np.arange(E), -score))
    roles = link_roles(system).role  # critical (0) first, then ordinary, redundant
    return np.lexsort((np.arange(E), -score, roles.astype(np.int64)))


def attack_curve(system: StructuredSystem, *, elements: str = "nodes",
                 strategy: str = "random", steps: int = 20, max_fraction: float = 1.0,
                 seed: int = 0, progress: Progress | None = None) -> AttackCurve:
    """Minimum number of inputs as states or links are removed in a given order.

    Parameters
    ----------
    system : StructuredSystem
    elements : {"nodes", "links"}
    strategy : {"random", "degree", "role"}
        ``random``: a uniformly random order (seeded). ``degree``: highest total degree
        first (for links, the sum of the two ends' total degrees). ``role``: first the
        elements whose loss can raise ``N_D`` -- links critical, then ordinary, then
        redundant; states redundant (always matched), then intermittent, then critical --
        ties by degree. Orders are fixed on the intact network (a static attack).
    steps : int
        Number of removal steps (points after the first).
    max_fraction : float
        Share of the elements removed at the last step, in ``(0, 1]``.
    seed : int
        Seed for the random order.
    progress : callable, optional
        ``progress(done, total)`` after each point.

    Returns
    -------
    AttackCurve
        ``N_D = max(n' - |M*'|, 1)`` [1]_ at each point, ``0`` when no state is left.

    Notes
    -----
    One maximum matching per point: ``steps + 1`` near-linear computations. The
    targeting rules are common practice in network-robustness studies, no single source.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 2], [1, 2, 3])   # path of 4 states
    >>> c = attack_curve(s, elements="links", strategy="degree", steps=3)
    >>> c.n_removed.tolist(), c.n_inputs.tolist()
    ([0, 1, 2, 3], [1, 2, 3, 4])
    """
    _check_elements(elements)
    if strategy not in ATTACK_STRATEGIES:
        raise OptionError(f"strategy must be one of {', '.join(map(repr, ATTACK_STRATEGIES))}"
                          f", found {strategy!r}.")
    if not isinstance(steps, (int, np.integer)) or isinstance(steps, bool) or steps < 1:
        raise OptionError(f"steps must be an integer >= 1, found {steps!r}.")
    if not (isinstance(max_fraction, (int, float)) and 0 < max_fraction <= 1):
        raise OptionError(f"max_fraction must be in (0, 1], found {max_fraction!r}.")
    rng = np.random.default_rng(seed)
    A = system.A
    n = system.n_states
    total = n if elements == "nodes" else A.nnz
    order = _attack_order(system, elements, strategy, rng)
    counts = np.unique(np.round(np.linspace(0, max_fraction * total, steps + 1)).astype(np.int64))
    nd = np.empty(counts.size, np.int64)
    states_left = np.empty(counts.size, np.int64)
    links_left = np.empty(counts.size, np.int64)
    for i, c in enumerate(counts.tolist()):
        if elements == "nodes":
            keep = np.ones(n, bool)
            keep[order[:c]] = False
            A2 = A[keep][:, keep].tocsr() if c else A
            n2 = n - c
        else:
            A2 = _remove_links(A, order[:c]) if c else A
            n2 = n
        nd[i] = _n_d(n2, _matching_size(A2))
        states_left[i] = n2
        links_left[i] = A2.nnz
        if progress is not None:
            progress(i + 1, counts.size)
    return AttackCurve(strategy=strategy, elements=elements, seed=int(seed), n_states=n,
                       n_links=int(A.nnz), n_removed=counts,
                       fraction_removed=counts / max(total, 1), states_left=states_left,
                       links_left=links_left, n_inputs=nd)


def plot_attack_curves(curves: Sequence[AttackCurve], *, ax: Any = None,
                       fraction: bool = True) -> Any:
    """Draw attack curves (share of elements removed against ``N_D``) on ``ax``.

    Parameters
    ----------
    curves : sequence of AttackCurve
    ax : matplotlib Axes, optional
        Created (with a new figure) when omitted; matplotlib is imported only here.
    fraction : bool
        Plot ``N_D`` divided by the states left (True) or ``N_D`` itself.

    Returns
    -------
    matplotlib Axes
    """
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots(figsize=(6, 4))
    for c in curves:
        y = c.driver_fraction if fraction else c.n_inputs
        ax.plot(c.fraction_removed, y, marker="o", markersize=3,
                label=f"{c.strategy} ({c.elements})")
    what = "links" if curves and curves[0].elements == "links" else "states"
    ax.set_xlabel(f"share of {what} removed")
    ax.set_ylabel("minimum inputs / states left" if fraction else "minimum inputs")
    if curves:
        ax.legend()
    ax.grid(True, alpha=0.3)
    return ax


# ---------------------------------------------------------------------- what-if
@dataclass(frozen=True)
class WhatIf:
    """Before and after a proposed change (see :func:`what_if`).

    ``before`` / ``after`` are the two systems. ``controllable_before`` /
    ``controllable_after`` concern the system's input design (``None`` without inputs).
    ``drivers_before`` / ``drivers_after`` are one deterministic minimum driver set each
    (state names); ``role_changes`` maps state name -> (role before, role after) for the
    states present in both; ``link_role_changes`` the same for links.
    """

    before: StructuredSystem = field(repr=False)
    after: StructuredSystem = field(repr=False)
    added_links: tuple[tuple[str, str], ...]
    removed_links: tuple[tuple[str, str], ...]
    removed_nodes: tuple[str, ...]
    new_states: tuple[str, ...]
    inputs_lost: tuple[str, ...]
    controllable_before: bool | None
    controllable_after: bool | None
    n_inputs_before: int
    n_inputs_after: int
    drivers_before: tuple[str, ...]
    drivers_after: tuple[str, ...]
    role_changes: dict[str, tuple[str, str]]
    link_role_changes: dict[tuple[str, str], tuple[str, str]]
    reasons_after: tuple[str, ...]
    fix_after: tuple[str, ...]

    @property
    def breaks_design(self) -> bool:
        """The design was controllable before and is not after."""
        return bool(self.controllable_before) and self.controllable_after is False

    @property
    def drivers_gained(self) -> list[str]:
        b = set(self.drivers_before)
        return [x for x in self.drivers_after if x not in b]

    @property
    def drivers_lost(self) -> list[str]:
        a = set(self.drivers_after)
        return [x for x in self.drivers_before if x not in a]

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "what_if",
            "change": {"added_links": [list(e) for e in self.added_links],
                       "removed_links": [list(e) for e in self.removed_links],
                       "removed_nodes": list(self.removed_nodes),
                       "new_states": list(self.new_states),
                       "inputs_lost": list(self.inputs_lost)},
            "before": {"n_states": self.before.n_states, "n_links": self.before.n_links,
                       "controllable": self.controllable_before,
                       "n_inputs": self.n_inputs_before,
                       "drivers": list(self.drivers_before)},
            "after": {"n_states": self.after.n_states, "n_links": self.after.n_links,
                      "controllable": self.controllable_after,
                      "n_inputs": self.n_inputs_after,
                      "drivers": list(self.drivers_after),
                      "reasons": list(self.reasons_after), "fix": list(self.fix_after)},
            "breaks_design": self.breaks_design,
            "drivers_gained": self.drivers_gained,
            "drivers_lost": self.drivers_lost,
            "role_changes": {k: {"before": a, "after": b}
                             for k, (a, b) in self.role_changes.items()},
            "link_role_changes": [{"source": s, "target": t, "before": a, "after": b}
                                  for (s, t), (a, b) in self.link_role_changes.items()],
        }


def _pairs(links: Iterable[Sequence[object]] | None, what: str) -> list[tuple[str, str]]:
    out = []
    for e in links or ():
        e = tuple(e)
        if len(e) != 2:
            raise InvalidSystemError(f"{what}: expected (source, target) pairs, found {e!r}.")
        out.append((str(e[0]), str(e[1])))
    return out


def apply_change(system: StructuredSystem, *, add_links: Iterable[Sequence[object]] | None = None,
                 remove_links: Iterable[Sequence[object]] | None = None,
                 remove_nodes: Iterable[object] | None = None,
                 ) -> tuple[StructuredSystem, tuple[str, ...], tuple[str, ...]]:
    """The changed system, the names of new states, and the inputs left acting on nothing.

    Links are ``(source, target)`` state-name pairs; a name in ``add_links`` that the
    system lacks becomes a new state (appended); when every existing state has
    self-dynamics (a self-loop, as under the ``self-loops`` model) the new states get one
    too. Added links get weight 1.0 in a weighted system. Removing a state removes its
    links and its input connections; inputs left acting on no state are dropped.
    """
    add = _pairs(add_links, "add_links")
    rem = _pairs(remove_links, "remove_links")
    rnodes = [str(x) for x in (remove_nodes or ())]
    n0 = system.n_states

    def known(x: str) -> int | None:
        try:
            return int(system.index_of([x])[0])
        except UnknownNameError:
            return None

    rnode_idx = system.index_of(rnodes) if rnodes else np.zeros(0, np.int64)
    src, tgt = system.edges()
    keys = tgt * max(n0, 1) + src  # CSR order: sorted by target, then source
    keep_link = np.ones(src.size, bool)

    def find(a: int, b: int) -> int | None:
        if a >= n0 or b >= n0:
            return None
        kk = b * max(n0, 1) + a
        pos = int(np.searchsorted(keys, kk))
        return pos if pos < keys.size and keys[pos] == kk else None

    for u, v in rem:
        iu, iv = (int(i) for i in system.index_of([u, v]))
        k = find(iu, iv)
        if k is None:
            raise UnknownNameError(f"remove_links: there is no link {u!r} -> {v!r} to remove; "
                                   "links are 'source -> target' (source influences target).")
        keep_link[k] = False
    new: list[str] = []
    where: dict[str, int] = {}
    for u, v in add:
        for x in (u, v):
            if x not in where:
                i = known(x)
                if i is None:
                    i = n0 + len(new)
                    new.append(x)
                where[x] = i
    add_src = np.array([where[u] for u, _ in add], np.int64)
    add_tgt = np.array([where[v] for _, v in add], np.int64)
    for (u, v), a, b in zip(add, add_src.tolist(), add_tgt.tolist()):
        k = find(a, b)
        if k is not None and keep_link[k]:
            raise InvalidSystemError(f"add_links: the link {u!r} -> {v!r} is already there; "
                                     "list only new links.")
    all_names: Sequence[str] = (tuple(system.state_names) + tuple(new)) if new else \
        system.state_names
    N = n0 + len(new)
    loops = np.arange(n0, N, dtype=np.int64) if (
        new and n0 and system.n_self_loops == n0) else np.zeros(0, np.int64)
    s2 = np.concatenate([src[keep_link], add_src, loops])
    t2 = np.concatenate([tgt[keep_link], add_tgt, loops])
    w2 = np.concatenate([_edge_weights(system)[keep_link], np.ones(add_src.size + loops.size)])
    A = sp.coo_array((w2, (t2, s2)), shape=(N, N)).tocsr()
    B = sp.vstack([system.B, sp.csr_array((len(new), system.n_inputs))], format="csr")
    C = sp.hstack([system.C, sp.csr_array((system.n_outputs, len(new)))], format="csr")
    nodes = _extend_nodes(system.nodes, len(new))
    grown = StructuredSystem(A=A, B=B, C=C, state_names=all_names,
                             input_names=system.input_names, output_names=system.output_names,
                             nodes=nodes, weighted=system.weighted, model=system.model)
    if not rnodes:
        return grown, tuple(new), ()
    keep = np.ones(N, bool)
    keep[rnode_idx] = False
    Bk = grown.B[keep].tocsr()
    used = np.diff(Bk.tocsc().indptr) > 0
    had = np.diff(grown.B.tocsc().indptr) > 0
    lost_inputs = tuple(grown.input_names[int(j)] for j in np.flatnonzero(had & ~used))
    Ck = grown.C[:, keep].tocsr()
    out = StructuredSystem(
        A=grown.A[keep][:, keep].tocsr(), B=Bk[:, used], C=Ck,
        state_names=tuple(all_names[int(i)] for i in np.flatnonzero(keep)),
        input_names=tuple(x for x, u in zip(grown.input_names, used) if u),
        output_names=grown.output_names,
        nodes={c: v[keep] for c, v in grown.nodes.items()}, weighted=system.weighted,
        model=system.model)
    return out, tuple(new), lost_inputs


def _edge_weights(system: StructuredSystem) -> np.ndarray:
    """Weights in :meth:`StructuredSystem.edges` order (CSR order of ``A``)."""
    return np.asarray(system.A.data, np.float64).copy()


def _extend_nodes(nodes: Any, extra: int) -> dict[str, np.ndarray]:
    out = {}
    for c, v in dict(nodes).items():
        if extra == 0:
            out[c] = v
            continue
        if v.dtype == bool:
            pad = np.ones(extra, bool)
        elif np.issubdtype(v.dtype, np.floating):
            pad = np.full(extra, np.nan)
        else:
            pad = np.empty(extra, dtype=object)
        out[c] = np.concatenate([v.astype(object) if pad.dtype == object else v, pad])
    return out


def what_if(system: StructuredSystem, *, add_links: Iterable[Sequence[object]] | None = None,
            remove_links: Iterable[Sequence[object]] | None = None,
            remove_nodes: Iterable[object] | None = None) -> WhatIf:
    """Before and after a proposed change to the network, side by side.

    Parameters
    ----------
    system : StructuredSystem
        Its inputs, if any, are the design whose controllability is compared.
    add_links, remove_links : iterable of (source, target) state names
        Links to add (a name the system lacks becomes a new state) or remove.
    remove_nodes : iterable of state names
        States to remove with all their links (an input left acting on no state is
        dropped and listed in ``inputs_lost``).

    Returns
    -------
    WhatIf
        Controllability of the design before and after (Lin's test [1]_), the minimum
        number of inputs and one minimum driver set before and after (Liu et al. [2]_),
        the drivers gained and lost, and the node (Jia et al. [3]_) and link roles that
        changed.

    Notes
    -----
    Full recomputation on both systems: a few maximum matchings. Driver sets are not
    unique; the ones compared are netctl's deterministic choices, so "gained / lost"
    describes those two sets while the role changes describe all minimum sets.

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    .. [2] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [3] T. Jia et al., "Emergence of bimodality in controlling complex networks",
       Nat. Commun. 4:2002, 2013. doi:10.1038/ncomms3002

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], inputs=[0])    # x0 -> x1 -> x2
    >>> w = what_if(s, remove_links=[("x1", "x2")])
    >>> w.controllable_before, w.controllable_after, w.breaks_design, w.drivers_gained
    (True, False, True, ['x2'])
    """
    after, new, lost_inputs = apply_change(system, add_links=add_links,
                                           remove_links=remove_links, remove_nodes=remove_nodes)
    has = system.n_inputs > 0
    cb = controllability(system, dimension=False) if has else None
    ca = controllability(after, dimension=False) if has else None
    db = minimum_inputs(system)
    da = minimum_inputs(after)
    rb = node_roles(system)
    ra = node_roles(after)
    # old state index -> new one (states kept in order, new states appended after them)
    n0 = system.n_states
    keep0 = np.ones(n0, bool)
    if remove_nodes:
        keep0[system.index_of([str(x) for x in remove_nodes])] = False
    o2n = np.where(keep0, np.cumsum(keep0) - 1, -1)
    kept = np.flatnonzero(keep0)
    moved = np.flatnonzero(rb.role[kept] != ra.role[o2n[kept]])
    changes: dict[str, tuple[str, str]] = {
        system.state_names[int(kept[i])]: (NODE_ROLES[int(rb.role[kept[i]])],
                                           NODE_ROLES[int(ra.role[o2n[kept[i]]])])
        for i in moved}
    lb = link_roles(system)
    la = link_roles(after)
    N = max(after.n_states, 1)
    s_new, t_new = o2n[lb.sources], o2n[lb.targets]
    ok = (s_new >= 0) & (t_new >= 0)
    key_before = t_new * N + s_new
    key_after = la.targets * N + la.sources  # sorted (CSR order)
    pos = np.minimum(np.searchsorted(key_after, key_before), max(key_after.size - 1, 0))
    found = ok & (key_after.size > 0)
    if key_after.size:
        found &= key_after[pos] == key_before
    diff = np.flatnonzero(found & (lb.role != la.role[pos] if key_after.size else found))
    link_changes: dict[tuple[str, str], tuple[str, str]] = {
        (system.state_names[int(lb.sources[k])], system.state_names[int(lb.targets[k])]):
        (LINK_ROLES[int(lb.role[k])], LINK_ROLES[int(la.role[pos[k]])]) for k in diff}
    return WhatIf(
        before=system, after=after, added_links=tuple(_pairs(add_links, "add_links")),
        removed_links=tuple(_pairs(remove_links, "remove_links")),
        removed_nodes=tuple(str(x) for x in (remove_nodes or ())), new_states=new,
        inputs_lost=lost_inputs,
        controllable_before=None if cb is None else cb.controllable,
        controllable_after=None if ca is None else ca.controllable,
        n_inputs_before=db.n_inputs, n_inputs_after=da.n_inputs,
        drivers_before=tuple(db.driver_names), drivers_after=tuple(da.driver_names),
        role_changes=changes, link_role_changes=link_changes,
        reasons_after=tuple(ca.reasons()) if ca is not None else (),
        fix_after=tuple(ca.names(ca.fix)) if ca is not None else ())
