"""Signal marks at the top of an edge list: ``# disturbances: a, b`` and
``# regulated: z:x, z:y`` comment lines before the first link name nodes of the network
as disturbances or regulated outputs (written by :mod:`netctl.io.edgelist_writer`).

Names on these lines are separated by commas and carry the same reversible spreadsheet
quoting as the links (:func:`netctl.io._common.unprotect_name`).
"""

from __future__ import annotations

import re
from collections.abc import Iterable

from netctl.io._common import file_error, unprotect_name
from netctl.system import StructuredSystem

__all__ = ["MARKS", "header_marks", "apply_marks"]

#: Comment lines at the top of an edge list that mark signals (``# disturbances: a, b``).
MARKS: tuple[str, ...] = ("disturbances", "regulated")
_MARK = re.compile(r"#[ \t\r\v\f]*(disturbances|regulated)[ \t\r\v\f]*:(.*)\Z", re.IGNORECASE)
_BLANK = " \t\r\v\f"  # the edge list's own separators (never Unicode spaces: names keep them)


def header_marks(lines: Iterable[bytes]) -> dict[str, list[tuple[str, int]]]:
    """``{mark: [(name, line), ...]}`` from the comment lines before the first link."""
    out: dict[str, list[tuple[str, int]]] = {}
    for lineno, raw in enumerate(lines, start=1):
        line = raw.decode("utf-8", "replace")
        if lineno == 1 and line.startswith("\ufeff"):  # a byte-order mark, as the links
            line = line[1:]
        line = line.strip(_BLANK + "\n")
        if not line:
            continue
        if not line.startswith("#"):
            break  # the header row or the first link: marks come before it
        m = _MARK.match(line)
        if m:
            names = [unprotect_name(x.strip(_BLANK)) for x in m.group(2).split(",")
                     if x.strip(_BLANK)]
            out.setdefault(m.group(1).lower(), []).extend((x, lineno) for x in names)
        if lineno > 10_000:
            break
    return out


def apply_marks(system: StructuredSystem, marks: dict[str, list[tuple[str, int]]],
                path: object) -> StructuredSystem:
    """``system`` with the marked states turned into disturbances / regulated outputs."""
    from netctl.io._signals import mark_disturbances

    known = set(system.state_names)
    for mark in ("regulated", "disturbances"):
        for name, line in marks.get(mark, []):
            if name not in known:
                raise file_error(path, line, f"the '# {mark}:' line names {name!r}, which is "
                                 "not a node of this edge list; name nodes that appear in "
                                 "a link (or on a line of their own).")
    reg = [x for x, _ in marks.get("regulated", [])]
    if reg:
        system = system.with_regulated(reg)
    dist = marks.get("disturbances", [])
    if not dist:
        return system
    try:
        return system.states_to_disturbances([x for x, _ in dist])
    except Exception:  # find the offending name's own line for the message
        for name, line in dist:
            mark_disturbances(system, [name], path, line)
        return mark_disturbances(system, [x for x, _ in dist], path, dist[0][1])
