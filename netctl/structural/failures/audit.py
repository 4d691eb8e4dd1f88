"""Which actuators (sensors) of a design are single points of failure: :func:`audit_design`.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``; ``B[i, k] != 0``: input ``k`` acts on
state ``i``; sensors are the inputs of the dual system (see :mod:`netctl`).
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl._csr import Pattern, take, transpose_pattern
from netctl.errors import OptionError
from netctl.graph.dm import alternating_reach_rows
from netctl.graph.matching import maximum_matching
from netctl.structural.failures._core import (
    DesignFacts,
    design_facts,
    is_controlling,
    rank_after,
    source_components,
)
from netctl.system import StructuredSystem

if TYPE_CHECKING:
    import scipy.sparse as sp


__all__ = ["ELEMENT_CLASSES", "KINDS", "DesignAudit", "audit_design"]

#: Classes in code order. ``critical``: its loss alone breaks the design; ``useful``: in
#: some minimal working subset of the design but replaceable; ``useless``: in no minimal
#: working subset; ``replaceable``: not critical, the useful/useless test was not
#: completed within ``max_trials``; ``n/a``: the intact design does not work.
ELEMENT_CLASSES: tuple[str, ...] = ("critical", "useful", "useless", "replaceable", "n/a")
#: What is audited.
KINDS: tuple[str, ...] = ("inputs", "sensors")

_SHOWN = 8


def _short(names: Sequence[str], total: int | None = None) -> str:
    total = len(names) if total is None else total
    head = ", ".join(names[:_SHOWN])
    return head + (f", ... ({total - _SHOWN} more)" if total > _SHOWN else "")


@dataclass(frozen=True)
class DesignAudit:
    """Every actuator (sensor) of a design classified by what its loss does.

    Attributes
    ----------
    kind : {"inputs", "sensors"}
    works : bool
        The intact design is structurally controllable (observable).
    element_names : tuple of str
        Input (output) names, in column (row) order.
    element_states : tuple of ndarray
        States each element acts on (reads), sorted.
    cls : ndarray of int8
        Class code per element, index into :data:`ELEMENT_CLASSES`.
    rank_lost : ndarray of bool
        Losing the element leaves a dilation (generic rank of ``[A B]`` below ``n``).
    cut_off : ndarray of int
        States that no other element reaches (sees).
    unreached, rank : what fails in the intact design (states; generic rank).
    """

    kind: str
    n_states: int
    works: bool
    rank: int
    unreached: np.ndarray
    element_names: tuple[str, ...]
    element_states: tuple[np.ndarray, ...] = field(repr=False)
    cls: np.ndarray = field(repr=False)
    rank_lost: np.ndarray = field(repr=False)
    cut_off: np.ndarray = field(repr=False)
    state_names: Sequence[str] = field(repr=False)
    model: str = "given"
    _facts: DesignFacts | None = field(default=None, repr=False)

    #: At most this many single points of failure explained in :meth:`to_dict`.
    MAX_EXPLAINED = 200

    @property
    def n_elements(self) -> int:
        return len(self.element_names)

    def of_class(self, name: str) -> np.ndarray:
        """Sorted element positions of one class (a name of :data:`ELEMENT_CLASSES`)."""
        if name not in ELEMENT_CLASSES:
            raise OptionError(f"unknown class {name!r}; choose one of "
                              f"{', '.join(map(repr, ELEMENT_CLASSES))}.")
        return np.flatnonzero(self.cls == ELEMENT_CLASSES.index(name))

    @property
    def critical(self) -> np.ndarray:
        """Positions of the single points of failure (sorted)."""
        return self.of_class("critical")

    @property
    def secure(self) -> bool:
        """The design works and survives the loss of any one element."""
        return self.works and self.critical.size == 0 and self.n_elements > 0

    def lost_states(self, k: int) -> np.ndarray:
        """States the loss of element ``k`` leaves unreached (unseen), sorted."""
        if self._facts is None or not self.cut_off[k]:
            return np.zeros(0, np.int64)
        return self._facts.cut_states(k)

    def reasons(self, k: int) -> list[str]:
        """Why losing element ``k`` breaks the design, in words (empty if it does not)."""
        names = self.state_names
        word = "sensor" if self.kind == "sensors" else "actuator"
        verb = "seen by" if self.kind == "sensors" else "reached by"
        out = []
        if self.cut_off[k]:
            lost = self.lost_states(k)
            out.append(f"{lost.size} state(s) would be {verb} no other {word}: "
                       + _short([names[int(i)] for i in lost[:_SHOWN]], lost.size))
        if self.rank_lost[k] and self._facts is not None:
            riv = self._facts.rivals(k)
            mat = "[A; C]" if self.kind == "sensors" else "[A B]"
            out.append(f"dilation: the generic rank of {mat} would fall to "
                       f"{self.n_states - 1} of {self.n_states}; the state(s) "
                       + _short([names[int(i)] for i in riv[:_SHOWN]], riv.size)
                       + f" would share too few {'readers' if self.kind == 'sensors' else 'feeders'}"
                       f" (a new {word} at any one of them restores the rank)")
        return out

    def intact_reasons(self) -> list[str]:
        """Why the intact design does not work (empty when it does)."""
        out = []
        if self.rank < self.n_states:
            out.append(f"dilation: generic rank {self.rank} of {self.n_states}")
        if self.unreached.size:
            verb = "seen by no sensor" if self.kind == "sensors" else "reached by no actuator"
            out.append(f"{self.unreached.size} state(s) {verb}: " + _short(
                [self.state_names[int(i)] for i in self.unreached[:_SHOWN]],
                self.unreached.size))
        return out

    def counts(self) -> dict[str, int]:
        return {c: int(np.count_nonzero(self.cls == i)) for i, c in enumerate(ELEMENT_CLASSES)}

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        names = self.state_names
        crit = self.critical
        return {
            "analysis": "design_audit",
            "kind": self.kind,
            "model": self.model,
            "n_states": self.n_states,
            "n_elements": self.n_elements,
            "works": self.works,
            "secure": self.secure,
            "intact_reasons": self.intact_reasons(),
            "counts": self.counts(),
            "elements": [{"name": self.element_names[k],
                          "states": [names[int(i)] for i in self.element_states[k]],
                          "class": ELEMENT_CLASSES[int(self.cls[k])],
                          "rank_lost": bool(self.rank_lost[k]),
                          "cut_off": int(self.cut_off[k])} for k in range(self.n_elements)],
            "single_points_of_failure": [
                {"name": self.element_names[int(k)], "reasons": self.reasons(int(k))}
                for k in crit[: self.MAX_EXPLAINED]],
        }


def _work_system(system: StructuredSystem, kind: str) -> StructuredSystem:
    if kind not in KINDS:
        raise OptionError(f"kind must be one of {', '.join(map(repr, KINDS))}, found {kind!r}.")
    return system.dual() if kind == "sensors" else system


def audit_design(system: StructuredSystem, *, kind: str = "inputs",
                 max_trials: int = 64, classify: bool = True) -> DesignAudit:
    r"""Classify every actuator (sensor) of the design carried by ``system``.

    Parameters
    ----------
    system : StructuredSystem
        Its input columns (``kind="inputs"``) or output rows (``kind="sensors"``) are
        the design; each column (row) is one element that fails as a whole.
    kind : {"inputs", "sensors"}
    max_trials : int, default 64
        Largest number of rank tests spent per non-critical element on deciding
        useful / useless; beyond it the element is reported as ``replaceable``.
    classify : bool, default True
        Tell useful from useless. ``False`` finds the single points of failure only
        (near-linear; every other element is ``replaceable``), as maps of large
        networks need.

    Returns
    -------
    DesignAudit

    Notes
    -----
    Classes after Commault, Dion & Trinh [1]_ (sensors; the actuator case is its dual):
    *critical* -- the design fails without it; *useless* -- it belongs to no minimal
    working subset of the design (removing it from any working subset keeps it
    working); *useful* -- the others.

    Critical elements come from one maximum matching of ``[A B]`` and one dominator
    tree (Lin's theorem [2]_): losing column ``k`` lowers the generic rank iff every
    maximum matching covers it (no alternating path from an unmatched column reaches
    it), and cuts off exactly the states ``k`` dominates in the flow graph
    root -> inputs -> states (Cooper, Harvey & Kennedy's iteration). Near-linear.

    Working subsets are those spanning the matroid ``M`` of input columns over the
    columns of ``A`` (term rank, a gammoid) *and* touching every source component of
    ``A``. A non-critical element ``s`` lies in a minimal working subset iff (a) for
    some source component ``C`` it touches, the design without the other elements
    touching ``C`` still works, or (b) some set ``R`` of other elements touching every
    source component ``s`` misses has ``s`` outside its closure in ``M`` (then a
    hyperplane through ``R`` avoiding ``s``, plus ``s``, is a working set in which
    ``s`` is indispensable; conversely a minimal working set gives such ``R``). Loops
    of ``M`` (elements no maximum matching of ``A`` can use) are in every closure and
    settle their components. (b) is decided by trying choices of ``R``, at most
    ``max_trials``; this part is exponential in the worst case, hence the bound.

    References
    ----------
    .. [1] C. Commault, J.-M. Dion, D. H. Trinh, "Observability preservation under
       sensor failure", IEEE TAC 53(6):1554-1559, 2008.
       doi:10.1109/TAC.2008.927793 (DOI from memory)
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.

    Examples
    --------
    A path ``a -> b -> c`` with actuators at ``a`` and at ``b``: ``a`` is critical
    (nothing else reaches it), ``b`` is useless.

    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], 3, state_names="abc",
    ...                                 inputs=[0, 1])
    >>> au = audit_design(s)
    >>> [ELEMENT_CLASSES[c] for c in au.cls]
    ['critical', 'useless']
    """
    if isinstance(max_trials, bool) or not isinstance(max_trials, (int, np.integer)) \
            or max_trials < 1:
        raise OptionError(f"max_trials must be an integer >= 1, found {max_trials!r}.")
    work = _work_system(system, kind)
    A, B = work.pattern("A"), work.pattern("B")  # stored arrays: no scipy needed
    n, m = work.n_states, work.n_inputs
    facts = design_facts(A, B)
    elem_states = _column_states(B)
    cls = np.full(m, ELEMENT_CLASSES.index("n/a"), np.int8)
    if facts.controllable and m:
        critical = facts.rank_lost | (facts.cut_off > 0)
        cls[critical] = 0
        rest = np.flatnonzero(~critical)
        if rest.size and classify:
            cls[rest] = _classify(A, B, rest, max_trials)
        elif rest.size:
            cls[rest] = ELEMENT_CLASSES.index("replaceable")
    return DesignAudit(kind=kind, n_states=n, works=facts.controllable, rank=facts.rank,
                       unreached=facts.unreached, element_names=tuple(work.input_names),
                       element_states=elem_states, cls=cls, rank_lost=facts.rank_lost,
                       cut_off=facts.cut_off, state_names=system.state_names,
                       model=system.model, _facts=facts)


def _column_states(B: sp.csr_array | Pattern) -> tuple[np.ndarray, ...]:
    """The sorted states of each column of a canonical CSR ``B`` (its transpose's rows)."""
    P = B if isinstance(B, Pattern) else Pattern(
        np.asarray(B.data, np.float64), np.asarray(B.indices, np.int64),
        np.asarray(B.indptr, np.int64), (int(B.shape[0]), int(B.shape[1])))
    Bc = transpose_pattern(P)
    return tuple(np.asarray(Bc.indices[Bc.indptr[k]:Bc.indptr[k + 1]], np.int64)
                 for k in range(B.shape[1]))


def _classify(A: Pattern, B: Pattern, rest: np.ndarray, max_trials: int
              ) -> np.ndarray:
    """Useful (1), useless (2) or undecided (3) for the non-critical columns ``rest``."""
    n, m = B.shape
    cptr, members = source_components(A)
    comp_of = np.full(n, -1, np.int64)
    comp_of[members] = np.repeat(np.arange(cptr.size - 1), np.diff(cptr))
    cols = _column_states(B)
    touches = [set(comp_of[c][comp_of[c] >= 0].tolist()) for c in cols]
    users: dict[int, list[int]] = {}
    for k, t in enumerate(touches):
        for c in t:
            users.setdefault(c, []).append(k)
    # loops of the matroid: columns touching no row some maximum matching of A leaves free
    rm, cm = maximum_matching(np.ascontiguousarray(A.indptr, np.int64),
                              np.ascontiguousarray(A.indices, np.int64), n)
    rows_free, _ = alternating_reach_rows(A.indptr, A.indices, n, cm)
    loop = np.array([not rows_free[c].any() for c in cols], bool)
    rank_A = int(np.count_nonzero(rm >= 0))
    out = np.empty(rest.size, np.int8)
    for j, s in enumerate(rest.tolist()):
        out[j] = _one(A, B, s, touches, users, loop, rank_A, max_trials)
    return out


def _one(A: Pattern, B: Pattern, s: int, touches: list[set[int]],
         users: dict[int, list[int]], loop: np.ndarray, rank_A: int, max_trials: int) -> int:
    m = B.shape[1]
    budget = max_trials
    # (a) s alone serves one of its source components in a working subset
    for c in sorted(touches[s]):
        drop = set(users[c]) - {s}
        keep = np.array([k for k in range(m) if k not in drop], np.int64)
        if is_controlling(A, take(B, None, keep)).ok:
            return 1
        budget -= 1
        if budget <= 0:
            return 3
    # (b) a set R covering the components s misses, with s outside its closure
    if loop[s]:
        return 2
    need = []
    for c in sorted(users):
        if c in touches[s]:
            continue
        opts = [k for k in users[c] if k != s]
        if any(loop[k] for k in opts):
            continue  # loops lie in every closure: the component is covered for free
        need.append(opts)
    if not need:
        return 1  # s is no loop: any hyperplane avoiding it works
    total = 1
    for o in need:
        total *= len(o)
    seen: set[frozenset[int]] = set()
    for choice in itertools.product(*need):
        R = frozenset(choice)
        if R in seen:
            continue
        seen.add(R)
        if budget <= 0:
            return 3
        budget -= 1
        cols = np.array(sorted(R), np.int64)
        base = rank_after(A, take(B, None, cols))
        if rank_after(A, take(B, None, np.append(cols, s))) > base:
            return 1
    return 2
