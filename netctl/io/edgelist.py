"""Edge lists: one link per line, ``source target [weight]``.

Columns are separated by commas, tabs, semicolons or spaces (runs of separators count
as one, except that two commas or semicolons in a row, or one before the first name,
leave a cell empty and are refused; there is no quoting, so names may not contain
separators); ``#`` starts a
comment; an optional header line names the columns (``source,target,weight`` or
similar); a line with a single name declares a state (kept even when it has no link;
with a comma, semicolon or tab beside the name, as in ``c,``, it is kept too, and one
warning names the first such line: it may be a link whose other name is missing).
Names may be integers or strings; a name written with a leading apostrophe before
``=``, ``+``, ``-``, ``@``, ``'``, a tab or a carriage return is read without it (the
spreadsheet quoting of :mod:`netctl.io.edgelist_writer`; ``'=x`` is the name ``=x``).
gzip files are read transparently. Edge ``u v`` means
"u influences v" (``A[v, u] != 0``).

The reader streams the file in fixed-size chunks through a compiled scanner
(:mod:`netctl.io._edgescan`, driven by :mod:`netctl.io._edgechunks`), so memory is
bounded by the output arrays plus one chunk, and no Python object is made per line.
Small files are read in plain Python (:mod:`netctl.io._edgesmall`). This module holds
the public entry points: the arrays, the system built from them, and the writer. Names that are all canonical integers are
numbered in numeric order; otherwise states are numbered in order of first appearance.
"""

from __future__ import annotations

import dataclasses
import os
import warnings
from dataclasses import dataclass

import numpy as np

from netctl._parts import DistinctNames
from netctl._csr import Pattern
from netctl._parts import check_finite
from netctl.io import _edgescan as _k
from netctl.io._common import excerpt, max_bytes, note_input
from netctl.io._edgechunks import ChunkScan as _Scan
from netctl.io._edgechunks import NotInt as _NotInt
from netctl.io._edgechunks import fields as _fields
from netctl.io._edgechunks import is_header as _is_header
from netctl.io._edgechunks import open_edge_file as _open
from netctl.errors import NetctlError
from netctl.io._edgelines import LONE_SEPARATED_HELP, first_repeat, line_of_link
from netctl.io._edgemarks import apply_marks, header_marks, quoted_names, repeated_header
from netctl.io._edgenames import _INT, int_order, unquote_names
from netctl.io._edgesmall import SMALL_BYTES, read_small
from netctl.io.edgelist_writer import write_edgelist
from netctl.system import StructuredSystem

__all__ = ["EdgeArrays", "read_edge_arrays", "read_edgelist", "write_edgelist",
           "CHUNK_BYTES"]

#: Bytes read per chunk; the scanner's working memory is a small multiple of this.
CHUNK_BYTES = 1 << 24


@dataclass(frozen=True)
class EdgeArrays:
    """The parsed content of an edge list, as arrays.

    Attributes
    ----------
    sources, targets : numpy.ndarray of int64
        State indices of each link line, in file order (duplicates not yet merged).
    weights : numpy.ndarray of float64 or None
        One weight per link when the file has a weight column.
    names : tuple of str
        State names; index ``i`` of ``sources``/``targets`` is ``names[i]``.
    n_lines : int
        Number of lines read.
    first_zero_line : int
        Line of the first link with weight 0 (0 when there is none or it is unknown).
    lone_separated : tuple of (int, int, str)
        Lines that hold one name beside a comma, semicolon or tab (``c,``: a state
        with no link, or a link whose other name is missing): their number, the first
        one's line and its text; ``(0, 0, "")`` when there are none.
    header : bool
        Whether the first content line was a header row.
    """

    sources: np.ndarray
    targets: np.ndarray
    weights: np.ndarray | None
    names: tuple[str, ...]
    n_lines: int
    first_zero_line: int = 0
    lone_separated: tuple[int, int, str] = (0, 0, "")
    header: bool = False


