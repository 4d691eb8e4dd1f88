"""Typed records that readers return and analyses take: site data, candidate actuators
(sensors), link changes, and ties between subsystems.

They sit beside :mod:`netctl.system`, below both the readers (:mod:`netctl.io`) and the
analyses (:mod:`netctl.structural`), so that neither of those imports the other: a reader
builds a record from a file, an analysis builds one from the node table, and both hand
the same record on.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a candidate actuator is one column of
``B`` (a candidate sensor one row of ``C``).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.sparse as sp

from netctl.errors import OptionError

__all__ = [
    "Candidates",
    "LinkChange",
    "SITE_KINDS",
    "Sites",
    "TIE_KINDS",
    "Tie",
    "check_site_kind",
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
