"""Helpers shared by the readers and writers: opening files, locating errors, limits,
atomic writes and the guard that keeps outputs off inputs.

Inputs are sacred
-----------------
Inside :func:`guarded_run` (the command line runs every verb in one) every file a reader
opens is recorded, and :func:`atomic_write` refuses to write over any of them (compared by
device and inode, so symlinks and hard links are seen through). :func:`check_outputs`
compares the outputs a command names with its inputs before any work is done. Outputs to
special files (devices, FIFOs) and ``-`` (standard output) are written through, never
renamed over; :func:`atomic_group` makes several outputs appear together or not at all.

Limits
------
Whole-file readers refuse files (after decompression) larger than :func:`max_bytes`
(default :data:`DEFAULT_MAX_BYTES`; raise it with the environment variable
``NETCTL_MAX_BYTES``, e.g. ``NETCTL_MAX_BYTES=8G``).
"""

from __future__ import annotations

import errno
import gzip
import os
import re
import stat
import sys
import tempfile
import zlib
from collections.abc import Iterable, Iterator, Sequence
from contextlib import contextmanager
from contextvars import ContextVar
from pathlib import Path
from typing import IO, Any

from netctl.errors import (
    LimitError,
    MissingFileError,
    NetctlError,
    NetworkFileError,
    OutputFileError,
)

__all__ = ["read_text", "read_bytes", "atomic_write", "atomic_group", "ungrouped", "file_error",
           "excerpt", "one_line", "guarded_run", "note_input", "check_outputs", "max_bytes",
           "DEFAULT_MAX_BYTES", "MAX_TEXT_BYTES", "LIMIT_ENV", "check_states",
           "limit_error", "BYTES_PER_STATE", "EXCERPT_CHARS", "spreadsheet_cell",
           "protect_name", "protect_names", "unprotect_name", "SpreadsheetSafeWriter",
           "refuse_lone_surrogates"]

#: Default limit on the bytes of one file that a whole-file reader holds in memory (after
#: gzip decompression). Raise it with the environment variable :data:`LIMIT_ENV`.
DEFAULT_MAX_BYTES = 2 * 1024**3
#: Kept for older callers: the same default.
MAX_TEXT_BYTES = DEFAULT_MAX_BYTES
#: Environment variable that sets the size limit, in bytes or with a K/M/G/T suffix.
LIMIT_ENV = "NETCTL_MAX_BYTES"
#: Characters of a file's line quoted in an error message.
EXCERPT_CHARS = 80


def max_bytes() -> int:
    """The size limit in bytes: ``$NETCTL_MAX_BYTES`` or :data:`DEFAULT_MAX_BYTES`."""
    raw = os.environ.get(LIMIT_ENV, "").strip()
    if not raw:
        return DEFAULT_MAX_BYTES
    scale = {"K": 1024, "M": 1024**2, "G": 1024**3, "T": 1024**4}
    try:
        if raw[-1].upper() in scale:
            return int(float(raw[:-1]) * scale[raw[-1].upper()])
        return int(raw)
    except ValueError:
        from netctl.errors import OptionError

        raise OptionError(f"{LIMIT_ENV}={raw!r} is not a size; give bytes or a number with "
                          "K, M, G or T, e.g. 8G.") from None


#: Bytes of memory a state costs at least once read (name, index arrays, node table):
#: a declared number of states is checked against :func:`max_bytes` with it.
BYTES_PER_STATE = 64


def check_states(path: object, n: int, line: int | None = None) -> None:
    """Refuse a declared state count that would need more memory than :func:`max_bytes`
    allows (checked before anything of that size is allocated)."""
    limit = max_bytes()
    if n * BYTES_PER_STATE > limit:
        raise LimitError(f"{file_error(path, line, '')}the file declares {n:,} states, which "
                         f"need about {n * BYTES_PER_STATE:,} bytes, more than the limit of "
                         f"{limit:,} bytes. If the file is genuine, raise the limit with the "
                         f"environment variable {LIMIT_ENV} (e.g. {LIMIT_ENV}=16G).",
                         path=path, line=line)


def limit_error(path: object, what: str, found: int, limit: int) -> LimitError:
    """A :class:`LimitError` naming the file, what was too large and the way out."""
    return LimitError(f"{path}: {what} ({found:,} bytes) is more than the limit of "
                      f"{limit:,} bytes. If the file is genuine, raise the limit with the "
                      f"environment variable {LIMIT_ENV} (e.g. {LIMIT_ENV}=16G).",
                      path=path, line=None)


