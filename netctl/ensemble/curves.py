"""Driver-node fraction against mean degree: cavity prediction and simulation side by side.

For a family of random networks (directed Erdős–Rényi, or the static scale-free model)
and a range of mean degrees ``<k> = 2 L / N``, :func:`driver_fraction_curve` gives the
analytic fraction (cavity method, :func:`netctl.ensemble.cavity_driver_fraction`) on
the family's expected degree distribution and the simulated fraction (mean and standard
error over generated networks), the comparison of Liu, Slotine & Barabási (2011) Fig. 3.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from netctl.ensemble._poisson import poisson_pmf
from netctl.ensemble.cavity import cavity_driver_fraction
from netctl.ensemble.null import n_unmatched
from netctl.errors import OptionError

__all__ = ["CURVE_FAMILIES", "DriverCurve", "driver_fraction_curve"]

#: family name -> description (closed set)
CURVE_FAMILIES: dict[str, str] = {
    "erdos-renyi": "directed Erdős–Rényi G(N, L): Poisson in- and out-degrees",
    "scale-free": "static model (Goh, Kahng & Kim 2001) with Cho et al.'s finite-size "
                  "correction, in- and out-degree exponent gamma",
}


@dataclass(frozen=True)
class DriverCurve:
    """Outcome of :func:`driver_fraction_curve` (one row per mean degree).

    Attributes
    ----------
    mean_degree : ndarray
        ``<k> = <k_in> + <k_out> = 2 L / N``.
    predicted : ndarray
        Cavity prediction for the family's expected degree distribution at ``N``.
    simulated_mean, simulated_standard_error : ndarray
        Mean of ``n_D = (N - |M*|) / N`` over ``samples`` generated networks and its
        standard error (sample standard deviation / sqrt(samples)).
    """

    family: str
    n_states: int
    exponent: float | None
    samples: int
    seed: int
    mean_degree: np.ndarray
    predicted: np.ndarray
    simulated_mean: np.ndarray
    simulated_standard_error: np.ndarray

    def to_dict(self) -> dict[str, Any]:
        return {"analysis": "driver_fraction_curve", "family": self.family,
                "family_description": CURVE_FAMILIES[self.family],
                "n_states": self.n_states, "exponent": self.exponent,
                "samples": self.samples, "seed": self.seed,
                "rows": [{"mean_degree": float(k), "predicted": float(p),
                          "simulated_mean": float(m), "simulated_standard_error": float(e)}
                         for k, p, m, e in zip(self.mean_degree, self.predicted,
                                               self.simulated_mean,
                                               self.simulated_standard_error)]}


def _static_pmf(n: int, links: int, exponent: float) -> np.ndarray:
    """Expected degree distribution of the static model: mean of Poisson(L w_i / W)."""
    from scipy.stats import poisson  # a mixture over many rates: SciPy's vectorised pmf

    from netctl.generate import static_fitness

    w = static_fitness(n, exponent)
    lam = links * w / w.sum()
    k = np.arange(int(lam.max() + 12 * math.sqrt(lam.max()) + 30))
    # group equal-ish rates: the pmf mixture in chunks keeps memory bounded
    p = np.zeros(k.size)
    for chunk in np.array_split(lam, max(1, lam.size // 2000)):
        p += poisson.pmf(k[:, None], chunk[None, :]).sum(axis=1)
    return p / p.sum()


def driver_fraction_curve(family: str, mean_degrees: Sequence[float], *, n_states: int = 10_000,
                          samples: int = 5, exponent: float = 2.5,
                          seed: int = 0,
                          progress: Callable[[int, int], None] | None = None) -> DriverCurve:
    r"""Analytic and simulated driver-node fraction against mean degree.

    Parameters
    ----------
    family : {"erdos-renyi", "scale-free"}
    mean_degrees : sequence of float
        Values of ``<k> = 2 L / N`` (> 0).
    n_states : int
        Size of the simulated networks (>= 10).
    samples : int
        Generated networks per mean degree (>= 2 for a standard error).
    exponent : float
        Degree exponent of the scale-free family (> 2; ignored for Erdős–Rényi).
    seed : int
    progress : callable(done, total), optional
        Called after each simulated network (the command line prints it on a terminal).

    Returns
    -------
    DriverCurve

    Notes
    -----
    The prediction uses the family's expected degree distribution at this ``N``: Poisson
    with mean ``<k>/2`` for Erdős–Rényi, and for the static model the mixture of
    Poisson laws of mean ``L w_i / W`` over its fitnesses ``w_i``
    (:func:`netctl.generate.static_fitness`), so that finite-size cut-offs enter both
    curves alike. The simulated networks come from :func:`netctl.generate.erdos_renyi`
    and :func:`netctl.generate.scale_free` (no repeated links or self-loops). Liu,
    Slotine & Barabási [1]_ (Fig. 3, from memory) show the same comparison: ``n_D``
    falls with ``<k>``, as ``exp(-<k>/2)`` for Erdős–Rényi at large ``<k>``, and
    heavy-tailed networks (smaller gamma) need more drivers at the same ``<k>``.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    >>> c = driver_fraction_curve("erdos-renyi", [2.0], n_states=2000, samples=3)
    >>> round(float(c.predicted[0]), 3)
    0.456
    """
    from netctl.generate import erdos_renyi, scale_free

    if family not in CURVE_FAMILIES:
        raise OptionError(f"unknown family {family!r}; choose one of "
                          f"{', '.join(CURVE_FAMILIES)}.")
    ks = np.asarray(list(mean_degrees), np.float64)
    if ks.ndim != 1 or ks.size == 0 or not np.all(ks > 0):
        raise OptionError(f"mean degrees must be a non-empty list of numbers > 0, found "
                          f"{list(mean_degrees)!r}.")
    if n_states < 10:
        raise OptionError(f"n_states must be at least 10, found {n_states!r}.")
    if samples < 1:
        raise OptionError(f"samples must be at least 1, found {samples!r}.")
    if family == "scale-free" and not exponent > 2:
        raise OptionError(f"exponent must be > 2, found {exponent!r}.")
    pred = np.zeros(ks.size)
    mean = np.zeros(ks.size)
    se = np.zeros(ks.size)
    seeds = np.random.SeedSequence(seed).spawn(ks.size * samples)
    for a, k in enumerate(ks):
        links = int(round(n_states * k / 2))
        if family == "erdos-renyi":
            kk = np.arange(int(k / 2 + 12 * math.sqrt(k / 2) + 30))
            pmf = poisson_pmf(kk.size, links / n_states)  # SciPy's values, bit for bit
        else:
            pmf = _static_pmf(n_states, links, exponent)
        pred[a] = cavity_driver_fraction(pmf / pmf.sum(), distribution=True).driver_fraction
        fr = []
        for b in range(samples):
            s = int(seeds[a * samples + b].generate_state(1)[0])
            g = (erdos_renyi(n_states, mean_degree=k, seed=s) if family == "erdos-renyi"
                 else scale_free(n_states, mean_degree=k, exponent=exponent, seed=s))
            src, dst = g.edges()
            fr.append(n_unmatched(src, dst, n_states) / n_states)
            if progress is not None:
                progress(a * samples + b + 1, ks.size * samples)
        mean[a] = float(np.mean(fr))
        se[a] = float(np.std(fr, ddof=1) / math.sqrt(len(fr))) if len(fr) > 1 else 0.0
    return DriverCurve(family=family, n_states=int(n_states),
                       exponent=float(exponent) if family == "scale-free" else None,
                       samples=int(samples), seed=int(seed), mean_degree=ks, predicted=pred,
                       simulated_mean=mean, simulated_standard_error=se)
