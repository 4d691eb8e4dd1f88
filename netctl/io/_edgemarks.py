"""Signal marks at the top of an edge list: ``# disturbances: a, b`` and
``# regulated: z:x, z:y`` comment lines before the first link name nodes of the network
as disturbances or regulated outputs (written by :mod:`netctl.io.edgelist_writer`).

Names on these lines are separated by commas and carry the same reversible spreadsheet
quoting as the links (:func:`netctl.io._common.unprotect_name`).
"""

from __future__ import annotations

import json
import re
import warnings
from collections.abc import Callable, Iterable, Sequence
from typing import IO

from netctl.io._common import file_error, unprotect_name
from netctl.system import StructuredSystem

__all__ = ["MARKS", "header_marks", "late_mark", "apply_marks", "quoted_names",
           "repeated_header", "coupling_file_marks"]

#: Comment lines at the top of an edge list that mark signals (``# disturbances: a, b``).
MARKS: tuple[str, ...] = ("disturbances", "regulated")
_MARK = re.compile(r"#[ \t\r\v\f]*(disturbances|regulated)[ \t\r\v\f]*:(.*)\Z", re.IGNORECASE)
_BLANK = " \t\r\v\f"  # the edge list's own separators (never Unicode spaces: names keep them)


#: A mark line anywhere in the bytes of an edge list (the late-mark check).
_LATE = re.compile(rb"#[ \t\r\v\f]*(disturbances|regulated)[ \t\r\v\f]*:", re.IGNORECASE)
_LATE_CHUNK = 1 << 22


def header_marks(lines: Iterable[bytes], path: object = None
                 ) -> dict[str, list[tuple[str, int]]]:
    """``{mark: [(name, line), ...]}`` from the comment lines before the first link.

    With ``path`` and ``lines`` an open binary file, the rest of the file is then
    scanned (:func:`late_mark`): a mark line after the first link (or the header row) is
    an error, since the link reader takes it for a plain comment and the marked nodes
    would silently stay states."""
    out: dict[str, list[tuple[str, int]]] = {}
    lineno = 0
    for lineno, raw in enumerate(lines, start=1):
        line = raw.decode("utf-8", "replace")
        if lineno == 1 and line.startswith("\ufeff"):  # a byte-order mark, as the links
            line = line[1:]
        line = line.strip(_BLANK + "\n")
        if not line:
            continue
        if not line.startswith("#"):
            if path is not None and hasattr(lines, "read"):
                late_mark(lines, lineno, path)  # type: ignore[arg-type]
            break  # the header row or the first link: marks come before it
        m = _MARK.match(line)
        if m:
            names = [unprotect_name(x.strip(_BLANK)) for x in m.group(2).split(",")
                     if x.strip(_BLANK)]
            out.setdefault(m.group(1).lower(), []).extend((x, lineno) for x in names)
    return out


def late_mark(fh: IO[bytes], lineno: int, path: object) -> None:
    """Raise :class:`~netctl.errors.NetworkFileError` at the first ``# disturbances:`` /
    ``# regulated:`` line in the rest of ``fh``, which is positioned just after line
    ``lineno`` (the first link or the header row). Read in chunks; a chunk without
    ``#`` (the usual case) costs one byte search, and lines are counted only when a mark
    is found (the file is then read again up to it)."""
    start = fh.tell()
    done = 0  # bytes of the rest before ``tail``
    tail = b""  # the end of the last chunk after its last line break
    while True:
        data = fh.read(_LATE_CHUNK)
        if b"#" in data or b"#" in tail:
            buf = tail + data
            cut = buf.rfind(b"\n") + 1 if data else len(buf)
            low = buf.lower()  # the words first (byte searches), then the pattern
            m = None
            if low.find(b"disturbances", 0, cut) >= 0 or low.find(b"regulated", 0, cut) >= 0:
                m = next((x for x in _LATE.finditer(buf, 0, cut)  # '#' first on its line
                          if not buf[buf.rfind(b"\n", 0, x.start()) + 1:x.start()].strip(
                              _BLANK.encode())), None)
            if m:
                fh.seek(start)
                line = lineno + 1 + _count_lines(fh, done + m.start())
                mark = m.group(1).decode().lower()
                raise file_error(path, line, f"the '# {mark}:' line comes after the first "
                                 "link, where it would be read as a plain comment (its "
                                 f"nodes would stay states); move the '# {mark}:' line "
                                 "above the first link (and above a header row).")
            done += cut
            tail = buf[cut:]
        else:
            cut = data.rfind(b"\n") + 1
            if cut:
                done += len(tail) + cut
                tail = data[cut:]
            else:
                tail += data
        if not data:
            return


