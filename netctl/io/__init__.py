"""Reading and writing networks and systems: one module a format, one entry point.

``read(path, format=None)`` detects the format from the file name (``.gz`` is looked
through) and returns a :class:`~netctl.system.StructuredSystem`. Every reader reports
problems as :class:`~netctl.errors.NetworkFileError` naming the file and line.
"""

from __future__ import annotations

import gzip
import os
import re
import sys
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl._lazy import lazy_names
from netctl.errors import (
    InvalidSystemError,
    LimitError,
    NetctlError,
    NetworkFileError,
    OptionError,
)
from netctl.io._common import atomic_group, atomic_write, excerpt, file_error, ungrouped

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = ["FORMATS", "GRID_FORMATS", "MATRIX_FORMATS", "ORIENTATIONS", "atomic_write",
           "declared_terms",
           "detect_format", "file_convention", "read", "read_state_list", "write"]

Reader = Callable[..., "StructuredSystem"]
Writer = Callable[["StructuredSystem", "str | os.PathLike[str]"], None]

#: where each reader and writer lives: public name -> its module (imported on first use,
#: so that reading one edge list loads neither the XML, the MATPOWER nor the grid readers)
_HOME: dict[str, str] = {
    "read_edgelist": "edgelist", "write_edgelist": "edgelist",
    "read_mtx": "mtx", "write_mtx": "mtx",
    "read_system": "system_spec", "write_system": "system_spec",
    "declared_terms": "system_spec",
    "read_npz": "npz", "write_npz": "npz", "read_npy": "npy", "write_npy": "npy",
    "read_matrix_csv": "matrix_csv", "write_matrix_csv": "matrix_csv",
    "read_graphml": "graphml", "write_graphml": "graphml",
    "read_gml": "gml", "write_gml": "gml",
    "read_nodelink": "nodelink", "write_nodelink": "nodelink",
    "read_matpower": "matpower",
    "read_pandapower_json": "pandapower_json", "looks_like_pandapower": "pandapower_json",
}


# The readers and writers, imported from their modules on first access (PEP 562).
__getattr__, __dir__ = lazy_names(__name__, _HOME, globals())


class _Deferred:
    """A reader or writer of :data:`FORMATS` that imports its module when first called."""

    __slots__ = ("__name__", "_target")

    def __init__(self, name: str) -> None:
        self.__name__ = name
        self._target: Callable[..., Any] | None = None

    def resolve(self) -> Callable[..., Any]:
        """The function itself (its module imported)."""
        if self._target is None:
            self._target = __getattr__(self.__name__)
        return self._target

    def __call__(self, *args: Any, **kwargs: Any) -> Any:
        return self.resolve()(*args, **kwargs)

    def __repr__(self) -> str:
        return f"<netctl.io.{self.__name__}, imported on first call>"


#: format name -> (reader, writer, file suffixes)
FORMATS: dict[str, tuple[Reader, Writer | None, tuple[str, ...]]] = {
    "edgelist": (_Deferred("read_edgelist"), _Deferred("write_edgelist"),
                 (".csv", ".tsv", ".txt", ".edges", ".el")),
    "mtx": (_Deferred("read_mtx"), _Deferred("write_mtx"), (".mtx", ".mm")),
    "system": (_Deferred("read_system"), _Deferred("write_system"), (".toml",)),
    "npz": (_Deferred("read_npz"), _Deferred("write_npz"), (".npz",)),
    "npy": (_Deferred("read_npy"), _Deferred("write_npy"), (".npy",)),
    "matrix-csv": (_Deferred("read_matrix_csv"), _Deferred("write_matrix_csv"),
                   (".matrix.csv", ".matrix.txt")),
    "graphml": (_Deferred("read_graphml"), _Deferred("write_graphml"), (".graphml",)),
    "gml": (_Deferred("read_gml"), _Deferred("write_gml"), (".gml",)),
    "json": (_Deferred("read_nodelink"), _Deferred("write_nodelink"), (".json",)),
    "matpower": (_Deferred("read_matpower"), None, (".m",)),
    "pandapower": (_Deferred("read_pandapower_json"), None, ()),
}

