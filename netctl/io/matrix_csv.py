"""Dense matrix as CSV (``.matrix.csv``): the square matrix ``A``, one row a line.

An optional first line of state names (not numbers) labels the columns; a first column of
names labels the rows (then the first line may start with an empty cell). Entry ``(i, j)``
nonzero means state ``j`` influences state ``i`` (``A[i, j] != 0``). Separators: comma,
semicolon, tab or spaces; ``#`` starts a comment.

Names that a spreadsheet would run as formulas (starting with ``=``, ``+``, ``-``, ``@``)
and names starting with an apostrophe are written with a leading apostrophe, which the
reader removes (:func:`netctl.io._common.unprotect_name`; ``'=x`` is the name ``=x``).
"""

from __future__ import annotations

import os
import re

import numpy as np

from netctl.io._common import (
    atomic_write,
    excerpt,
    file_error,
    protect_name,
    protect_names,
    read_text,
    unprotect_name,
)
from netctl.system import StructuredSystem

__all__ = ["read_matrix_csv", "write_matrix_csv"]

_SPLIT = re.compile(r"\s*[,;\t]\s*|\s+")
#: Characters no matrix CSV name may hold: separators, white space and line breaks of any
#: kind (the reader splits lines as str.splitlines does), '#', NUL and lone surrogates.
_CANNOT = re.compile(r"[\s,;#\x00\ud800-\udfff]")
#: Dense text matrices beyond this many states are refused (use a sparse format).
MAX_STATES = 20_000


def _num(tok: str) -> float | None:
    try:
        return float(tok)
    except ValueError:
        return None


def read_matrix_csv(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read a dense square matrix from text.

    Raises
    ------
    NetworkFileError
        A row of the wrong length, a cell that is not a number (with line and column), a
        non-square matrix, NaN/inf, more than 20 000 states.
    """
    rows: list[list[float]] = []
    col_names: list[str] | None = None
    row_names: list[str] = []
    row_lines: list[int] = []
    first = True
    for lineno, raw in enumerate(read_text(path).splitlines(), start=1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        toks = [t for t in _SPLIT.split(line)]
        toks = [t.strip() for t in toks]
        if first:
            first = False
            if any(_num(t) is None for t in toks if t):
                col_names = [unprotect_name(t) for t in toks if t]
                seen: set[str] = set()
                for t in col_names:
                    if t in seen:
                        raise file_error(path, lineno, f"the header names the state "
                                         f"{excerpt(t)} twice; each column needs its own "
                                         "name.")
                    seen.add(t)
                continue
        label = None
        if toks and _num(toks[0]) is None:
            label, toks = unprotect_name(toks[0]), toks[1:]
        vals = []
        for k, t in enumerate(toks, start=1):
            v = _num(t)
            if v is None or not np.isfinite(v):
                raise file_error(path, lineno, f"column {k + (label is not None)}: expected a "
                                 f"finite number, found {excerpt(t)}. Every cell of a matrix CSV is a "
                                 "number (0 for no link).")
            vals.append(v)
        if rows and len(vals) != len(rows[0]):
            raise file_error(path, lineno, f"this row has {len(vals)} numbers but the first "
                             f"row has {len(rows[0])}; every row needs one number per state.")
        if len(rows) >= MAX_STATES:
            raise file_error(path, lineno, f"more than {MAX_STATES} rows: too large for a dense "
                             "text matrix; use .mtx or .npz.")
        rows.append(vals)
        row_lines.append(lineno)
        if label is not None:
            row_names.append(label)
    if not rows:
        raise file_error(path, None, "the file holds no matrix rows.")
    n = len(rows)
    if len(rows[0]) != n:
        m = len(rows[0])
        if n > m:  # the first row beyond a square
            raise file_error(path, row_lines[m], f"the matrix is {n} x {m}; a state matrix A "
                             f"must be square (n x n), and this is row {m + 1} of rows of {m} "
                             "numbers: remove the extra rows, or give every row one number "
                             "per state.")
        raise file_error(path, row_lines[-1], f"the matrix is {n} x {m}; a state matrix A "
                         f"must be square (n x n), and the rows end here, at row {n} of rows "
                         f"of {m} numbers: add the missing rows, or give every row one "
                         "number per state.")
    names = col_names if col_names is not None else (row_names if len(row_names) == n else None)
    if names is not None and len(names) != n:
        raise file_error(path, 1, f"the header names {len(names)} states but the matrix has "
                         f"{n}; give one name per column.")
    if col_names is not None and len(row_names) == n and row_names != col_names:
        k = next(i for i, (r, c) in enumerate(zip(row_names, col_names)) if r != c)
        raise file_error(path, row_lines[k], f"the row label {excerpt(row_names[k])} differs "
                         f"from the name of column {k + 1} ({excerpt(col_names[k])}); a state "
                         "matrix has the same states, in the same order, on both sides. "
                         "Put the rows in the order of the columns.")
    A = np.array(rows)
    weighted = bool(np.any((A != 0) & (A != 1)))
    return StructuredSystem.from_matrices(A, state_names=names, weighted=weighted, model=model)


def write_matrix_csv(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write ``A`` densely with a header of state names (atomically)."""
    from netctl.errors import InvalidSystemError

    if system.n_states > MAX_STATES:
        raise InvalidSystemError(f"{path}: {system.n_states} states are too many for a dense "
                                 f"text matrix (limit {MAX_STATES}); write .mtx or .npz.")
    bad = [s for s in system.state_names
           if not s or _CANNOT.search(s) or s.startswith("\ufeff") or _num(protect_name(s, quote_numbers=True)) is not None]
    if bad:  # '-5' is written '\'-5'; a name such as '5' or 'inf' would read as a value
        raise InvalidSystemError(f"the state name {bad[0]!r} is empty, a number, or holds a "
                                 "separator (comma, semicolon, space, tab), '#', a line break, "
                                 "a lone surrogate or starts with a byte-order mark, so it cannot label a matrix CSV "
                                 "column; rename it or write GraphML or node-link JSON.")
    from netctl._csr import to_dense

    A = to_dense(system.pattern("A"))
    with atomic_write(path) as fh:
        fh.write(",".join(protect_names(system.state_names, quote_numbers=True)) + "\n")
        for row in A.tolist():
            fh.write(",".join(repr(x) if x else "0" for x in row) + "\n")
