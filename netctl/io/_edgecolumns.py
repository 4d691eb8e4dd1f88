"""Which line of an edge list a mixed column count comes from (the error path only).

The scanner stops at the first link line whose column count differs from the lines
before it. That line is not always the one to correct: in ``a,b,`` followed by
``b,c,1`` the first line's weight is empty (a trailing separator), and the second line
is right. :func:`mixed_columns` reads the file again from its start, up to the line the
scanner stopped at, and names the line to correct: the first earlier link line whose
weight column is empty when the stopping line gives a weight, the stopping line itself
otherwise, with the first link line that set the count for reference.
"""

from __future__ import annotations

import os
import re
import zlib
from typing import NamedTuple

__all__ = ["MixedColumns", "mixed_columns", "empty_weight", "empty_cell", "EMPTY_CELL_HELP"]

_SPLIT = re.compile(r"[,\t; \r\v\f]+")
#: A link line that ends with a separator other than a space (comma, semicolon, tab):
#: a third column written empty. Trailing spaces alone are layout, not a column.
_EMPTY_LAST = re.compile(r"[,;\t][ \t\r\v\f,;]*\Z")


#: A cell separator (comma or semicolon) at the start of a line, or two with only spaces
#: and tabs between them: a cell left empty if a name follows (the scanner's ERR_EMPTY).
_EMPTY_CELL = re.compile(rb"\A[ \t\r\v\f]*[,;]|[,;][ \t\r\v\f]*[,;]")
_NAME = re.compile(rb"[^,\t; \r\v\f]")
_COLUMN = {1: "source", 2: "target", 3: "weight"}
EMPTY_CELL_HELP = ("two commas or semicolons in a row leave a column empty (only spaces and "
                   "tabs may repeat).")


def empty_cell(body: bytes) -> str | None:
    """The column (``"source"``, ``"target"``, ``"weight"`` or ``"column k"``) that a link
    line (``body``, its comment removed) leaves empty before a name, or None."""
    m = _EMPTY_CELL.search(body)
    if m is None or not _NAME.search(body, m.end()):
        return None  # none, or only separators follow (a trailing one: see empty_weight)
    k = 1 + len([f for f in _SPLIT.split(body[:m.start()].decode("utf-8", "replace")) if f])
    return _COLUMN.get(k, f"column {k}")


class MixedColumns(NamedTuple):
    """Where a column count changed: the line to correct and the line that set the
    count first (each ``(line number, text)``, text stripped)."""

    line: int
    text: str
    first_line: int
    first_text: str


def _fields(text: str) -> list[str]:
    return [f for f in _SPLIT.split(text.split("#", 1)[0].strip()) if f]


def empty_weight(text: str) -> bool:
    """Whether a link line of two names ends with an empty third column (``a,b,``)."""
    body = text.split("#", 1)[0]
    return len(_fields(body)) == 2 and _EMPTY_LAST.search(body.rstrip(" \r\n")) is not None


def mixed_columns(path: str | os.PathLike[str], line: int, text: str, n_fields: int,
                  is_header: object) -> MixedColumns | None:
    """The line to name for a column count that changes at ``line`` (whose ``text`` has
    ``n_fields`` columns), or None if the file cannot be read again.

    ``is_header`` is the reader's header test on the first content line's fields.
    Reads lines ``1 .. line - 1`` once more (gzip too): an error's price, never a good
    file's.
    """
    from netctl.io.edgelist import _open

    first: tuple[int, str] | None = None
    empty: tuple[int, str] | None = None
    content_seen = False
    try:
        with _open(path) as fh:
            for k, raw in enumerate(fh, start=1):
                if k >= line:
                    break
                row = raw.decode("utf-8", errors="replace")
                if k == 1 and row[:1] == "\ufeff":
                    row = row[1:]
                f = _fields(row)
                if not f:
                    continue
                if not content_seen:
                    content_seen = True
                    if is_header(f):  # type: ignore[operator]
                        continue
                if len(f) < 2:
                    continue
                if first is None:
                    first = (k, row.strip())
                if n_fields == 3 and empty is None and empty_weight(row):
                    empty = (k, row.rstrip("\r\n"))
                if first is not None and (n_fields != 3 or empty is not None):
                    break
    except (OSError, EOFError, zlib.error):
        return None
    if first is None:
        return None
    at = empty or (line, text)
    return MixedColumns(at[0], at[1], first[0], first[1])
