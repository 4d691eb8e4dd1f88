"""Reading an edge-list file: opening it (gzip too), its header, and streaming it in
chunks through the compiled scanner of :mod:`netctl.io._edgescan`.

:class:`ChunkScan` drives the scanner over one file in one name mode: it reads chunks
(a line is never cut), skips comments and the header, splits large integer-named chunks
over two threads, grows the name table and buffers when the scanner asks, turns the
scanner's error codes into one-line messages with the file and line, and assembles the
:class:`~netctl.io.edgelist.EdgeArrays`. The public entry points are in
:mod:`netctl.io.edgelist`.
"""

from __future__ import annotations

import gzip
import os
import re
import threading
import zlib
from pathlib import Path
from typing import IO, TYPE_CHECKING

import numpy as np

from netctl._parts import DistinctNames
from netctl.errors import LimitError, MissingFileError
from netctl.io import _edgescan as _k
from netctl.io._common import excerpt, file_error, limit_error, max_bytes, note_input
from netctl.io._edgecolumns import EMPTY_CELL_HELP, empty_cell, empty_weight, mixed_columns
from netctl.io._edgenames import cat_arrays, factorize_ints, int_order, unquote_names

if TYPE_CHECKING:
    from netctl.io.edgelist import EdgeArrays

__all__ = ["ChunkScan", "NotInt", "open_edge_file", "fields", "is_header",
           "PARALLEL_MIN_BYTES", "MAX_LINE_BYTES"]

#: Chunks of integer-named links at least this large are scanned in two threads.
PARALLEL_MIN_BYTES = 1 << 22

_HEADER_WORDS = {"source", "target", "from", "to", "src", "dst", "weight", "u", "v", "tail",
                 "head", "node1", "node2", "origin", "destination", "w", "node", "name",
                 "sources", "targets", "weights", "value"}
_SPLIT = re.compile(r"[,\t; \r\v\f]+")
_NUMBER = re.compile(r"[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\Z|[-+]?(inf|nan)\Z", re.I)
#: Longest edge-list line read (bytes); a longer one is refused with its line number.
MAX_LINE_BYTES = 1 << 20

_FORMAT_HELP = ("Columns are separated by commas, tabs, semicolons or spaces; '#' starts a "
                "comment; names may not contain separators (see docs/FORMATS.md).")


class NotInt(Exception):
    """A name that is not a canonical integer: scan again with string names."""


def open_edge_file(path: str | os.PathLike[str]) -> IO[bytes]:
    p = Path(path)
    if not p.exists():
        raise MissingFileError(f"{path}: no such file. Check the path and the working directory.")
    if p.is_dir():
        raise MissingFileError(f"{path}: is a directory; give a network file.")
    try:
        raw = open(p, "rb")
        note_input(p)
    except PermissionError:
        raise MissingFileError(f"{path}: permission denied; check the file's permissions.") from None
    head = raw.read(2)
    raw.seek(0)
    if head == b"\x1f\x8b":
        raw.close()
        return gzip.open(p, "rb")  # type: ignore[return-value]
    return raw


def fields(text: str) -> list[str]:
    return [f for f in _SPLIT.split(text.split("#", 1)[0].strip()) if f]


def _line_text(chunk: bytes, start: int, end: int) -> str:
    return chunk[start:end].decode("utf-8", errors="replace").strip()


def is_header(f: list[str]) -> bool:
    """Whether the first content line's fields are a header row, not a link (its words
    may be in double quotes, as a spreadsheet quoting every field writes them)."""
    f = [x[1:-1] if len(x) > 1 and x[0] == '"' == x[-1] else x for x in f]
    return (len(f) >= 2 and all(x.lower() in _HEADER_WORDS for x in f[:2])
            and f[0].lower() != f[1].lower()  # 'u,u,...' is a self-loop
            and (len(f) < 3 or _NUMBER.match(f[2]) is None))  # 'u,v,0.5' a link


