"""Edge lists: one link per line, ``source target [weight]``.

Columns are separated by commas, tabs, semicolons or spaces; ``#`` starts a comment; an
optional header line names the columns (``source,target,weight`` or similar); a line with
a single name declares an isolated state. Names may be integers or strings; gzip files
are read transparently. Edge ``u v`` means "u influences v" (``A[v, u] != 0``).
"""

from __future__ import annotations

import os
import re
import warnings

import numpy as np

from netctl.io._common import atomic_write, file_error, read_text
from netctl.system import StructuredSystem

__all__ = ["read_edgelist", "write_edgelist"]

_HEADER_WORDS = {"source", "target", "from", "to", "src", "dst", "weight", "u", "v", "tail",
                 "head", "node1", "node2", "origin", "destination", "w"}
_SPLIT = re.compile(r"[,\t; ]+")


def _fields(line: str) -> list[str]:
    return [f for f in _SPLIT.split(line.strip()) if f]


def read_edgelist(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read an edge list into a :class:`StructuredSystem` (no inputs).

    Raises
    ------
    NetworkFileError
        With the file and line: a line with more than three columns, a weight that is
        not a finite number, an empty file.
    MissingFileError
        The file does not exist.
    """
    text = read_text(path)
    src_names: list[str] = []
    dst_names: list[str] = []
    weights: list[float] = []
    isolated: list[str] = []
    has_weight: bool | None = None
    header_seen = False
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        f = _fields(line)
        if not header_seen and not src_names and not isolated:
            header_seen = True
            if len(f) >= 2 and f[0].lower() in _HEADER_WORDS and f[1].lower() in _HEADER_WORDS:
                if len(f) > 3:
                    raise file_error(path, lineno, f"the header names {len(f)} columns "
                                     f"({line!r}); expected 'source target [weight]'.")
                continue
        if len(f) == 1:
            isolated.append(f[0])
            continue
        if len(f) > 3:
            raise file_error(path, lineno, f"expected 'source target [weight]', found "
                             f"{len(f)} columns in {raw.strip()!r}. Columns are separated by "
                             "commas, tabs, semicolons or spaces; lines starting with '#' are "
                             "skipped; names may not contain separators.")
        this_weighted = len(f) == 3
        if has_weight is None:
            has_weight = this_weighted
        elif has_weight != this_weighted:
            raise file_error(path, lineno, f"this line has {len(f)} columns but earlier "
                             f"lines have {3 if has_weight else 2}: {raw.strip()!r}. Give a "
                             "weight on every line or on none.")
        if this_weighted:
            try:
                w = float(f[2])
            except ValueError:
                raise file_error(path, lineno, f"the weight {f[2]!r} is not a number "
                                 f"(line {raw.strip()!r}). Use a decimal number such as 0.5 "
                                 "or 1e-3.") from None
            if not np.isfinite(w):
                raise file_error(path, lineno, f"the weight {f[2]!r} is not finite; give a "
                                 "finite number.")
            weights.append(w)
        src_names.append(f[0])
        dst_names.append(f[1])
    if not src_names and not isolated:
        raise file_error(path, None, "the file holds no links and no states. Expected lines "
                         "'source target [weight]' (see docs/FORMATS.md).")
    names, index = _order_names(src_names, dst_names, isolated)
    src = np.fromiter((index[s] for s in src_names), np.int64, len(src_names))
    dst = np.fromiter((index[t] for t in dst_names), np.int64, len(dst_names))
    w = np.asarray(weights) if has_weight else None
    if w is not None and np.any(w == 0):
        k = int(np.count_nonzero(w == 0))
        warnings.warn(f"{path}: {k} link(s) with weight 0 are not links and were left out.",
                      stacklevel=2)
        keep = w != 0
        src, dst, w = src[keep], dst[keep], w[keep]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        system = StructuredSystem.from_edges(src, dst, len(names), weights=w,
                                             state_names=names, model=model)
    for c in caught:
        warnings.warn(f"{path}: {c.message}", stacklevel=2)
    return system


def _order_names(src: list[str], dst: list[str], isolated: list[str]
                 ) -> tuple[list[str], dict[str, int]]:
    """Integer names in numeric order; otherwise order of first appearance."""
    seen: dict[str, None] = {}
    for a, b in zip(src, dst):
        seen.setdefault(a)
        seen.setdefault(b)
    for a in isolated:
        seen.setdefault(a)
    names = list(seen)
    if all(_is_int(x) for x in names):
        names.sort(key=int)
    return names, {name: i for i, name in enumerate(names)}


def _is_int(s: str) -> bool:
    return s.isdigit() or (s[:1] == "-" and s[1:].isdigit())


def write_edgelist(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write ``A`` as a comma-separated edge list with a header (atomically).

    States with no link are written as single-name lines so nothing is lost; weights
    are written when the system is weighted.
    """
    src, dst = system.edges()
    names = system.state_names
    with atomic_write(path) as fh:
        fh.write("source,target,weight\n" if system.weighted else "source,target\n")
        vals = system.A.data
        for k in range(src.size):
            if system.weighted:
                fh.write(f"{names[src[k]]},{names[dst[k]]},{vals[k]!r}\n")
            else:
                fh.write(f"{names[src[k]]},{names[dst[k]]}\n")
        linked = np.zeros(system.n_states, bool)
        linked[src] = True
        linked[dst] = True
        for i in np.flatnonzero(~linked):
            fh.write(f"{names[i]}\n")
