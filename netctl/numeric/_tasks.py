"""How numeric analyses hand out independent work and report progress (no printing here).

The numeric layer sits below the executor (:mod:`netctl.ensemble.executor`) and the
command line, so it imports neither: the caller passes a *runner* (which may send tasks
to local processes or a Dask cluster) and a *progress* callback (which may print on a
terminal). Both are optional; without them the work runs here, silently.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

__all__ = ["Runner", "Progress", "announce"]

#: ``runner(task, items, shared) -> results in item order``: runs ``task(item, seed,
#: shared)`` for every item (``netctl.ensemble.executor.run_tasks`` fits; the command
#: line passes one in). Tasks must not depend on the worker that runs them.
Runner = Callable[[Callable[[Any, Any, Any], Any], list[Any], Any], Sequence[Any]]

#: ``progress(stage, done, total)``: ``stage`` names the step ("eigen-decomposition",
#: "candidate Gramians", ...); ``done`` of ``total`` units finished. A single long call
#: (one LAPACK routine) is announced as ``0`` of ``1`` before and ``1`` of ``1`` after.
Progress = Callable[[str, int, int], None]


def announce(progress: Progress | None, stage: str, done: int, total: int) -> None:
    """Call ``progress`` when there is one."""
    if progress is not None:
        progress(stage, done, total)
