"""Every element of a grid lost in turn (N-1): :func:`element_sweep`.

What each element's outage removes (links, states, inputs) is
:func:`~netctl.structural.robustness.outages.element_effects`. This module finds what each
loss does: the minimum number of inputs afterwards, from one maximum matching of ``A``
(and one of ``[A B]``) repaired by alternating searches
(:mod:`netctl.structural.robustness._rematch`), and whether the system's input design
still reaches every state -- by bus islands (bridges and cut vertices of the bus graph,
one depth-first search for all losses) where the grid's buses couple symmetrically, else
by one compiled search per loss.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.sparse as sp
from netctl._jit import njit

from netctl.errors import OptionError
from netctl.graph.matching import maximum_matching
from netctl.records import ELEMENT_KINDS
from netctl.structural._engine import stack_AB
from netctl.structural.robustness._common import LossOutcomes, _n_d
from netctl.structural.robustness._rematch import matching_sizes_after
from netctl.structural.robustness.outages import (
    _concat_ragged,
    _take,
    element_effects,
    state_nodes,
)
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["ElementSweep", "element_sweep"]


# ---------------------------------------------------------------------- kernels
@njit(cache=True, nogil=True)
def _reached(out_ptr, out_idx, out_pos, link_dead, state_dead, start):  # pragma: no cover
    """Number of states reached from ``start`` (live states) over live links."""
    n = out_ptr.size - 1
    seen = np.zeros(n, np.bool_)
    stack = np.empty(n, np.int64)
    top = 0
    for s in start:
        if not state_dead[s] and not seen[s]:
            seen[s] = True
            stack[top] = s
            top += 1
    count = top
    while top > 0:
        top -= 1
        u = stack[top]
        for p in range(out_ptr[u], out_ptr[u + 1]):
            if link_dead[out_pos[p]]:
                continue
            v = out_idx[p]
            if state_dead[v] or seen[v]:
                continue
            seen[v] = True
            stack[top] = v
            top += 1
            count += 1
    return count


class _Islands:
    """Input reachability of a grid whose buses couple symmetrically, by bus islands.

    Valid when every state belongs to a bus, the states of each bus reach each other
    (one strongly connected set: a first-order bus, or ``pos`` and ``vel`` of the
    second-order model) and every link between two buses has a partner in the other
    direction. Then a state is reached from the inputs iff its bus lies in a connected
    piece of the bus graph holding an input, and one depth-first search gives, for every
    branch (a bridge or not) and every bus (a cut vertex or not), the buses its loss
    islands without an input (Tarjan's low-link: R. Tarjan, "Depth-first search and
    linear graph algorithms", SIAM J. Comput. 1(2):146-160, 1972).
    """

    def __init__(self, nb: int, a: np.ndarray, b: np.ndarray, weight: np.ndarray,
                 inputs_at: np.ndarray) -> None:
        adj: list[list[int]] = [[] for _ in range(nb)]
        for u, v in zip(a.tolist(), b.tolist()):
            adj[u].append(v)
            adj[v].append(u)
        disc = np.full(nb, -1, np.int64)
        low = np.zeros(nb, np.int64)
        parent = np.full(nb, -1, np.int64)
        sub_w = weight.astype(np.int64).copy()
        sub_in = inputs_at.astype(np.int64).copy()
        comp = np.full(nb, -1, np.int64)
        t = 0
        comps_w: list[int] = []
        comps_in: list[int] = []
        for root in range(nb):
            if disc[root] >= 0:
                continue
            cid = len(comps_w)
            disc[root] = low[root] = t
            t += 1
            comp[root] = cid
            stack = [(root, 0)]
            while stack:
                u, k = stack[-1]
                if k < len(adj[u]):
                    stack[-1] = (u, k + 1)
                    v = adj[u][k]
                    if disc[v] < 0:
                        parent[v] = u
                        disc[v] = low[v] = t
                        t += 1
                        comp[v] = cid
                        stack.append((v, 0))
                    elif v != parent[u]:
                        low[u] = min(low[u], disc[v])
                else:
                    stack.pop()
                    p = parent[u]
                    if p >= 0:
                        low[p] = min(low[p], low[u])
                        sub_w[p] += sub_w[u]
                        sub_in[p] += sub_in[u]
            comps_w.append(int(sub_w[root]))
            comps_in.append(int(sub_in[root]))
        self.adj, self.disc, self.low, self.parent = adj, disc, low, parent
        self.sub_w, self.sub_in, self.comp = sub_w, sub_in, comp
        self.comp_w = np.array(comps_w, np.int64)
        self.comp_in = np.array(comps_in, np.int64)
        self.weight, self.inputs_at = weight, inputs_at
        self.base = int(self.comp_w[self.comp_in == 0].sum())

    @classmethod
    def build(cls, system: StructuredSystem, node: np.ndarray, nb: int,
              in_node: np.ndarray) -> _Islands | None:
        from scipy.sparse.csgraph import connected_components

        if node.size == 0 or (node < 0).any():
            return None
        src, tgt = system.edges()
        nu, nv = node[src], node[tgt]
        inner = nu == nv
        n = system.n_states
        M = sp.csr_array((np.ones(int(inner.sum())), (tgt[inner], src[inner])), shape=(n, n))
        _, lab = connected_components(M, directed=True, connection="strong")
        first = np.full(nb, -1, np.int64)
        first[node[::-1]] = lab[::-1]
        if not np.array_equal(first[node], lab):
            return None  # a bus whose states do not all reach each other
        pairs = np.unique(nu[~inner] * nb + nv[~inner])
        back = np.unique(nv[~inner] * nb + nu[~inner])
        if not np.array_equal(pairs, back):
            return None  # a one-way coupling between two buses
        und = pairs[pairs // nb < pairs % nb]
        weight = np.bincount(node, minlength=nb)
        if (in_node == -1).any():
            return None  # an input shared by several buses
        inputs_at = np.bincount(in_node[in_node >= 0], minlength=nb)
        return cls(nb, und // nb, und % nb, weight, inputs_at)

    def _cut(self, c: int) -> bool:
        p = int(self.parent[c])
        return p >= 0 and self.low[c] > self.disc[p]

    def after_branch(self, a: int, b: int) -> int:
        """States reached by no input after the coupling a -- b is lost."""
        c = b if self.parent[b] == a else (a if self.parent[a] == b else -1)
        if c < 0 or not self._cut(c):
            return self.base
        k = int(self.comp[c])
        total_in = int(self.comp_in[k])
        if total_in == 0:
            return self.base
        side_in = int(self.sub_in[c])
        side_w = int(self.sub_w[c])
        return self.base + (side_w if side_in == 0 else 0) + \
            (int(self.comp_w[k]) - side_w if total_in - side_in == 0 else 0)

    def after_bus(self, v: int) -> int:
        """States (of the other buses) reached by no input after bus ``v`` is lost."""
        k = int(self.comp[v])
        total_in = int(self.comp_in[k])
        if total_in == 0:
            return self.base - int(self.weight[v])
        cut = 0
        sep_w = sep_in = 0
        for c in self.adj[v]:
            if self.parent[c] == v and self.low[c] >= self.disc[v]:
                sep_w += int(self.sub_w[c])
                sep_in += int(self.sub_in[c])
                if self.sub_in[c] == 0:
                    cut += int(self.sub_w[c])
        rest_w = int(self.comp_w[k]) - int(self.weight[v]) - sep_w
        rest_in = total_in - int(self.inputs_at[v]) - sep_in
        if rest_w > 0 and rest_in == 0:
            cut += rest_w
        return self.base + cut

    def after_inputs(self, v: int, lost: int) -> int:
        """States reached by no input after ``lost`` inputs on bus ``v`` are lost."""
        k = int(self.comp[v])
        if self.comp_in[k] > 0 and self.comp_in[k] - lost == 0:
            return self.base + int(self.comp_w[k])
        return self.base


# ---------------------------------------------------------------------- the sweep
@dataclass(frozen=True)
class ElementSweep(LossOutcomes, ResultTables):
    """Each element of a grid lost in turn (see :func:`element_sweep`).

    ``to_frame()`` gives one row per element (its case ID, kind, the minimum inputs and
    the design after its loss, whether it breaks the design or raises the minimum
    inputs); in a notebook (from :func:`netctl.element_sweep`, or after ``with_system``)
    it shows its findings and a small map: the branches whose loss alone breaks the
    design or raises the minimum inputs, and the buses and generators likewise.

    Attributes
    ----------
    ids, kinds : tuple of str
        Element IDs (the case's) and kinds.
    n_inputs, n_inputs_after : int, ndarray of int
        Minimum number of inputs before and after each loss.
    has_design, controllable_before, controllable_after
        The system's input design, if it has one, before and after each loss.
    islands : tuple of tuple of str
        For each loss, the buses cut off from every other bus that still has an input
        (empty when none; only computed with a design).
    no_change : ndarray of bool
        The loss leaves the pattern unchanged (one circuit of a parallel pair, a
        generator sharing its bus with another unit).
    """

    ids: tuple[str, ...]
    kinds: tuple[str, ...]
    n_states: int
    n_inputs: int
    n_inputs_after: np.ndarray
    has_design: bool
    controllable_before: bool | None
    controllable_after: np.ndarray
    rank_lost: np.ndarray
    unreached: np.ndarray
    no_change: np.ndarray
    model: str = "given"
    buses: tuple[tuple[str, ...], ...] = field(default=(), repr=False)
    states_per_bus: int = 1

    _frame_rows = "elements"
    _frame_sets = ("breaking", "costly")
    _frame_values = ("n_inputs_after", "controllable_after", "no_change")

    @property
    def n_elements(self) -> int:
        return len(self.ids)

    def counts(self) -> dict[str, int]:
        out = {t: 0 for t in ELEMENT_KINDS}
        for t in self.kinds:
            out[t] += 1
        return {t: c for t, c in out.items() if c}

    def reasons(self, k: int) -> list[str]:
        out = []
        if self.has_design and self.rank_lost[k]:
            out.append("dilation: the generic rank of [A B] falls below the number of states")
        if self.has_design and self.unreached[k]:
            u = int(self.unreached[k])
            per = max(self.states_per_bus, 1)
            out.append(f"islanding: {u // per} bus(es) ({u} state(s)) left in an island "
                       "without an input")
        return out

    def rows(self) -> list[dict[str, Any]]:
        out = []
        for k in range(self.n_elements):
            row: dict[str, Any] = {"element": self.ids[k], "kind": self.kinds[k],
                                   "buses": list(self.buses[k]) if self.buses else [],
                                   "n_inputs_after": int(self.n_inputs_after[k]),
                                   "no_structural_change": bool(self.no_change[k])}
            if self.has_design:
                row["controllable_after"] = bool(self.controllable_after[k])
                row["reasons"] = self.reasons(k)
            out.append(row)
        return out

    def to_dict(self, *, rows: bool = True) -> dict[str, Any]:
        d: dict[str, Any] = {
            "analysis": "element_sweep", "model": self.model, "n_states": self.n_states,
            "n_elements": self.n_elements, "elements_by_kind": self.counts(),
            "n_inputs": self.n_inputs, "n_costly": int(self.costly.size),
            "costly": [self.ids[k] for k in self.costly.tolist()],
            "has_design": self.has_design, "controllable_before": self.controllable_before,
            "n_breaking": int(self.breaking.size),
            "breaking": [self.ids[k] for k in self.breaking.tolist()],
            "n_no_change": int(self.no_change.sum())}
        if rows:
            d["losses"] = self.rows()
        return d


def element_sweep(system: StructuredSystem, *, kinds: Sequence[str] | None = None,
                  accessibility: str = "auto") -> ElementSweep:
    r"""Lose every element (branch, transformer, bus, generator) in turn, by its case ID.

    Parameters
    ----------
    system : StructuredSystem
        Read from a grid file (it has :attr:`~StructuredSystem.elements`), under any
        model; its inputs, if any, are the design to check.
    kinds : sequence of str, optional
        Element kinds to lose (default: all of :data:`~netctl.records.ELEMENT_KINDS`).
    accessibility : {"auto", "search"}
        ``"auto"``: by bus islands (one depth-first search for all losses) when the
        grid's buses couple symmetrically, else one search per loss; ``"search"``: one
        search per loss always (the reference).

    Returns
    -------
    ElementSweep

    Notes
    -----
    Exact: the minimum number of inputs ``N_D = max(n - |M*|, 1)`` [1]_ after each loss,
    and the design's structural controllability by Lin's conditions [2]_ (generic rank of
    ``[A B]`` and input accessibility). From one maximum matching of ``A`` (and of ``[A
    B]``): a loss that frees no surviving vertex of the matching keeps the restricted
    matching maximum (an augmenting path would have to end at a freed vertex), which is
    the common case for branches in the swing model; otherwise the matching is
    recomputed. Accessibility: when every bus's states reach each other and buses couple
    both ways, a state is reached iff its bus's island holds an input, and bridges and
    cut vertices of the bus graph (Tarjan's low-link, one depth-first search) give every
    loss's islands at once; otherwise one compiled search per loss (O(n + E)).

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    """
    if accessibility not in ("auto", "search"):
        raise OptionError(f"accessibility must be 'auto' or 'search', found {accessibility!r}.")
    eff = element_effects(system)
    eff_in_node = eff.input_bus
    exact_islands = accessibility == "auto"
    table = eff.table
    want = set(kinds) if kinds is not None else set(ELEMENT_KINDS)
    bad = sorted(want - set(ELEMENT_KINDS))
    if bad:
        raise OptionError(f"unknown element kinds {bad}; choose from {', '.join(ELEMENT_KINDS)}.")
    sel = [k for k, t in enumerate(table.kinds) if t in want]
    A, B = system.A, system.B
    n, m = system.n_states, system.n_inputs
    a_ptr = A.indptr.astype(np.int64)
    a_idx = A.indices.astype(np.int64)
    rmA, cmA = maximum_matching(a_ptr, a_idx, n)
    sizeA = int(np.count_nonzero(rmA >= 0))
    has = m > 0
    ab_ptr, ab_idx, n_ab = stack_AB(A, B)
    ab_ptr, ab_idx = ab_ptr.astype(np.int64), ab_idx.astype(np.int64)
    if has:
        rmAB, cmAB = maximum_matching(ab_ptr, ab_idx, n_ab)
        sizeAB = int(np.count_nonzero(rmAB >= 0))
        # position of each A entry inside [A B] (A's columns come first in every row)
        nb_row = np.diff(B.indptr) if B.nnz else np.zeros(n, np.int64)
        shift = np.repeat(np.concatenate([[0], np.cumsum(nb_row)[:-1]]), np.diff(A.indptr))
        a_in_ab = np.arange(A.nnz, dtype=np.int64) + shift
        Bcsc = B.tocsc()
        At = sp.csr_array((np.arange(A.nnz, dtype=np.float64), A.indices, A.indptr),
                          shape=A.shape).T.tocsr()
        out_ptr, out_idx = At.indptr.astype(np.int64), At.indices.astype(np.int64)
        out_pos = At.data.astype(np.int64)
        n_reached_before = _reached(out_ptr, out_idx, out_pos, np.zeros(A.nnz, np.bool_),
                                    np.zeros(n, np.bool_),
                                    np.unique(B.tocoo().row).astype(np.int64))
        ok_before = bool(sizeAB == n and n_reached_before == n)
        islands = _Islands.build(system, state_nodes(system, table),
                                 max(len(table.node_names), 1), eff_in_node) \
            if exact_islands else None
    else:
        ok_before = None
    k_n = len(sel)
    sel_a = np.asarray(sel, np.int64)
    lp, lf = _take(eff.link_ptr, eff.links, sel_a)
    sp_, sf = _take(eff.state_ptr, eff.states, sel_a)
    ip, inf = _take(eff.input_ptr, eff.inputs, sel_a)
    # one matching each, then a few alternating searches per loss (no rebuild)
    size_a = matching_sizes_after(a_ptr, a_idx, n, rmA, cmA, lp, lf, sp_, sf, sp_, sf)
    if has:
        # the columns a loss removes from [A B]: its states, then its inputs (n + j)
        dcp, dcf = _concat_ragged(sp_, sf, ip, n + inf)
        size_ab = matching_sizes_after(ab_ptr, ab_idx, n_ab, rmAB, cmAB, lp, a_in_ab[lf],
                                       sp_, sf, dcp, dcf)
    after = np.zeros(k_n, np.int64)
    ctrl = np.ones(k_n, bool)
    rank_lost = np.zeros(k_n, bool)
    unreached = np.zeros(k_n, np.int64)
    no_change = np.zeros(k_n, bool)
    link_dead = np.zeros(A.nnz, np.bool_)
    state_dead = np.zeros(n, np.bool_)
    empty = np.zeros(0, np.int64)
    base_nd = _n_d(n, sizeA)
    for i, k in enumerate(sel):
        links, states, inputs = eff.of(k)
        if links.size == 0 and states.size == 0 and inputs.size == 0:
            no_change[i] = True
            after[i] = base_nd
            ctrl[i] = bool(ok_before) if has else True
            continue
        n_left = n - states.size
        after[i] = _n_d(n_left, int(size_a[i]))
        if not has:
            continue
        rank_lost[i] = int(size_ab[i]) < n_left
        if islands is not None and table.end_c[k] < 0:
            a, b = int(table.end_a[k]), int(table.end_b[k])
            if links.size:
                unreached[i] = islands.after_branch(a, b)
            elif states.size:
                unreached[i] = islands.after_bus(a)
            else:
                unreached[i] = islands.after_inputs(a, int(inputs.size))
            ctrl[i] = not rank_lost[i] and unreached[i] == 0
            continue
        link_dead[links] = True
        state_dead[states] = True
        live_inputs = np.setdiff1d(np.arange(m), inputs) if inputs.size else np.arange(m)
        start = np.unique(np.concatenate([Bcsc.indices[Bcsc.indptr[j]:Bcsc.indptr[j + 1]]
                                          for j in live_inputs.tolist()]
                                         or [empty])).astype(np.int64)
        reached = _reached(out_ptr, out_idx, out_pos, link_dead, state_dead, start)
        link_dead[links] = False
        state_dead[states] = False
        unreached[i] = n_left - reached
        ctrl[i] = not rank_lost[i] and unreached[i] == 0
    buses = tuple(table.element(k).nodes for k in sel)
    return ElementSweep(ids=tuple(table.ids[k] for k in sel),
                        kinds=tuple(table.kinds[k] for k in sel), n_states=n,
                        n_inputs=base_nd, n_inputs_after=after, has_design=has,
                        controllable_before=ok_before, controllable_after=ctrl,
                        rank_lost=rank_lost, unreached=unreached, no_change=no_change,
                        model=system.model, buses=buses,
                        states_per_bus=max(n // max(len(table.node_names), 1), 1))