def excerpt(text: str | bytes, limit: int = EXCERPT_CHARS) -> str:
    """``repr`` of at most ``limit`` characters of a line (``...`` marks a cut)."""
    if isinstance(text, bytes):
        text = text[: 4 * limit].decode("utf-8", errors="replace")
    if len(text) <= limit:
        return repr(text)
    return repr(text[:limit]) + f"... ({len(text):,} characters)"


_LONG_RUN = re.compile(r"\S{%d,}" % (EXCERPT_CHARS + 20))


def one_line(message: str) -> str:
    """``message`` on one line, every run of more than ~100 non-blank characters cut to
    :data:`EXCERPT_CHARS` with its length (a file's content never floods a message)."""
    message = " ".join(message.split())
    return _LONG_RUN.sub(lambda m: f"{m.group()[:EXCERPT_CHARS]}... "
                         f"({len(m.group()):,} characters)", message)


def file_error(path: object, line: int | None, message: str) -> NetworkFileError:
    """A :class:`NetworkFileError` whose message starts with ``path:line:``, on one line
    and with long runs of the file's content cut (:func:`one_line`)."""
    where = f"{path}:{line}" if line is not None else f"{path}"
    return NetworkFileError(f"{where}: {one_line(message)}", path=path, line=line)


def read_text(path: str | os.PathLike[str]) -> str:
    """Whole file as text (UTF-8, gzip transparently), with clear errors."""
    data = read_bytes(path)
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        hint = (" It looks like UTF-16; save it as UTF-8." if data[:2] in (b"\xff\xfe", b"\xfe\xff")
                else " Save the file as UTF-8 (or plain ASCII).")
        raise file_error(path, line, f"the bytes {data[exc.start:exc.start + 4]!r} are not "
                         "UTF-8 text." + hint) from None


def read_bytes(path: str | os.PathLike[str]) -> bytes:
    """Whole file as bytes, gunzipped when it is gzip-compressed, within :func:`max_bytes`."""
    p = Path(path)
    if not p.exists():
        raise MissingFileError(f"{path}: no such file. Check the path and the working directory.")
    if p.is_dir():
        raise MissingFileError(f"{path}: is a directory; give a network file.")
    limit = max_bytes()
    try:
        with open(p, "rb") as fh:
            note_input(p)
            head = fh.read(2)
            fh.seek(0)
            if head == b"\x1f\x8b":
                try:
                    with gzip.open(fh) as gz:
                        data = gz.read(limit + 1)
                except (EOFError, OSError, zlib.error) as exc:
                    raise file_error(path, None, f"the gzip stream is damaged or truncated "
                                     f"({exc}). Compress the file again.") from None
                if len(data) > limit:
                    raise limit_error(path, "the decompressed content", len(data), limit)
                return data
            size = os.fstat(fh.fileno()).st_size
            if size > limit:
                raise limit_error(path, "the file", size, limit)
            data = fh.read(limit + 1)
            if len(data) > limit:  # a special file growing without end
                raise limit_error(path, "the content", len(data), limit)
            return data
    except PermissionError:
        raise MissingFileError(f"{path}: permission denied; check the file's permissions.") from None
    except OSError as exc:
        if isinstance(exc, NetctlError):
            raise
        raise MissingFileError(f"{path}: cannot be read ({exc.strerror or exc}).") from None


# ---------------------------------------------------------------------- CSV for people
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
#: A leading apostrophe is added before these (formula starts, and an apostrophe of the
#: name itself), and a reader removes one leading apostrophe followed by one of them.
_QUOTE_BEFORE = _FORMULA_START + ("'",)
_QUOTE_FIRST = frozenset(_QUOTE_BEFORE)
_NEGATIVE_NUMBER = re.compile(r"-([0-9]+\.?[0-9]*|\.[0-9]+)([eE][-+]?[0-9]+)?\Z")


def protect_name(name: str, *, quote_numbers: bool = False) -> str:
    """``name`` as a CSV cell that no spreadsheet runs as a formula, reversibly.

    A name starting with ``=``, ``+``, ``-``, ``@``, a tab, a carriage return or an
    apostrophe is written with one more leading apostrophe (``'=x``, ``''x``); a negative
    decimal number (``-5``, ``-0.5e3``) is a number to a spreadsheet too and is left as it
    is, unless ``quote_numbers`` (where a number would be taken for a value, as in a
    matrix CSV header). :func:`unprotect_name` reverses it exactly (docs/HOSTILE.md,
    "CSV cells").

    Examples
    --------
    >>> [protect_name(x) for x in ("=SUM(A1)", "-5", "-x", "'q", "it's", "pump")]
    ["'=SUM(A1)", '-5', "'-x", "''q", "it's", 'pump']
    """
    if name.startswith(_QUOTE_BEFORE) and (quote_numbers or not _NEGATIVE_NUMBER.match(name)):
        return "'" + name
    return name