def read_edge_arrays(path: str | os.PathLike[str], *,
                     chunk_bytes: int = CHUNK_BYTES) -> EdgeArrays:
    """Parse an edge list into index arrays and names, streaming in chunks.

    Parameters
    ----------
    path : path-like
        A text edge list, optionally gzip-compressed.
    chunk_bytes : int
        Bytes read at a time (memory is bounded by the output plus a few chunks).

    Returns
    -------
    EdgeArrays

    Raises
    ------
    NetworkFileError
        With file and line: too many columns, a weight column on some lines only, a
        weight that is not a finite number, a name that is not UTF-8, NUL bytes, UTF-16
        text, a damaged or truncated gzip stream, an empty file.
    MissingFileError
        The file does not exist.

    Warns
    -----
    UserWarning
        Once, naming the first line and the count, for lines of one name beside a comma,
        semicolon or tab (``c,``): kept as states with no link, but maybe links whose
        other name is missing.

    Notes
    -----
    One pass over the bytes, O(file size); a file whose first non-integer name comes
    late is scanned twice (integer mode, then string mode). Small well-formed files
    (up to :data:`netctl.io._edgesmall.SMALL_BYTES`) are read in plain Python instead,
    with the same result and without loading the compiled scanner.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "net.csv"
    >>> _ = p.write_text("source,target\\n1,2\\n2,3\\n7\\n")
    >>> e = read_edge_arrays(p)
    >>> e.names, e.sources.tolist(), e.targets.tolist()
    (('1', '2', '3', '7'), [0, 1], [1, 2])
    """
    if chunk_bytes == CHUNK_BYTES and max_bytes() >= SMALL_BYTES:
        small = read_small(path, _is_header, _INT)
        if small is not None:
            note_input(path)  # as _open does: an output may not overwrite this file
            if any(x[:1] == "'" for x in small.names):
                names, src, dst = int_order(*unquote_names(small.names, small.sources,
                                                             small.targets))
                small = dataclasses.replace(small, names=DistinctNames(names), sources=src,
                                            targets=dst)
            _warn_lone_separated(small, path)
            return small
    scan = _Scan(path, _k.MODE_INT, chunk_bytes)
    try:
        scan.run()
    except _NotInt:
        scan = _Scan(path, _k.MODE_STR, chunk_bytes)
        scan.run()
    e = scan.result()
    _warn_lone_separated(e, path)
    return e


def _warn_lone_separated(e: EdgeArrays, path: object) -> None:
    """Warn once about lines of one name beside a separator (``c,``): each is read as a
    state with no link, which is kept, but it may be a link whose other name is
    missing. A name alone on its line (the documented way) is silent."""
    count, line, text = e.lone_separated
    if not count:
        return
    more = (f" ({count} such lines; this is the first)" if count > 1 else "")
    warnings.warn(f"{path}:{line}: the line {excerpt(text)} holds one name and a "
                  f"separator{more}; it was read as a state with no link. "
                  f"{LONE_SEPARATED_HELP}", stacklevel=3)


def read_edgelist(path: str | os.PathLike[str], *, model: str = "given",
                  undirected: bool = False) -> StructuredSystem:
    """Read an edge list into a :class:`StructuredSystem` (no inputs).

    Duplicate links are merged (weights summed) and links of weight 0 are left out, each
    with a warning that counts them; self-loops are kept as self-dynamics. With
    ``undirected=True`` every line is a link both ways: the lines ``u v`` and ``v u``
    are one link (merged as duplicates), then each link gets its reverse with the same
    weight.

    Raises
    ------
    NetworkFileError
        See :func:`read_edge_arrays`.
    MissingFileError
        The file does not exist.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "net.tsv"
    >>> _ = p.write_text("a\\tb\\t0.5\\nb\\tc\\t2\\n")
    >>> s = read_edgelist(p)
    >>> s.state_names, s.n_links, s.weighted
    (('a', 'b', 'c'), 2, True)
    """
    e = read_edge_arrays(path)
    if undirected:
        lo = np.minimum(e.sources, e.targets)
        hi = np.maximum(e.sources, e.targets)
        one_way = _system_from_arrays(dataclasses.replace(e, sources=lo, targets=hi), path,
                                      model=model, as_written=e)
        import scipy.sparse as sp

        A = one_way.A  # row = hi >= column = lo: each link once; add its mirror
        system = one_way._replace(A=sp.csr_array(A + sp.tril(A, k=-1, format="csr").T))
    else:
        system = _system_from_arrays(e, path, model=model)
    with _open(path) as fh:
        marks = header_marks(fh, path)
    with _open(path) as fh:
        repeated_header(fh, path, _fields, _is_header, system.state_names)
    quoted_names(system.state_names, path)
    if marks:
        system = apply_marks(system, marks, path)
    return system


