"""The ``netctl`` command: builds the parser from the verb registry and dispatches.

Exit status: 0 the analysis ran and the property holds; 1 it ran and the property does
not hold; 2 bad usage or bad input (a message naming the file, the line and the fix).

The verbs live in :mod:`netctl.commands` (one module each, listed in
:data:`netctl.commands.VERBS`); their shared options and helpers in
:mod:`netctl.commands._options`, ``_load`` (the system, name lists) and ``_emit`` (the
output). Only the module of the verb being run is imported, so ``netctl --help`` and a
verb on a small file start fast. No analysis logic lives here.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
import warnings
from collections.abc import Callable, Collection, Sequence
from typing import Any, NoReturn

from netctl._meta import __version__
from netctl.commands import VERBS
# re-exported: older callers import them from here
from netctl.commands._emit import emit, terminal_safe
from netctl.commands._load import disturbance_summary, load_system, parse_names
from netctl.commands._options import CAUTION, UsageError, common_parser, guard_files
from netctl.errors import NetctlError

__all__ = ["main", "build_parser", "load_system", "emit", "CAUTION", "parse_names",
           "UsageError", "disturbance_summary"]


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:  # exit 2 with our prefix, no traceback
        self.print_usage(sys.stderr)
        print(f"netctl: error: {message}", file=sys.stderr)
        raise SystemExit(2)


def build_parser(verbs: Collection[str] | None = None) -> argparse.ArgumentParser:
    """The argument parser.

    Parameters
    ----------
    verbs : collection of str, optional
        The verbs whose options are defined (their modules are imported); the others
        are listed with their one-line help only. Default: every verb, fully.
    """
    parser = _Parser(prog="netctl", description="Structural controllability analysis of "
                     "networked systems. Edge u -> v means 'state u influences state v' "
                     "(A[v, u] != 0).")
    parser.add_argument("--version", action="version", version=f"netctl {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    common: argparse.ArgumentParser | None = None
    for name, (module, help) in VERBS.items():
        if verbs is not None and name not in verbs:
            sub.add_parser(name, help=help, add_help=False)
            continue
        if common is None:
            common = common_parser(_Parser)
        importlib.import_module(f"netctl.commands.{module}").register(sub, common, name, help)
    return parser


def _verb_of(argv: Sequence[str]) -> str | None:
    """The verb named on the command line (the first word not an option), if any."""
    for word in argv:
        if word == "--":
            return None
        if not word.startswith("-"):
            return word
    return None


class Terminated(KeyboardInterrupt):
    """Raised by the SIGTERM handler so that cleanup runs as for Ctrl-C (exit 143)."""


#: Signals received during this run. A library can catch the KeyboardInterrupt our handlers
#: raise and raise something else (numba, interrupted while compiling, leaves "no compiled
#: object yet"); the run must still end as interrupted, not as a bad file.
_received: list[int] = []

#: Signals that arrived while Python ran inside a callback from compiled code, to raise
#: again a moment later (see ``_raise_when_safe``).
_deferred: list[int] = []

#: The SIGALRM handler before the first deferral, put back when the run ends.
_alarm_before: list[Any] = []

#: How long to wait before raising a deferred signal again, in seconds.
_RETRY_S = 0.05


#: llvmlite's Python functions that compiled code calls back (numba's object cache): the
#: file (relative to site-packages) and the function names.
_CALLBACKS = (f"{os.sep}llvmlite{os.sep}binding{os.sep}executionengine.py",
              ("_raw_object_cache_notify", "_raw_object_cache_getbuffer"))


def _inside_compiled_callback(frame: Any) -> bool:
    """Whether ``frame`` runs where an exception may not unwind to netctl: under one of
    llvmlite's callbacks from compiled code (numba's first compile of a kernel hands the
    object code to Python to store in its cache), under a destructor (``__del__``, as
    llvmlite's handles free their LLVM objects) or in the import system (whose module locks
    are freed by weak-reference callbacks). Python prints an exception raised there with a
    traceback ("Exception ignored in ...") and the run goes on as if no signal had come; so
    the interruption waits until the callback, the destructor or the import is over.
    Anywhere else (llvmlite called from Python included) it is raised at once."""
    where, names = _CALLBACKS
    while frame is not None:
        code = frame.f_code
        if (code.co_name == "__del__" or code.co_filename.startswith("<frozen importlib")
                or (code.co_name in names and code.co_filename.endswith(where))):
            return True
        frame = frame.f_back
    return False


def _raise_when_safe(signum: int, frame: Any) -> None:
    """Raise the interruption ``signum`` stands for, or, inside a compiled callback, raise
    it again ``_RETRY_S`` later (a one-shot SIGALRM), when the callback has returned."""
    import signal

    if _inside_compiled_callback(frame) and hasattr(signal, "setitimer"):
        if not _alarm_before:
            _alarm_before.append(signal.signal(signal.SIGALRM, _on_deferred))
        _deferred.append(signum)
        signal.setitimer(signal.ITIMER_REAL, _RETRY_S)
        return
    if _deferred:
        signal.setitimer(signal.ITIMER_REAL, 0)
        _deferred.clear()
    raise Terminated() if signum == signal.SIGTERM else KeyboardInterrupt()


def _on_sigterm(signum: int, frame: Any) -> None:
    _received.append(signum)
    _raise_when_safe(signum, frame)


def _on_sigint(signum: int, frame: Any) -> None:
    _received.append(signum)
    _raise_when_safe(signum, frame)


def _on_deferred(signum: int, frame: Any) -> None:
    """SIGALRM after a deferred signal: raise it now if safe (SIGTERM before SIGINT)."""
    import signal

    if _deferred:
        _raise_when_safe(signal.SIGTERM if signal.SIGTERM in _deferred else _deferred[0], frame)


def _interruption() -> KeyboardInterrupt | None:
    """The interruption a signal of this run stands for, or ``None``."""
    import signal

    if not _received:
        return None
    return Terminated() if signal.SIGTERM in _received else KeyboardInterrupt()


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``netctl`` command; returns the exit status.

    Every output path is checked against every input before any work (exit 2 when one
    would overwrite the other), every file read is guarded against being written over,
    and SIGINT / SIGTERM end the run with status 130 / 143 after removing temporary
    files; a closed standard output (``netctl ... | head``) ends it quietly with 141.
    """
    import signal

    previous = previous_int = None
    _received.clear()
    _deferred.clear()
    try:
        previous = signal.signal(signal.SIGTERM, _on_sigterm)
        if signal.getsignal(signal.SIGINT) is signal.default_int_handler:
            previous_int = signal.signal(signal.SIGINT, _on_sigint)
    except ValueError:  # not the main thread: leave the handlers alone
        pass
    try:
        code = _main(argv)
        stop = _interruption() if code != 0 else None
        if stop is not None:  # a library turned the interruption into an error
            raise stop
        return code
    except BrokenPipeError:
        try:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        except (OSError, ValueError):
            pass
        return 141
    except KeyboardInterrupt as exc:
        return _interrupted(isinstance(exc, Terminated))
    except Exception:
        stop = _interruption()
        if stop is None:
            raise
        return _interrupted(isinstance(stop, Terminated))  # a library's error after a signal
    finally:
        if _alarm_before:  # a signal was deferred: cancel any retry, put SIGALRM back
            signal.setitimer(signal.ITIMER_REAL, 0)
            signal.signal(signal.SIGALRM, _alarm_before.pop())
            _deferred.clear()
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)
        if previous_int is not None:
            signal.signal(signal.SIGINT, previous_int)


