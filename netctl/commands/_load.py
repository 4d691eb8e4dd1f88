"""The system a verb of ``netctl`` works on, and the name lists its options give.

:func:`load_system` reads ``FILE`` with ``--format``, ``--model``, ``--orientation`` and
``--undirected`` and notes on ``args`` what :func:`~netctl.commands._emit.emit` reports
(disturbances, how a matrix file was read, the grid); :func:`parse_names` turns
``--inputs``, ``--outputs`` and the like into state indices, naming the file and line of
a bad name; :func:`system_with_inputs` and :func:`resolve_weights` apply ``--inputs``
and ``--weights``.

Everything at module level is light (the standard library): the readers, models and
analyses are imported inside the functions, so that ``netctl --help`` loads nothing more.
"""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING, Any

from netctl.commands._options import UsageError, read_step

if TYPE_CHECKING:
    import numpy as np

    from netctl.system import StructuredSystem

__all__ = ["disturbance_summary", "load_system", "parse_names", "resolve_weights",
           "swing_parameters", "system_with_inputs"]


def load_system(args: argparse.Namespace) -> StructuredSystem:
    """Read ``args.file`` and apply ``args.model``.

    When the file declares disturbances, they are noted on ``args`` so that
    :func:`~netctl.commands._emit.emit` reports them separately in every verb's output
    (they are never states, never driven and never sensed). How a matrix file (or an
    undirected edge list) was read is recorded in ``args.file_convention``, which
    ``emit`` prints and adds to the JSON.
    """
    from netctl.io import detect_format, file_convention, read
    from netctl.models import resolve_model

    orientation = getattr(args, "orientation", None)
    undirected = bool(getattr(args, "undirected", False))
    with read_step(args, args.file):
        system = resolve_model(read(args.file, args.format, orientation=orientation,
                                    undirected=undirected), args.model)
    fmt = args.format or detect_format(args.file)
    args.file_convention = file_convention(fmt, orientation=orientation,
                                           undirected=undirected)
    if fmt == "system":
        from netctl.io import declared_terms

        args._declared_terms = declared_terms(args.file)
    # a plant or grid: a system description that does not declare itself a network
    # study, disturbances, or swing-type (second-order) grid dynamics
    args._plant = ((fmt == "system" and getattr(args, "_declared_terms", "") != "network")
                   or system.n_disturbances > 0 or args.model == "second-order")
    if system.n_disturbances:
        args._disturbances = disturbance_summary(system)
        if system.elements is not None:  # a grid: the states they act on, in bus words
            from netctl.commands._words import wording

            args._said = wording(system)
    if system.elements is not None:
        args._grid = {"buses": len(system.elements.node_names),
                      "elements": system.elements.counts(), "model": system.model}
        if system.model == "second-order":
            args._grid["swing"] = swing_parameters(system)
    return system


