"""A grid's states and inputs in a planner's words, for the text summaries of the verbs.

Planners speak of buses and quantities (``bus 12 frequency``, ``bus 12 angle``; ``bus 12``
in the first-order model), never of the model's state names (``12:vel``). A system with an
element table (a grid read from a case file, or a system description with ``[elements]``)
is worded so; every other system keeps its names, so that its text is unchanged. JSON
always keeps the state names and adds each one's bus (:meth:`Wording.buses`).
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = ["Wording", "wording"]

#: words of a second-order model's two states (as :func:`netctl.structural.branches.state_labels`)
_PART_WORDS = {"pos": "angle", "vel": "frequency"}
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
        self._system = system
        #: a second-order grid: inputs act on frequencies only (README, grid section)
        self.swing = (system.elements is not None and "part" in system.nodes
                      and system.model.startswith("second-order"))
        # built on first use, one name at a time: a verb names few of a large grid's states
        self._said: dict[str, str | None] = {}
        self._where: dict[str, int] | None = None
        self._bus_names: set[str] | None = None

    def _state(self, name: str) -> int:
        """Index of state ``name``, -1 when it is none."""
        if self._where is None:
            names = self._system.state_names
            self._where = dict(zip(names, range(len(names))))
        return self._where.get(name, -1)

    def _bus_of(self, i: int) -> str | None:
        """The bus of state ``i`` (the node table's ``node`` column, else its own name),
        ``None`` when the element table has no such bus (as ``state_buses``)."""
        s = self._system
        if self._bus_names is None:
            assert s.elements is not None
            self._bus_names = set(s.elements.node_names)
        node = s.nodes.get("node")
        bus = str(node[i]) if node is not None else s.state_names[i]
        return bus if bus in self._bus_names else None

    def _words_of(self, name: str) -> str | None:
        """The words for a state or dedicated-input name; ``None``: it has none."""
        if name in self._said:
            return self._said[name]
        said: str | None = None
        i = self._state(name)
        if i >= 0:
            bus = self._bus_of(i)
            if bus is not None:
                part = self._system.nodes.get("part")
                word = _PART_WORDS.get(str(part[i])) if part is not None else None
                said = f"bus {bus}" + (f" {word}" if word else "")
        elif name.startswith("u:"):
            state = self._words_of(name[2:])
            said = None if state is None else f"input at {state}"
        self._said[name] = said
        return said

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
        if not self.grid:
            return name
        said = self._words_of(name)
        return name if said is None else said

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
            if ":" not in core:
                return token
            said = self._words_of(core)
            return token if said is None else said + token[len(core):]

        return _TOKEN.sub(one, line)

    def words(self, names: Iterable[Any]) -> list[str]:
        """The words for several names, in order."""
        return [self(x) for x in names]

    def of(self, indices: Iterable[Any]) -> list[str]:
        """The words for state indices of the system this wording was made for."""
        names = self._system.state_names
        return [self(names[int(i)]) for i in indices]

    def buses(self, names: Iterable[Any]) -> dict[str, str | None]:
        """JSON: state name -> its bus (``None``: a state of no bus), for those of the
        given names that are states (input names are left out); empty for a system
        without elements."""
        if not self.grid:
            return {}
        out: dict[str, str | None] = {}
        for x in names:
            i = self._state(str(x))
            if i >= 0:
                out[str(x)] = self._bus_of(i)
        return out


def wording(system: StructuredSystem) -> Wording:
    """The planner's words for ``system`` (see :class:`Wording`)."""
    return Wording(system)