def protect_names(names: Sequence[str], *, quote_numbers: bool = False) -> list[str]:
    """:func:`protect_name` of every name (inlined: one set look-up a name that needs
    nothing, the usual case)."""
    first = _QUOTE_FIRST
    return [protect_name(x, quote_numbers=quote_numbers) if x[:1] in first else x
            for x in names]


def unprotect_name(cell: str) -> str:
    """The name a cell written by :func:`protect_name` stands for.

    One leading apostrophe is removed when the next character is one that
    :func:`protect_name` quotes (``= + - @ '``, tab, carriage return); any other
    apostrophe is part of the name (so ``'abc`` in a hand-written file stays ``'abc``).

    Examples
    --------
    >>> [unprotect_name(x) for x in ("'=SUM(A1)", "-5", "'-x", "''q", "'abc")]
    ['=SUM(A1)', '-5', '-x', "'q", "'abc"]
    """
    if cell[:1] == "'" and cell[1:2] in _QUOTE_BEFORE and cell[1:2]:
        return cell[1:]
    return cell


def spreadsheet_cell(value: object) -> object:
    """``value`` made safe to open in a spreadsheet: text starting with ``= + - @``, a tab
    or a carriage return gets a leading ``'`` (so it is shown as text, never run as a
    formula), and so does text starting with ``'`` (so the quoting is reversible, see
    :func:`unprotect_name`); numbers, including negative ones, are left alone.

    Examples
    --------
    >>> spreadsheet_cell("=HYPERLINK(1)"), spreadsheet_cell("-1.5"), spreadsheet_cell(-2)
    ("'=HYPERLINK(1)", '-1.5', -2)
    """
    if not isinstance(value, str):
        return value
    return protect_name(value)


def refuse_lone_surrogates(system: Any, fmt: str) -> None:
    """Refuse a name holding a lone surrogate (half of a UTF-16 pair, no character): no
    text file can hold it, and netctl's readers refuse it (one line, before writing)."""
    groups = (("state", system.state_names), ("input", system.input_names),
              ("output", system.output_names), ("disturbance", system.disturbance_names),
              ("regulated output", system.regulated_names))
    for kind, names in groups:
        try:
            "\n".join(names).encode("utf-8")
        except UnicodeEncodeError:
            bad = next(x for x in names if re.search("[\ud800-\udfff]", x))
            from netctl.errors import InvalidSystemError
            raise InvalidSystemError(f"the {kind} name {excerpt(bad)} holds a lone surrogate "
                                     "(half of a UTF-16 pair, not a character), so it cannot "
                                     f"be written to {fmt}; rename it.") from None


#: A cell that netctl's readers would not read back as written unless it is quoted.
_QUOTE_ROW = re.compile(r"[\r#;\t]|\A[\s\ufeff]|\s\Z")


class SpreadsheetSafeWriter:
    """:func:`csv.writer` whose cells pass through :func:`spreadsheet_cell` (formula
    injection, OWASP "CSV Injection"; common practice)."""

    def __init__(self, fh: IO[str], *, protected: bool = False) -> None:
        """``protected``: the caller passes cells already made safe (text)."""
        import csv

        self._protected = protected
        self._w = csv.writer(fh, lineterminator="\n")
        # csv quotes a field holding the line terminator ("\n") but not a lone "\r",
        # which a reader takes for a line break, nor '#' (a comment to netctl's readers),
        # the other separators (tab, ';'), surrounding white space (which readers
        # strip) or a leading U+FEFF (a byte-order mark when first in the file): rows
        # holding one are quoted whole (see netctl.io._cells)
        self._all = csv.writer(fh, lineterminator="\n", quoting=csv.QUOTE_ALL)

    def writerow(self, row: Iterable[object]) -> None:
        cells = list(row) if self._protected else [spreadsheet_cell(c) for c in row]
        if any(isinstance(c, str) and _QUOTE_ROW.search(c) for c in cells):
            self._all.writerow(cells)
        else:
            self._w.writerow(cells)

    def writerows(self, rows: Iterable[Iterable[object]]) -> None:
        for row in rows:
            self.writerow(row)