def _interrupted(term: bool) -> int:
    print("netctl: terminated" if term else "netctl: interrupted", file=sys.stderr)
    return 143 if term else 130


def _main(argv: Sequence[str] | None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    verb = _verb_of(argv)
    parser = build_parser([verb] if verb in VERBS else ())
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help(sys.stderr)
        return 2
    func: Callable[[argparse.Namespace], int] = args.func
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            with guard_files(args):  # no output over an input; see _options.guard_files
                code = func(args)
        except NetctlError as exc:  # UsageError is one (also when run as __main__)
            stop = _interruption()
            if stop is not None:  # the error is the interruption in disguise
                raise stop from None
            _flush_warnings(caught)
            print(f"netctl: error: {terminal_safe(str(exc))}", file=sys.stderr)
            return 2
        except MemoryError:
            _flush_warnings(caught)
            print("netctl: error: out of memory; the network is too large for this machine "
                  "(see benchmarks/RESULTS.md for sizes that fit).", file=sys.stderr)
            return 2
    _flush_warnings(caught)
    return code


def _flush_warnings(caught: list[warnings.WarningMessage]) -> None:
    for w in caught:
        print(f"netctl: warning: {terminal_safe(str(w.message))}", file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    from netctl.cli import main as _main_of_the_package  # one copy of every class

    raise SystemExit(_main_of_the_package())
