"""Typed records that readers return and analyses take: site data, candidate actuators
(sensors), link changes, and ties between subsystems.

Also the physical elements of a grid (:class:`Element`, :class:`ElementTable`): what an
engineer takes out of service (a line with both directions of its coupling, one circuit of
a parallel pair, a transformer, a bus with all its states, a generator's actuator), as
opposed to a link of the state graph, which is a modelling artefact.

They sit beside :mod:`netctl.system`, below both the readers (:mod:`netctl.io`) and the
analyses (:mod:`netctl.structural`), so that neither of those imports the other: a reader
builds a record from a file, an analysis builds one from the node table, and both hand
the same record on.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a candidate actuator is one column of
``B`` (a candidate sensor one row of ``C``).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl.errors import OptionError, UnknownNameError

if TYPE_CHECKING:
    import scipy.sparse as sp

__all__ = [
    "BRANCH_KINDS",
    "Candidates",
    "ELEMENT_KINDS",
    "Element",
    "ElementTable",
    "LinkChange",
    "SITE_KINDS",
    "Sites",
    "TIE_KINDS",
    "Tie",
    "check_site_kind",
    "kinds_text",
]

#: What a site may host.
SITE_KINDS: tuple[str, ...] = ("actuator", "sensor")


def check_site_kind(kind: str) -> None:
    """Raise :class:`~netctl.errors.OptionError` unless ``kind`` is one of :data:`SITE_KINDS`."""
    if kind not in SITE_KINDS:
        raise OptionError(f"kind must be one of {', '.join(map(repr, SITE_KINDS))}, "
                          f"found {kind!r}.")


@dataclass(frozen=True)
class Sites:
    """Where actuators (or sensors) may go and what each costs.

    Attributes
    ----------
    kind : {"actuator", "sensor"}
    eligible : ndarray of bool, shape (n,)
        Whether each state may host one.
    cost : ndarray of float, shape (n,)
        Cost of a site; ``inf`` where the state is not eligible ("no site, infinite cost").
    state_names : tuple of str
    source : str
        Where the data came from (a file name, ``"node table"`` or ``"default"``).
    """

    kind: str
    eligible: np.ndarray
    cost: np.ndarray
    state_names: tuple[str, ...] = field(repr=False)
    source: str = "default"

    @property
    def n_eligible(self) -> int:
        return int(np.count_nonzero(self.eligible))

    def to_dict(self) -> dict[str, Any]:
        idx = np.flatnonzero(self.eligible)
        return {"kind": self.kind, "source": self.source, "n_eligible": int(idx.size),
                "sites": {self.state_names[int(i)]: float(self.cost[i]) for i in idx}}

    @classmethod
    def from_arrays(cls, kind: str, eligible: Any, cost: Any, state_names: Sequence[str],
                    source: str) -> Sites:
        """Read-only site data; the cost of a state that is not eligible becomes ``inf``."""
        eligible = np.asarray(eligible, bool).copy()
        cost = np.where(eligible, np.asarray(cost, np.float64), np.inf)
        eligible.setflags(write=False)
        cost.setflags(write=False)
        return cls(kind=kind, eligible=eligible, cost=cost, state_names=tuple(state_names),
                   source=source)


@dataclass(frozen=True)
class Candidates:
    """Candidate actuators (sensors): each one column of ``B`` (row of ``C``) with a cost.

    Attributes
    ----------
    names : tuple of str
    indptr, indices : ndarray of int64
        CSR of the ``K x n`` incidence: candidate ``k`` acts on (reads) the states
        ``indices[indptr[k]:indptr[k+1]]`` (sorted, unique).
    cost : ndarray of float, shape (K,)
    dedicated : bool
        Each candidate is one eligible site (a unit column).
    """

    names: tuple[str, ...]
    indptr: np.ndarray
    indices: np.ndarray
    cost: np.ndarray
    dedicated: bool = False

    @property
    def n_candidates(self) -> int:
        return len(self.names)

    def states_of(self, k: int) -> np.ndarray:
        return self.indices[self.indptr[k]:self.indptr[k + 1]]

    def matrix(self, chosen: np.ndarray, n: int) -> sp.csr_array:
        """The ``n x len(chosen)`` input matrix of the chosen candidates."""
        import scipy.sparse as sp

        cols = [self.states_of(int(k)) for k in chosen]
        rows = np.concatenate(cols) if cols else np.zeros(0, np.int64)
        cidx = np.repeat(np.arange(len(cols)), [c.size for c in cols])
        return sp.csr_array((np.ones(rows.size), (rows, cidx)), shape=(n, len(cols)))

    @classmethod
    def from_lists(cls, names: Sequence[str], states: Sequence[Any],
                   cost: Sequence[float], *, dedicated: bool = False) -> Candidates:
        cols = [np.unique(np.asarray(s, np.int64)) for s in states]
        indptr = np.zeros(len(cols) + 1, np.int64)
        np.cumsum([c.size for c in cols], out=indptr[1:])
        indices = np.concatenate(cols) if cols else np.zeros(0, np.int64)
        return cls(names=tuple(str(x) for x in names), indptr=indptr, indices=indices,
                   cost=np.asarray(cost, np.float64), dedicated=dedicated)


@dataclass(frozen=True)
class LinkChange:
    """One link to add or remove: ``source -> target`` (``source`` influences ``target``).

    Attributes
    ----------
    source, target : str
        State names as written (they are checked against a system by the caller: a link
        to add may bring new states, a link to remove must exist).
    line : int or None
        1-based line in the file it was read from; ``None`` when given inline.
    origin : str
        The file it was read from, or the option that gave it inline.
    """

    source: str
    target: str
    line: int | None = None
    origin: str = ""

    @property
    def pair(self) -> tuple[str, str]:
        """``(source, target)``."""
        return (self.source, self.target)


#: Kinds of tie: ``state`` (state -> state link) or ``signal`` (output -> input).
TIE_KINDS: tuple[str, ...] = ("state", "signal")


@dataclass(frozen=True)
class Tie:
    """One tie from ``from_system.from_name`` to ``to_system.to_name``.

    ``kind="state"``: both names are states. ``kind="signal"``: ``from_name`` is an
    output of ``from_system`` and ``to_name`` an input of ``to_system``.
    """

    from_system: str
    from_name: str
    to_system: str
    to_name: str
    kind: str = "state"

    def label(self) -> str:
        """``"S.a -> T.b"`` for a state tie, ``"S.y => T.u"`` for a signal tie."""
        arrow = "->" if self.kind == "state" else "=>"
        return f"{self.from_system}.{self.from_name} {arrow} {self.to_system}.{self.to_name}"


#: Kinds of element, in the order reports group them.
ELEMENT_KINDS: tuple[str, ...] = ("line", "transformer", "impedance", "switch", "bus",
                                  "generator")
def kinds_text(counts: Mapping[str, int]) -> str:
    """``"4 lines, 1 transformer, 4 buses"`` from counts by kind (zero counts left out)."""
    return ", ".join(f"{c} {k}{('es' if k[-1] in 'sh' else 's') if c != 1 else ''}"
                     for k, c in counts.items() if c)


#: Kinds that join two buses.
BRANCH_KINDS: tuple[str, ...] = ("line", "transformer", "impedance", "switch")


@dataclass(frozen=True)
class Element:
    """One element: its ID as the case names it, its kind, and the nodes it touches.

    Attributes
    ----------
    id : str
        Unique ID, e.g. ``"line 12"``, ``"trafo 3"``, ``"branch 17"``, ``"bus 4"``,
        ``"gen 2"`` (the case's own numbering).
    kind : str
        One of :data:`ELEMENT_KINDS`.
    nodes : tuple of str
        The buses (network nodes) it touches: two ends for a branch, one for a bus or a
        generator.
    """

    id: str
    kind: str
    nodes: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        return {"id": self.id, "kind": self.kind, "buses": list(self.nodes)}


@dataclass(frozen=True)
class ElementTable:
    """The elements of a network, column-wise (fast on 10^4 branches).

    Attributes
    ----------
    node_names : tuple of str
        Network nodes (buses), in order; ``end_a`` and ``end_b`` index into it.
    ids : tuple of str
        Element IDs, unique.
    kinds : tuple of str
        One of :data:`ELEMENT_KINDS` each.
    end_a, end_b : ndarray of int64
        Node positions of the two ends (``end_b`` is -1 for a bus or a generator).
    params : mapping of str to ndarray
        Per-element numbers (e.g. ``x_pu``, the series reactance in per unit).
    end_c : ndarray of int64
        The third bus of a three-winding transformer (one element joining three buses:
        its outage removes all three couplings), -1 for every other element.
    """

    node_names: tuple[str, ...]
    ids: tuple[str, ...]
    kinds: tuple[str, ...]
    end_a: np.ndarray
    end_b: np.ndarray
    params: Mapping[str, np.ndarray] = field(default_factory=dict)
    end_c: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    _pos: dict[str, int] = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self) -> None:
        k = len(self.ids)
        if self.end_c.size == 0 and k:
            object.__setattr__(self, "end_c", np.full(k, -1, np.int64))
        if not (len(self.kinds) == self.end_a.size == self.end_b.size == self.end_c.size
                == k):
            raise ValueError("element table columns differ in length")
        bad = sorted(set(self.kinds) - set(ELEMENT_KINDS))
        if bad:
            raise ValueError(f"unknown element kinds {bad}; expected {ELEMENT_KINDS}")
        pos = {e: i for i, e in enumerate(self.ids)}
        if len(pos) != k:
            raise ValueError("element IDs must be unique")
        object.__setattr__(self, "_pos", pos)

    def __len__(self) -> int:
        return len(self.ids)

    def element(self, k: int) -> Element:
        """Element ``k`` as a record."""
        a, b, c = int(self.end_a[k]), int(self.end_b[k]), int(self.end_c[k])
        nodes = (self.node_names[a],) + ((self.node_names[b],) if b >= 0 else ()) + \
            ((self.node_names[c],) if c >= 0 else ())
        return Element(id=self.ids[k], kind=self.kinds[k], nodes=nodes)

    def position(self, element_id: str) -> int:
        """Position of an element by ID (``UnknownNameError`` listing a few IDs if absent)."""
        try:
            return self._pos[element_id]
        except KeyError:
            some = ", ".join(repr(x) for x in self.ids[:5])
            raise UnknownNameError(f"no element {element_id!r}; element IDs look like {some}"
                                   " ... (see `netctl inspect --json`).") from None

    def of_kind(self, kinds: Iterable[str]) -> np.ndarray:
        """Sorted positions of the elements of the given kinds."""
        want = set(kinds)
        return np.array([k for k, t in enumerate(self.kinds) if t in want], np.int64)

    def counts(self) -> dict[str, int]:
        """Number of elements of each kind present, in :data:`ELEMENT_KINDS` order."""
        out = {t: 0 for t in ELEMENT_KINDS}
        for t in self.kinds:
            out[t] += 1
        return {t: c for t, c in out.items() if c}

    def parallel_group(self) -> np.ndarray:
        """For each branch the number of in-table branches joining the same two buses
        (1 for a lone branch, 0 for buses and generators; the legs of a three-winding
        transformer count as branches, and it gets the smallest count of its legs)."""
        out = np.zeros(len(self), np.int64)
        br = np.flatnonzero(self.end_b >= 0)
        if br.size == 0:
            return out
        n = max(len(self.node_names), 1)
        three = br[self.end_c[br] >= 0]
        a = np.concatenate([self.end_a[br], self.end_a[three], self.end_b[three]])
        b = np.concatenate([self.end_b[br], self.end_c[three], self.end_c[three]])
        key = np.minimum(a, b) * n + np.maximum(a, b)
        _, inv, cnt = np.unique(key, return_inverse=True, return_counts=True)
        per = cnt[inv]
        out[br] = per[:br.size]
        if three.size:
            t = three.size
            out[three] = np.minimum(np.minimum(out[three], per[br.size:br.size + t]),
                                    per[br.size + t:])
        return out

    def legs(self, k: int) -> list[tuple[int, int]]:
        """The bus pairs element ``k`` couples: one for a branch, three for a
        three-winding transformer, none for a bus or a generator."""
        a, b, c = int(self.end_a[k]), int(self.end_b[k]), int(self.end_c[k])
        if b < 0:
            return []
        return [(a, b)] if c < 0 else [(a, b), (a, c), (b, c)]

    def pair_counts(self) -> dict[tuple[int, int], int]:
        """Number of elements coupling each bus pair ``(low, high)`` (parallel circuits,
        and the legs of three-winding transformers, count one each)."""
        out: dict[tuple[int, int], int] = {}
        for k in np.flatnonzero(self.end_b >= 0).tolist():
            for u, v in self.legs(k):
                key = (min(u, v), max(u, v))
                out[key] = out.get(key, 0) + 1
        return out

    @classmethod
    def build(cls, node_names: Sequence[str], rows: Sequence[tuple[Any, ...]],
              params: Mapping[str, Sequence[float]] | None = None) -> ElementTable:
        """From rows ``(id, kind, end_a, end_b)`` or ``(id, kind, end_a, end_b, end_c)``."""
        ids = tuple(r[0] for r in rows)
        kinds = tuple(r[1] for r in rows)
        a = np.array([r[2] for r in rows], np.int64)
        b = np.array([r[3] for r in rows], np.int64)
        c = np.array([r[4] if len(r) > 4 else -1 for r in rows], np.int64)
        p = {k: np.asarray(v, float) for k, v in (params or {}).items()}
        return cls(node_names=tuple(node_names), ids=ids, kinds=kinds, end_a=a, end_b=b,
                   params=p, end_c=c)
