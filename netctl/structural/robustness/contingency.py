"""Every single link (or state) lost in turn: :func:`contingency_sweep`.

Computed from one maximum matching of ``A`` (and one of ``[A B]``) plus dominators of the
input-reachability graph, not by one recomputation per element: what a state's loss does
to the matching is read from that matching's alternating structure
(:func:`matching_loss_after_node_removal`).

Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import Pattern, transpose_pattern
from netctl._jit import njit
from netctl.graph.dominators import input_dominators

from netctl.structural._engine import stack_AB
from netctl.structural.robustness._common import LossOutcomes, _check_elements, _n_d
from netctl.structural.roles import (
    LINK_ROLES,
    NODE_ROLES,
    MatchingFacts,
    edge_classes,
    matching_facts,
    node_role_codes,
)
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["ContingencySweep", "contingency_sweep"]


# ---------------------------------------------------------------------- dominators
@dataclass(frozen=True)
class _Reach:
    reachable: np.ndarray  # bool per state
    idom: np.ndarray  # per state: -1 unreachable, n the virtual input root
    pre: np.ndarray
    size: np.ndarray  # states dominated (itself included); 0 when unreachable


def _reach_structure(A: Pattern, B: Pattern) -> _Reach:
    n = A.shape[0]
    At = transpose_pattern(A)
    driven = np.zeros(n, np.bool_)
    driven[np.flatnonzero(np.diff(B.indptr))] = True
    idom, pre, size = input_dominators(At.indptr.astype(np.int64), At.indices.astype(np.int64),
                                  A.indptr.astype(np.int64), A.indices.astype(np.int64),
                                  driven)
    reach = idom[:n] >= 0
    return _Reach(reachable=reach, idom=idom[:n], pre=pre, size=np.where(reach, size[:n], 0))


def _bridges(A: Pattern, r: _Reach) -> np.ndarray:
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


# ---------------------------------------------------------------------- node losses
@njit(cache=True, nogil=True)
def _reach_queries(indptr, indices, scc, topo, post, low, sources, targets,
                   out):  # pragma: no cover - compiled
    """out[q] = targets[q] reachable from sources[q]: a breadth-first search that enters
    only components that can still lead to the target's — those before it in
    topological order whose interval ``[low, post]`` holds its post-order number (a
    component reaches another only if so: interval labels, Yildirim, Chaoji & Zaki
    2010). Exact; on a long chain of components (a grid's or a two-way chain's
    alternating graph) most queries end at once, where the topological bound alone
    searched half the graph each time."""
    n = indptr.size - 1
    stamp = np.zeros(n, np.int64)
    queue = np.empty(n, np.int64)
    for q in range(sources.size):
        s = sources[q]
        t = targets[q]
        cs = scc[s]
        ct = scc[t]
        if cs == ct:
            out[q] = True
            continue
        limit = topo[ct]
        pt = post[ct]
        if topo[cs] > limit or not (low[cs] <= pt <= post[cs]):
            out[q] = False
            continue
        mark = q + 1
        stamp[s] = mark
        queue[0] = s
        head = 0
        tail = 1
        found = False
        while head < tail and not found:
            u = queue[head]
            head += 1
            for k in range(indptr[u], indptr[u + 1]):
                w = indices[k]
                cw = scc[w]
                if w == t or cw == ct:
                    found = True
                    break
                if stamp[w] != mark and topo[cw] < limit and low[cw] <= pt <= post[cw]:
                    stamp[w] = mark
                    queue[tail] = w
                    tail += 1
        out[q] = found


@njit(cache=True, nogil=True)
def _topo_of_components(indptr, indices, scc, k):  # pragma: no cover - compiled
    """Topological position of every component of the condensation (Kahn), and its
    interval label for :func:`_reach_queries`: post-order number and the least one
    among the components it reaches."""
    n = indptr.size - 1
    indeg = np.zeros(k, np.int64)
    cnt = np.zeros(k + 1, np.int64)
    for u in range(n):
        for e in range(indptr[u], indptr[u + 1]):
            a = scc[u]
            b = scc[indices[e]]
            if a != b:
                indeg[b] += 1
                cnt[a + 1] += 1
    for a in range(k):
        cnt[a + 1] += cnt[a]
    fill = cnt[:-1].copy()
    adj = np.empty(cnt[k], np.int64)
    for u in range(n):
        for e in range(indptr[u], indptr[u + 1]):
            a = scc[u]
            b = scc[indices[e]]
            if a != b:
                adj[fill[a]] = b
                fill[a] += 1
    topo = np.empty(k, np.int64)
    queue = np.empty(k, np.int64)
    tail = 0
    for a in range(k):
        if indeg[a] == 0:
            queue[tail] = a
            tail += 1
    head = 0
    while head < tail:
        a = queue[head]
        topo[a] = head
        head += 1
        for e in range(cnt[a], cnt[a + 1]):
            b = adj[e]
            indeg[b] -= 1
            if indeg[b] == 0:
                queue[tail] = b
                tail += 1
    # interval labels: post-order numbers of one depth-first search of the condensation
    # (roots in topological order) and, per component, the least of its descendants'
    topo_order = queue  # the components in topological order (Kahn's queue)
    post = np.full(k, -1, np.int64)
    pos = np.empty(k, np.int64)
    stack = np.empty(k, np.int64)
    count = 0
    for r in range(k):
        root = topo_order[r]
        if post[root] != -1:
            continue
        top = 0
        stack[0] = root
        pos[root] = cnt[root]
        post[root] = -2  # on the stack
        while top >= 0:
            a = stack[top]
            if pos[a] < cnt[a + 1]:
                b = adj[pos[a]]
                pos[a] += 1
                if post[b] == -1:
                    post[b] = -2
                    pos[b] = cnt[b]
                    top += 1
                    stack[top] = b
            else:
                post[a] = count
                count += 1
                top -= 1
    low = post.copy()
    for i in range(k - 1, -1, -1):  # reverse topological order: children first
        a = topo_order[i]
        for e in range(cnt[a], cnt[a + 1]):
            if low[adj[e]] < low[a]:
                low[a] = low[adj[e]]
    return topo, post, low


def matching_loss_after_node_removal(f: MatchingFacts, nodes: np.ndarray) -> np.ndarray:
    """How much the maximum matching shrinks (0, 1 or 2) when row ``v`` and column ``v``
    are both deleted, for each ``v`` in ``nodes`` (rows and columns share the first
    indices, as for ``A`` or ``[A B]``).

    Exact. Row ``v`` free in some maximum matching and column ``v`` free in some (they
    can be freed at once, by the Dulmage–Mendelsohn structure): 0. Exactly one of them:
    1. Neither: 1 if ``v`` is matched to itself, or if the row matched to column ``v``
    reaches row ``v`` in the alternating graph (an augmenting path then repairs one of the
    two lost edges); else 2. The reachability questions are answered by searches pruned
    to the components between the two ends (worst case linear each).
    """
    nodes = np.asarray(nodes, np.int64)
    rf = f.rows_free[nodes]
    cf = f.cols_free[nodes]
    loss = 2 - rf.astype(np.int64) - cf.astype(np.int64)
    hard = np.flatnonzero(loss == 2)
    if hard.size:
        v = nodes[hard]
        self_matched = f.row_match[v] == v
        loss[hard[self_matched]] = 1
        q = hard[~self_matched]
        if q.size:
            topo, post, low = _topo_of_components(f.h_indptr, f.h_indices, f.h_scc,
                                                  np.int64(f.h_n_scc))
            srcs = f.col_match[nodes[q]]
            out = np.zeros(q.size, np.bool_)
            _reach_queries(f.h_indptr, f.h_indices, f.h_scc, topo, post, low,
                           np.ascontiguousarray(srcs), np.ascontiguousarray(nodes[q]), out)
            loss[q[out]] = 1
    return loss


# ---------------------------------------------------------------------- single losses
@dataclass(frozen=True)
class ContingencySweep(LossOutcomes, ResultTables):
    """Effect of losing each single link (or state), see :func:`contingency_sweep`.

    In a notebook (from :func:`netctl.contingency_sweep`, or after ``with_system``) it
    shows its findings and a small map: the links (states) whose loss alone breaks the
    design or raises the minimum number of inputs.

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
      (:func:`matching_loss_after_node_removal`).
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
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    .. [3] K. D. Cooper, T. J. Harvey, K. Kennedy, "A simple, fast dominance algorithm",
       Software Practice & Experience 4:1-10, 2001 (details from memory).
    .. [4] G. F. Italiano, L. Laura, F. Santaroni, "Finding strong bridges and strong
       articulation points in linear time", Theor. Comput. Sci. 447:74-84, 2012.
       doi:10.1016/j.tcs.2011.11.011 (details from memory)

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
    A, B = system.pattern("A"), system.pattern("B")
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
