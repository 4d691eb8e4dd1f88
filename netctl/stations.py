"""Control stations of decentralized control: which inputs each station drives and which
measured outputs it reads.

A station's local feedback runs from each of its outputs to each of its inputs; one
station holding every input and output is centralized control.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from netctl._parts import _as_list
from netctl.errors import InvalidSystemError, UnknownNameError
from netctl.system import StructuredSystem

__all__ = ["Station", "check_stations", "make_stations"]


@dataclass(frozen=True)
class Station:
    """A control station of decentralized control: the inputs it drives and the measured
    outputs it reads (indices into the system's inputs and outputs, sorted, distinct).

    A station's local feedback runs from each of its outputs to each of its inputs; one
    station holding every input and output is centralized control. Build them from names
    with :func:`make_stations`, which checks them against a system.
    """

    name: str
    inputs: tuple[int, ...]
    outputs: tuple[int, ...]

    def __post_init__(self) -> None:
        object.__setattr__(self, "name", str(self.name))
        object.__setattr__(self, "inputs", tuple(sorted(int(i) for i in self.inputs)))
        object.__setattr__(self, "outputs", tuple(sorted(int(i) for i in self.outputs)))
        for part in ("inputs", "outputs"):
            vals = getattr(self, part)
            if len(set(vals)) != len(vals) or any(v < 0 for v in vals):
                raise InvalidSystemError(
                    f"station {self.name!r}: its {part} must be distinct indices >= 0, "
                    f"found {vals!r}.")

    def to_dict(self, system: StructuredSystem | None = None) -> dict[str, Any]:
        """JSON-ready: indices, plus names when ``system`` is given."""
        out: dict[str, Any] = {"name": self.name, "inputs": list(self.inputs),
                               "outputs": list(self.outputs)}
        if system is not None:
            out["input_names"] = system.names_of(self.inputs, kind="input")
            out["output_names"] = system.names_of(self.outputs, kind="output")
        return out


def make_stations(system: StructuredSystem,
                  groups: Mapping[str, Mapping[str, Iterable[object]]]) -> tuple[Station, ...]:
    """Stations from names: ``{station: {"inputs": [...], "outputs": [...]}}``.

    Raises
    ------
    UnknownNameError
        A station names an input or output the system does not have (the message names
        the station and the item).
    InvalidSystemError
        Two stations share an input or an output (stations must not overlap).
    """
    out = []
    for name, parts in groups.items():
        unknown = set(parts) - {"inputs", "outputs"}
        if unknown:
            raise InvalidSystemError(
                f"station {name!r}: unknown part {sorted(unknown)[0]!r}; a station lists "
                "'inputs' and 'outputs'.")
        idx: dict[str, list[int]] = {}
        for part, kind in (("inputs", "input"), ("outputs", "output")):
            idx[part] = []
            for item in _as_list(parts.get(part, ())):
                try:
                    idx[part].append(int(system.index_of([item], kind=kind)[0]))
                except UnknownNameError as exc:
                    raise UnknownNameError(f"station {name!r}: {exc}") from None
        out.append(Station(name, tuple(idx["inputs"]), tuple(idx["outputs"])))
    check_stations(system, out)
    return tuple(out)


def check_stations(system: StructuredSystem, stations: Sequence[Station]) -> None:
    """Check that ``stations`` fit ``system``: indices in range, distinct station names,
    no input or output held by two stations. Raises :class:`InvalidSystemError` naming
    the item and both stations."""
    seen_names: set[str] = set()
    owner: dict[tuple[str, int], str] = {}
    for st in stations:
        if st.name in seen_names:
            raise InvalidSystemError(f"the station name {st.name!r} is used twice.")
        seen_names.add(st.name)
        for part, kind, count in (("inputs", "input", system.n_inputs),
                                  ("outputs", "output", system.n_outputs)):
            for i in getattr(st, part):
                if i >= count:
                    raise InvalidSystemError(
                        f"station {st.name!r}: {kind} index {i} is out of range; the system "
                        f"has {count} {kind}s.")
                prev = owner.setdefault((kind, i), st.name)
                if prev != st.name:
                    raise InvalidSystemError(
                        f"stations {prev!r} and {st.name!r} overlap: both hold the {kind} "
                        f"{system.names_of([i], kind=kind)[0]!r}; each input and output "
                        "belongs to at most one station.")
