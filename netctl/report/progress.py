"""Step-by-step progress on stderr for long runs (only when stderr is a terminal)."""

from __future__ import annotations

import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any, TextIO

__all__ = ["Progress", "count_progress", "stage_progress"]


class Progress:
    """Announce numbered steps and their duration on a terminal; silent otherwise.

    Parameters
    ----------
    total : int
        Number of steps expected (shown as ``[k/total]``).
    stream : text stream, optional
        Default ``sys.stderr``.
    enabled : bool, optional
        Default: whether ``stream`` is a terminal, so pipes, files and CI logs stay clean.

    Examples
    --------
    >>> import io
    >>> buf = io.StringIO()
    >>> p = Progress(2, stream=buf, enabled=True)
    >>> with p.step("reading"):
    ...     pass
    >>> buf.getvalue().startswith("netctl: [1/2] reading ...")
    True
    >>> quiet = io.StringIO()
    >>> with Progress(1, stream=quiet).step("drawing"):
    ...     pass
    >>> quiet.getvalue()
    ''
    """

    def __init__(self, total: int, *, stream: TextIO | None = None,
                 enabled: bool | None = None) -> None:
        self.total = total
        self.stream = stream if stream is not None else sys.stderr
        if enabled is None:
            isatty = getattr(self.stream, "isatty", None)
            enabled = bool(isatty and isatty())
        self.enabled = enabled
        self.done = 0

    @contextmanager
    def step(self, text: str) -> Iterator[None]:
        """Context manager around one step: prints its name, then its duration."""
        self.done += 1
        if self.enabled:
            self.stream.write(f"netctl: [{self.done}/{self.total}] {text} ...")
            self.stream.flush()
        start = time.perf_counter()
        ok = False
        try:
            yield
            ok = True
        finally:
            if self.enabled:
                took = time.perf_counter() - start
                self.stream.write(f" {'done' if ok else 'stopped'} ({took:.1f} s)\n")
                self.stream.flush()


def _terminal(stream: TextIO | None, enabled: bool | None) -> TextIO | None:
    """The stream to show progress on (stderr by default), or ``None`` when progress is
    off: ``enabled`` false, or left unset and the stream is not a terminal."""
    out = stream if stream is not None else sys.stderr
    if enabled is None:
        isatty = getattr(out, "isatty", None)
        enabled = bool(isatty and isatty())
    return out if enabled else None


def count_progress(what: str, *, stream: TextIO | None = None,
                   enabled: bool | None = None) -> Callable[[int, int], None] | None:
    """A ``progress(done, total)`` callback that rewrites one stderr line ("netctl: WHAT
    12/100"), about a hundred times in all; ``None`` when the stream is not a terminal.

    Examples
    --------
    >>> import io
    >>> buf = io.StringIO()
    >>> tick = count_progress("samples", stream=buf, enabled=True)
    >>> for k in range(1, 4):
    ...     tick(k, 3)
    >>> buf.getvalue().splitlines()[-1].split("\\r")[-1]
    'netctl: samples 3/3'
    >>> count_progress("samples", stream=io.StringIO()) is None
    True
    """
    out = _terminal(stream, enabled)
    if out is None:
        return None

    def tick(done: int, total: int) -> None:
        if done == total or done % max(total // 100, 1) == 0:
            out.write(f"\rnetctl: {what} {done}/{total}")
            if done == total:
                out.write("\n")
            out.flush()

    return tick


def stage_progress(what: str, *, stream: TextIO | None = None,
                   enabled: bool | None = None) -> Callable[[str, int, int], None] | None:
    """A ``progress(stage, done, total)`` callback for the numeric analyses: one stderr
    line a stage ("netctl: WHAT: STAGE 12/100", rewritten in place about a hundred times,
    ended when the stage is done or another begins); ``None`` when the stream is not a
    terminal. A single long call shows as ``0/1`` while it runs.

    Examples
    --------
    >>> import io
    >>> buf = io.StringIO()
    >>> tick = stage_progress("modes", stream=buf, enabled=True)
    >>> tick("eigen-decomposition", 0, 1); tick("eigen-decomposition", 1, 1)
    >>> tick("mode reach", 0, 2); tick("mode reach", 1, 2); tick("mode reach", 2, 2)
    >>> [line.split("\\r")[-1] for line in buf.getvalue().split("\\n") if line]
    ['netctl: modes: eigen-decomposition 1/1', 'netctl: modes: mode reach 2/2']
    >>> stage_progress("modes", stream=io.StringIO()) is None
    True
    """
    out = _terminal(stream, enabled)
    if out is None:
        return None
    state: dict[str, Any] = {"stage": None, "open": False, "pct": -1}

    def tick(stage: str, done: int, total: int) -> None:
        if state["open"] and state["stage"] != stage:
            out.write("\n")  # the previous stage stopped short of its total
            state["open"] = False
        if state["stage"] != stage:
            state["stage"], state["pct"] = stage, -1
        # a line whenever another percent is reached: steps of one, and jumps (a phase
        # that places thousands at once) alike
        pct = done * 100 // total if total > 0 else 100
        if done == total or pct > state["pct"]:
            state["pct"] = pct
            out.write(f"\rnetctl: {what}: {stage} {done}/{total}")
            state["open"] = done != total
            if done == total:
                out.write("\n")
            out.flush()

    return tick