def swing_parameters(system: StructuredSystem) -> dict[str, Any]:
    """Where the swing model's inertia and damping came from: the number of buses with a
    value from the case (optional generator columns) and the defaults used elsewhere."""
    import numpy as np

    from netctl.models import SWING_DEFAULTS

    buses = len(system.elements.node_names) if system.elements is not None else 0
    per = max(system.n_states // max(buses, 1), 1)
    out: dict[str, Any] = {"defaults": dict(SWING_DEFAULTS),
                           "units": {"inertia": "M = 2H, seconds (H on the case's MVA "
                                                "base)", "damping": "D, per unit"}}
    for key in ("inertia", "damping"):
        col = system.nodes.get(key)
        given = 0
        if col is not None:
            v = np.asarray(col, float)
            ok = np.isfinite(v) & ((v > 0) if key == "inertia" else True)
            given = int(np.count_nonzero(ok)) // per
        out[f"{key}_from_case"] = given
    out["buses"] = buses
    return out


def disturbance_summary(system: StructuredSystem) -> dict[str, Any]:
    """JSON-ready description of a system's disturbances and regulated outputs."""
    H = system.pattern("H")
    return {"n_disturbances": system.n_disturbances,
            "disturbances": {w: system.disturbed_by(j)
                             for j, w in enumerate(system.disturbance_names)},
            "regulated": {z: system.names_of(H.indices[H.indptr[r]:H.indptr[r + 1]])
                          for r, z in enumerate(system.regulated_names)},
            "note": "disturbances are exogenous (weather, feeds, utilities): not states, "
                    "never driven or sensed, not counted in minimum inputs or sensors"}


def parse_names(system: StructuredSystem, value: str, *, what: str = "--inputs",
                whole_bus: bool = False) -> np.ndarray:
    """State indices from a comma-separated list or a file with one name a line.

    In a second-order model a plain node (bus) name means the node: its velocity
    (frequency) state for an input, its position (angle) state for a sensor, and both of
    its states with ``whole_bus`` (a removal). In a grid, an input named on an angle
    state and the removal of half a bus are refused.
    """
    from netctl.errors import NetctlError, UnknownNameError
    from netctl.io import read_state_list

    names = read_state_list(value)
    if not names:
        from pathlib import Path

        if Path(value).is_file():
            raise UsageError(f"{value}: {what}: the file names no state; list one state "
                             "name a line (or several separated by commas).")
        raise UsageError(f"{what} names no state; give comma-separated state names or a "
                         "file with one name a line.")
    if system.model == "second-order" or "part" in system.nodes:
        names = _node_names(system, names, what, whole_bus)
    try:
        idx = system.index_of(names)
    except NetctlError as exc:
        where = _name_line(system, value, what, whole_bus)
        if isinstance(exc, UnknownNameError) and system.elements is not None:
            raise UnknownNameError(f"{where}{what}: {exc} Grid states are bus numbers (or "
                                   "'BUS:pos' / 'BUS:vel' in the swing model).") from None
        raise type(exc)(f"{where}{what}: {exc}") from None
    if len(set(idx.tolist())) != len(idx):
        _refuse_repeat(system, value, what, idx)
    return idx


def _refuse_repeat(system: StructuredSystem, value: str, what: str, idx: np.ndarray) -> None:
    """A state named twice in a name list: refused naming it (and the file's lines)."""
    from pathlib import Path

    from netctl.io._cells import name_lines
    from netctl.io._common import read_text

    pos = idx.tolist()
    k = next(k for k in range(1, len(pos)) if pos[k] in pos[:k])
    first = pos.index(pos[k])
    state = system.state_names[pos[k]]
    where, also = "", ""
    if Path(value).is_file():
        lines = [line for _, line in name_lines(read_text(value), value)]
        if len(lines) == len(pos):  # one state a name (not a bus named for two states)
            where, also = f"{value}:{lines[k]}: ", f" (first on line {lines[first]})"
        else:
            where = f"{value}: "
    raise UsageError(f"{where}{what}: the state {state!r} is named twice{also}; name each "
                     "state once.")


def _name_line(system: StructuredSystem, value: str, what: str, whole_bus: bool) -> str:
    """``"FILE:LINE: "`` of the first name of a name-list file that is not a state (``""``
    for a list typed on the command line)."""
    from pathlib import Path

    from netctl.errors import NetctlError
    from netctl.io._cells import name_lines
    from netctl.io._common import read_text

    if not Path(value).is_file():
        return ""
    for name, line in name_lines(read_text(value), value):
        try:
            one = [name]
            if system.model == "second-order" or "part" in system.nodes:
                one = _node_names(system, one, what, whole_bus)
            system.index_of(one)
        except NetctlError:
            return f"{value}:{line}: "
    return f"{value}: "


def _node_names(system: StructuredSystem, names: list[str], what: str, whole_bus: bool
                ) -> list[str]:
    """Plain node names of a second-order model, mapped to its states (see parse_names)."""
    known = set(system.state_names)
    grid = system.elements is not None
    sensing = "output" in what or "sensor" in what
    out: list[str] = []
    for name in names:
        if name in known:
            base, _, part = name.rpartition(":")
            if grid and whole_bus and part in ("pos", "vel"):
                raise UsageError(f"{what}: {name!r} is half of bus {base!r}; a bus is removed "
                                 f"with both of its states: give {base!r}.")
            if grid and not sensing and not whole_bus and part == "pos":
                raise UsageError(f"{what}: {name!r} is the angle of bus {base!r}; power enters "
                                 "a bus's frequency (power balance), never its angle: give "
                                 f"{base!r} or {base + ':vel'!r}.")
            out.append(name)
        elif f"{name}:vel" in known and f"{name}:pos" in known:
            if whole_bus:
                out += [f"{name}:pos", f"{name}:vel"]
            else:
                out.append(f"{name}:pos" if sensing else f"{name}:vel")
        else:
            out.append(name)
    return out


def system_with_inputs(args: argparse.Namespace) -> tuple[StructuredSystem, str]:
    """The system with ``--inputs`` (or the file's, or a minimum dedicated set) and a note
    saying which."""
    from netctl.structural import minimum_inputs

    system = load_system(args)
    if args.inputs is not None:
        return system.with_inputs(parse_names(system, args.inputs)), "inputs: --inputs"
    if system.n_inputs:
        return system, "inputs: from the file"
    design = minimum_inputs(system, dedicated=True)
    return (design.apply(system),
            f"inputs: none given, so a minimum dedicated set ({design.drivers.size}) "
            "from the structural analysis")


def resolve_weights(args: argparse.Namespace, system: StructuredSystem) -> str:
    """``--weights``, or ``given`` for a weighted file; an option error otherwise."""
    from netctl.errors import OptionError
    from netctl.numeric.realize import PARAMETERIZATIONS

    if args.weights is not None:
        return str(args.weights)
    if system.weighted:
        return "given"
    raise OptionError(f"{args.file} carries no weights; choose which numbers to use with "
                      f"--weights ({', '.join(k for k in PARAMETERIZATIONS if k != 'given')}).")
