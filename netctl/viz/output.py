"""Saving figures: format from the file name, atomic write, reproducible bytes."""

from __future__ import annotations

import io
import os
from pathlib import Path
from typing import TYPE_CHECKING, Any

from netctl.errors import OptionError
from netctl.io import atomic_write

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

__all__ = ["FIGURE_FORMATS", "figure_bytes", "new_figure", "save_figure", "usual_mode"]

#: File suffixes :func:`save_figure` writes.
FIGURE_FORMATS: tuple[str, ...] = ("png", "svg", "pdf")


def figure_format(path: str | os.PathLike[str]) -> str:
    """The figure format named by the suffix of ``path``; OptionError otherwise."""
    suffix = Path(path).suffix.lower().lstrip(".")
    if suffix not in FIGURE_FORMATS:
        raise OptionError(f"cannot tell the figure format of {str(path)!r}: the file name "
                          f"must end in one of {', '.join('.' + f for f in FIGURE_FORMATS)}.")
    return suffix


def new_figure(figsize: tuple[float, float]) -> Figure:
    """A figure with constrained layout on the Agg canvas, outside pyplot.

    Files and reports draw on it: matplotlib's object API needs neither pyplot (whose
    import, with its backend machinery, costs about 0.15 s of a run) nor a GUI backend,
    and a figure pyplot does not manage is freed with its last reference (nothing to
    close). Saving as SVG or PDF switches to that format's canvas, as pyplot's figures
    do; the bytes are the same.

    Examples
    --------
    >>> fig = new_figure((4.0, 3.0))
    >>> ax = fig.add_subplot()
    >>> figure_bytes(fig)[:4]
    b'\\x89PNG'
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=figsize, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def figure_bytes(fig: Figure | Any, format: str = "png", *, dpi: float = 150,
                 tight: bool | None = None) -> bytes:
    """The figure encoded as ``format``, with no time stamp (same figure, same bytes).

    ``tight``: crop to the drawn content (default: only for figures without a layout
    engine; netctl's own figures use constrained layout, and cropping would draw a
    large map twice).

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> import matplotlib.pyplot as plt
    >>> fig, ax = plt.subplots()
    >>> figure_bytes(fig)[:4]
    b'\\x89PNG'
    >>> plt.close(fig)
    """
    if format not in FIGURE_FORMATS:
        raise OptionError(f"unknown figure format {format!r}; choose one of "
                          f"{', '.join(FIGURE_FORMATS)}.")
    import matplotlib

    if tight is None:
        tight = fig.get_layout_engine() is None
    meta: dict[str, Any] = {"png": {"Software": None}, "svg": {"Date": None},
                            "pdf": {"CreationDate": None, "ModDate": None}}[format]
    crop: dict[str, Any] = {"bbox_inches": "tight", "pad_inches": 0.15} if tight else {}
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": "netctl", "svg.fonttype": "path"}):
        fig.savefig(buf, format=format, dpi=dpi, metadata=meta, facecolor="white",
                    **crop)
    return buf.getvalue()


def save_figure(fig: Figure | Any, path: str | os.PathLike[str], *, dpi: float = 150) -> None:
    """Write ``fig`` to ``path`` (PNG, SVG or PDF by suffix), atomically.

    Raises
    ------
    OptionError
        The suffix names no supported format.
    """
    data = figure_bytes(fig, figure_format(path), dpi=dpi)
    with atomic_write(path, "wb") as fh:
        fh.write(data)
    usual_mode(path)


def usual_mode(path: str | os.PathLike[str]) -> None:
    """Give a file written through a private temporary file the usual permissions
    (``0o666`` less the umask), so a figure or report can be shared like any file."""
    mask = os.umask(0)
    os.umask(mask)
    try:
        os.chmod(path, 0o666 & ~mask)
    except OSError:  # pragma: no cover - e.g. a file system without modes
        pass
