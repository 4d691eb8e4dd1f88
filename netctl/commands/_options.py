"""Command-line options and helpers shared by every verb of ``netctl``.

One place defines each option a verb may take (its name, meaning and default), and the
helpers every handler uses: :func:`load_system`, :func:`parse_names`, :func:`emit`,
:func:`names_line`, :data:`CAUTION`, :func:`terms` (the vocabulary of the text summaries)
and :class:`UsageError`. Verb modules import from
here, never from :mod:`netctl.cli` (which only builds the parser and dispatches).

Everything at module level is light (argparse and the standard library): the readers,
models and analyses are imported inside the functions, so that ``netctl --help`` and the
parsing of one verb's options load nothing a verb does not need.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Callable, Iterator, Sequence
from contextlib import AbstractContextManager, contextmanager
from dataclasses import dataclass
from typing import IO, TYPE_CHECKING, Any

from netctl._meta import CAUTION
from netctl.errors import NetctlError

if TYPE_CHECKING:
    import numpy as np

    from netctl.system import StructuredSystem

__all__ = [
    "CAUTION", "NUMERIC_INPUTS_DEFAULT", "RESEARCH_CAUTION", "SHOWN", "TERMS", "Terms",
    "UsageError", "add_terms", "caution", "terms", "add_candidates", "add_common", "add_executor_options",
    "add_format",
    "add_inputs", "add_json", "add_model", "add_out", "add_outputs", "add_quiet", "add_reading",
    "add_samples", "add_seed", "add_sites", "add_weights", "common_parser",
    "disturbance_summary", "emit",
    "load_system", "names_line", "parse_names", "progress_enabled", "resolve_weights",
    "sample_runner", "EXECUTOR_MIN_STATES", "long_step", "analysis_step",
    "numeric_progress", "DENSE_FLOPS_PER_SECOND",
    "safe_write", "system_with_inputs", "terminal_safe", "guard_files",
    "INPUT_OPTIONS", "OUTPUT_OPTIONS",
]

_GRID_CAUTION = ("results concern a linearized model of the grid, not operating decisions, "
                 "which stay with the system operator's procedures and applicable codes")

#: names listed in a text summary before "... (N more; --json lists all)"
SHOWN = 30

_NAMES_HELP = "'a,b,c' or a file, one name a line"

#: ``--inputs`` default of the numeric verbs (verify, energy, modes)
NUMERIC_INPUTS_DEFAULT = "the file's inputs, else a minimum dedicated input set"


class UsageError(NetctlError):
    """Bad command-line usage that argparse cannot see (exit status 2).

    A :class:`~netctl.errors.NetctlError`, so that it is caught the same way however the
    command was started (``python -m netctl.cli`` holds a second copy of the CLI module)."""


# ---------------------------------------------------------------------- vocabulary
#: The caution of a network study (no plant is analysed): what the numbers mean.
RESEARCH_CAUTION = ("Note: structural results hold for almost all link weights of a linear "
                    "model of the network; constrained weights (symmetric, identical links) "
                    "or nonlinear dynamics can change them.")


@dataclass(frozen=True)
class Terms:
    """The words a text summary uses; JSON keys never change with them.

    ``engineering`` speaks of a plant's states, inputs and sensors; ``network`` of a
    network study's nodes and driver nodes, with N_D and n_D = N_D / N as in Liu,
    Slotine & Barabási, Nature 473:167-173 (2011).
    """

    name: str
    state: str            # one state / node
    states: str           # states / nodes
    inputs: str           # "minimum inputs" / "driver nodes N_D"
    sensors: str          # "minimum sensors" / "sensor nodes"
    driven: str           # "driven states" / "driver nodes"
    fraction: str         # "fraction of the states" / "n_D"
    unmatched: str        # the count n - |M*|

    def of(self, n: int, what: str | None = None) -> str:
        """``"12 states"`` / ``"12 nodes"`` (or ``what`` in place of the noun)."""
        return f"{n} {what or self.states}"


#: vocabulary name -> its words (closed set; ``--terms`` and ``[system] terms``)
TERMS: dict[str, Terms] = {
    "engineering": Terms(name="engineering", state="state", states="states",
                         inputs="minimum inputs", sensors="minimum sensors",
                         driven="driven states", fraction="fraction of the states",
                         unmatched="unmatched states"),
    "network": Terms(name="network", state="node", states="nodes",
                     inputs="driver nodes N_D", sensors="sensor nodes (observability)",
                     driven="driver nodes", fraction="n_D =",
                     unmatched="unmatched nodes"),
}


# ---------------------------------------------------------------------- options
def add_format(p: Any, *, help: str = "file format (default: from the file name)") -> None:
    """``--format``: one of :data:`netctl.io.FORMATS` (default: from the file name)."""
    from netctl.io import FORMATS

    p.add_argument("--format", choices=sorted(FORMATS), default=None, help=help)


def add_model(p: Any, *, help: str = (
        "how a plain network becomes a state-space pattern (default: the model a system "
        "description records; second-order (swing) for power-grid files; first-order "
        "otherwise; self-loops adds self-dynamics to every state)")) -> None:
    """``--model``: one of :data:`netctl.models.MODELS` (default: the file's own, see
    :func:`netctl.models.resolve_model`)."""
    from netctl.models import MODELS

    p.add_argument("--model", choices=list(MODELS), default=None, help=help)


def add_json(p: Any, *, help: str = "print the full result as JSON") -> None:
    """``--json``: print the full result as JSON instead of the summary."""
    p.add_argument("--json", action="store_true", help=help)


def add_out(p: Any, *, required: bool = False, help: str = (
        "also write the full result as JSON to FILE (atomically)")) -> None:
    """``--out FILE``: write the full result (atomically)."""
    p.add_argument("--out", metavar="FILE", default=None, required=required, help=help)


def add_quiet(p: Any) -> None:
    """``--quiet``: no progress on stderr (progress is shown only on a terminal anyway)."""
    p.add_argument("--quiet", action="store_true",
                   help="show no progress on stderr (default: progress for long steps when "
                        "stderr is a terminal)")


def add_reading(p: Any) -> None:
    """``--orientation`` (matrix files) and ``--undirected`` (edge lists): how a file's
    links are read (see :data:`netctl.io.ORIENTATIONS`)."""
    p.add_argument("--orientation", choices=["column-to-row", "row-to-column"], default=None,
                   help="matrix files (.mtx, .npy, .npz, matrix CSV): column-to-row = entry "
                        "(i, j) is the link j -> i (default, the control convention A[i, j]); "
                        "row-to-column = entry (i, j) is the link i -> j (graph libraries' "
                        "adjacency matrices)")
    p.add_argument("--undirected", action="store_true",
                   help="edge lists: every line is a link both ways")


def add_terms(p: Any) -> None:
    """``--terms``: the words of the text summary (:data:`TERMS`)."""
    p.add_argument("--terms", choices=list(TERMS), default=None,
                   help="words of the summary: engineering = states, inputs, plant cautions; "
                        "network = nodes, driver nodes N_D, n_D, a research note (default: "
                        "the system description's [system] terms, else engineering; JSON "
                        "keys are the same either way)")


def add_common(p: argparse.ArgumentParser) -> None:
    """FILE, ``--format``, ``--model``, ``--orientation``, ``--undirected``, ``--json``,
    ``--out``, ``--quiet``."""
    p.add_argument("file", metavar="FILE", help="network or system file "
                   "(edge list, Matrix Market, ...; see docs/FORMATS.md)")
    add_format(p)
    add_model(p)
    add_reading(p)
    add_json(p)
    add_out(p)
    add_quiet(p)


def common_parser(parser_class: type[argparse.ArgumentParser] = argparse.ArgumentParser
                  ) -> argparse.ArgumentParser:
    """The parent parser of every verb that reads one network file (:func:`add_common`)."""
    common = parser_class(add_help=False)
    add_common(common)
    return common


def add_inputs(p: Any, *, default: str | None = "the inputs the file declares",
               what: str = "states with a dedicated input") -> None:
    """``--inputs NAMES|FILE``: the states that carry a dedicated input (a design)."""
    p.add_argument("--inputs", metavar="NAMES|FILE", default=None,
                   help=f"{what}: {_NAMES_HELP}" + (f" (default: {default})" if default else ""))


def add_outputs(p: Any, *, default: str | None = "the outputs the file declares",
                what: str = "states with a dedicated sensor") -> None:
    """``--outputs NAMES|FILE``: the states that carry a dedicated sensor."""
    p.add_argument("--outputs", metavar="NAMES|FILE", default=None,
                   help=f"{what}: {_NAMES_HELP}" + (f" (default: {default})" if default else ""))


def add_sites(p: Any) -> None:
    """``--sites FILE``: eligible states and their costs."""
    p.add_argument("--sites", metavar="FILE", default=None,
                   help="CSV 'state,cost' with a header: the states that may host one and "
                        "their costs (a state not listed cannot). Default: the node table, "
                        "else every state at cost 1")


def add_candidates(p: Any) -> None:
    """``--candidates FILE``: candidate actuators (sensors) acting on several states."""
    p.add_argument("--candidates", metavar="FILE", default=None,
                   help="CSV 'name,cost,states' with a header: candidate actuators (sensors) "
                        "acting on (reading) several states, e.g. 'valve_2,3.5,t1 t2'")


def add_weights(p: Any, *, default: str | None) -> None:
    """``--weights``: which numbers a numeric check uses
    (:data:`netctl.numeric.realize.PARAMETERIZATIONS`)."""
    from netctl.numeric.realize import PARAMETERIZATIONS

    p.add_argument("--weights", choices=list(PARAMETERIZATIONS), default=default,
                   help="which numbers to use: " + "; ".join(
                       f"{k} = {v}" for k, v in PARAMETERIZATIONS.items())
                   + (f" (default: {default})" if default else
                      " (default: given when the file has weights)"))


def add_seed(p: Any, *, default: int | None = 0,
             help: str = "random seed (default 0)") -> None:
    """``--seed N``: the random seed (a whole number)."""
    p.add_argument("--seed", type=int, default=default, metavar="N", help=help)


def add_samples(p: Any, *, default: int, help: str, metavar: str = "K") -> None:
    """``--samples K``: how many samples (sampled weights, null-model draws, losses)."""
    p.add_argument("--samples", type=int, default=default, metavar=metavar, help=help)


def add_executor_options(p: argparse.ArgumentParser) -> None:
    """``--executor``, ``--workers``, ``--scheduler``: what runs many independent tasks."""
    from netctl.ensemble.executor import EXECUTORS

    p.add_argument("--executor", choices=list(EXECUTORS), default="local",
                   help="what runs the independent tasks: local processes (default), serial, "
                        "or dask (a running scheduler with --scheduler, else a local cluster)")
    p.add_argument("--workers", type=int, default=None, metavar="W",
                   help="worker processes (default: the CPUs available; dask local cluster: 2)")
    p.add_argument("--scheduler", default=None, metavar="ADDRESS",
                   help="Dask scheduler address, e.g. tcp://10.0.0.5:8786 (with --executor dask)")


# ---------------------------------------------------------------------- helpers
def load_system(args: argparse.Namespace) -> StructuredSystem:
    """Read ``args.file`` and apply ``args.model``.

    When the file declares disturbances, they are noted on ``args`` so that :func:`emit`
    reports them separately in every verb's output (they are never states, never driven
    and never sensed). How a matrix file (or an undirected edge list) was read is
    recorded in ``args.file_convention``, which :func:`emit` prints and adds to the JSON.
    """
    from netctl.io import detect_format, file_convention, read
    from netctl.models import resolve_model

    orientation = getattr(args, "orientation", None)
    undirected = bool(getattr(args, "undirected", False))
    try:
        size = os.path.getsize(args.file)
    except (OSError, TypeError, ValueError):
        size = 0
    with long_step(args, f"reading {args.file}", size / READ_BYTES_PER_SECOND):
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


def _grid_text(grid: dict[str, Any]) -> str:
    """``  grid: 7 buses, 8 branches (7 lines, 1 transformer), 2 generators; ...``."""
    from netctl.records import BRANCH_KINDS, kinds_text

    kinds = grid["elements"]
    nbr = sum(c for k, c in kinds.items() if k in BRANCH_KINDS)
    parts = kinds_text({k: c for k, c in kinds.items() if k in BRANCH_KINDS})
    ngen = kinds.get("generator", 0)
    per = ("2 states a bus: angle (pos) and frequency (vel)"
           if grid["model"] == "second-order" else "1 state a bus")
    text = (f"  grid: {grid['buses']} buses, {nbr} branches ({parts}), {ngen} generating "
            f"unit(s); model {grid['model']} ({per})")
    sw = grid.get("swing")
    if sw is not None:
        d = sw["defaults"]
        text += (f"\n  swing parameters: inertia M = 2H from the case at "
                 f"{sw['inertia_from_case']} of {sw['buses']} buses, damping D at "
                 f"{sw['damping_from_case']}; elsewhere the defaults M = {d['inertia']:g} s, "
                 f"D = {d['damping']:g} per unit (generator columns inertia_s, damping_pu; "
                 "README, grid section)")
    return text


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


def _disturbance_text(info: dict[str, Any]) -> str:
    parts = [f"{w} -> {', '.join(on[:4])}{', ...' if len(on) > 4 else ''}"
             for w, on in list(info["disturbances"].items())[:SHOWN]]
    more = info["n_disturbances"] - len(parts)
    return (f"  disturbances ({info['n_disturbances']}; not states, never driven or sensed): "
            + "; ".join(parts) + (f"; ... ({more} more; --json lists all)" if more > 0 else ""))


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


def emit(args: argparse.Namespace, result: dict[str, Any] | Callable[[], dict[str, Any]],
         text: str) -> None:
    """Print ``text`` (or the JSON with ``--json``) and write ``--out`` atomically.

    ``result`` may be a callable returning the dictionary, so that the full JSON of a
    very large result is only built when ``--json`` or ``--out`` asks for it.
    """
    want_out = bool(getattr(args, "out", None))
    info = getattr(args, "_disturbances", None)
    if info is not None and text:
        head, _, rest = text.partition("\n")
        said = getattr(args, "_said", None)
        line = _disturbance_text(info)
        text = (head + "\n" + (said.text(line) if said is not None else line)
                + ("\n" + rest if rest else ""))
    convention = getattr(args, "file_convention", None)
    if convention:
        text = text.rstrip("\n") + f"\n  ({convention})"
    grid = getattr(args, "_grid", None)
    if grid is not None and text:
        head, _, rest = text.partition("\n")
        text = head + "\n" + _grid_text(grid) + ("\n" + rest if rest else "")
        text = text.rstrip("\n") + "\n  Grid: " + _GRID_CAUTION + "."
    if args.json or want_out:
        data = result() if callable(result) else result
        if info is not None and isinstance(data, dict):
            data = {**data, "disturbances": info}
        if convention and isinstance(data, dict):
            data = {**data, "file_convention": convention}
        if grid is not None and isinstance(data, dict):
            data = {**data, "grid": {**grid, "caution": _GRID_CAUTION}}
        from netctl.commands._json import encode, tagged

        # indented for a person at a terminal (or a small --out file), else compact
        pretty = _isatty(sys.stdout) if args.json else True
        payload = encode(tagged(data, getattr(args, "command", None)), pretty=pretty)
        if want_out:
            from netctl.io import atomic_write

            with atomic_write(args.out) as fh:
                fh.write(payload)
    if want_out and str(args.out) == "-":
        return  # "--out -": the JSON went to standard output, alone
    sys.stdout.write(payload if args.json else terminal_safe(text.rstrip("\n")) + "\n")


#: argument names (argparse ``dest``) whose values name files a verb reads ...
INPUT_OPTIONS = ("file", "more", "ties", "inputs", "outputs", "sites", "candidates",
                 "targets", "add_links", "remove_links", "remove_nodes")
#: ... and writes. A new option naming a file belongs in one of the two.
OUTPUT_OPTIONS = ("out", "csv", "attack_csv", "plot", "output")


def _paths(args: argparse.Namespace, names: Sequence[str]) -> list[str]:
    out: list[str] = []
    for name in names:
        value = getattr(args, name, None)
        if isinstance(value, str):
            out.append(value)
        elif isinstance(value, (list, tuple)):
            out.extend(v for v in value if isinstance(v, str))
    return out


@contextmanager
def guard_files(args: argparse.Namespace) -> Iterator[None]:
    """Refuse an output that is an input before any work, then run the block in a
    :func:`netctl.io._common.guarded_run`: every file read (a system description's side
    files included) is protected from being written over."""
    import os

    from netctl.io._common import check_outputs, guarded_run

    inputs = _paths(args, INPUT_OPTIONS)
    check_outputs(_paths(args, OUTPUT_OPTIONS), inputs)
    with guarded_run(p for p in inputs if os.path.isfile(p)):
        yield


def terminal_safe(text: str) -> str:
    r"""``text`` with control, escape and bidirectional-override characters (and lone
    surrogates) shown as Python escapes, so that a name in a file never drives the
    terminal.

    Examples
    --------
    >>> terminal_safe("pump\x1b[31m")
    'pump\\x1b[31m'
    """
    return "".join(c if c.isprintable() or c == "\n" else ascii(c)[1:-1] for c in text)


def _isatty(stream: Any) -> bool:
    isatty = getattr(stream, "isatty", None)
    try:
        return bool(isatty and isatty())
    except ValueError:  # a closed stream
        return False


def system_with_inputs(args: argparse.Namespace) -> tuple[StructuredSystem, str]:
    """The system with ``--inputs`` (or the file's, or a minimum dedicated set) and a note
    saying which."""
    from netctl.structural import minimum_inputs

    system = load_system(args)
    if args.inputs is not None:
        return system.with_inputs(system.names_of(parse_names(system, args.inputs))), "inputs: --inputs"
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


def names_line(names: Sequence[str], limit: int = SHOWN, total: int | None = None) -> str:
    """At most ``limit`` names, then how many more (``total`` when only a prefix of the
    names was built).

    Examples
    --------
    >>> names_line(["a", "b", "c"], limit=2)
    'a, b, ... (1 more; --json lists all)'
    """
    total = len(names) if total is None else total
    shown = list(names[:limit])
    if total <= limit:
        return ", ".join(shown)
    return ", ".join(shown) + f", ... ({total - limit} more; --json lists all)"


def terms(args: argparse.Namespace) -> Terms:
    """The vocabulary of this run: ``--terms``, else the file's ``[system] terms``
    (recorded by :func:`load_system`), else ``engineering``."""
    name = (getattr(args, "terms", None) or getattr(args, "_declared_terms", "")
            or "engineering")
    return TERMS[name]


def caution(args: argparse.Namespace, *, engineering: bool = True) -> str | None:
    """The caution line of a summary: the plant caution (:data:`CAUTION`) with
    engineering terms or whenever a plant or grid is analysed, else the research note
    (:data:`RESEARCH_CAUTION`). ``engineering=False`` (a verb whose engineering summary
    carries no caution): ``None`` in engineering terms.
    """
    if terms(args).name == "engineering":
        return CAUTION if engineering else None
    return CAUTION if getattr(args, "_plant", False) else RESEARCH_CAUTION


def progress_enabled(args: argparse.Namespace) -> bool | None:
    """``False`` with ``--quiet``; else ``None`` (progress shows when stderr is a
    terminal)."""
    return False if getattr(args, "quiet", False) else None


@contextmanager
def safe_write(path: str) -> Iterator[IO[str]]:
    """:func:`netctl.io.atomic_write`, with write failures reported as usage errors."""
    from netctl.io import atomic_write

    try:
        with atomic_write(path) as fh:
            yield fh
    except OSError as exc:
        raise UsageError(f"cannot write {path}: {exc.strerror or exc}; check that the "
                         "directory exists and is writable.") from None


#: States from which numeric samples run on the executor (local processes by default):
#: below, a sample takes milliseconds and starting workers would cost more (common
#: practice, no source; dense rank tests at 10^3 states take about a second each).
EXECUTOR_MIN_STATES = 1000


def sample_runner(args: argparse.Namespace, n_states: int, label: str, *,
                  what: str = "samples", min_states: int | None = None) -> Any:
    """A ``runner(task, items, shared)`` for independent numeric tasks (samples,
    candidate Gramians): the shared executor (``--executor``, ``--workers``,
    ``--scheduler``) with progress on stderr (silent off a terminal and with
    ``--quiet``); ``None`` (run in this process) below ``min_states`` (default
    :data:`EXECUTOR_MIN_STATES`) on the default local executor."""
    executor = getattr(args, "executor", "local")
    floor = EXECUTOR_MIN_STATES if min_states is None else min_states
    if executor == "local" and n_states < floor:
        return None

    def run(task: Any, items: list[Any], shared: Any) -> list[Any]:
        from netctl.ensemble.executor import run_tasks
        from netctl.report.progress import count_progress

        return run_tasks(task, items, shared=shared, executor=executor,
                         workers=getattr(args, "workers", None),
                         scheduler=getattr(args, "scheduler", None),
                         progress=count_progress(
                             f"{label}: {what}",
                             enabled=False if getattr(args, "quiet", False) else None))

    return run


#: Rough speeds of this machine kind (2 cores, 2026; common practice, no source), used only
#: to decide whether a step is long enough (2 s) to show progress on a terminal.
READ_BYTES_PER_SECOND = 50e6
LINKS_PER_SECOND = 2e6
#: A step expected to take at least this long shows progress (issue 15).
PROGRESS_MIN_SECONDS = 2.0


@contextmanager
def long_step(args: argparse.Namespace, text: str, expected_seconds: float) -> Iterator[None]:
    """Announce ``text`` and its duration on stderr when the step is expected to take
    :data:`PROGRESS_MIN_SECONDS` or more, stderr is a terminal and ``--quiet`` is off."""
    if expected_seconds < PROGRESS_MIN_SECONDS or progress_enabled(args) is False:
        yield
        return
    from netctl.report.progress import Progress

    with Progress(1).step(text):
        yield


#: Dense floating-point speed assumed to judge whether a numeric step is long (2 cores,
#: 2026; our choice, no source): an O(n^3) step costs about 10 n^3 flops.
DENSE_FLOPS_PER_SECOND = 2e9


def numeric_progress(args: argparse.Namespace, label: str, n_states: int,
                     dense_steps: float = 1.0) -> Any:
    """``progress(stage, done, total)`` for a numeric analysis (:func:`netctl.report.
    progress.stage_progress`) when its ``dense_steps`` O(n^3) steps are expected to take
    :data:`PROGRESS_MIN_SECONDS` or more, stderr is a terminal and ``--quiet`` is off;
    else ``None``."""
    seconds = dense_steps * 10.0 * float(n_states) ** 3 / DENSE_FLOPS_PER_SECOND
    if seconds < PROGRESS_MIN_SECONDS or progress_enabled(args) is False:
        return None
    from netctl.report.progress import stage_progress

    return stage_progress(label)


def analysis_step(args: argparse.Namespace, system: StructuredSystem,
                  text: str) -> AbstractContextManager[None]:
    """:func:`long_step` for an analysis linear in the links of ``system``."""
    return long_step(args, text, system.n_links / LINKS_PER_SECOND)
