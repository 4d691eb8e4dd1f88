"""Names of an edge list once scanned: integer names numbered in numeric order, and the
spreadsheet quoting removed (``'=x`` is the name ``=x``; see
:func:`netctl.io._common.unprotect_name`). Helpers of :mod:`netctl.io.edgelist`.
"""

from __future__ import annotations

import re

import numpy as np

from netctl.io import _edgescan as _k
from netctl.io._common import unprotect_name

__all__ = ["cat_arrays", "factorize_ints", "int_order", "unquote_names"]

_INT = re.compile(r"-?(0|[1-9][0-9]*)\Z")


def int_order(names: tuple[str, ...], src: np.ndarray, dst: np.ndarray
               ) -> tuple[tuple[str, ...], np.ndarray, np.ndarray]:
    """Names that are all integers numbered in numeric order (``src``/``dst`` renumbered)."""
    if not names or not all(_INT.match(x) for x in names):
        return names, src, dst
    order = np.argsort(np.array([int(x) for x in names], dtype=object),
                       kind="stable") if any(len(x) > 18 for x in names) else \
        np.argsort(np.array([int(x) for x in names], dtype=np.int64), kind="stable")
    rank = np.empty(len(names), np.int64)
    rank[order] = np.arange(len(names))
    return tuple(names[i] for i in order.tolist()), rank[src], rank[dst]


def unquote_names(names: tuple[str, ...], src: np.ndarray, dst: np.ndarray
                   ) -> tuple[tuple[str, ...], np.ndarray, np.ndarray]:
    """Names with their spreadsheet quoting removed (``'=x`` is the name ``=x``, see
    :func:`netctl.io._common.unprotect_name`); a quoted and an unquoted spelling of one
    name (``'=x`` and ``=x``) are one state, numbered where it first appeared."""
    plain = [unprotect_name(x) for x in names]
    first: dict[str, int] = {}
    for x in plain:
        first.setdefault(x, len(first))
    if len(first) == len(plain):
        return tuple(plain), src, dst
    ids = np.array([first[x] for x in plain], dtype=np.int64)
    return tuple(first), ids[src], ids[dst]


def cat_arrays(parts: list[np.ndarray], dtype: type = np.int64) -> np.ndarray:
    if not parts:
        return np.zeros(0, dtype)
    return parts[0] if len(parts) == 1 else np.concatenate(parts)


def factorize_ints(src: np.ndarray, dst: np.ndarray, iso: np.ndarray
                    ) -> tuple[tuple[str, ...], tuple[np.ndarray, np.ndarray]]:
    """Dense ids in numeric order of the integer names (``src``/``dst`` remapped in place)."""
    total = src.size + dst.size + iso.size
    if total == 0:
        return (), (src, dst)
    lo = min(int(a.min()) for a in (src, dst, iso) if a.size)
    hi = max(int(a.max()) for a in (src, dst, iso) if a.size)
    span = hi - lo + 1
    if span <= 4 * total + (1 << 20):
        present = np.zeros(span, np.bool_)
        for a in (src, dst, iso):
            _k.mark_present(a, present, lo)
        if present.all():  # names are every integer lo..hi: ids are a shift
            uniq = np.arange(lo, hi + 1, dtype=np.int64)
            if lo:
                np.subtract(src, lo, out=src)
                np.subtract(dst, lo, out=dst)
        else:
            ids = np.cumsum(present, dtype=np.int64) - 1
            uniq = np.flatnonzero(present) + lo
            _k.remap(src, ids, lo)
            _k.remap(dst, ids, lo)
    else:  # sort-based factorization (np.unique's hash path is slower on large arrays)
        allv = np.concatenate([src, dst, iso])
        order = np.argsort(allv, kind="stable")
        sv = allv[order]
        new = np.concatenate([[True], sv[1:] != sv[:-1]])
        uniq = sv[new]
        inv = np.empty(allv.size, np.int64)
        inv[order] = np.cumsum(new) - 1
        src, dst = inv[:src.size], inv[src.size:src.size + dst.size]
    text = _k.int_names_text(uniq.astype(np.int64)).tobytes().decode("ascii")
    return tuple(text.split("\n")[:-1]), (src, dst)