#: Formats whose files describe a power grid (read with buses, branches and elements).
GRID_FORMATS = ("matpower", "pandapower")


#: formats that hold a matrix, whose entry (i, j) needs an orientation
MATRIX_FORMATS: tuple[str, ...] = ("mtx", "npy", "npz", "matrix-csv")

#: orientation name -> what entry (i, j) of a matrix file means (closed set)
ORIENTATIONS: dict[str, str] = {
    "column-to-row": "entry (i, j) is the link j -> i (column j influences row i: "
                     "A[i, j] of dx/dt = A x, the control convention)",
    "row-to-column": "entry (i, j) is the link i -> j (row i influences column j: the "
                     "adjacency convention of graph libraries)",
}


def file_convention(format: str, *, orientation: str | None = None,
                    undirected: bool = False) -> str | None:
    """One line saying how a file of ``format`` was read, or ``None`` when nothing needs
    saying (a format whose links carry their own direction, read as given).

    Examples
    --------
    >>> file_convention("mtx")
    'matrix read as column-to-row: entry (i, j) is the link j -> i (column j influences row i: A[i, j] of dx/dt = A x, the control convention)'
    >>> file_convention("edgelist") is None, file_convention("edgelist", undirected=True)
    (True, 'edge list read as undirected: every line is a link both ways')
    """
    if format in MATRIX_FORMATS:
        o = orientation or "column-to-row"
        return f"matrix read as {o}: {ORIENTATIONS[o]}"
    if undirected:
        return "edge list read as undirected: every line is a link both ways"
    return None


def detect_format(path: str | os.PathLike[str]) -> str:
    """The format name for ``path`` from its suffix (``.gz`` looked through).

    The longest matching suffix wins (``x.matrix.csv`` is a dense matrix, ``x.csv`` an
    edge list). Unknown suffixes are read as edge lists, the most common plain format.

    Examples
    --------
    >>> detect_format("grid.matrix.csv"), detect_format("grid.csv.gz"), detect_format("p.toml")
    ('matrix-csv', 'edgelist', 'system')
    """
    name = Path(path).name.lower()
    if name.endswith(".gz"):
        name = name[:-3]
    best, best_len = "edgelist", 0
    for fmt, (_, _, suffixes) in FORMATS.items():
        for s in suffixes:
            if name.endswith(s) and len(s) > best_len:
                best, best_len = fmt, len(s)
    return best


def _check_format(format: str) -> None:
    if format not in FORMATS:
        raise OptionError(f"unknown format {format!r}; choose one of "
                          f"{', '.join(sorted(FORMATS))}.")


