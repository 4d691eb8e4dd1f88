"""A grid's states and inputs in a planner's words, for the text summaries of the verbs.

Planners speak of buses and quantities (``bus 12 frequency``, ``bus 12 angle``; ``bus 12``
in the first-order model), never of the model's state names (``12:vel``). A system with an
element table (a grid read from a case file, or a system description with ``[elements]``)
is worded so; every other system keeps its names, so that its text is unchanged. JSON
always keeps the state names and adds each one's bus (:meth:`Wording.buses`).
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Sequence
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = ["Wording", "wording"]

_TOKEN = re.compile(r"[^\s,{}()\[\];'\"]+")


class Wording:
    """Name -> planner's words (a callable); the identity for a system without elements.

    A dedicated input named ``u:STATE`` (what ``--inputs`` creates) reads ``input at``
    the words of its state.

    References
    ----------
    .. [1] None: wording (common practice, no source).
    """

    def __init__(self, system: StructuredSystem) -> None:
        self.grid = system.elements is not None
        self._state_names: Sequence[str] = system.state_names
        #: a second-order grid: inputs act on frequencies only (README, grid section)
        self.swing = (system.elements is not None and "part" in system.nodes
                      and system.model.startswith("second-order"))
        self._said: dict[str, str] = {}
        self._bus: dict[str, str | None] = {}
        if not self.grid:
            return
        from netctl.structural.branches import state_buses, state_labels

        names = system.state_names
        table = system.elements
        assert table is not None
        labels = state_labels(system, range(system.n_states))
        self._said = dict(zip(names, labels))
        at = state_buses(system).tolist()
        self._bus = {name: (table.node_names[b] if b >= 0 else None)
                     for name, b in zip(names, at)}
        for name in system.input_names:
            state = name[2:] if name.startswith("u:") else None
            if state is not None and state in self._said and self._said[state] != state:
                self._said[name] = f"input at {self._said[state]}"

    def reasons(self, kind: str = "controllability") -> dict[str, Any]:
        """Keywords of ``ControllabilityReport.reasons`` for this system: the planner's
        words on a grid, and on a second-order grid an unreached component's input goes
        on a frequency (never an angle); nothing (the default text) otherwise."""
        if not self.grid:
            return {}
        out: dict[str, Any] = {"word": self}
        if self.swing and kind == "controllability":
            out["site"] = "the frequency of any one of its buses"
        return out

    def causes(self, kind: str = "controllability") -> dict[str, Any]:
        """Keywords of ``ControllabilityReport.causes``, as :meth:`reasons`."""
        out = self.reasons(kind)
        if "site" in out:
            out["site"] = "the frequency of any bus of each"
        return out

    def __call__(self, name: Any) -> str:
        """The words for one state (or input) name; the name itself when it has none."""
        name = str(name)
        return self._said.get(name, name)

    def text(self, line: str) -> str:
        """A line an analysis wrote with state names, in the planner's words.

        Only names with a colon are replaced (a second-order grid's ``12:vel``, an
        input's ``u:12:vel``): a first-order grid's states are bare bus numbers, which
        cannot be told apart from counts in free text, so they stay as written. A name is
        a whole token (between spaces, commas, brackets, quotes, semicolons), a trailing
        ``:`` or ``.`` aside.
        """
        if not self.grid or ":" not in line:
            return line

        def one(m: re.Match[str]) -> str:
            token = m.group(0)
            core = token.rstrip(":.")
            said = self._said.get(core)
            return token if said is None or ":" not in core else said + token[len(core):]

        return _TOKEN.sub(one, line)

    def words(self, names: Iterable[Any]) -> list[str]:
        """The words for several names, in order."""
        return [self(x) for x in names]

    def of(self, indices: Iterable[Any]) -> list[str]:
        """The words for state indices of the system this wording was made for."""
        return [self(self._state_names[int(i)]) for i in indices]

    def buses(self, names: Iterable[Any]) -> dict[str, str | None]:
        """JSON: state name -> its bus (``None``: a state of no bus), for those of the
        given names that are states (input names are left out); empty for a system
        without elements."""
        if not self.grid:
            return {}
        return {str(x): self._bus[str(x)] for x in names if str(x) in self._bus}


def wording(system: StructuredSystem) -> Wording:
    """The planner's words for ``system`` (see :class:`Wording`)."""
    return Wording(system)