def _first_repeat(e: EdgeArrays, path: object, said: str,
                  as_written: EdgeArrays | None = None) -> str:
    """The duplicate-link warning ``said`` (``"N duplicate links were merged ..."``)
    placed on the line of the earliest link that repeats an earlier one, with that
    link's names, the line of the link it repeats and the fix (links of weight 0 left
    out, as the build leaves them). Run only when there are duplicates: one compiled
    pass over the links, then passes over the file up to that link for the lines.
    ``as_written``: the links as the file gives them, for the names (an undirected read
    looks for repeats among its links with their ends in index order)."""
    keep = None if e.weights is None else np.flatnonzero(e.weights != 0)
    src = e.sources if keep is None else e.sources[keep]
    dst = e.targets if keep is None else e.targets[keep]
    k, j = (int(x) for x in first_repeat(dst, src, max(len(e.names), 1)))
    if k < 0:
        return f"{path}: {said}."
    at = k if keep is None else int(keep[k])
    shown = e if as_written is None else as_written
    link = (f"{excerpt(e.names[int(shown.sources[at])])} -> "
            f"{excerpt(e.names[int(shown.targets[at])])}")
    fix = " (one link with the summed weight, if both were meant)" if e.weights is not None \
        else ""
    line = before = None
    if isinstance(path, (str, os.PathLike)):
        pair = (k, j) if keep is None else (int(keep[k]), int(keep[j]))
        try:
            line, before = (line_of_link(path, x, header=e.header) for x in pair)
        except (OSError, NetctlError):  # the file went away since it was read
            pass
    if line is None:
        return f"{path}: {said}: the first repeat is the link {link}. Give each link once{fix}."
    earlier = f" on line {before}" if before is not None else " before it"
    return (f"{path}:{line}: {said}: the link {link} here repeats the one{earlier}. Give "
            f"each link once{fix}.")


def _system_from_arrays(e: EdgeArrays, path: object, *, model: str,
                        as_written: EdgeArrays | None = None,
                        nodes: dict[str, np.ndarray] | None = None) -> StructuredSystem:
    src, dst, w = e.sources, e.targets, e.weights
    n = len(e.names)
    if w is not None:
        zero = w == 0
        k = int(np.count_nonzero(zero))
        if k:
            where = f" (the first on line {e.first_zero_line})" if e.first_zero_line else ""
            warnings.warn(f"{path}: {k} link{'s' if k > 1 else ''} with weight 0 "
                          f"{'are' if k > 1 else 'is'} not a link and "
                          f"{'were' if k > 1 else 'was'} left out{where}.", stacklevel=3)
    indptr, indices, data, n_dup, cancelled = _k.build_csr(
        dst, src, np.empty(0) if w is None else w, n, w is not None)
    # the arrays as built (int64, canonical): no index-type round trip through scipy's
    # constructor, and the system shares them instead of copying
    check_finite(data, "A")
    A = Pattern(data, indices, indptr, (n, n))
    if n_dup:
        said = (f"{n_dup} duplicate link{'s were' if n_dup > 1 else ' was'} merged"
                + (" (weights summed)" if w is not None else ""))
        warnings.warn(_first_repeat(e, path, said, as_written), stacklevel=3)
    if cancelled:
        warnings.warn(f"{path}: {cancelled} link{'s' if cancelled > 1 else ''} whose "
                      "duplicate weights sum to 0 were left out.", stacklevel=3)
    return StructuredSystem(A=A, B=None, C=None, state_names=e.names, input_names=(),
                            output_names=(), nodes=nodes or {}, weighted=w is not None,
                            model=model)