def read(path: str | os.PathLike[str], format: str | None = None, *,
         model: str = "given", orientation: str | None = None,
         undirected: bool = False) -> StructuredSystem:
    """Read a network or system file.

    Parameters
    ----------
    path : path-like
    format : str, optional
        One of :data:`FORMATS`; detected from the suffix when omitted.
    model : str
        Recorded as the system's model name (the model transformation itself is applied
        by :func:`netctl.models.apply_model`).
    orientation : {"column-to-row", "row-to-column"}, optional
        Matrix files only (:data:`MATRIX_FORMATS`): what entry (i, j) means
        (:data:`ORIENTATIONS`). Default ``"column-to-row"``, netctl's convention
        (``A[v, u] != 0`` for the link ``u -> v``); ``"row-to-column"`` reads the
        adjacency matrices of graph libraries (networkx, igraph), whose entry (i, j) is
        the link i -> j. Only ``A`` is reoriented; ``B`` and ``C`` of an ``.npz`` keep
        their meaning.
    undirected : bool
        Edge lists only: every line ``u v`` is a link both ways (``u -> v`` and
        ``v -> u``); the lines ``u v`` and ``v u`` are the same link (merged, with a
        warning). Self-loops stay single.

    Raises
    ------
    OptionError
        An unknown format or orientation, ``orientation`` for a file that is not a
        matrix, ``undirected`` for a file that is not an edge list.
    """
    fmt = format or detect_format(path)
    _check_format(fmt)
    if orientation is not None:
        if orientation not in ORIENTATIONS:
            raise OptionError(f"unknown orientation {orientation!r}; choose one of "
                              f"{', '.join(ORIENTATIONS)}.")
        if fmt not in MATRIX_FORMATS:
            raise OptionError(f"{path}: an orientation applies to matrix files "
                              f"({', '.join(MATRIX_FORMATS)}), not to the {fmt!r} format, "
                              "whose links name their source and target; leave it out.")
    if undirected and fmt != "edgelist":
        raise OptionError(f"{path}: 'undirected' applies to edge lists, not to the {fmt!r} "
                          "format (GraphML, GML and node-link JSON say whether they are "
                          "directed; a symmetric matrix is already both ways); leave it out.")
    if undirected:
        from netctl.io.edgelist import read_edgelist

        return _safely(path, fmt, lambda: read_edgelist(path, model=model, undirected=True))
    if format is None and fmt == "json" and _sniff_pandapower(path):
        fmt = "pandapower"
    system = _safely(path, fmt, lambda: FORMATS[fmt][0](path, model=model))
    if orientation == "row-to-column":
        system = system._replace(A=system.A.T.tocsr())
    return system


def _sniff_pandapower(path: str | os.PathLike[str]) -> bool:
    """Whether a ``.json`` file starts like a saved pandapower network."""
    import gzip

    try:
        with open(path, "rb") as fh:
            head = fh.read(4096)
        if head[:2] == b"\x1f\x8b":
            with gzip.open(path, "rb") as gz:
                head = gz.read(4096)
    except OSError:
        return False  # the reader reports the problem
    from netctl.io.pandapower_json import looks_like_pandapower

    return looks_like_pandapower(head.decode("utf-8", "replace"))


def _safely(path: str | os.PathLike[str], fmt: str,
            call: Callable[[], StructuredSystem]) -> StructuredSystem:
    """``call()``, with every failure but netctl's own ended in one line naming the file."""
    try:
        system = call()
        if fmt in _ESCAPING_FORMATS:
            _refuse_lone_surrogates(path, system)
        return system
    except InvalidSystemError as exc:  # built from the file: name the file
        if isinstance(exc, NetworkFileError) or str(path) in str(exc):
            raise
        raise file_error(path, None, str(exc)) from None
    except (NetctlError, MemoryError, KeyboardInterrupt):
        raise
    except RecursionError:
        raise LimitError(f"{path}: the file nests lists or groups more deeply than the "
                         f"parser can follow (Python's recursion limit, "
                         f"{sys.getrecursionlimit()}); a network file needs only a few "
                         "levels. Check the file.", path=path) from None
    except OverflowError as exc:
        raise file_error(path, _long_number_line(path, 309), f"a number is too large ({exc}); "
                         "weights and attributes must fit in a 64-bit float.") from None
    except ValueError as exc:
        if "integer string conversion" in str(exc):
            line = _long_number_line(path, sys.get_int_max_str_digits() + 1)
            raise LimitError(f"{path}{'' if line is None else f':{line}'}: a number has more "
                             f"digits than netctl reads ({sys.get_int_max_str_digits()}); "
                             "write it with fewer (netctl keeps numbers as 64-bit floats, "
                             "about 17 significant digits).", path=path, line=line) from None
        raise _unexpected(path, fmt, exc) from None
    except Exception as exc:  # no traceback, ever: name the file and what went wrong
        raise _unexpected(path, fmt, exc) from None


