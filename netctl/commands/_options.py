"""Command-line options shared by every verb of ``netctl``, and what they mean at run time.

One place defines each option a verb may take (its name, meaning and default: ``add_*``
and :func:`common_parser`), the vocabulary of the text summaries (:func:`terms`,
:func:`caution`), the guard of the files the options name (:func:`guard_files`), how long
steps are run and shown (``--quiet``, ``--executor``: :func:`sample_runner`,
:func:`long_step`) and :class:`UsageError`. Reading the system and the name lists lives in
:mod:`netctl.commands._load`, printing and writing the result in
:mod:`netctl.commands._emit`. Verb modules import from these three, never from
:mod:`netctl.cli` (which only builds the parser and dispatches).

Everything at module level is light (argparse and the standard library): the readers,
models and analyses are imported inside the functions, so that ``netctl --help`` and the
parsing of one verb's options load nothing a verb does not need.
"""

from __future__ import annotations

import argparse
import os
from collections.abc import Iterator, Sequence
from contextlib import AbstractContextManager, contextmanager
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from netctl._meta import CAUTION
from netctl.errors import NetctlError

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = [
    "CAUTION", "NUMERIC_INPUTS_DEFAULT", "RESEARCH_CAUTION", "TERMS", "Terms",
    "UsageError", "add_terms", "caution", "terms", "add_candidates", "add_common", "add_executor_options",
    "add_format",
    "add_inputs", "add_json", "add_model", "add_out", "add_outputs", "add_quiet", "add_reading",
    "add_samples", "add_seed", "add_sites", "add_weights", "common_parser",
    "progress_enabled",
    "sample_runner", "EXECUTOR_MIN_STATES", "long_step", "analysis_step", "read_step",
    "numeric_progress", "DENSE_FLOPS_PER_SECOND",
    "guard_files",
    "INPUT_OPTIONS", "OUTPUT_OPTIONS",
]


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
        """``"12 states"`` / ``"12 nodes"``, ``"1 state"`` (or ``what`` in place of the
        noun)."""
        return f"{n} {what or (self.state if n == 1 else self.states)}"


def links_text(n: int) -> str:
    """``"1 link"``, ``"12 links"``."""
    return f"{n} link" if n == 1 else f"{n} links"


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


def terms(args: argparse.Namespace) -> Terms:
    """The vocabulary of this run: ``--terms``, else the file's ``[system] terms``
    (recorded by :func:`~netctl.commands._load.load_system`), else ``engineering``."""
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


def link_progress(args: argparse.Namespace, system: StructuredSystem, label: str) -> Any:
    """``progress(stage, done, total)`` (:func:`netctl.report.progress.stage_progress`)
    for an analysis linear in the links of ``system`` when it is expected to take
    :data:`PROGRESS_MIN_SECONDS` or more, stderr is a terminal and ``--quiet`` is off;
    else ``None``."""
    if (system.n_links / LINKS_PER_SECOND < PROGRESS_MIN_SECONDS
            or progress_enabled(args) is False):
        return None
    from netctl.report.progress import stage_progress

    return stage_progress(label)


def analysis_step(args: argparse.Namespace, system: StructuredSystem,
                  text: str) -> AbstractContextManager[None]:
    """:func:`long_step` for an analysis linear in the links of ``system``."""
    return long_step(args, text, system.n_links / LINKS_PER_SECOND)


def read_step(args: argparse.Namespace, path: str) -> AbstractContextManager[None]:
    """:func:`long_step` for reading the file ``path`` (by its size)."""
    try:
        size = os.path.getsize(path)
    except (OSError, TypeError, ValueError):
        size = 0
    return long_step(args, f"reading {path}", size / READ_BYTES_PER_SECOND)