# ---------------------------------------------------------------------- the guard
class _Run:
    """Files read during one guarded run: (device, inode) -> path as given."""

    def __init__(self) -> None:
        self.read: dict[tuple[int, int], str] = {}


_RUN: ContextVar[_Run | None] = ContextVar("netctl_guarded_run", default=None)
_GROUP: ContextVar[list[tuple[str, Path]] | None] = ContextVar("netctl_atomic_group",
                                                                default=None)


@contextmanager
def guarded_run(inputs: Iterable[str | os.PathLike[str]] = ()) -> Iterator[None]:
    """Record every file read inside the block; :func:`atomic_write` refuses to write
    over any of them. ``inputs`` are recorded up front."""
    token = _RUN.set(_Run())
    try:
        for p in inputs:
            note_input(p)
        yield
    finally:
        _RUN.reset(token)


def _file_id(path: str | os.PathLike[str]) -> tuple[int, int] | None:
    try:
        st = os.stat(path)
    except (OSError, ValueError):
        return None
    if not stat.S_ISREG(st.st_mode):
        return None  # devices, FIFOs and folders are never "overwritten" by a rename
    return (st.st_dev, st.st_ino)


def note_input(path: str | os.PathLike[str]) -> None:
    """Record ``path`` as an input of the current guarded run (no-op outside one)."""
    run = _RUN.get()
    if run is None:
        return
    fid = _file_id(path)
    if fid is not None:
        run.read.setdefault(fid, str(path))


def check_outputs(outputs: Iterable[str | os.PathLike[str] | None],
                  inputs: Iterable[str | os.PathLike[str] | None]) -> None:
    """Refuse (``OutputFileError``) an output that is one of the inputs or another output.

    Paths are compared as files (device and inode, through symlinks and hard links) when
    they exist, else by their resolved absolute path. ``None`` entries are skipped, and
    ``-`` (standard output) is never compared.
    """
    def key(p: str | os.PathLike[str]) -> object:
        fid = _file_id(p)
        return fid if fid is not None else os.path.realpath(p)

    seen_in: dict[object, str] = {}
    for p in inputs:
        if p is not None and str(p) != "-" and os.path.isfile(p):
            seen_in.setdefault(key(p), str(p))
    seen_out: dict[object, str] = {}
    for p in outputs:
        if p is None or str(p) == "-":
            continue
        k = key(p)
        if k in seen_in:
            same = seen_in[k]
            alias = "" if same == str(p) else f" (the same file as the input {same})"
            raise OutputFileError(
                f"cannot write {p}: it is an input of the command{alias}; netctl never "
                "writes over its inputs. Choose another output file name.")
        if k in seen_out and _is_regular_or_missing(p):
            raise OutputFileError(f"cannot write {p}: named twice as an output (also as {seen_out[k]}); "
                                  "give each output its own file name.")
        seen_out[k] = str(p)


def _is_regular_or_missing(p: str | os.PathLike[str]) -> bool:
    try:
        return stat.S_ISREG(os.stat(p).st_mode)
    except OSError:
        return True


# ---------------------------------------------------------------------- writing
@contextmanager
def atomic_group() -> Iterator[None]:
    """Make every :func:`atomic_write` inside the block all-or-nothing together.

    Each file is written in full to a temporary file first; only when the whole block
    succeeds are they renamed into place, one after the other. On any error (or an
    interrupt) every temporary file is removed and no target is touched.
    """
    outer = _GROUP.get()
    if outer is not None:  # nested: the outermost group commits
        yield
        return
    pending: list[tuple[str, Path]] = []
    token = _GROUP.set(pending)
    try:
        yield
    except BaseException:
        _GROUP.reset(token)
        for tmp, _ in pending:
            _unlink(tmp)
        raise
    _GROUP.reset(token)
    try:
        for i, (tmp, target) in enumerate(pending):
            os.replace(tmp, target)
    except OSError as exc:
        for tmp, _ in pending[i:]:
            _unlink(tmp)
        raise _write_error(target, exc) from None


@contextmanager
def ungrouped() -> Iterator[None]:
    """Inside an :func:`atomic_group`, write immediately (for a scratch file read back at
    once, such as the uncompressed copy of a ``.gz`` output)."""
    token = _GROUP.set(None)
    try:
        yield
    finally:
        _GROUP.reset(token)


