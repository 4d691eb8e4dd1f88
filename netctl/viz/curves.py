"""Driver-node fraction against mean degree: analytic lines and simulated points."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from netctl.viz.style import INK, SERIES

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes

__all__ = ["plot_driver_curves"]


def plot_driver_curves(curves: Mapping[str, Sequence[ArrayLike]], *, ax: Axes | None = None,
                       log: bool = True) -> Axes:
    r"""``n_D`` against ``<k>``: one analytic line and one set of simulated points a family.

    Parameters
    ----------
    curves : mapping of str to (mean_degree, predicted, simulated_mean, standard_error)
        One entry per family (the label is shown as given).
    ax : matplotlib Axes, optional
    log : bool
        Logarithmic ``n_D`` axis (the large-``<k>`` tails decay exponentially).

    Returns
    -------
    matplotlib Axes
        Lines have gid ``"netctl:cavity"``, error bars ``"netctl:simulated"``.

    Examples
    --------
    >>> ax = plot_driver_curves({"ER": ([1, 2], [0.65, 0.46], [0.66, 0.45], [0.01, 0.01])})
    >>> ax.get_xlabel()
    'mean degree <k> = 2 L / N'
    """
    import matplotlib.pyplot as plt

    if ax is None:
        _, ax = plt.subplots(figsize=(6.4, 4.4), layout="constrained")
    for c, (label, (k, pred, mean, se)) in enumerate(curves.items()):
        colour, marker, dash = SERIES[c % len(SERIES)]
        k = np.asarray(k, float)
        line, = ax.plot(k, np.asarray(pred, float), color=colour, lw=1.6, linestyle=dash,
                        label=f"{label}: cavity prediction")
        line.set_gid("netctl:cavity")
        bars = ax.errorbar(k, np.asarray(mean, float), yerr=np.asarray(se, float),
                           fmt=marker, ms=4.5, mfc="white", mec=colour, ecolor=colour,
                           capsize=2,
                           label=f"{label}: simulated (mean ± standard error)")
        bars[0].set_gid("netctl:simulated")
    if log:
        ax.set_yscale("log")
    ax.set_xlabel("mean degree <k> = 2 L / N")
    ax.set_ylabel("driver-node fraction n_D")
    ax.legend(frameon=False, fontsize=8, labelcolor=INK)
    return ax


