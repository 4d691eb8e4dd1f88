"""Where a repeated link of a system description comes from, for the merge warning.

A description's links come from up to four places: its coupling file (an edge list),
``[couplings] links``, ``[[ties]]`` and the ``self`` attribute of ``[states]``. When
two of them hold the same link, :func:`netctl.io.system_spec.read_spec` merges them
with a warning; this module names the first repeated link by its two states, says
which entry holds it and which entry it repeats, and gives lines where they can be
found (TOML's parser keeps no lines: a ``links`` entry's line is looked up in the text,
and given only when the text holds each of that link's entries once on its own; the
coupling file's lines are found by :func:`netctl.io._edgelines.line_of_link`).
"""

from __future__ import annotations

import json
import re
from collections.abc import Callable, Sequence

import numpy as np

from netctl.io._common import excerpt
from netctl.io._edgelines import first_repeat

__all__ = ["Place", "repeat_said", "zero_said", "links_entry_place"]

#: ``where(i)`` of the entries of one place: ``(how the entry is named, its line in
#: the description or None)``.
Place = tuple[int, Callable[[int], tuple[str, int | None]]]


def repeat_said(path: object, said: str, names: Sequence[str], src: np.ndarray,
                dst: np.ndarray, origin: np.ndarray, places: Sequence[Place],
                weighted: bool, mirror: np.ndarray | None = None) -> str:
    """The merge warning ``said`` (``"N duplicate links were merged"``) with the first
    repeated link (links ``src[k] -> dst[k]``), the entry that holds it and the entry it
    repeats. ``origin[k]`` is the entry number of link ``k`` counted over ``places`` in
    order (a mirrored link of an undirected description has its original's number, and
    is marked in ``mirror``)."""
    k, j = (int(x) for x in first_repeat(dst, src, max(len(names), 1)))
    fix = " (one link with the summed weight, if both were meant)" if weighted else ""
    if k < 0:
        return f"{path}: {said}."
    link = f"{excerpt(names[int(src[k])])} -> {excerpt(names[int(dst[k])])}"
    here, line = _where(int(origin[k]), places)
    there, before = _where(int(origin[j]), places)
    if mirror is not None:
        here += " (read both ways round: undirected)" if mirror[k] else ""
        there += " (read both ways round: undirected)" if mirror[j] else ""
    at = f"{path}:{line}" if line is not None else f"{path}"
    there += f" (line {before})" if before is not None else ""
    return (f"{at}: {said}: the link {link} from {here} repeats the one from {there}. "
            f"Give each link once{fix}.")


def zero_said(path: object, names: Sequence[str], src: np.ndarray, dst: np.ndarray,
              w: np.ndarray, origin: np.ndarray, places: Sequence[Place]) -> str:
    """The warning for links of weight 0 (no link: left out), naming the first one by
    its states and its entry (with its line where found)."""
    zero = np.flatnonzero(w == 0)
    k = int(zero[np.argmin(origin[zero])])  # the first in the order of the entries
    here, line = _where(int(origin[k]), places)
    nz = zero.size
    link = f"{excerpt(names[int(src[k])])} -> {excerpt(names[int(dst[k])])}"
    return (f"{path}{f':{line}' if line is not None else ''}: {nz} "
            f"link{'s' if nz > 1 else ''} with weight 0 {'are' if nz > 1 else 'is'} not a "
            f"link and {'were' if nz > 1 else 'was'} left out (the first: {link} from "
            f"{here}). Remove {'them' if nz > 1 else 'it'}, or give the weight "
            f"{'each' if nz > 1 else 'it'} has.")


def _where(i: int, places: Sequence[Place]) -> tuple[str, int | None]:
    for count, where in places:
        if i < count:
            return where(i)
        i -= count
    return "the description", None  # pragma: no cover (origin is within the places)


def links_entry_place(text: str, links: list[object]) -> Callable[[int], tuple[str, int | None]]:
    """``where`` for the entries of ``[couplings] links``: ``links entry 3`` and its line
    when the text holds every entry with that pair of names once, each written
    ``["a", "b"...`` (basic or literal strings); no line otherwise."""
    def where(i: int) -> tuple[str, int | None]:
        item = links[i]
        named = f"[couplings] links entry {i + 1}"
        if not isinstance(item, list) or len(item) < 2:
            return named, None
        a, b = item[0], item[1]
        same = [t for t, x in enumerate(links) if isinstance(x, list) and x[:2] == [a, b]]
        pat = re.compile(r"\[\s*(?:" + _string(a) + r")\s*,\s*(?:" + _string(b) + r")\s*[,\]]")
        found = [m.start() for m in pat.finditer(text)]
        if len(found) != len(same):
            return named, None
        return named, text.count("\n", 0, found[same.index(i)]) + 1
    return where


def _string(name: object) -> str:
    """A TOML string spelling ``name`` (basic with JSON's escapes, or literal)."""
    s = str(name)
    return re.escape(json.dumps(s, ensure_ascii=False)) + "|" + re.escape(f"'{s}'")
