"""One long computation on a second thread, while the caller goes on with other work.

Used where an analysis can start a costly, independent part early: Hosoe's dimension of
a system already known to fail runs beside the search for the reasons (both in compiled
kernels that release the GIL, so the two use two cores). The worker never reports
progress itself; it leaves its latest ``(done, total)`` for the caller, which passes it
on while it waits, so progress lines come from one thread only. Waiting is in short
steps, so Ctrl-C and SIGTERM reach the caller at once; the worker is a daemon thread,
so an interrupted run exits without waiting for it.
"""

from __future__ import annotations

import threading
from collections.abc import Callable
from typing import Generic, TypeVar

__all__ = ["Background"]

T = TypeVar("T")

#: Seconds between two looks at the worker while waiting for it.
_POLL_S = 0.1


class Background(Generic[T]):
    """Run ``work(note)`` on a daemon thread; ``note(done, total)`` records its progress.

    Examples
    --------
    >>> job = Background(lambda note: sum(range(10)))
    >>> job.result()
    45
    """

    def __init__(self, work: Callable[[Callable[[int, int], None]], T],
                 name: str = "netctl-background") -> None:
        self._done = threading.Event()
        self._value: T | None = None
        self._error: BaseException | None = None
        self._state: tuple[int, int] | None = None
        self._thread = threading.Thread(target=self._run, args=(work,), name=name,
                                        daemon=True)
        self._thread.start()

    def _note(self, done: int, total: int) -> None:
        self._state = (int(done), int(total))

    def _run(self, work: Callable[[Callable[[int, int], None]], T]) -> None:
        try:
            self._value = work(self._note)
        except BaseException as e:  # re-raised in the caller's thread by result()
            self._error = e
        finally:
            self._done.set()

    def result(self, progress: Callable[[int, int], None] | None = None) -> T:
        """Wait for the work; pass its progress to ``progress`` as it changes; return
        its value or raise its exception."""
        seen: tuple[int, int] | None = None
        while True:
            finished = self._done.wait(_POLL_S)
            state = self._state
            if progress is not None and state is not None and state != seen:
                seen = state
                progress(*state)
            if finished:
                break
        if self._error is not None:
            raise self._error
        return self._value  # type: ignore[return-value]
