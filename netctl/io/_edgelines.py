"""Finding edge-list lines again for a warning: the line of a given link, and the
lines that hold one name beside a separator (``c,``).

The scanner of :mod:`netctl.io._edgescan` keeps no line numbers per link (that would
cost a store per link on its fast path). These helpers look lines up afterwards, only
when a warning needs one: the line of the first repeated link (a pass up to that link),
and the lines of one name beside a separator, only in the chunks where the scanner
found a line with a single name. Both walk the bytes with the scanner's own rules
(separators ``,`` ``;`` tab, space, ``\\r``, ``\\v``, ``\\f``; ``#`` starts a comment).
"""

from __future__ import annotations

import os

import numpy as np

from netctl._jit import njit
from netctl.io._edgescan import _CLASS

__all__ = ["lone_separated", "nth_link_line", "line_of_link", "line_text", "first_repeat",
           "LONE_SEPARATED_HELP"]

#: The fix named by the warning about a line of one name beside a separator.
LONE_SEPARATED_HELP = (
    "If a link was meant, write the missing name; to declare a state with no link, "
    "write its name alone on the line, with no separator (see docs/FORMATS.md).")

# byte classes, the scanner's own (0 a name's byte, 1 separator, 2 line break, 3
# comment); _LOUD marks the separators that make a single name suspect (comma,
# semicolon, tab)
_SEP = _CLASS
_LOUD = np.zeros(256, np.uint8)
for _c in b",;\t":
    _LOUD[_c] = 1


@njit(cache=True, nogil=True)
def _names_part(buf: np.ndarray, p: int, n: int) -> tuple[int, int, int]:
    """The part of the line starting at ``p`` before its comment or end: ``(names in
    it, its commas, semicolons and tabs, where it ends)``."""
    nf = 0
    loud = 0
    intok = False
    q = p
    while q < n:
        c = _SEP[buf[q]]
        if c == 2 or c == 3:
            break
        if c == 1:
            intok = False
            loud += _LOUD[buf[q]]
        elif not intok:
            nf += 1
            intok = True
        q += 1
    return nf, loud, q


@njit(cache=True, nogil=True)
def lone_separated(buf: np.ndarray, start: int) -> tuple[int, int, int, int]:
    """Lines of ``buf[start:]`` (whole lines) holding exactly one name and, outside a
    comment, a comma, semicolon or tab: ``(count, first line's index from start (0 for
    the line at start), its first byte, its end)``; ``(0, -1, 0, 0)`` when none."""
    n = buf.size
    p = start
    line = 0
    count = 0
    first = -1
    fs = 0
    fe = 0
    while p < n:
        nf, loud, q = _names_part(buf, p, n)
        e = q
        while q < n and buf[q] != 10:
            q += 1
        if nf == 1 and loud > 0:
            if count == 0:
                first = line
                fs = p
                fe = e
            count += 1
        line += 1
        p = q + 1
    return count, first, fs, fe


@njit(cache=True, nogil=True)
def nth_link_line(buf: np.ndarray, need: int) -> tuple[int, int, int]:
    """Walk the whole lines of ``buf`` counting link lines (two names or more): returns
    ``(links counted, lines walked, index of the line of link number need)``, the last
    -1 when ``buf`` holds fewer than ``need + 1`` links (all lines are then walked)."""
    n = buf.size
    p = 0
    links = 0
    line = 0
    while p < n:
        nf, _, q = _names_part(buf, p, n)
        while q < n and buf[q] != 10:
            q += 1
        if nf >= 2:
            if links == need:
                return links, line, line
            links += 1
        line += 1
        p = q + 1
    return links, line, -1


def line_of_link(path: str | os.PathLike[str], k: int, *, header: bool,
                 chunk_bytes: int = 1 << 24) -> int | None:
    """Line number (from 1) of link number ``k`` (from 0, in file order) of the edge list
    at ``path``; ``header``: the first line of two names or more is a header row, not a
    link. None when the file holds fewer links (it changed since it was read)."""
    from netctl.io._edgechunks import open_edge_file

    need = k + (1 if header else 0)
    line0 = 1
    with open_edge_file(path) as fh:
        carry = b""
        while True:
            data = fh.read(chunk_bytes)
            buf = carry + data
            if data:
                cut = buf.rfind(b"\n") + 1
                if not cut:
                    carry = buf
                    continue
                chunk, carry = buf[:cut], buf[cut:]
            else:
                chunk, carry = buf, b""
            links, lines, at = nth_link_line(np.frombuffer(chunk, np.uint8), need)
            if at >= 0:
                return line0 + at
            need -= links
            line0 += lines
            if not data:
                return None


def line_text(buf: bytes, start: int, end: int) -> str:
    """The text of ``buf[start:end]`` (one line), for a message."""
    return buf[start:end].decode("utf-8", errors="replace").strip()


@njit(cache=True, nogil=True)
def first_repeat(rows: np.ndarray, cols: np.ndarray, n: int) -> tuple[int, int]:
    """``(k, j)``: the smallest ``k`` such that ``(rows[k], cols[k])`` equals an earlier
    pair, and the first ``j`` holding that pair; ``(-1, -1)`` when no pair repeats.

    Entries are bucketed by row (a counting sort that keeps file order), then each row's
    entries are sorted by column, stably (insertion sort; a merge sort above 32): the
    later entries of a run of equal columns are repeats. O(len + n) for rows of bounded
    length."""
    m = rows.size
    start = np.zeros(n + 1, np.int64)
    for k in range(m):
        start[rows[k] + 1] += 1
    for i in range(n):
        start[i + 1] += start[i]
    fill = start[:-1].copy()
    at = np.empty(m, np.int64)  # entry numbers, bucketed by row in file order
    for k in range(m):
        r = rows[k]
        at[fill[r]] = k
        fill[r] += 1
    best = -1
    orig = -1
    for i in range(n):
        a = start[i]
        b = start[i + 1]
        if b - a < 2:
            continue
        if b - a > 32:
            o = np.argsort(cols[at[a:b]], kind="mergesort")
            at[a:b] = at[a:b][o]
        else:
            for t in range(a + 1, b):
                v = at[t]
                c = cols[v]
                u = t - 1
                while u >= a and cols[at[u]] > c:
                    at[u + 1] = at[u]
                    u -= 1
                at[u + 1] = v
        run = a  # the first entry of the current run of equal columns
        for t in range(a + 1, b):
            if cols[at[t]] != cols[at[run]]:
                run = t
            elif best < 0 or at[t] < best:
                best = at[t]
                orig = at[run]
    return best, orig
