"""Physical elements of a network: the things an engineer takes out of service.

A *link* of the state graph is a modelling artefact; an *element* is what fails or is
switched: a line (both directions of its coupling), one circuit of a parallel pair, a
transformer, a bus (all of its states), a generator (its actuator). The readers of grid
files (:mod:`netctl.io.grid`) fill an :class:`ElementTable`; analyses map an element to
the links, states and inputs it removes under the system's model
(:func:`netctl.structural.robustness.elements.element_effects`).

This module is the lowest layer (numpy only) so that every analysis can use it.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.errors import UnknownNameError

__all__ = ["ELEMENT_KINDS", "BRANCH_KINDS", "Element", "ElementTable"]

#: Kinds of element, in the order reports group them.
ELEMENT_KINDS: tuple[str, ...] = ("line", "transformer", "impedance", "switch", "bus",
                                  "generator")
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
    """

    node_names: tuple[str, ...]
    ids: tuple[str, ...]
    kinds: tuple[str, ...]
    end_a: np.ndarray
    end_b: np.ndarray
    params: Mapping[str, np.ndarray] = field(default_factory=dict)
    _pos: dict[str, int] = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self) -> None:
        k = len(self.ids)
        if not (len(self.kinds) == self.end_a.size == self.end_b.size == k):
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
        a, b = int(self.end_a[k]), int(self.end_b[k])
        nodes = (self.node_names[a],) + ((self.node_names[b],) if b >= 0 else ())
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
        (1 for a lone branch, 0 for buses and generators)."""
        out = np.zeros(len(self), np.int64)
        br = np.flatnonzero(self.end_b >= 0)
        if br.size == 0:
            return out
        n = max(len(self.node_names), 1)
        key = np.minimum(self.end_a[br], self.end_b[br]) * n + np.maximum(self.end_a[br],
                                                                         self.end_b[br])
        _, inv, cnt = np.unique(key, return_inverse=True, return_counts=True)
        out[br] = cnt[inv]
        return out

    @classmethod
    def build(cls, node_names: Sequence[str], rows: Sequence[tuple[str, str, int, int]],
              params: Mapping[str, Sequence[float]] | None = None) -> ElementTable:
        """From rows ``(id, kind, end_a, end_b)``."""
        ids = tuple(r[0] for r in rows)
        kinds = tuple(r[1] for r in rows)
        a = np.array([r[2] for r in rows], np.int64)
        b = np.array([r[3] for r in rows], np.int64)
        p = {k: np.asarray(v, float) for k, v in (params or {}).items()}
        return cls(node_names=tuple(node_names), ids=ids, kinds=kinds, end_a=a, end_b=b,
                   params=p)