class ChunkScan:
    """State of one pass over a file in one name mode."""

    def __init__(self, path: str | os.PathLike[str], mode: int, chunk_bytes: int) -> None:
        self.path = path
        self.mode = mode
        self.chunk_bytes = chunk_bytes
        self.st = np.zeros(_k.ST_SIZE, np.int64)
        self.st[1] = 1  # line number
        # link arrays shared by all chunks, grown by doubling (no per-chunk copies)
        self.cap = 0
        self.src = np.empty(0, np.int64)
        self.dst = np.empty(0, np.int64)
        self.w = np.empty(0, np.float64)
        self.iso: list[np.ndarray] = []
        try:
            self.size_hint = os.path.getsize(path)
        except OSError:
            self.size_hint = 0
        self.header_done = False
        self.quoted = False  # a name starts with an apostrophe (spreadsheet quoting)
        self.header = False  # the first content line was a header row
        #: lines of one name beside a separator: their number, the first's line and text
        self.lone: tuple[int, int, str] = (0, 0, "")
        self.chunk_len = 0
        self.half: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None
        # string-mode name table
        self.table = np.full((1024, 3), -1, np.int64)
        self.names_buf = np.zeros(1 << 16, np.uint8)
        self.name_pos = np.zeros((256, 2), np.int64)
        self.name_line = np.zeros(256, np.int64)

    # -------------------------------------------------------------- reading
    def run(self) -> None:
        path = self.path
        limit = max_bytes()
        with open_edge_file(path) as fh:
            carry = b""
            first = True
            total = 0
            gz = isinstance(fh, gzip.GzipFile)
            while True:
                try:
                    data = fh.read(self.chunk_bytes)
                except (EOFError, OSError, zlib.error) as exc:
                    raise file_error(path, int(self.st[1]), f"the gzip stream is damaged or "
                                     f"truncated here ({exc}). Compress the file again, or "
                                     "check that the download or copy completed.") from None
                eof = not data
                total += len(data)
                if gz and total > limit:
                    raise limit_error(path, "the decompressed content", total, limit)
                if len(carry) > MAX_LINE_BYTES:
                    raise LimitError(f"{path}:{int(self.st[1])}: the line is longer than "
                                     f"{MAX_LINE_BYTES:,} bytes (it starts "
                                     f"{excerpt(carry[:80])}); an edge-list line holds two "
                                     "names and a weight. Check the file (is it binary or "
                                     "missing its line breaks?).", path=path,
                                     line=int(self.st[1]))
                buf = carry + data if carry else data
                if first and buf:
                    first = False
                    if buf[:2] in (b"\xff\xfe", b"\xfe\xff"):
                        raise file_error(path, 1, "the file is UTF-16 text; save it as UTF-8 "
                                         "(or plain ASCII) and read it again.")
                    if buf[:3] == b"\xef\xbb\xbf":
                        buf = buf[3:]
                if eof:
                    chunk, carry = buf, b""
                else:
                    cut = buf.rfind(b"\n")
                    if cut < 0:
                        carry = buf
                        continue
                    chunk, carry = buf[:cut + 1], buf[cut + 1:]
                if chunk:
                    self._chunk(chunk)
                if eof:
                    break

    def _chunk(self, chunk: bytes) -> None:
        st = self.st
        nul = chunk.find(b"\x00")
        if nul >= 0:
            line = int(st[1]) + chunk.count(b"\n", 0, nul)
            raise file_error(self.path, line, "found a NUL byte: this is not a text edge list "
                             "(a binary or UTF-16 file?). Save the network as UTF-8 text, or "
                             "give --format for a binary format (.npz, .npy).")
        pos = 0
        if not self.header_done:
            pos = self._header(chunk)
            if pos < 0:
                return
        arr = np.frombuffer(chunk, np.uint8)
        line0, lone_before = int(st[1]), len(self.iso)
        self._links(chunk, arr, pos)
        if len(self.iso) > lone_before:  # single names here: any beside a separator?
            self._lone_separated(chunk, arr, pos, line0)

    def _lone_separated(self, chunk: bytes, arr: np.ndarray, pos: int, line0: int) -> None:
        """Count the lines of ``chunk`` (from ``pos``, line ``line0``) holding one name
        beside a comma, semicolon or tab; keep the first one's line and text. Run only
        on chunks where the scanner found a line with a single name."""
        from netctl.io._edgelines import line_text, lone_separated

        count, first, fs, fe = lone_separated(arr, pos)
        if count:
            n, line, text = self.lone
            if not n:
                line, text = line0 + int(first), line_text(chunk, int(fs), int(fe))
            self.lone = (n + int(count), line, text)

    def _links(self, chunk: bytes, arr: np.ndarray, pos: int) -> None:
        """Scan the links of ``chunk`` from byte ``pos`` (after comments and a header)."""
        st = self.st
        self.chunk_len = len(chunk)
        split = -1
        if (self.mode == _k.MODE_INT and len(chunk) - pos >= PARALLEL_MIN_BYTES
                and (os.cpu_count() or 1) > 1):
            m = chunk.find(b"\n", pos + (len(chunk) - pos) // 2)
            if 0 <= m < len(chunk) - 1:
                split = m + 1
        if split < 0:
            cap = chunk.count(b"\n", pos) + 1
            self._room(cap, chunk)
            st[0] = pos
            st[4] = st[5] = 0
            status, iso, fb = self._run(arr, st, self.src, self.dst, self.w, cap)
            self._finish(chunk, st, status, iso, fb, 0)
            return
        # integer names and a large chunk: scan the two halves in two threads (the
        # compiled scanner releases the GIL), then append the second half's links
        cap_a = chunk.count(b"\n", pos, split) + 1
        cap_b = chunk.count(b"\n", split) + 1
        self._room(cap_a + cap_b, chunk)
        st_b = st.copy()
        st_b[0] = split
        st_b[1] = st[1] + cap_a - 1
        st_b[3] = st_b[4] = st_b[5] = st_b[8] = st_b[9] = 0
        st[0] = pos
        st[4] = st[5] = 0
        if self.half is None or self.half[0].size < cap_b:  # reused across chunks
            self.half = (np.empty(cap_b, np.int64), np.empty(cap_b, np.int64),
                         np.empty(cap_b, np.float64))
        src_b, dst_b, w_b = self.half
        out: dict[str, tuple[int, np.ndarray, tuple[np.ndarray, ...]]] = {}

        def second_half() -> None:
            out["b"] = self._run(arr, st_b, src_b, dst_b, w_b, cap_b)

        worker = threading.Thread(target=second_half)
        worker.start()
        try:
            status_a, iso_a, fb_a = self._run(arr[:split], st, self.src, self.dst, self.w,
                                              cap_a)
        finally:
            worker.join()
        self._finish(chunk, st, status_a, iso_a, fb_a, 0)
        status_b, iso_b, fb_b = out["b"]
        if status_b == _k.STATUS_NOT_INT:
            raise NotInt
        if status_b == _k.STATUS_ERROR or (st[2] and st_b[2] and st[2] != st_b[2]):
            # rescan the second half in order, so the first problem is the one reported
            st[0] = split
            st[4] = st[5] = 0
            status, iso, fb = self._run(arr, st, self.src, self.dst, self.w, cap_b)
            self._finish(chunk, st, status, iso, fb, 0)
            return
        ne, nb = int(st[3]), int(st_b[3])
        self.src[ne:ne + nb] = src_b[:nb]
        self.dst[ne:ne + nb] = dst_b[:nb]
        if st_b[2] == 3:
            self.w[ne:ne + nb] = w_b[:nb]
        st[3] = ne + nb
        st[1] = st_b[1]
        if not st[2]:
            st[2] = st_b[2]
        if st_b[8]:
            if not st[8]:
                st[9] = st_b[9]
            st[8] += st_b[8]
        self._finish(chunk, st_b, _k.STATUS_DONE, iso_b, fb_b, ne)

    def _run(self, arr: np.ndarray, st: np.ndarray, src: np.ndarray, dst: np.ndarray,
             w: np.ndarray, cap: int) -> tuple[int, np.ndarray, tuple[np.ndarray, ...]]:
        """Run the scanner over ``arr`` from ``st[0]``, growing the name table and the
        (small, rarely used) single-name and weight-fallback arrays as it asks."""
        iso = np.empty(256, np.int64)
        fb = tuple(np.empty(256, np.int64) for _ in range(4))
        while True:
            status = _k.scan_chunk(arr, self.mode, st, src, dst, w, iso, fb[0], fb[1], fb[2],
                                   fb[3], self.table, self.names_buf, self.name_pos,
                                   self.name_line)
            if status == _k.STATUS_GROW:
                self._grow()
            elif status == _k.STATUS_FULL:
                if st[4] >= iso.size:
                    iso = np.concatenate([iso, np.empty(iso.size, np.int64)])
                if st[5] >= fb[0].size:
                    fb = tuple(np.concatenate([a, np.empty(a.size, np.int64)]) for a in fb)
            else:
                return status, iso, fb

    def _finish(self, chunk: bytes, st: np.ndarray, status: int, iso: np.ndarray,
                fb: tuple[np.ndarray, ...], offset: int) -> None:
        """Raise for a failed scan; otherwise convert fallback weights, keep lone names."""
        if status == _k.STATUS_NOT_INT:
            raise NotInt
        if status == _k.STATUS_ERROR:
            self._error(chunk, st)
        ni, nfb = int(st[4]), int(st[5])
        if nfb:
            self._fallback_weights(chunk, self.w, fb[0][:nfb] + offset, fb[1][:nfb],
                                   fb[2][:nfb], fb[3][:nfb])
        if ni:
            self.iso.append(iso[:ni].copy())

    def _room(self, n_lines: int, chunk: bytes) -> None:
        """Make the link arrays hold at least ``n_lines`` more links."""
        ne = int(self.st[3])
        if ne + n_lines <= self.cap:
            return
        guess = 0
        if not self.cap:  # first guess: the whole file at this chunk's line density
            guess = int(self.size_hint / max(len(chunk), 1) * n_lines * 1.05)
        cap = max(ne + n_lines, 2 * self.cap, guess)
        weighted = self.st[2] == 3
        for name in ("src", "dst", "w"):
            old = getattr(self, name)
            new = np.empty(cap, old.dtype)
            if name != "w" or weighted:
                new[:ne] = old[:ne]
            setattr(self, name, new)
        self.cap = cap

    def _header(self, chunk: bytes) -> int:
        """Skip comments up to the first content line; skip that line too if a header."""
        pos = 0
        st = self.st
        while pos < len(chunk):
            end = chunk.find(b"\n", pos)
            end = len(chunk) if end < 0 else end
            text = chunk[pos:end].decode("utf-8", errors="replace")
            f = fields(text)
            if f:
                self.header_done = True
                if is_header(f):
                    if len(f) > 3:
                        raise file_error(self.path, int(st[1]), f"the header names {len(f)} "
                                         f"columns ({excerpt(text.strip())}); expected 'source "
                                         "target [weight]'.")
                    self.header = True
                    st[1] += 1
                    return end + 1
                return pos
            st[1] += 1
            pos = end + 1
        return -1

    def _grow(self) -> None:
        """Double whichever of the name table and buffers is short of room."""
        st = self.st
        nn, used = int(st[6]), int(st[7])
        room = nn + 2 * _k.STR_BATCH + 2  # a fast-path batch may add two names a line
        if self.name_pos.shape[0] < room:
            pos = np.zeros((max(2 * self.name_pos.shape[0], room), 2), np.int64)
            pos[:nn] = self.name_pos[:nn]
            line = np.zeros(pos.shape[0], np.int64)
            line[:nn] = self.name_line[:nn]
            self.name_pos, self.name_line = pos, line
        if self.names_buf.size < used + self.chunk_len + 2:  # names + their line breaks
            buf = np.zeros(max(2 * self.names_buf.size, used + self.chunk_len + 2), np.uint8)
            buf[:used] = self.names_buf[:used]
            self.names_buf = buf
        if self.table.shape[0] < 2 * room:
            size = 2 * self.table.shape[0]
            while size < 2 * room:
                size *= 2
            self.table = np.full((size, 3), -1, np.int64)
            _k.rehash(self.table, self.names_buf, self.name_pos, nn)

    def _error(self, chunk: bytes, st: np.ndarray) -> None:
        line = int(st[1])
        text = _line_text(chunk, int(st[11]), int(st[12]))
        nf = len(fields(text))
        if st[10] == _k.ERR_EMPTY:
            col = empty_cell(chunk[int(st[11]):int(st[12])].split(b"#", 1)[0])
            raise file_error(self.path, line, f"the {col or 'a'} column is empty in "
                             f"{excerpt(text)}; expected 'source target [weight]' with a name "
                             "in each of the first two columns. Write the missing "
                             f"{col or 'value'} (or remove the line); {EMPTY_CELL_HELP}")
        if st[10] == _k.ERR_TOO_MANY:
            raise file_error(self.path, line, f"expected 'source target [weight]', found {nf} "
                             f"columns in {excerpt(text)}. {_FORMAT_HELP}")
        fix = "Give a weight on every link line or on none (a line with one name declares a state)."
        where = mixed_columns(self.path, line, text, nf, is_header)
        if where is None:
            raise file_error(self.path, line, f"this line has {nf} columns but earlier lines "
                             f"have {int(st[2])}: {excerpt(text)}. {fix}")
        if where.line != line:  # an earlier line's weight is empty: that line is to correct
            raise file_error(self.path, where.line, f"the weight column of this line is "
                             f"empty ({excerpt(where.text)} ends with a separator), but line "
                             f"{line} gives a weight ({excerpt(text)}). {fix}")
        raw = chunk[int(st[11]):int(st[12])].decode("utf-8", errors="replace")
        said = ("the weight column of this line is empty" if empty_weight(raw) else
                f"this line has {nf} columns")
        if "\t\t" in raw.split("#", 1)[0].strip():
            fix += " Two tabs in a row count as one: write a name in every column."
        raise file_error(self.path, line, f"{said}: {excerpt(text)}, but earlier link lines "
                         f"have {int(st[2])} (the first: line {where.first_line}, "
                         f"{excerpt(where.first_text)}). {fix}")

    def _fallback_weights(self, chunk: bytes, w: np.ndarray, edges: np.ndarray,
                          lines: np.ndarray, starts: np.ndarray, ends: np.ndarray) -> None:
        tokens = [chunk[a:b] for a, b in zip(starts.tolist(), ends.tolist())]
        try:
            vals = np.array([float(t) for t in tokens], dtype=np.float64)
        except ValueError:
            for t, ln in zip(tokens, lines.tolist()):
                try:
                    float(t)
                except ValueError:
                    tok = t.decode("utf-8", errors="replace")
                    raise file_error(self.path, ln, f"the weight {excerpt(tok)} is not a number. Use "
                                     "a decimal number such as 0.5 or 1e-3, or leave the "
                                     "weight column out.") from None
            raise AssertionError("unreachable")  # pragma: no cover
        bad = ~np.isfinite(vals)
        if bad.any():
            k = int(np.argmax(bad))
            tok = tokens[k].decode("utf-8", errors="replace")
            raise file_error(self.path, int(lines[k]), f"the weight {excerpt(tok)} is not a finite "
                             "number; give a finite weight (or leave the link out).")
        w[edges] = vals
        zero = vals == 0
        if zero.any():
            if self.st[8] == 0:
                self.st[9] = int(lines[np.argmax(zero)])
            self.st[8] += int(zero.sum())

    # -------------------------------------------------------------- results
    def result(self) -> EdgeArrays:
        from netctl.io.edgelist import EdgeArrays

        ne = int(self.st[3])
        src = self.src[:ne]
        dst = self.dst[:ne]
        iso = cat_arrays(self.iso)
        weighted = self.st[2] == 3
        w = self.w[:ne] if weighted else None
        n_lines = int(self.st[1]) - 1
        if self.mode == _k.MODE_INT:
            names, (src, dst) = factorize_ints(src, dst, iso)
        else:
            names = self._decode_names()
            if self.quoted:
                names, src, dst = unquote_names(names, src, dst)
            names, src, dst = int_order(names, src, dst)
        if not names:
            raise file_error(self.path, None, "the file holds no links and no states. "
                             "Expected lines 'source target [weight]' (see docs/FORMATS.md).")
        # distinct str by construction (hash table or factorization of the values)
        return EdgeArrays(src, dst, w, DistinctNames(names), n_lines, int(self.st[9]),
                          self.lone, self.header)

    def _decode_names(self) -> tuple[str, ...]:
        """The names in id order: the buffer holds each name followed by a line break, so
        one decode and one split make them all."""
        nn, used = int(self.st[6]), int(self.st[7])
        raw = self.names_buf[:used].tobytes()
        try:
            text = raw.decode("ascii") if raw.isascii() else raw.decode("utf-8")
        except UnicodeDecodeError as exc:
            starts = self.name_pos[:nn, 0]
            i = int(np.searchsorted(starts, exc.start, side="right")) - 1
            a, n = int(starts[i]), int(self.name_pos[i, 1])
            raise file_error(self.path, int(self.name_line[i]), f"the name "
                             f"{raw[a:a + min(n, 80)]!r} is not UTF-8 text. Save the file as "
                             "UTF-8 (or plain ASCII).") from None
        self.quoted = raw.find(b"'") >= 0 and (raw.startswith(b"'") or b"\n'" in raw)
        names = text.split("\n")
        names.pop()  # after the last line break
        return tuple(names)
