"""The output of every verb of ``netctl``: the text summary or the JSON, and ``--out``.

:func:`emit` prints a verb's summary (or its JSON with ``--json``) with the notes
:func:`~netctl.commands._load.load_system` recorded on ``args`` (disturbances, how a
matrix file was read, the grid), and writes ``--out`` atomically; :func:`names_line`,
:func:`terminal_safe` and :func:`safe_write` serve the verbs' own summaries and files.

Everything at module level is light (the standard library): the JSON encoder and the
writers are imported inside the functions, so that ``netctl --help`` loads nothing more.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager
from typing import IO, Any

from netctl.commands._options import UsageError

__all__ = ["SHOWN", "emit", "names_line", "safe_write", "terminal_safe"]


_GRID_CAUTION = ("results concern a linearized model of the grid, not operating decisions, "
                 "which stay with the system operator's procedures and applicable codes")


#: names listed in a text summary before "... (N more; --json lists all)"
SHOWN = 30


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


def _disturbance_text(info: dict[str, Any]) -> str:
    parts = [f"{w} -> {', '.join(on[:4])}{', ...' if len(on) > 4 else ''}"
             for w, on in list(info["disturbances"].items())[:SHOWN]]
    more = info["n_disturbances"] - len(parts)
    return (f"  disturbances ({info['n_disturbances']}; not states, never driven or sensed): "
            + "; ".join(parts) + (f"; ... ({more} more; --json lists all)" if more > 0 else ""))


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