def _count_lines(fh: IO[bytes], size: int) -> int:
    """Line breaks in the next ``size`` bytes of ``fh``."""
    count = 0
    while size > 0:
        data = fh.read(min(size, _LATE_CHUNK))
        if not data:
            break
        count += data.count(b"\n")
        size -= len(data)
    return count


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


_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+\Z")


def _key(name: str) -> str:
    """``name`` as a TOML key (bare, or a basic string)."""
    return name if _BARE_KEY.match(name) else json.dumps(name)


def coupling_file_marks(path: object, spec: object, disturbances: Iterable[str],
                        regulated: Iterable[str]) -> None:
    """Check the mark lines of a system description's coupling file (an edge list).

    A description takes what each node is from its own tables; a ``# disturbances:`` /
    ``# regulated:`` line of its coupling file may only repeat it. A mark the
    description does not say would be lost silently, so it is refused, on its line,
    with the two ways out; a mark after the first link is refused as in any edge list
    (:func:`late_mark`). ``disturbances``: the states the description turns into
    disturbances; ``regulated``: the states its regulated outputs read."""
    from netctl.io.edgelist import _open

    with _open(path) as fh:  # type: ignore[arg-type]
        marks = header_marks(fh, path)
    said = {"disturbances": set(disturbances), "regulated": set(regulated)}
    for mark, found in marks.items():
        for name, line in found:
            if name in said[mark]:
                continue
            if mark == "disturbances":
                lack = "does not declare it a disturbance"
                fix = f"declare it there ([states] {_key(name)} = {{ disturbance = true }})"
            else:
                lack = "has no regulated output reading it"
                fix = ("add a regulated output reading it there ([regulated] "
                       f"{_key('z_' + name)} = [{json.dumps(name)}])")
            raise file_error(path, line, f"the '# {mark}:' line names {name!r}, but the "
                             f"description {spec} {lack}: a description says what each node "
                             "is in its own tables, so this mark of its coupling file would "
                             f"be lost. {fix[0].upper()}{fix[1:]}, or take {name!r} off the "
                             "mark line.")


#: Networks with more states are not checked for a repeated header row (the check scans
#: the names, about 10 ms a million; common practice, no source).
_CHECKED_NAMES = 2_000_000


def repeated_header(lines: Iterable[bytes], path: object,
                    fields: Callable[[str], list[str]],
                    is_header: Callable[[list[str]], bool], names: Sequence[str]) -> None:
    """Warn when the header row appears again further down (a file pasted together from
    two): it is read as a link between states named like the header's words, which is
    kept (it may be meant), but said. The file is scanned only when the first row is a
    header and both of its words are state names, in networks of at most
    :data:`_CHECKED_NAMES` states (the look-up scans every name)."""
    header: list[str] | None = None
    for lineno, raw in enumerate(lines, start=1):
        f = fields(raw.decode("utf-8", "replace").lstrip("\ufeff"))
        if not f:
            continue
        low = [x.lower() for x in f]
        if header is None:
            if (not is_header(f) or len(names) > _CHECKED_NAMES
                    or not _variants(f[0], names) or not _variants(f[1], names)):
                return
            header = low
            continue
        if low == header:
            warnings.warn(f"{path}:{lineno}: the header row {' '.join(f)!r} appears again; "
                          f"it was read as a link between states named {f[0]!r} and "
                          f"{f[1]!r}. Delete the line if it is a stray header.", stacklevel=4)
            return


def _variants(word: str, names: Sequence[str]) -> list[str]:
    """The spellings of a header word (as written, in lower case, Title case) that are
    names (a C-level scan of the names for each)."""
    return [x for x in dict.fromkeys((word, word.lower(), word.title())) if x in names]


def quoted_names(names: Sequence[str], path: object) -> None:
    """Warn when every name is wrapped in double quotes (a spreadsheet's "quote all"
    export): an edge list takes quotes as part of a name (a name may hold them), so the
    states are named ``"a"``, not ``a``."""
    if not names or not all(len(x) > 1 and x[0] == '"' == x[-1] for x in names[:1000]):
        return
    if all(len(x) > 1 and x[0] == '"' == x[-1] for x in names):
        warnings.warn(f"{path}: every name is wrapped in double quotes (e.g. {names[0]}); "
                      "an edge list keeps quotes as part of the names. If the file was "
                      "saved with every field quoted, save it without quotes.", stacklevel=4)
