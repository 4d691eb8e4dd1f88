"""Plain-Python reading of small edge lists (no compiled scanner, no numba).

A network of a few hundred links is read faster by Python's own ``bytes.split`` than by
loading the compiled scanner of :mod:`netctl.io._edgescan` (numba's import and first
cache load cost about 0.4 s). This path gives exactly the :class:`EdgeArrays` that the
scanner gives — same names in the same order, same indices, same weights bit for bit,
same line counts (``tests/test_edgesmall.py`` checks both on generated files) — for
well-formed files only: on anything it is not sure of (a problem to report, gzip, NUL
bytes, text that is not UTF-8, a weight that is not a finite number) it returns
``None`` and the caller runs the scanner, whose messages are the reference.
"""

from __future__ import annotations

import os
import re
from collections.abc import Callable
from typing import TYPE_CHECKING

import numpy as np

from netctl.io._edgecolumns import empty_cell

if TYPE_CHECKING:
    from netctl.io.edgelist import EdgeArrays

__all__ = ["SMALL_BYTES", "read_small"]

#: Files up to this many bytes are read here (common practice, no source: about 2,000
#: links, which Python reads in a few milliseconds).
SMALL_BYTES = 1 << 15

_TOKEN = re.compile(rb"[^,\t; \r\v\f]+")
_CANONICAL_INT = re.compile(rb"-?(0|[1-9][0-9]{0,17})\Z")  # the scanner's integer names
_NOT_MINUS_ZERO = b"-0"
_LOUD = re.compile(rb"[,;\t]")  # beside a single name: maybe a link missing a name


def read_small(path: str | os.PathLike[str], is_header: Callable[[list[str]], bool],
               int_name: re.Pattern[str]) -> EdgeArrays | None:
    """The edge arrays of a small, well-formed file, or ``None`` (use the scanner)."""
    from netctl._parts import DistinctNames
    from netctl.io.edgelist import EdgeArrays

    try:
        if os.path.getsize(path) > SMALL_BYTES or not os.path.isfile(path):
            return None
        with open(path, "rb") as fh:
            data = fh.read(SMALL_BYTES + 1)
    except OSError:
        return None
    if (len(data) > SMALL_BYTES or not data or data[:2] in (b"\x1f\x8b", b"\xff\xfe", b"\xfe\xff")
            or b"\x00" in data):
        return None
    if data[:3] == b"\xef\xbb\xbf":
        data = data[3:]
    try:
        data.decode("utf-8")
    except UnicodeDecodeError:
        return None
    lines = data.split(b"\n")
    if lines and lines[-1] == b"":
        lines.pop()  # the file ends with a line break: no line after it
    header_seen = False
    ncols = 0
    first_zero = 0
    seen: dict[bytes, int] = {}
    tokens: list[bytes] = []  # every name token, in file order
    src_tok: list[int] = []  # positions in ``tokens``
    dst_tok: list[int] = []
    iso_tok: list[int] = []
    weights: list[float] = []
    header = False
    lone: list[tuple[int, bytes]] = []  # single names beside a comma, semicolon or tab
    for lineno, raw in enumerate(lines, start=1):
        body = raw.split(b"#", 1)[0]
        fields = _TOKEN.findall(body)
        nf = len(fields)
        if nf == 0:
            continue
        if (b"," in body or b";" in body) and empty_cell(body):
            return None  # a column left empty: the scanner reports it
        if not header_seen:
            header_seen = True
            if is_header([f.decode("utf-8") for f in fields]):  # the scanner's own rule
                if nf > 3:
                    return None
                header = True
                continue
        if nf > 3 or (nf >= 2 and ncols and ncols != nf):
            return None
        if nf == 1:
            if _LOUD.search(body):
                lone.append((lineno, body))
            iso_tok.append(len(tokens))
            tokens.append(fields[0])
            continue
        ncols = nf
        src_tok.append(len(tokens))
        tokens.append(fields[0])
        dst_tok.append(len(tokens))
        tokens.append(fields[1])
        if nf == 3:
            try:
                x = float(fields[2])
            except ValueError:
                return None
            if x != x or x in (float("inf"), float("-inf")):
                return None
            if x == 0 and not first_zero:
                first_zero = lineno
            weights.append(x)
    if not tokens:
        return None
    if all(_CANONICAL_INT.match(t) and t != _NOT_MINUS_ZERO for t in tokens):
        values = np.array([int(t) for t in tokens], dtype=np.int64)
        uniq, inv = np.unique(values, return_inverse=True)
        names = tuple(str(v) for v in uniq.tolist())
        ids = inv.astype(np.int64)
    else:
        for t in tokens:
            if t not in seen:
                seen[t] = len(seen)
        names = tuple(t.decode("utf-8") for t in seen)
        ids = np.array([seen[t] for t in tokens], dtype=np.int64)
        if all(int_name.match(x) for x in names):
            as_int = [int(x) for x in names]
            order = np.argsort(np.array(as_int, dtype=object), kind="stable") \
                if any(len(x) > 18 for x in names) else \
                np.argsort(np.array(as_int, dtype=np.int64), kind="stable")
            rank = np.empty(len(names), np.int64)
            rank[order] = np.arange(len(names))
            names = tuple(names[i] for i in order.tolist())
            ids = rank[ids]
    src = ids[np.array(src_tok, dtype=np.int64)]
    dst = ids[np.array(dst_tok, dtype=np.int64)]
    w = np.array(weights, dtype=np.float64) if ncols == 3 else None
    said = (len(lone), lone[0][0], lone[0][1].decode("utf-8").strip()) if lone else (0, 0, "")
    return EdgeArrays(src, dst, w, DistinctNames(names), len(lines), first_zero, said,
                      header)
