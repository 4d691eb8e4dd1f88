"""Writing edge lists (the format read by :mod:`netctl.io.edgelist`).

One link a line, ``source,target[,weight]`` under a header; states with no link on lines
of their own; disturbances and dedicated regulated outputs named on ``#`` lines at the
top. Names that a spreadsheet would run as formulas (starting with ``=``, ``+``, ``-``,
``@``) and names starting with an apostrophe are written with a leading apostrophe,
which the reader removes (:func:`netctl.io._common.protect_name`, docs/HOSTILE.md);
weights are numbers and are written as they are. A name the format cannot hold (empty,
holding a separator, ``#``, a line break, a NUL or a lone surrogate) is refused with one
line before anything is written.
"""

from __future__ import annotations

import os
import re
import warnings
from collections.abc import Sequence

import numpy as np

from netctl.errors import InvalidSystemError
from netctl.io._common import atomic_write, protect_name, protect_names
from netctl.system import StructuredSystem

__all__ = ["write_edgelist", "unwritable_name"]

#: Characters no edge-list name may hold: the separators, line breaks, '#' and NUL.
_CANNOT = re.compile(r"[,\t; \r\v\f\n#\x00]|[\ud800-\udfff]")


def unwritable_name(names: Sequence[str]) -> str | None:
    """The first name an edge list cannot hold, or ``None``."""
    for s in names:
        if not s or _CANNOT.search(s):
            return s
    return None


def _refuse(kind: str, name: str, other: str) -> InvalidSystemError:
    m = _CANNOT.search(name)
    c = m.group() if m else ""
    what = ("is empty" if not name else f"contains a separator {c!r}" if c in ",\t; \r\v\f"
            else "contains '#', which starts a comment" if c == "#"
            else "contains a line break" if c == "\n" else "contains a NUL character"
            if c == "\x00" else f"contains a lone surrogate {c!r} (not valid text)")
    return InvalidSystemError(
        f"the {kind} name {name!r} {what}, so it cannot be written to an edge list; rename "
        f"it or write {other} instead.")


def write_edgelist(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write ``A`` as a comma-separated edge list with a header (atomically).

    States with no link are written as single-name lines so nothing is lost; weights
    are written when the system is weighted (``repr``, so they read back exactly).
    Disturbances are written as nodes named on a ``# disturbances:`` line at the top,
    with their links; regulated outputs that each read one state and are named
    ``z:<state>`` as a ``# regulated:`` line. Inputs, outputs and the node table are not
    part of this format: a warning names what was not written (use ``.toml``, GraphML or
    node-link JSON to keep them). Names
    are quoted for spreadsheets (see the module docstring).

    Raises
    ------
    InvalidSystemError
        A name the format cannot hold; nothing is written.
    """
    from netctl.io._signals import dedicated_regulated, disturbance_links

    bad = unwritable_name(system.state_names)
    if bad is not None:
        raise _refuse("state", bad, "GraphML or node-link JSON")
    bad = unwritable_name(system.disturbance_names) if system.n_disturbances else None
    if bad is not None:
        raise _refuse("disturbance", bad, "a .toml description")
    src, dst = system.edges()
    names = np.array(protect_names(system.state_names), dtype=object)
    linked = np.zeros(system.n_states, bool)
    linked[src] = True
    linked[dst] = True
    block = 1 << 18

    head = ""
    if system.n_disturbances:
        head += ("# disturbances: "
                 f"{', '.join(protect_name(x) for x in system.disturbance_names)}\n")
    reg = dedicated_regulated(system)
    if reg:
        head += f"# regulated: {', '.join(protect_name(x) for x in reg)}\n"
    elif reg is None:
        warnings.warn(f"{path}: the {system.n_regulated} regulated output(s) are not all "
                      "'z:<state>' reading one state each, so they were not written (use a "
                      ".toml system description to keep them).", stacklevel=2)
    # nothing in a good file is dropped silently: say what this format cannot hold
    if system.n_inputs or system.n_outputs:
        warnings.warn(f"{path}: the edge-list format holds the network only; the "
                      f"{system.n_inputs} input(s) and {system.n_outputs} output(s) were not "
                      "written (use a .toml system description to keep them).", stacklevel=2)
    if system.nodes:
        warnings.warn(f"{path}: the edge-list format holds no node table; the columns "
                      f"{', '.join(sorted(system.nodes))} were not written (write GraphML, "
                      "node-link JSON, .npz or .toml to keep them).", stacklevel=2)
    with atomic_write(path) as fh:
        fh.write(head)
        fh.write("source,target,weight\n" if system.weighted else "source,target\n")
        vals = system.pattern("A").data
        for a in range(0, src.size, block):
            s_names = names[src[a:a + block]].tolist()
            t_names = names[dst[a:a + block]].tolist()
            if system.weighted:
                ws = map(repr, vals[a:a + block].tolist())
                fh.write("".join(f"{u},{v},{x}\n" for u, v, x in zip(s_names, t_names, ws)))
            else:
                fh.write("".join(f"{u},{v}\n" for u, v in zip(s_names, t_names)))
        for u, v, x in disturbance_links(system):
            u, v = protect_name(u), protect_name(v)
            fh.write(f"{u},{v},{x!r}\n" if system.weighted else f"{u},{v}\n")
        lone = names[~linked].tolist()
        if lone:
            fh.write("\n".join(lone) + "\n")
