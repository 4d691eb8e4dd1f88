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
from netctl.structural.failures._core import is_controlling
from netctl.structural.failures.audit import _work_system
from netctl.structural.robustness.contingency import contingency_sweep
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


@dataclass(frozen=True)
class LineLosses:
    """Effect of losing each line on a design (see :func:`audit_links`)."""

    kind: str
    works: bool
    labels: tuple[str, ...]
    breaking: np.ndarray  # bool per line
    rank_lost: np.ndarray  # bool per line
    unreached: tuple[np.ndarray, ...] = field(repr=False)  # states lost per line
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
        lost = self.unreached[k]
        if lost.size:
            verb = "seen by no sensor" if self.kind == "sensors" else "reached by no actuator"
            names = [self.state_names[int(i)] for i in lost[:8]]
            out.append(f"{lost.size} state(s) {verb}: {', '.join(names)}"
                       + (f", ... ({lost.size - 8} more)" if lost.size > 8 else ""))
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


def audit_links(system: StructuredSystem, *, kind: str = "inputs") -> LineLosses:
    r"""Lose every line in turn: does the design stay controllable (observable)?

    Parameters
    ----------
    system : StructuredSystem
        Carries the design (inputs, or outputs for ``kind="sensors"``).
    kind : {"inputs", "sensors"}

    Notes
    -----
    Single links first, from :func:`~netctl.structural.robustness.contingency_sweep`
    (one matching, dominators; near-linear): a line of one link is settled there, and a
    line breaks the design if one of its links does. A line of several links none of which breaks the design alone is then
    rechecked with all its links removed (Lin's test [1]_: one matching and one search,
    ``O(E sqrt V)`` per such line) -- jointly the links can still leave a dilation.

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.

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
    src, tgt = system.edges()
    if kind == "sensors":
        # position in the dual's CSR order of the reversed link tgt -> src
        At = A
        order = np.lexsort((tgt, src))  # dual edges sorted by (dual target=src, source=tgt)
        pos_in_dual = np.empty(src.size, np.int64)
        pos_in_dual[order] = np.arange(src.size)
        groups = [pos_in_dual[g] for g in groups]
        A = At
    sweep = contingency_sweep(work, elements="links")
    before = bool(sweep.controllable_before)
    n_l = len(groups)
    breaking = np.zeros(n_l, bool)
    rank_lost = np.zeros(n_l, bool)
    lost: list[np.ndarray] = []
    out = None
    for j, g in enumerate(groups):
        single = ~sweep.controllable_after[g]
        if not before:
            lost.append(np.zeros(0, np.int64))
            continue
        if single.any() and g.size == 1:  # the sweep already knows (no recomputation)
            p = int(g[0])
            breaking[j] = True
            rank_lost[j] = bool(sweep.rank_lost[p])
            lost.append(sweep.cut_off_states(p))
        elif single.any() or g.size > 1:
            chk = is_controlling(_without(A, g), B)
            breaking[j] = not chk.ok
            rank_lost[j] = chk.rank < chk.n
            lost.append(chk.unreached)
        else:
            lost.append(np.zeros(0, np.int64))
    del out
    return LineLosses(kind=kind, works=before, labels=tuple(labels), breaking=breaking,
                      rank_lost=rank_lost, unreached=tuple(lost),
                      state_names=system.state_names, model=system.model)
