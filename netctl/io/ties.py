"""Ties between subsystems from a CSV file (``netctl join --ties``).

One header line ``from_system,from_state,to_system,to_state[,kind]`` then one tie a line;
``kind`` is ``state`` (a link from one subsystem's state to another's, the default) or
``signal`` (an output of one subsystem feeds an input of another). Lines starting with
``#`` and blank lines are skipped. Cells are read as netctl's CSV writers write them
(:mod:`netctl.io._cells`: double quotes, and the spreadsheet quoting of the state names
removed, ``'=x`` is the state ``=x``). Errors name the file, the line and the fix.
"""

from __future__ import annotations

from netctl.io._cells import csv_records
from netctl.io._common import file_error, read_text, unprotect_name
from netctl.records import TIE_KINDS, Tie

__all__ = ["TIES_HEADER", "read_ties", "read_tie_lines"]

#: The columns a ties file starts with.
TIES_HEADER = ("from_system", "from_state", "to_system", "to_state")


def read_ties(path: str) -> list[Tie]:
    """Ties from a CSV file (see the module docstring); errors name the file and line."""
    return [t for t, _ in read_tie_lines(path)]


def read_tie_lines(path: str) -> list[tuple[Tie, int]]:
    """(tie, line) of every tie of a CSV file (see :func:`read_ties`), so that a caller
    checking the ties against subsystems can name the line of a bad one."""
    text = read_text(path)
    ties: list[tuple[Tie, int]] = []
    header_seen = False
    for lineno, raw, fields in csv_records(text, path, seps=","):
        line = raw.strip()
        if not header_seen:
            low = [f.lower() for f in fields]
            if tuple(low[:4]) != TIES_HEADER or len(low) > 5 or (
                    len(low) == 5 and low[4] != "kind"):
                raise file_error(path, lineno, f"expected the header "
                                 f"'{','.join(TIES_HEADER)}[,kind]', found {line!r}.")
            header_seen = True
            n_cols = len(low)
            continue
        if len(fields) not in (4, n_cols) or len(fields) > 5:
            raise file_error(path, lineno, f"expected {n_cols} comma-separated columns "
                             f"({','.join(TIES_HEADER)}{',kind' if n_cols == 5 else ''}), "
                             f"found {len(fields)} in {raw.strip()!r}.")
        if any(not f for f in fields[:4]):
            raise file_error(path, lineno, f"empty field in {raw.strip()!r}; every tie names "
                             "two subsystems and two states.")
        kind = fields[4].lower() if len(fields) == 5 and fields[4] else "state"
        if kind not in TIE_KINDS:
            raise file_error(path, lineno, f"kind {fields[4]!r} is not one of "
                             f"{', '.join(TIE_KINDS)}; 'state' links two states, 'signal' "
                             "feeds an output into an input.")
        ties.append((Tie(fields[0], unprotect_name(fields[1]), fields[2],
                         unprotect_name(fields[3]), kind), lineno))
    if not header_seen:
        raise file_error(path, None, f"the file is empty; expected the header "
                         f"'{','.join(TIES_HEADER)}[,kind]' and one tie a line.")
    if not ties:
        raise file_error(path, None, f"the file lists no tie; add one tie a line after the "
                         f"header, e.g. 'plant,c,ctrl,p' ({','.join(TIES_HEADER)}).")
    return ties
