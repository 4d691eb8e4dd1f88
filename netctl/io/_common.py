"""Helpers shared by the readers and writers: opening files, locating errors, atomic writes."""

from __future__ import annotations

import gzip
import os
import tempfile
import zlib
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import IO

from netctl.errors import MissingFileError, NetworkFileError

__all__ = ["read_text", "atomic_write", "file_error"]

#: Refuse to read text files larger than this many bytes into memory at once (the
#: edge-list reader streams; this guards the small-format readers).
MAX_TEXT_BYTES = 8 * 1024**3


def file_error(path: object, line: int | None, message: str) -> NetworkFileError:
    """A :class:`NetworkFileError` whose message starts with ``path:line:``."""
    where = f"{path}:{line}" if line is not None else f"{path}"
    return NetworkFileError(f"{where}: {message}", path=path, line=line)


def read_text(path: str | os.PathLike[str]) -> str:
    """Whole file as text (UTF-8, gzip transparently), with clear errors."""
    data = read_bytes(path)
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise file_error(path, line, f"the bytes {data[exc.start:exc.start + 4]!r} are not "
                         "UTF-8 text. Save the file as UTF-8 (or plain ASCII).") from None


def read_bytes(path: str | os.PathLike[str]) -> bytes:
    """Whole file as bytes, gunzipped when it is gzip-compressed."""
    p = Path(path)
    if not p.exists():
        raise MissingFileError(f"{path}: no such file. Check the path and the working directory.")
    if p.is_dir():
        raise MissingFileError(f"{path}: is a directory; give a network file.")
    try:
        with open(p, "rb") as fh:
            head = fh.read(2)
            fh.seek(0)
            if head == b"\x1f\x8b":
                try:
                    with gzip.open(fh) as gz:
                        return gz.read()
                except (EOFError, OSError, zlib.error) as exc:
                    raise file_error(path, None, f"the gzip stream is damaged or truncated "
                                     f"({exc}). Compress the file again.") from None
            return fh.read()
    except PermissionError:
        raise MissingFileError(f"{path}: permission denied; check the file's permissions.") from None


@contextmanager
def atomic_write(path: str | os.PathLike[str], mode: str = "w") -> Iterator[IO]:
    """Write to a temporary file beside ``path`` and rename it into place on success.

    On any error the temporary file is removed and ``path`` is left untouched, so no
    partial output file is ever seen. The file gets the permissions ``open()`` would give
    it (0666 less the umask).
    """
    target = Path(path)
    directory = target.parent if str(target.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=directory)
    try:
        kwargs: dict[str, str] = {} if "b" in mode else {"encoding": "utf-8", "newline": "\n"}
        with os.fdopen(fd, mode, **kwargs) as fh:  # type: ignore[call-overload]
            yield fh
        # mkstemp creates the file private (0600); give it the mode a plain open() would
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
