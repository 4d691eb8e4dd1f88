"""Cells of the small CSV files that list names (sites, candidates, ties, name lists), read
so that a file netctl's CSV writers produce reads back with exactly the names written.

A record is one line, or several when a double-quoted cell holds a line break (as
:class:`csv.writer` writes it). Cells are separated by the first of the allowed separators
that occurs outside double quotes (a comma before a tab before a semicolon, as before); a
cell that starts with ``"`` is read as CSV quotes it (``""`` is one ``"``) and keeps its
spaces, ``#``, separators and line breaks; a ``"`` inside an unquoted cell is an ordinary
character. Outside quotes ``#`` starts a comment. Unquoted cells are stripped of
surrounding white space. Lines end at ``\\n``, ``\\r\\n`` or ``\\r`` only (never at the
Unicode line separators, which names may hold). :func:`netctl.io._common.unprotect_name`
undoes the spreadsheet quoting of a name cell (``'=x`` is the name ``=x``).
"""

from __future__ import annotations

import re
from collections.abc import Iterator

from netctl.io._common import file_error

__all__ = ["csv_records", "name_lines"]

_LINES = re.compile(r"\r\n|\r|\n")


def _lines(text: str) -> Iterator[tuple[int, str, str]]:
    """(line number, line, line end) of ``text``, ends ``\\n``, ``\\r\\n`` or ``\\r``."""
    pos, k = 0, 1
    for m in _LINES.finditer(text):
        yield k, text[pos:m.start()], m.group()
        pos, k = m.end(), k + 1
    if pos < len(text):
        yield k, text[pos:], ""


def _plain(line: str, seps: str) -> list[str]:
    """Cells of a line holding no double quote."""
    line = line.split("#", 1)[0]
    for sep in seps:
        if sep in line:
            return [x.strip() for x in line.split(sep)]
    return [line.strip()]


def _scan(rec: str, sep: str | None) -> tuple[list[str], bool, bool]:
    """Cells of ``rec`` split at ``sep``: (cells, a separator was seen, quotes closed)."""
    cells: list[str] = []
    cur: list[str] = []
    quoted = False  # the current cell started with a double quote
    i, n, split = 0, len(rec), False
    start = True
    while i < n:
        c = rec[i]
        if start and c == '"':
            j = i + 1
            buf: list[str] = []
            while True:
                k = rec.find('"', j)
                if k < 0:
                    return cells, split, False
                buf.append(rec[j:k])
                if rec[k + 1:k + 2] == '"':
                    buf.append('"')
                    j = k + 2
                    continue
                break
            cur = ["".join(buf)]
            quoted, start, i = True, False, k + 1
            continue
        if sep is not None and c == sep:
            cells.append("".join(cur) if quoted else "".join(cur).strip())
            cur, quoted, start, split = [], False, True, True
            i += 1
            continue
        if c == "#":
            break
        if start and c.isspace():
            i += 1
            continue
        if quoted:
            if not c.isspace():  # text after a closing quote belongs to the cell
                cur.append(c)
        else:
            cur.append(c)
        start = False
        i += 1
    cells.append("".join(cur) if quoted else "".join(cur).strip())
    return cells, split, True


def _quoted(rec: str, seps: str) -> tuple[list[str], bool]:
    """Cells of a record holding a double quote: (cells, all quotes closed)."""
    for sep in seps:
        cells, split, closed = _scan(rec, sep)
        if not closed:
            return cells, False
        if split:
            return cells, True
    cells, _, closed = _scan(rec, None)
    return cells, closed


def csv_records(text: str, source: object, *, seps: str = ",\t;"
                ) -> Iterator[tuple[int, str, list[str]]]:
    """(first line number, record text, cells) of every record that is not blank or a
    comment (see the module docstring).

    Raises
    ------
    NetworkFileError
        A double quote opened and never closed (naming ``source`` and its line).

    Examples
    --------
    >>> [c for _, _, c in csv_records('state,cost\\n"a,b",2 # x\\n\\'=y\\t1\\n', "f")]
    [['state', 'cost'], ['a,b', '2'], ["'=y", '1']]
    """
    lines = _lines(text)
    for lineno, line, end in lines:
        if '"' not in line:
            cells = _plain(line, seps)
            if cells != [""]:
                yield lineno, line, cells
            continue
        rec = line
        while True:
            cells, closed = _quoted(rec, seps)
            if closed:
                break
            nxt = next(lines, None)
            if nxt is None:
                raise file_error(source, lineno, f"a double quote opened in {rec[:60]!r} is "
                                 "never closed; close the quoted cell with '\"' (a '\"' "
                                 "inside a quoted cell is written twice, '\"\"').")
            rec, end = rec + end + nxt[1], nxt[2]  # the cell's own line break, kept
        if cells != [""]:
            yield lineno, rec, cells


def name_lines(text: str, source: object) -> list[tuple[str, int]]:
    """(name, line) of every name in a name-list file: one name a line or several
    separated by commas, ``#`` comments, cells as :func:`csv_records` reads them and the
    spreadsheet quoting removed (``'=x`` is the name ``=x``)."""
    from netctl.io._common import unprotect_name

    return [(unprotect_name(x), lineno) for lineno, _, cells in
            csv_records(text, source, seps=",") for x in cells if x]
