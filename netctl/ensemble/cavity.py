"""Analytic driver-node fraction from a degree distribution (cavity method)."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from netctl.errors import InvalidSystemError, OptionError

__all__ = ["CavityPrediction", "cavity_driver_fraction", "degree_distribution"]

_GRID = 4097  # sign-change scan of the fixed-point map on [0, 1]


@dataclass(frozen=True)
class CavityPrediction:
    """Outcome of :func:`cavity_driver_fraction`.

    Attributes
    ----------
    driver_fraction : float
        Predicted ``n_D = N_D / N`` for large random networks with these degrees.
    mean_degree : float
        ``z = <k_in> = <k_out>``.
    w1, w2, w1_hat, w2_hat : float
        The solution of the self-consistent equations that was used.
    n_roots : int
        Roots of the fixed-point equation for ``w1`` found in [0, 1] (1 or 3 typically).
    """

    driver_fraction: float
    mean_degree: float
    w1: float
    w2: float
    w1_hat: float
    w2_hat: float
    n_roots: int

    def to_dict(self) -> dict[str, Any]:
        return {"analysis": "cavity_prediction", "driver_fraction": self.driver_fraction,
                "mean_degree": self.mean_degree, "w1": self.w1, "w2": self.w2,
                "w1_hat": self.w1_hat, "w2_hat": self.w2_hat, "n_roots": self.n_roots}


def degree_distribution(degrees: Any) -> tuple[np.ndarray, np.ndarray]:
    """Distinct degrees and their probabilities from a degree sequence.

    Examples
    --------
    >>> k, p = degree_distribution([0, 2, 2, 1])
    >>> k.tolist(), p.tolist()
    ([0, 1, 2], [0.25, 0.25, 0.5])
    """
    d = np.asarray(degrees, np.int64)
    if d.size == 0:
        raise InvalidSystemError("a degree distribution needs at least one state.")
    k, counts = np.unique(d, return_counts=True)
    return k, counts / d.size


class _Gen:
    """Generating function ``G(x) = sum_k p_k x^k`` and its normalized derivative."""

    def __init__(self, k: np.ndarray, p: np.ndarray) -> None:
        self.k = k.astype(np.float64)
        self.p = p.astype(np.float64)
        self.mean = float(np.dot(self.k, self.p))
        pos = self.k > 0
        self.k1 = self.k[pos] - 1.0
        self.q = self.k[pos] * self.p[pos] / self.mean  # excess-degree weights

    def G(self, x: float) -> float:
        return float(np.dot(self.p, np.power(x, self.k)))

    def H(self, x: float) -> float:
        return float(np.dot(self.q, np.power(x, self.k1)))


def _roots(f: Callable[[float], float]) -> list[float]:
    """All sign-change roots of ``f`` on [0, 1], bracketed by a grid, refined by Brent."""
    from scipy.optimize import brentq  # here: scipy.optimize costs ~0.4 s to import

    xs = np.linspace(0.0, 1.0, _GRID)
    fs = np.array([f(x) for x in xs])
    roots = [float(x) for x, v in zip(xs, fs) if v == 0.0]
    for i in np.flatnonzero(fs[:-1] * fs[1:] < 0):
        roots.append(float(brentq(f, xs[i], xs[i + 1], xtol=1e-15, rtol=1e-15, maxiter=200)))
    return sorted(set(roots))


def cavity_driver_fraction(out_degrees: Any, in_degrees: Any | None = None, *,
                           root: str = "smallest",
                           distribution: bool = False) -> CavityPrediction:
    r"""Predicted driver-node fraction of random directed networks with these degrees.

    Parameters
    ----------
    out_degrees, in_degrees : array_like
        Degree sequences (one value per state), or with ``distribution=True`` the
        probabilities ``P(k)`` for ``k = 0, 1, 2, ...``. ``in_degrees`` defaults to
        ``out_degrees``.
    root : {"smallest", "largest"}
        Which root of the fixed-point equation to use when it has several; both give the
        same fraction (the middle one of three is unphysical and is never used).
    distribution : bool
        Whether the arrays are probability vectors rather than degree sequences.

    Returns
    -------
    CavityPrediction

    Raises
    ------
    InvalidSystemError
        No links (mean degree 0), unequal mean in- and out-degree, bad probabilities.
    OptionError
        ``root`` outside its choices.

    Notes
    -----
    With ``G(x) = sum P_out(k) x^k``, ``Gh(x) = sum P_in(k) x^k``, ``H = G'/G'(1)``,
    ``Hh = Gh'/Gh'(1)`` and ``z = <k_in> = <k_out>``, the cavity equations of [1]_
    (Supplementary Information) are ``w1 = H(wh2)``, ``w2 = 1 - H(1 - wh1)``,
    ``wh1 = Hh(w2)``, ``wh2 = 1 - Hh(1 - w1)``; they close as
    ``w1 = H(1 - Hh(1 - w1))`` and ``wh1 = Hh(1 - H(1 - wh1))``. The fraction is

    .. math:: n_D = \tfrac12\{[G(\hat w_2) + G(1-\hat w_1) - 1]
              + [\hat G(w_2) + \hat G(1-w_1) - 1]
              + z[\hat w_1(1-w_2) + w_1(1-\hat w_2)]\}.

    Each closed equation is solved by scanning [0, 1] on a grid of 4097 points for sign
    changes and refining every bracket with Brent's method (``scipy.optimize.brentq``);
    a root always exists because ``f(0) >= 0 >= f(1)``. The prediction assumes an
    uncorrelated random network (no correlation between a state's in- and out-degree,
    nor between neighbours); self-loops and repeated links are a vanishing fraction.
    The result is the same when in and out are exchanged (a matching of ``A`` is one
    of ``A^T``). Cost: O(grid x distinct degrees).

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    Poisson in- and out-degrees of mean 1 (directed Erdős–Rényi, ``<k> = 2``): the fixed
    point is the omega constant and ``n_D = Ω² + 2Ω - 1``:

    >>> import numpy as np
    >>> from scipy.stats import poisson
    >>> p = poisson.pmf(np.arange(60), 1.0)
    >>> round(cavity_driver_fraction(p / p.sum(), distribution=True).driver_fraction, 5)
    0.45594
    """
    if root not in ("smallest", "largest"):
        raise OptionError(f"root must be 'smallest' or 'largest', found {root!r}.")
    if in_degrees is None:
        in_degrees = out_degrees
    gens = []
    for arr, what in ((out_degrees, "out"), (in_degrees, "in")):
        if distribution:
            p = np.asarray(arr, np.float64)
            if p.ndim != 1 or p.size == 0 or np.any(p < 0) or not np.isclose(p.sum(), 1.0):
                raise InvalidSystemError(f"the {what}-degree distribution must be a vector of "
                                         f"probabilities adding up to 1, found sum "
                                         f"{float(p.sum()) if p.size else 0.0!r}.")
            gens.append(_Gen(np.arange(p.size), p / p.sum()))
        else:
            gens.append(_Gen(*degree_distribution(arr)))
    g, gh = gens
    if g.mean <= 0 or gh.mean <= 0:
        raise InvalidSystemError("the cavity prediction needs links: the mean degree is 0 "
                                 "(every state would be a driver).")
    if not np.isclose(g.mean, gh.mean, rtol=1e-9):
        raise InvalidSystemError(f"the mean out-degree {g.mean!r} differs from the mean "
                                 f"in-degree {gh.mean!r}; in a network both equal "
                                 "links / states.")
    z = g.mean

    def pick(f: Callable[[float], float]) -> tuple[float, int]:
        rs = _roots(f)
        return (rs[0] if root == "smallest" else rs[-1]), len(rs)

    w1, n_roots = pick(lambda w: g.H(1.0 - gh.H(1.0 - w)) - w)
    wh1, _ = pick(lambda w: gh.H(1.0 - g.H(1.0 - w)) - w)
    wh2 = 1.0 - gh.H(1.0 - w1)
    w2 = 1.0 - g.H(1.0 - wh1)
    nd = 0.5 * ((g.G(wh2) + g.G(1.0 - wh1) - 1.0)
                + (gh.G(w2) + gh.G(1.0 - w1) - 1.0)
                + z * (wh1 * (1.0 - w2) + w1 * (1.0 - wh2)))
    return CavityPrediction(driver_fraction=float(nd), mean_degree=float(z), w1=w1, w2=w2,
                            w1_hat=wh1, w2_hat=wh2, n_roots=n_roots)