def _unlink(path: str) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


_FIXES = {errno.ENOSPC: "the disk is full; free some space or write to another disk",
          errno.EDQUOT: "the disk quota is used up; free some space or write elsewhere",
          errno.EACCES: "permission denied; write to a folder you may write to",
          errno.EPERM: "permission denied; write to a folder you may write to",
          errno.EROFS: "the file system is read-only; write elsewhere",
          errno.ENAMETOOLONG: "the file name is too long; choose a shorter one"}


def _write_error(path: object, exc: BaseException) -> OutputFileError:
    if isinstance(exc, UnicodeEncodeError):
        bad = exc.object[exc.start:exc.end] if isinstance(exc.object, str) else ""
        return OutputFileError(f"cannot write {path}: the text holds {bad!r}, which is not a "
                               "valid character (a lone surrogate?); rename that element.")
    err = getattr(exc, "errno", None)
    fix = _FIXES.get(err, f"{getattr(exc, 'strerror', None) or exc}; check the folder "
                     "exists and is writable") if err is not None else str(exc)
    return OutputFileError(f"cannot write {path}: {fix}. Nothing was written.")


def _check_target(target: Path, path: object) -> str:
    """``"stdout"``, ``"through"`` (a special file) or ``"rename"``; errors for the rest."""
    if str(path) == "-":
        return "stdout"
    try:
        st = os.stat(target)
    except FileNotFoundError:
        st = None
    except OSError as exc:
        raise _write_error(path, exc) from None
    if st is not None and stat.S_ISDIR(st.st_mode):
        raise OutputFileError(f"cannot write {path}: it is a folder; give a file name, e.g. "
                              f"{os.path.join(str(path), 'result' + (target.suffix or '.json'))}.")
    if st is not None and not stat.S_ISREG(st.st_mode):
        return "through"
    parent = target.parent if str(target.parent) else Path(".")
    if not parent.is_dir():
        raise OutputFileError(f"cannot write {path}: the folder {str(parent)!r} does not exist; create it "
                              "first or choose another place.")
    run = _RUN.get()
    if run is not None and st is not None:
        same = run.read.get((st.st_dev, st.st_ino))
        if same is not None:
            alias = "" if same == str(path) else f" (the same file as {same})"
            raise OutputFileError(f"cannot write {path}: it was read as an input{alias}; netctl "
                                  "never writes over its inputs. Choose another output name.")
    return "rename"


@contextmanager
def atomic_write(path: str | os.PathLike[str], mode: str = "w") -> Iterator[IO[Any]]:
    """Write to a temporary file beside ``path`` and rename it into place on success.

    On any error the temporary file is removed and ``path`` is left untouched, so no
    partial output file is ever seen. The file gets the permissions ``open()`` would give
    it (0666 less the umask). ``-`` writes to standard output and a special file (a
    device, a FIFO) is written through, not replaced. Inside :func:`guarded_run` a file
    read as an input is refused; inside :func:`atomic_group` the rename waits for the
    group. Failures (missing folder, disk full, permission) raise
    :class:`~netctl.errors.OutputFileError` naming the file.
    """
    target = Path(path)
    how = _check_target(target, path)
    kwargs: dict[str, str] = {} if "b" in mode else {"encoding": "utf-8", "newline": "\n"}
    if how != "rename":
        try:
            if how == "stdout":
                sys.stdout.flush()
                fh: Any = sys.stdout.buffer if "b" in mode else sys.stdout
                yield fh
                fh.flush()
            else:
                with open(target, mode, **kwargs) as fh:  # type: ignore[call-overload]
                    yield fh
        except (OSError, UnicodeEncodeError) as exc:
            if isinstance(exc, NetctlError):
                raise
            raise _write_error(path, exc) from None
        return
    directory = target.parent if str(target.parent) else Path(".")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name[:64]}.", suffix=".tmp",
                                   dir=directory)
    except OSError as exc:
        raise _write_error(path, exc) from None
    try:
        with os.fdopen(fd, mode, **kwargs) as fh:  # type: ignore[call-overload]
            yield fh
        # mkstemp creates the file private (0600); give it the mode a plain open() would
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        group = _GROUP.get()
        if group is not None:
            group.append((tmp, target))
        else:
            os.replace(tmp, target)
    except BaseException as exc:
        _unlink(tmp)
        if isinstance(exc, (OSError, UnicodeEncodeError)) and not isinstance(
                exc, NetctlError):
            raise _write_error(path, exc) from None
        raise
