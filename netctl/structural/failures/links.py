"""Which lines' loss breaks a design: :func:`audit_links`.

A *line* is a whole element as engineers count them: both directions of a coupling
between two nodes are one line, and in a second-order model every link between the
states of two nodes (``a:pos -> b:vel`` and ``b:pos -> a:vel``) is one line. Links
inside one node of a second-order model and self-loops (self-dynamics) are part of the
model, not lines, and never fail.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import Pattern
from netctl.graph.dominators import input_dominators
from netctl.graph.matching import maximum_matching
from netctl.structural._engine import stack_AB
from netctl.structural.failures._core import is_controlling
from netctl.structural.failures.audit import _work_system
from netctl.structural.robustness._rematch import matching_sizes_after
from netctl.system import StructuredSystem

__all__ = ["LineLosses", "audit_links", "line_elements"]


def _node_of(system: StructuredSystem) -> tuple[np.ndarray, list[str]]:
    """Node id per state and node names (a second-order model's ``node`` column)."""
    n = system.n_states
    col = system.nodes.get("node") if isinstance(system.nodes, dict) else None
    if col is not None and len(col) == n and system.model == "second-order":
        labels = [str(v) for v in col]
        uniq = sorted(set(labels), key=labels.index)
        pos = {v: i for i, v in enumerate(uniq)}
        return np.array([pos[v] for v in labels], np.int64), uniq
    return np.arange(n, dtype=np.int64), [str(x) for x in system.state_names]


def line_elements(system: StructuredSystem) -> tuple[list[np.ndarray], list[str]]:
    """Lines of ``system``: for each, the link positions (order of
    :meth:`StructuredSystem.edges`) it holds, and its label ``'a -- b'`` (both
    directions present) or ``'a -> b'``.

    Notes
    -----
    Whole elements as the N-1 criterion counts them [1]_: one line, both directions;
    model-internal links (inside one node of a second-order model) and self-loops are
    never elements. Linear in the number of links (one sort).

    References
    ----------
    .. [1] ENTSO-E, "Continental Europe Operation Handbook, Policy 3: Operational
       Security" (N-1 criterion: loss of one element), 2009 (from memory).
    """
    src, tgt = system.edges()
    node, node_names = _node_of(system)
    a, b = node[src], node[tgt]
    keep = np.flatnonzero(a != b)
    lo, hi = np.minimum(a[keep], b[keep]), np.maximum(a[keep], b[keep])
    key = lo * max(len(node_names), 1) + hi
    order = np.argsort(key, kind="stable")
    groups: list[np.ndarray] = []
    labels: list[str] = []
    if keep.size == 0:
        return groups, labels
    ks = key[order]
    cuts = np.flatnonzero(np.diff(ks)) + 1
    for chunk in np.split(order, cuts):
        pos = keep[chunk]
        fwd = {(int(a[p]), int(b[p])) for p in pos}
        u, v = int(lo[chunk[0]]), int(hi[chunk[0]])
        both = (u, v) in fwd and (v, u) in fwd
        if both:
            labels.append(f"{node_names[u]} -- {node_names[v]}")
        else:
            x, y = next(iter(fwd))
            labels.append(f"{node_names[x]} -> {node_names[y]}")
        groups.append(np.sort(pos))
    return groups, labels


class _LostStates(Sequence[np.ndarray]):
    """The states each line's loss leaves unreached, computed when asked for (a
    sequence of sorted index arrays, one per line): a chain's lines cut off ``n - 1``,
    ``n - 2``, ... states, so storing them all would take memory quadratic in ``n``."""

    def __init__(self, n_lines: int, n_states: int, order: np.ndarray, lo: np.ndarray,
                 hi: np.ndarray, count: np.ndarray, extra: dict[int, np.ndarray]) -> None:
        self._n_lines = n_lines
        self._n_states = n_states
        self._order = order  # dominator-tree preorder of the line-split graph
        self._lo = lo  # per line: its subtree's preorder range [lo, hi)
        self._hi = hi
        self._count = count  # per line: states cut off (lines checked alone too)
        self._extra = extra  # lines checked one by one: their states

    def __len__(self) -> int:
        return self._n_lines

    def n_lost(self, k: int) -> int:
        """Number of states the loss of line ``k`` leaves unreached."""
        return int(self._count[int(k)])

    def first(self, k: int, limit: int) -> np.ndarray:
        """Up to ``limit`` of them, in the order of the dominator tree (the states the
        line feeds directly first; for a line checked alone, in index order)."""
        k = int(k)
        if k in self._extra:
            return self._extra[k][:limit]
        if self._count[k] == 0:
            return np.zeros(0, np.int64)
        out: list[int] = []
        want = min(limit, int(self._count[k]))
        for i in range(int(self._lo[k]), int(self._hi[k])):
            v = int(self._order[i])
            if v < self._n_states:
                out.append(v)
                if len(out) == want:
                    break
        return np.asarray(out, np.int64)

    def __getitem__(self, k: Any) -> Any:
        if isinstance(k, slice):
            return [self[i] for i in range(*k.indices(self._n_lines))]
        k = int(k)
        if k < 0:
            k += self._n_lines
        if not 0 <= k < self._n_lines:
            raise IndexError(f"line {k} out of range (0..{self._n_lines - 1}).")
        if k in self._extra:
            return self._extra[k]
        if self._count[k] == 0:
            return np.zeros(0, np.int64)
        # the subtree holds line vertices too; its states are what the loss cuts off
        part = self._order[int(self._lo[k]):int(self._hi[k])]
        return np.sort(part[part < self._n_states])


@dataclass(frozen=True)
class LineLosses:
    """Effect of losing each line on a design (see :func:`audit_links`)."""

    kind: str
    works: bool
    labels: tuple[str, ...]
    breaking: np.ndarray  # bool per line
    rank_lost: np.ndarray  # bool per line
    unreached: _LostStates = field(repr=False)  # states lost per line, on demand
    state_names: Sequence[str] = field(repr=False)
    model: str = "given"

    @property
    def n_lines(self) -> int:
        return len(self.labels)

    @property
    def secure(self) -> bool:
        return self.works and not bool(self.breaking.any())

    def reasons(self, k: int) -> list[str]:
        out = []
        if self.rank_lost[k]:
            out.append("dilation: the generic rank falls below the number of states")
        n_lost = self.unreached.n_lost(k)
        if n_lost:
            verb = "seen by no sensor" if self.kind == "sensors" else "reached by no actuator"
            names = [self.state_names[int(i)] for i in self.unreached.first(k, 8)]
            out.append(f"{n_lost} state(s) {verb}: {', '.join(names)}"
                       + (f", ... ({n_lost - 8} more)" if n_lost > 8 else ""))
        return out

    def to_dict(self) -> dict[str, Any]:
        br = np.flatnonzero(self.breaking)
        return {"analysis": "line_losses", "kind": self.kind, "model": self.model,
                "works": self.works, "n_lines": self.n_lines, "secure": self.secure,
                "n_breaking": int(br.size),
                "breaking": [{"line": self.labels[int(k)], "reasons": self.reasons(int(k))}
                             for k in br]}


def _without(A: Pattern, links: np.ndarray) -> Pattern:
    """``A`` without the listed links (positions in CSR order of ``A``); the kept
    entries keep their order, so the result is canonical (one pass, no scipy)."""
    keep = np.ones(A.nnz, bool)
    keep[links] = False
    n = A.shape[0]
    rows = np.repeat(np.arange(n, dtype=np.int64), np.diff(A.indptr))
    indptr = np.zeros(n + 1, np.int64)
    np.cumsum(np.bincount(rows[keep], minlength=n), out=indptr[1:])
    return Pattern(A.data[keep], A.indices[keep], indptr, A.shape).frozen()


def _line_split(A: Pattern, line_of: np.ndarray, n_lines: int
                ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Out- and in-CSR (index arrays) of the graph in which every merged line is one
    vertex ``n + j``: its links ``t -> h`` become ``t -> n + j -> h``; other links stay.
    Losing the vertex is losing the line, and where every path ``t -> line -> h`` is a
    link of the graph (or ``t == h``) no reachability is added (:func:`_mergeable`)."""
    n = A.shape[0]
    N = n + n_lines
    tgt = np.repeat(np.arange(n, dtype=np.int64), np.diff(A.indptr))
    src = np.asarray(A.indices, np.int64)
    ln = line_of >= 0
    lid = n + line_of[ln]
    e_src = np.concatenate([src[~ln], src[ln], lid])
    e_dst = np.concatenate([tgt[~ln], lid, tgt[ln]])
    key = np.unique(e_src * N + e_dst)  # sorted by source, then target; no duplicates
    s_, d_ = key // N, key % N
    out_ptr = np.zeros(N + 1, np.int64)
    np.cumsum(np.bincount(s_, minlength=N), out=out_ptr[1:])
    o = np.argsort(d_ * N + s_, kind="stable")
    in_ptr = np.zeros(N + 1, np.int64)
    np.cumsum(np.bincount(d_, minlength=N), out=in_ptr[1:])
    return out_ptr, d_, in_ptr, s_[o]


def _mergeable(A: Pattern, groups: list[np.ndarray], tgt: np.ndarray) -> np.ndarray:
    """Per line: whether it can be one vertex of :func:`_line_split` — for every tail
    ``t`` and head ``h`` of its links, ``t == h`` or ``t -> h`` is a link. A single link
    and the two directions of a coupling always are; other lines (e.g. a second-order
    model's ``a:pos -> b:vel``, ``b:pos -> a:vel``) when the graph has ``a:pos -> a:vel``
    and ``b:pos -> b:vel``."""
    ok = np.ones(len(groups), bool)
    n = A.shape[0]
    keys = tgt * n + np.asarray(A.indices, np.int64)  # sorted (canonical CSR)
    for j, g in enumerate(groups):
        if g.size == 1:
            continue
        heads, tails = tgt[g], np.asarray(A.indices, np.int64)[g]
        if g.size == 2 and heads[0] == tails[1] and heads[1] == tails[0]:
            continue
        hh, tt = np.meshgrid(np.unique(heads), np.unique(tails), indexing="ij")
        want = (hh * n + tt)[hh != tt]
        at = np.searchsorted(keys, want)
        ok[j] = bool(np.all((at < keys.size) & (keys[np.minimum(at, keys.size - 1)] == want)))
    return ok


def audit_links(system: StructuredSystem, *, kind: str = "inputs") -> LineLosses:
    r"""Lose every line in turn: does the design stay controllable (observable)?

    Parameters
    ----------
    system : StructuredSystem
        Carries the design (inputs, or outputs for ``kind="sensors"``).
    kind : {"inputs", "sensors"}

    Notes
    -----
    Exact, by Lin's conditions [1]_ after each loss, without one recomputation per line:

    * generic rank of ``[A B]`` without the line's links, from one maximum matching of
      the whole (:func:`~netctl.structural.robustness._rematch.matching_sizes_after`:
      only the rows and columns the loss frees can end an augmenting path, so a few
      alternating searches per line, none when the matching uses none of its links);
    * the states no input reaches without the line: every line becomes one vertex of a
      graph with the same reachability (its links ``t -> h`` pass through it), and the
      states the loss cuts off are those the line's vertex dominates — one dominator
      tree (Cooper, Harvey & Kennedy [2]_) for all lines. A line whose merging could add
      a path (a tail and a head of it that no link joins) is searched alone instead.

    Near-linear in the number of links on the networks netctl serves (a chain of 10^6
    states, every line breaking its design, or a grid, none breaking it); the states a
    loss leaves unreached are listed when asked for (``unreached[k]``), never all
    stored (a chain's would take memory quadratic in its length).

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    .. [2] K. D. Cooper, T. J. Harvey, K. Kennedy, "A simple, fast dominance
       algorithm", Software Practice & Experience 4:1-10, 2001 (from memory).

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 1], [1, 0, 2], 3, inputs=[0])
    >>> ll = audit_links(s)
    >>> ll.labels, ll.breaking.tolist()
    (('x0 -- x1', 'x1 -> x2'), [True, True])
    """
    work = _work_system(system, kind)
    groups, labels = line_elements(system)
    # positions refer to system.edges() (sorted by target, then source): the CSR order
    # of A; for the dual the same links appear reversed, so map through (source, target)
    A, B = work.pattern("A"), work.pattern("B")  # stored arrays: no scipy needed
    if kind == "sensors":
        src, tgt = system.edges()
        order = np.lexsort((tgt, src))  # dual edges sorted by (dual target=src, source=tgt)
        pos_in_dual = np.empty(src.size, np.int64)
        pos_in_dual[order] = np.arange(src.size)
        groups = [pos_in_dual[g] for g in groups]
    n = A.shape[0]
    n_l = len(groups)
    zero = np.zeros(n_l, np.int64)
    # the whole design: one maximum matching of [A B], one dominator tree
    ab_ptr, ab_idx, n_ab = stack_AB(A, B)
    ab_ptr = np.ascontiguousarray(ab_ptr, np.int64)
    ab_idx = np.ascontiguousarray(ab_idx, np.int64)
    rm, cm = maximum_matching(ab_ptr, ab_idx, n_ab)
    tgt_a = np.repeat(np.arange(n, dtype=np.int64), np.diff(A.indptr))
    merged = _mergeable(A, groups, tgt_a)
    sizes = np.fromiter((g.size for g in groups), np.int64, n_l)
    pos_ptr = np.zeros(n_l + 1, np.int64)
    np.cumsum(sizes, out=pos_ptr[1:])
    pos = np.concatenate(groups).astype(np.int64) if n_l else np.zeros(0, np.int64)
    # the merged lines' links pass through their line's vertex; the others stay links
    line_of = np.full(A.nnz, -1, np.int64)
    owner = np.repeat(np.arange(n_l, dtype=np.int64), sizes)
    line_of[pos] = np.where(merged[owner], owner, -1)
    out_ptr, out_idx, in_ptr, in_idx = _line_split(A, line_of, n_l)
    driven = np.zeros(n + n_l, np.bool_)
    driven[:n] = np.diff(B.indptr) > 0
    _, pre, size = input_dominators(out_ptr, out_idx, in_ptr, in_idx, driven)
    before = bool(np.count_nonzero(rm >= 0) == n and np.all(pre[:n] >= 0))
    breaking = np.zeros(n_l, bool)
    rank_lost = np.zeros(n_l, bool)
    if not before or n_l == 0:
        return LineLosses(kind=kind, works=before, labels=tuple(labels), breaking=breaking,
                          rank_lost=rank_lost,
                          unreached=_LostStates(n_l, n, np.zeros(0, np.int64), zero, zero,
                                                zero, {}),
                          state_names=system.state_names, model=system.model)
    # rank: the line's entries inside [A B] (A's columns come first in every row)
    nb_row = np.diff(B.indptr)
    shift = np.repeat(np.concatenate([[0], np.cumsum(nb_row)[:-1]]), np.diff(A.indptr))
    a_in_ab = np.arange(A.nnz, dtype=np.int64) + shift
    none_ptr = np.zeros(n_l + 1, np.int64)
    none = np.zeros(0, np.int64)
    after = matching_sizes_after(ab_ptr, ab_idx, n_ab, rm, cm, pos_ptr, a_in_ab[pos],
                                 none_ptr, none, none_ptr, none)
    rank_lost = np.asarray(after) < n
    # reach: the states each line's vertex dominates (the preorder range of its subtree)
    reached = pre >= 0
    order = np.empty(int(np.count_nonzero(reached)), np.int64)
    order[pre[reached]] = np.flatnonzero(reached)
    in_states = np.zeros(order.size + 1, np.int64)
    np.cumsum(order < n, out=in_states[1:])
    lo = np.where(pre[n:n + n_l] >= 0, pre[n:n + n_l], 0)
    hi = lo + np.where(pre[n:n + n_l] >= 0, size[n:n + n_l], 0)
    count = in_states[hi] - in_states[lo]
    extra: dict[int, np.ndarray] = {}
    for j in np.flatnonzero(~merged).tolist():  # searched alone
        extra[j] = is_controlling(_without(A, groups[j]), B).unreached
        count[j] = extra[j].size
    breaking = rank_lost | (count > 0)
    return LineLosses(kind=kind, works=before, labels=tuple(labels), breaking=breaking,
                      rank_lost=rank_lost,
                      unreached=_LostStates(n_l, n, order, lo, hi, count, extra),
                      state_names=system.state_names, model=system.model)
