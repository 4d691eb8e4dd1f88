"""Charts of analysis results, drawn from plain arrays (no dependency on the analyses).

Each function takes ``ax=None`` (a new figure when omitted), imports matplotlib lazily,
returns the Axes, and tags its artists with gids ``"netctl:<what>"``.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any, Protocol, cast

import numpy as np
from numpy.typing import ArrayLike

from netctl.errors import OptionError
from netctl.viz.style import INK, MARKS, SERIES

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes

__all__ = ["CHART_SIZE", "plot_attack_curves", "plot_null_model", "plot_role_composition",
           "plot_weakest_modes", "weakest_modes_size"]


def _plain(text: object) -> str:
    """Text shown as typed: a ``$`` in a name must not start mathtext."""
    return str(text).replace("$", r"\$")


#: Size (inches) of a chart's own figure (the weakest modes: :func:`weakest_modes_size`).
CHART_SIZE: tuple[float, float] = (6.4, 4.2)


def weakest_modes_size(k: int, n_modes: int) -> tuple[float, float]:
    """Size (inches) of :func:`plot_weakest_modes`'s own figure for ``k`` of
    ``n_modes`` modes (one row each)."""
    return (6.4, 1.2 + 0.32 * min(k, n_modes))


def _new_axes(ax: Axes | None, size: tuple[float, float] = CHART_SIZE) -> Axes:
    if ax is not None:
        return ax
    import matplotlib.pyplot as plt

    _, ax = plt.subplots(figsize=size, layout="constrained")
    return ax


def _vector(values: Any, what: str) -> np.ndarray:
    arr = np.asarray(values, dtype=np.float64)
    if arr.ndim != 1:
        raise OptionError(f"{what} must be one-dimensional, found shape {arr.shape}.")
    return arr


class _AttackCurveLike(Protocol):
    """What :func:`plot_attack_curves` reads from a result such as
    :class:`netctl.structural.robustness.AttackCurve` (no import of the analyses)."""

    @property
    def strategy(self) -> str: ...

    @property
    def elements(self) -> str: ...

    def xy(self, *, fraction: bool = True) -> tuple[np.ndarray, np.ndarray]: ...


def plot_attack_curves(curves: Mapping[str, Sequence[ArrayLike]] | Sequence[_AttackCurveLike],
                       *, ax: Axes | None = None, xlabel: str | None = None,
                       ylabel: str | None = None, fraction: bool = True) -> Axes:
    r"""Attack (or failure) curves: a control measure as parts of the network are removed.

    Parameters
    ----------
    curves : mapping of str to (x, y) or (x, y, low, high), or sequence of AttackCurve
        One curve per attack strategy: removed fraction ``x`` and the measure ``y``
        (e.g. the fraction of driver nodes); optional ``low`` / ``high`` draw a band
        (e.g. the spread over repeated random removals). Or results of
        :func:`netctl.structural.robustness.attack_curve` (anything with ``strategy``,
        ``elements`` and ``xy(fraction=...)``), labelled by strategy (and by element
        kind when the kinds differ).
    ax : matplotlib Axes, optional
    xlabel, ylabel : str, optional
        Axis labels. Defaults: "fraction of links removed" and "driver-node fraction
        $n_D$" for a mapping; "share of states (links) removed" and "minimum inputs /
        states left" (or "minimum inputs") for results.
    fraction : bool, default True
        For results: plot ``N_D`` divided by the states left (True) or ``N_D`` itself.

    Returns
    -------
    matplotlib.axes.Axes

    Notes
    -----
    Curves differ in colour, line style *and* marker, so they stay apart in grey print.

    Examples
    --------
    >>> import matplotlib; matplotlib.use("Agg")
    >>> ax = plot_attack_curves({"random": ([0, .5, 1], [.2, .5, 1])})
    >>> [l.get_label() for l in ax.get_lines()]
    ['random']
    >>> import matplotlib.pyplot as plt; plt.close(ax.figure)
    """
    if not curves:
        raise OptionError("plot_attack_curves needs at least one curve, e.g. "
                          "{'random': (x, y)}.")
    items: list[tuple[str, Sequence[ArrayLike]]]
    if isinstance(curves, Mapping):
        items = list(curves.items())
        xlabel = "fraction of links removed" if xlabel is None else xlabel
        ylabel = "driver-node fraction $n_D$" if ylabel is None else ylabel
    else:
        results = list(curves)
        for c in results:
            if not (hasattr(c, "xy") and hasattr(c, "strategy") and hasattr(c, "elements")):
                raise OptionError("plot_attack_curves takes a mapping of name to (x, y) or "
                                  "a sequence of attack_curve results, found "
                                  f"{type(c).__name__}.")
        kinds = {c.elements for c in results}
        items = [(c.strategy if len(kinds) == 1 else f"{c.strategy} ({c.elements})",
                  c.xy(fraction=fraction)) for c in results]
        kind = next(iter(kinds)) if len(kinds) == 1 else ""
        what = {"links": "links", "nodes": "states"}.get(kind, "elements")
        xlabel = f"share of {what} removed" if xlabel is None else xlabel
        if ylabel is None:
            ylabel = "minimum inputs / states left" if fraction else "minimum inputs"
    ax = _new_axes(ax)
    for k, (label, data) in enumerate(items):
        if len(data) not in (2, 4):
            raise OptionError(f"curve {label!r} must be (x, y) or (x, y, low, high), found "
                              f"{len(data)} arrays.")
        x, y = _vector(data[0], "x"), _vector(data[1], "y")
        if x.shape != y.shape:
            raise OptionError(f"curve {label!r}: x has {x.size} values but y has {y.size}.")
        color, marker, ls = SERIES[k % len(SERIES)]
        every = max(1, x.size // 12)
        (line,) = ax.plot(x, y, color=color, marker=marker, linestyle=ls, markevery=every,
                          markersize=5, linewidth=1.6, label=_plain(label))
        line.set_gid(f"netctl:curve:{k}")
        if len(data) == 4:
            band = ax.fill_between(x, _vector(data[2], "low"), _vector(data[3], "high"),
                                   color=color, alpha=0.15, linewidth=0)
            band.set_gid(f"netctl:band:{k}")
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    ax.grid(True, color="#E3E3E3", linewidth=0.6)
    ax.legend(frameon=False, fontsize=8)
    return ax


def plot_null_model(observed: float, null: ArrayLike, *, ax: Axes | None = None,
                    label: str = "this network",
                    quantity: str = "minimum number of inputs",
                    prediction: float | None = None) -> Axes:
    r"""An observed value against its distribution in a degree-preserving null model.

    Parameters
    ----------
    observed : float
        The value for the network (e.g. its minimum number of inputs).
    null : array of float
        The same quantity on randomized networks with the same in- and out-degrees.
    ax : matplotlib Axes, optional
    label, quantity : str
    prediction : float, optional
        An analytic value of the same quantity (e.g. the cavity prediction times the
        number of states), drawn as a dashed line (gid ``"netctl:prediction"``).

    Returns
    -------
    matplotlib.axes.Axes

    Notes
    -----
    Counts on the vertical axis have whole-number ticks. The title reports the null mean
    and standard deviation (labelled "sd"), the z-score and the share
    of randomized networks at least as extreme (two-sided, empirical). Degree-preserving
    randomization keeps the degree sequence; Liu et al. (2011) found that it largely
    determines the number of driver nodes.

    Examples
    --------
    >>> import matplotlib; matplotlib.use("Agg")
    >>> ax = plot_null_model(12, [10, 11, 11, 12, 13])
    >>> "z = " in ax.get_title(loc="left")
    True
    >>> import matplotlib.pyplot as plt; plt.close(ax.figure)
    """
    sample = _vector(null, "null")
    if sample.size == 0:
        raise OptionError("plot_null_model needs at least one null-model value.")
    ax = _new_axes(ax)
    lo = min(float(sample.min()), float(observed))
    hi = max(float(sample.max()), float(observed))
    integer = bool(np.all(sample == np.round(sample)))
    bins: Any
    if integer and hi - lo <= 60:
        bins = np.arange(lo - 0.5, hi + 1.5)
    else:
        bins = min(40, max(5, int(np.sqrt(sample.size))))
    _, _, patches = ax.hist(sample, bins=bins, color="#CFCFCF", edgecolor="#5C5C5C",
                            hatch="///", linewidth=0.6, label="degree-preserving null model")
    for p in cast(Any, patches):
        p.set_gid("netctl:null")
    line = ax.axvline(observed, color=MARKS["driver"].face, linewidth=2.4,
                      label=_plain(label))
    line.set_gid("netctl:observed")
    if prediction is not None:
        pline = ax.axvline(float(prediction), color=INK, linewidth=1.4, linestyle="--",
                           label=f"cavity prediction {float(prediction):.3g}")
        pline.set_gid("netctl:prediction")
    from matplotlib.ticker import MaxNLocator

    ax.yaxis.set_major_locator(MaxNLocator(integer=True))
    mean, sd = float(sample.mean()), float(sample.std(ddof=1)) if sample.size > 1 else 0.0
    z = (observed - mean) / sd if sd > 0 else float("nan")
    extreme = float(np.mean(np.abs(sample - mean) >= abs(observed - mean)))
    ax.set_title(f"null mean {mean:.4g}, sd {sd:.2g} (n = {sample.size}); "
                 f"z = {z:.2f}; share as extreme {extreme:.2f}", fontsize=9, loc="left")
    ax.set_xlabel(quantity)
    ax.set_ylabel("randomized networks")
    ax.legend(frameon=False, fontsize=8)
    return ax


ROLE_ORDER: tuple[str, ...] = ("critical", "intermittent", "redundant")


def plot_role_composition(composition: Mapping[str, ArrayLike], *,
                          ax: Axes | None = None, roles: Sequence[str] = ROLE_ORDER,
                          title: str = "node roles") -> Axes:
    """Shares of critical, intermittent and redundant nodes (or links), one bar each.

    Parameters
    ----------
    composition : mapping of str to counts
        Network (or case) name -> one count per role, in the order of ``roles``.
    roles : sequence of str
        Role names (default: critical, intermittent, redundant; for links use e.g.
        ``("critical", "ordinary", "redundant")``).

    Returns
    -------
    matplotlib.axes.Axes

    Notes
    -----
    Stacked horizontal bars of shares; the segments differ by fill *and* hatch, in the
    same order and style as the role marks on maps (dark, dotted, white).

    Examples
    --------
    >>> import matplotlib; matplotlib.use("Agg")
    >>> ax = plot_role_composition({"grid": [2, 5, 13]})
    >>> [round(float(p.get_width()), 2) for p in ax.patches]
    [0.1, 0.25, 0.65]
    >>> import matplotlib.pyplot as plt; plt.close(ax.figure)
    """
    if not composition:
        raise OptionError("plot_role_composition needs at least one network.")
    names = list(composition)
    counts = np.array([np.asarray(composition[k], dtype=np.float64) for k in names])
    if counts.ndim != 2 or counts.shape[1] != len(roles):
        raise OptionError(f"each network needs {len(roles)} counts ({', '.join(roles)}), "
                          f"found shape {counts.shape}.")
    if np.any(counts < 0):
        raise OptionError("role counts must be non-negative.")
    totals = counts.sum(axis=1, keepdims=True)
    shares = np.divide(counts, totals, out=np.zeros_like(counts), where=totals > 0)
    ax = _new_axes(ax, (6.4, 1.2 + 0.5 * len(names)))
    styles = [MARKS["role_critical"], MARKS["role_intermittent"], MARKS["role_redundant"]]
    left = np.zeros(len(names))
    yy = np.arange(len(names))[::-1]
    for j, role in enumerate(roles):
        mk = styles[j % len(styles)]
        bars = ax.barh(yy, shares[:, j], left=left, color=mk.face, edgecolor=mk.edge,
                       hatch=mk.hatch or None, linewidth=0.8, label=_plain(role), height=0.6)
        for b, share in zip(bars, shares[:, j]):
            b.set_gid(f"netctl:role:{j}")
            if share >= 0.06:
                cx = b.get_x() + b.get_width() / 2
                dark = mk.face == styles[0].face
                t = ax.text(cx, b.get_y() + b.get_height() / 2, f"{share:.0%}",
                            ha="center", va="center", fontsize=8,
                            color="white" if dark else INK,
                            bbox=None if dark else {"facecolor": "white", "edgecolor": "none",
                                                    "pad": 1.0})
                t.set_gid("netctl:share")
        left += shares[:, j]
    ax.set_yticks(yy, [_plain(n) for n in names])
    ax.set_xlim(0, 1)
    ax.set_xlabel("share")
    ax.set_title(title, loc="left", fontsize=10)
    ax.legend(frameon=False, fontsize=8, loc="center left", bbox_to_anchor=(1.01, 0.5),
              borderaxespad=0)
    return ax


def plot_weakest_modes(eigenvalues: ArrayLike, measure: ArrayLike, *,
                       k: int = 10, ax: Axes | None = None,
                       quantity: str = "modal controllability") -> Axes:
    r"""The ``k`` modes with the smallest control measure: the hardest to steer.

    Parameters
    ----------
    eigenvalues : array of complex
        The modes (eigenvalues of ``A``).
    measure : array of float
        A non-negative control measure per mode (e.g. modal controllability, or the
        input energy's inverse along each eigenvector); smaller is weaker.
    k : int
        How many of the weakest to show.
    quantity : str
        Axis label.

    Returns
    -------
    matplotlib.axes.Axes

    Notes
    -----
    Horizontal bars on a logarithmic axis (control measures span decades), weakest at
    the top, each labelled by its eigenvalue. Zero values (modes no input can move)
    are drawn hatched at the left edge and labelled "uncontrollable".

    Examples
    --------
    >>> import matplotlib; matplotlib.use("Agg")
    >>> ax = plot_weakest_modes([-1, -2, -3], [0.5, 1e-3, 0.2], k=2)
    >>> [t.get_text() for t in ax.get_yticklabels()]
    ['λ = -2', 'λ = -3']
    >>> import matplotlib.pyplot as plt; plt.close(ax.figure)
    """
    lam = np.asarray(eigenvalues, dtype=np.complex128).ravel()
    val = _vector(measure, "measure")
    if lam.size != val.size:
        raise OptionError(f"{lam.size} eigenvalues but {val.size} measure values; give one "
                          "value per mode.")
    if not isinstance(k, (int, np.integer)) or k < 1:
        raise OptionError(f"k must be a positive integer, found {k!r}.")
    if np.any(val < 0) or not np.all(np.isfinite(val)):
        raise OptionError("measure values must be finite and non-negative.")
    ax = _new_axes(ax, weakest_modes_size(k, lam.size))
    order = np.lexsort((np.abs(lam), val))[:k]
    yy = np.arange(order.size)[::-1]
    vals = val[order]
    positive = vals[vals > 0]
    floor = positive.min() / 10 if positive.size else 1e-12
    widths = np.where(vals > 0, vals, floor)
    bars = ax.barh(yy, widths, color=MARKS["chain"].face, edgecolor=INK, linewidth=0.6,
                   height=0.6)
    for b, v in zip(bars, vals):
        b.set_gid("netctl:mode")
        if v == 0:
            b.set_hatch("xxx")
            b.set_facecolor("white")
            ax.text(b.get_width(), b.get_y() + b.get_height() / 2, " uncontrollable",
                    va="center", fontsize=8, color=INK)
    ax.set_xscale("log")
    ax.set_yticks(yy, [f"λ = {_fmt_complex(z)}" for z in lam[order]])
    ax.set_xlabel(quantity + " (log scale; smaller is harder to steer)")
    ax.set_title(f"the {order.size} weakest of {lam.size} modes", loc="left", fontsize=10)
    return ax


def _fmt_complex(z: complex) -> str:
    if abs(z.imag) < 1e-12 * max(1.0, abs(z.real)):
        return f"{z.real:.4g}"
    sign = "+" if z.imag >= 0 else "-"
    return f"{z.real:.3g} {sign} {abs(z.imag):.3g}j"
