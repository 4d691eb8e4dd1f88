"""Reader of link changes: links to add to or remove from a network, from an edge-list
file or from an inline list ``'a->b,c->d'``.

A link ``a,b`` (or ``a->b``) means "a influences b", i.e. ``A[b, a] != 0``, as everywhere
in netctl. The reader returns :class:`~netctl.records.LinkChange` records that keep the
file and line, so that a caller checking the names against a system can point at the
line of a bad one.
"""

from __future__ import annotations

import re
from pathlib import Path

from netctl.errors import OptionError
from netctl.io._common import file_error, read_text, unprotect_name
from netctl.records import LinkChange

__all__ = ["parse_link_changes", "read_link_changes"]

#: A name: the edge list's own rule (:mod:`netctl.io._edgesmall`): separated by commas,
#: tabs, semicolons, spaces, and the blanks ``\r \v \f``; Unicode spaces belong to names.
_TOKEN = re.compile(r"[^,\t; \r\v\f]+")
_HEADER = {"source", "target", "from", "to", "src", "dst", "u", "v"}


def parse_link_changes(text: str, *, source: str = "<links>",
                       what: str = "links") -> list[LinkChange]:
    """Links from edge-list text: ``source,target`` a line, ``#`` comments, an optional
    header (``source,target``, ``from,to``, ...); fields separated by commas, tabs,
    semicolons or spaces. Names are read as in an edge list (lines end at ``\n``; the
    same separators; Unicode spaces belong to names), and the spreadsheet quoting
    netctl's writers add is removed (``'=x`` is the state ``=x``), so an edge list that
    netctl wrote reads back with its own names.

    Raises
    ------
    NetworkFileError
        Naming ``source`` and the line: a line without exactly two fields, or no link.

    Examples
    --------
    >>> [c.pair for c in parse_link_changes("source,target\\npump,tank\\ntank valve\\n")]
    [('pump', 'tank'), ('tank', 'valve')]
    """
    out: list[LinkChange] = []
    first = True
    for lineno, raw in enumerate(text.split("\n"), start=1):  # lines as an edge list's
        f = _TOKEN.findall(raw.split("#", 1)[0])
        if not f:
            continue
        if first and len(f) == 2 and f[0].lower() in _HEADER and f[1].lower() in _HEADER:
            first = False  # one header at most: a link 'u,v' after it is a link
            continue
        first = False
        if len(f) != 2:
            raise file_error(source, lineno, f"expected 'source,target', found {len(f)} "
                             f"column(s) in {raw.strip()!r}. One link a line; a link "
                             "'a,b' means a influences b.")
        out.append(LinkChange(unprotect_name(f[0]), unprotect_name(f[1]), lineno, source))
    if not out:
        raise file_error(source, None, f"{what}: the file lists no links; expected lines "
                         "'source,target'.")
    return out


def read_link_changes(value: str, what: str = "links") -> list[LinkChange]:
    """Links from an edge-list file (see :func:`parse_link_changes`) or, when ``value``
    names no file, from an inline list ``'a->b,c->d'`` (``line`` is then ``None``).

    ``what`` (for example the option ``"--add-links"``) starts the messages about an
    inline list.

    Raises
    ------
    NetworkFileError
        A malformed file (with its name and line).
    OptionError
        An inline item that is not a link ``a->b``, or an empty list.

    Examples
    --------
    >>> [(c.source, c.target, c.line) for c in read_link_changes("pump->tank, tank->valve")]
    [('pump', 'tank', None), ('tank', 'valve', None)]
    """
    if Path(value).is_file():
        return parse_link_changes(read_text(value), source=value, what=what)
    out: list[LinkChange] = []
    for item in (x.strip() for x in value.split(",")):
        if not item:
            continue
        if "->" not in item:
            raise OptionError(f"{what}: {item!r} is neither a file nor a link 'a->b'; give an "
                              "edge-list file or links such as 'pump->tank,tank->valve'.")
        a, b = (x.strip() for x in item.split("->", 1))
        if not a or not b:
            raise OptionError(f"{what}: the link {item!r} lacks a state name; write 'a->b'.")
        out.append(LinkChange(a, b, None, what))
    if not out:
        raise OptionError(f"{what} names no link; write 'a->b,c->d' or give a file.")
    return out