def _long_number_line(path: str | os.PathLike[str], digits: int) -> int | None:
    """The line of the first run of at least ``digits`` digits (on the error path only:
    more than Python converts to an integer, or than a float holds, 309)."""
    from netctl.io._common import read_bytes

    try:
        data = read_bytes(path)
    except NetctlError:
        return None
    m = re.search(rb"[0-9]{%d,}" % digits, data)
    return None if m is None else data.count(b"\n", 0, m.start()) + 1


#: Formats whose text escapes (``\\ud800``, ``&#55296;``) or arrays can hold half of a
#: UTF-16 pair, which is not a character (UTF-8 text, TOML and XML refuse it themselves).
_ESCAPING_FORMATS = frozenset({"json", "gml", "npz", "pandapower"})
_LONE_ESCAPE = re.compile(
    r"\\u[dD][89abAB][0-9a-fA-F]{2}(?!\\u[dD][c-fC-F])|(?<![0-9a-fA-F]{4})\\u[dD][c-fC-F]"
    r"[0-9a-fA-F]{2}|&#(5529[6-9]|55[3-9][0-9]{2}|56[0-9]{3}|57[0-2][0-9]{2}|573[0-3][0-9]|"
    r"5734[0-3]);|&#[xX][dD][89a-fA-F][0-9a-fA-F]{2};")


def _refuse_lone_surrogates(path: str | os.PathLike[str], system: StructuredSystem) -> None:
    """Refuse a name or a node-table text (attribute name or value, element ID) holding a
    lone surrogate, with the line of its escape."""
    what = _lone_surrogate(system)
    if what is None:
        return
    text, where, fix = what
    line = None
    if not str(path).endswith(".npz"):
        try:
            with open(path, "rb") as fh:
                head = fh.read(2)
            opener = gzip.open if head == b"\x1f\x8b" else open
            with opener(path, "rb") as fh:  # type: ignore[operator]
                for k, raw in enumerate(fh, start=1):
                    if _LONE_ESCAPE.search(raw.decode("utf-8", "replace")):
                        line = k
                        break
        except OSError:
            pass
    raise file_error(path, line, f"{where.format(excerpt(text))} holds a lone surrogate "
                     f"({_SURROGATE.search(text).group()!r}: half of a UTF-16 pair, not a "  # type: ignore[union-attr]
                     f"character), which no text file can hold; correct the {fix} (a UTF-16 "
                     "pair needs both halves, e.g. \\ud83d\\ude00).")


def _encodes(texts: list[str]) -> bool:
    try:
        "\n".join(texts).encode("utf-8")  # one C-level pass; fails on a lone surrogate
        return True
    except UnicodeEncodeError:
        return False


def _lone_surrogate(system: StructuredSystem) -> tuple[str, str, str] | None:
    """(text, where it is, what to correct) of the first name or node-table text holding
    a lone surrogate."""
    groups = (system.state_names, system.input_names, system.output_names,
              system.disturbance_names, system.regulated_names)
    if not all(_encodes(list(g)) for g in groups):
        return next((x, "the name {}", "name") for g in groups for x in g
                    if _SURROGATE.search(x))
    tables = ((system.nodes, "state", system.state_names),
              (system.disturbance_nodes, "disturbance", system.disturbance_names))
    for table, kind, names in tables:
        for key, col in table.items():
            if _SURROGATE.search(key):
                return key, "the node attribute name {}", "attribute name"
            arr = np.asarray(col)
            if arr.dtype.kind not in "OU":
                continue
            values = arr.tolist()
            texts = [x for x in values if isinstance(x, str)]
            if _encodes(texts):
                continue
            k = next(k for k, x in enumerate(values)
                     if isinstance(x, str) and _SURROGATE.search(x))
            return (values[k], f"the value {{}} of the attribute {excerpt(key)} of {kind} "
                    f"{excerpt(names[k])}", "value")
    el = system.elements
    if el is not None:
        for label, ids in (("element ID", el.ids), ("bus name", el.node_names)):
            if not _encodes(list(ids)):
                return (next(x for x in ids if _SURROGATE.search(x)), f"the {label} {{}}",
                        label)
    return None


