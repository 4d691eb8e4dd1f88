"""Result tables out: CSV and Parquet of per-state and per-link findings (roles, drivers,
sites...), so they join back onto the user's asset tables by name.

The columns are those of ``result.to_frame()`` (:mod:`netctl.tables`): a ``state`` column
of names (or ``source``, ``target`` for link tables), boolean membership columns and value
columns such as ``role``. CSV needs nothing beyond the standard library; Parquet needs the
optional extra ``parquet`` (pyarrow). Files are written atomically: a failed write leaves
no partial file.

CSV safety: a spreadsheet treats a text cell that starts with ``=``, ``+``, ``-``, ``@``,
a tab or a carriage return as a formula. Every text cell so starting is written with a
leading apostrophe (``'=cmd``), which spreadsheets show as text, and so is a text cell
starting with an apostrophe (``''x``), so that removing one apostrophe before those
characters gives the name back exactly (:func:`netctl.io._common.unprotect_name`,
docs/HOSTILE.md); numbers, booleans and negative decimal numbers are written as they are. Parquet is typed and needs no such guard.
"""

from __future__ import annotations

import math
import os
from typing import Any

import numpy as np

from netctl._extras import require
from netctl.errors import OptionError
from netctl.io._common import SpreadsheetSafeWriter, atomic_write, protect_name
from netctl.tables import result_columns

__all__ = ["TABLE_FORMATS", "csv_cell", "write_table"]

#: format name -> file suffixes
TABLE_FORMATS: dict[str, tuple[str, ...]] = {"csv": (".csv",), "parquet": (".parquet", ".pq")}


def csv_cell(value: Any) -> str:
    """One CSV cell: text that a spreadsheet would run as a formula is neutralised.

    Examples
    --------
    >>> csv_cell("=HYPERLINK(1)"), csv_cell("pump_3"), csv_cell(-1.5), csv_cell(True)
    ("'=HYPERLINK(1)", 'pump_3', '-1.5', 'True')
    """
    if isinstance(value, (bool, np.bool_)):
        return str(bool(value))
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    if isinstance(value, (float, np.floating)):
        return "" if math.isnan(value) else repr(float(value))
    text = "" if value is None else str(value)
    return protect_name(text)


def _format(path: str | os.PathLike[str], format: str | None) -> str:
    if format is not None:
        if format not in TABLE_FORMATS:
            raise OptionError(f"unknown table format {format!r}; choose one of "
                              f"{', '.join(sorted(TABLE_FORMATS))}.")
        return format
    name = str(path).lower()
    for fmt, suffixes in TABLE_FORMATS.items():
        if name.endswith(suffixes):
            return fmt
    raise OptionError(f"{path}: cannot tell the table format from the suffix; name the file "
                      "*.csv or *.parquet, or pass format='csv' or 'parquet'.")


def write_table(result: Any, path: str | os.PathLike[str], *, format: str | None = None
                ) -> None:
    """Write ``result``'s table (as :meth:`to_frame` gives it) to CSV or Parquet.

    Parameters
    ----------
    result : a netctl result (``NodeRoles``, ``LinkRoles``, ``Placement``, ...)
    path : path-like
    format : {"csv", "parquet"}, optional
        Taken from the suffix when omitted.

    Raises
    ------
    OptionError
        Unknown format or suffix.
    MissingExtraError
        Parquet without pyarrow.
    """
    fmt = _format(path, format)
    if not hasattr(result, "_frame_rows"):
        raise OptionError(f"write_table expected a netctl result (NodeRoles, LinkRoles, "
                          f"Placement, ...), found {type(result).__name__}.")
    _, cols = result_columns(result)
    if fmt == "parquet":
        pa = require("pyarrow", "write_table(..., 'parquet')")
        pq = require("pyarrow.parquet", "write_table(..., 'parquet')")
        table = pa.table({k: list(v) if isinstance(v, list) else np.asarray(v)
                          for k, v in cols.items()})
        with atomic_write(path, "wb") as fh:
            pq.write_table(table, fh)
        return
    names = list(cols)
    rows = len(next(iter(cols.values()))) if cols else 0
    with atomic_write(path, "w") as fh:
        w = SpreadsheetSafeWriter(fh, protected=True)  # cells come from csv_cell
        w.writerow([csv_cell(c) for c in names])
        for i in range(rows):
            w.writerow([csv_cell(cols[c][i]) for c in names])