_SURROGATE = re.compile("[\ud800-\udfff]")


def _unexpected(path: object, fmt: str, exc: BaseException) -> NetworkFileError:
    return file_error(path, None, f"cannot be read as {fmt} ({type(exc).__name__}: "
                      f"{excerpt(str(exc))}); check that the file is a {fmt} file, or name "
                      "the format with --format.")


def write(system: StructuredSystem, path: str | os.PathLike[str], format: str | None = None) -> None:
    """Write ``system`` in ``format`` (detected from the suffix when omitted), atomically."""
    fmt = format or detect_format(path)
    _check_format(fmt)
    writer = FORMATS[fmt][1]
    if writer is None:
        raise OptionError(f"netctl cannot write the {fmt!r} format; choose one of "
                          f"{', '.join(sorted(k for k, v in FORMATS.items() if v[1]))}.")
    with atomic_group():  # a writer's side files appear with the main file or not at all
        if str(path).lower().endswith(".gz"):
            _write_gzip(writer, system, path)
        else:
            writer(system, path)


def _write_gzip(writer: Writer, system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write uncompressed into a scratch folder beside the target, then gzip into place
    atomically.

    The writer sees the user's file name without ``.gz`` (so a TOML description's name and
    its side edge list are named after the user's file, not after a scratch file), and
    every warning and error it raises names the user's path. Side files a writer puts
    beside its file (a large TOML description's edge list) are moved beside the target,
    uncompressed, in the same atomic group.
    """
    import gzip
    import shutil
    import tempfile
    import warnings

    target = Path(path)
    parent = target.parent if str(target.parent) else Path(".")
    try:
        scratch = tempfile.mkdtemp(prefix=f".{target.name[:64]}.", dir=parent)
    except OSError as exc:
        from netctl.io._common import _write_error

        raise _write_error(path, exc) from None
    inner = Path(scratch) / target.name[:-3]

    def user_path(text: str) -> str:
        return text.replace(str(inner), str(path)).replace(scratch + os.sep, str(parent) + os.sep)

    try:
        with ungrouped(), warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            try:
                writer(system, inner)
            except NetctlError as exc:
                exc.args = (user_path(str(exc)),) + exc.args[1:]
                raise
        for w in caught:  # again, naming the user's file
            warnings.warn_explicit(user_path(str(w.message)), w.category, w.filename,
                                   w.lineno)
        with atomic_write(target, "wb") as out, open(inner, "rb") as src, \
                gzip.GzipFile(fileobj=out, mode="wb", mtime=0) as gz:
            shutil.copyfileobj(src, gz)
        for side in sorted(os.listdir(scratch)):
            if side != inner.name:
                with atomic_write(parent / side, "wb") as out, \
                        open(os.path.join(scratch, side), "rb") as src:
                    shutil.copyfileobj(src, out)
    finally:
        shutil.rmtree(scratch, ignore_errors=True)


def read_state_list(text_or_path: str) -> list[str]:
    """Names from ``"a,b,c"`` or from a file with one name a line (``#`` comments).

    A value that names an existing file is read as a file, its cells as netctl's CSV
    writers write them (:mod:`netctl.io._cells`: a name in double quotes keeps its commas,
    ``#`` and spaces; the spreadsheet quoting is removed, ``'=x`` is the name ``=x``). A
    list typed on the command line is taken literally.
    """
    from netctl.io._cells import name_lines
    from netctl.io._common import read_text

    p = Path(text_or_path)
    if p.is_file():
        return [x for x, _ in name_lines(read_text(p), text_or_path)]
    return [x.strip() for x in text_or_path.split(",") if x.strip()]
