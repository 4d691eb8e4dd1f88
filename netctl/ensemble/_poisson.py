"""Poisson probabilities as ``scipy.stats.poisson.pmf`` gives them, without SciPy.

``compare --null erdos-renyi`` notes the cavity prediction of the Erdős–Rényi ensemble,
whose degrees are Poisson. ``scipy.stats.poisson.pmf(k, mu)`` evaluates
``exp(xlogy(k, mu) - gammaln(k + 1) - mu)`` clipped to [0, 1]; importing ``scipy.stats``
(or even ``scipy.special``) costs more than the rest of a ``compare`` run on a small
network (issue 15, goal 1; ``benchmarks/RESULTS.md``). Here ``gammaln`` at whole numbers
is Cephes' ``lgam`` as SciPy compiles it (the same double operations in the same order)
and ``xlogy`` is ``k * log(mu)`` with the C library's ``log``, so the probabilities equal
SciPy's bit for bit; ``tests/test_ensemble_small_paths.py`` checks that against SciPy
for every whole number up to 2·10^5 and for random means. Translated from SciPy's C code
under SciPy's BSD licence: see THIRD_PARTY_NOTICES.md.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["poisson_pmf"]

#: Cephes lgam: Stirling expansion (A) and the rational approximation on [2, 3] (B, C),
#: S. L. Moshier, Cephes Math Library 2.2 (1992), as carried by SciPy
_A = (8.11614167470508450300E-4, -5.95061904284301438324E-4, 7.93650340457716943945E-4,
      -2.77777777730099687205E-3, 8.33333333333331927722E-2)
_B = (-1.37825152569120859100E3, -3.88016315134637840924E4, -3.31612992738871184744E5,
      -1.16237097492762307383E6, -1.72173700820839662146E6, -8.53555664245765465627E5)
_C = (-3.51815701436523470549E2, -1.70642106651881159223E4, -2.20528590553854454839E5,
      -1.13933444367982507207E6, -2.53252307177582951285E6, -2.01889141433532773231E6)
_LS2PI = 0.91893853320467274178  # log(sqrt(2 pi))


def _polevl(x: float, coef: tuple[float, ...]) -> float:
    ans = coef[0]
    for c in coef[1:]:
        ans = ans * x + c
    return ans


def _p1evl(x: float, coef: tuple[float, ...]) -> float:
    ans = x + coef[0]
    for c in coef[1:]:
        ans = ans * x + c
    return ans


def _lgam(x: float) -> float:
    """``log|Gamma(x)|`` for finite ``x >= 1`` (Cephes' ``lgam`` on that range)."""
    if x < 13.0:
        z = 1.0
        p = 0.0
        u = x
        while u >= 3.0:
            p -= 1.0
            u = x + p
            z *= u
        while u < 2.0:
            z /= u
            p += 1.0
            u = x + p
        if u == 2.0:
            return math.log(z)
        p -= 2.0
        x = x + p
        p = x * _polevl(x, _B) / _p1evl(x, _C)
        return math.log(z) + p
    if x >= 1000.0:
        q = (x - 0.5) * math.log(x) - x + _LS2PI
        if x > 1.0e8:
            return q
        p = 1.0 / (x * x)
        p = ((7.9365079365079365079365e-4 * p - 2.7777777777777777777778e-3) * p
             + 0.0833333333333333333333) / x
        return q + p
    q = (x - 0.5) * math.log(x) - x + _LS2PI
    p = 1.0 / (x * x)
    return q + _polevl(p, _A) / x


def poisson_pmf(count: int, mean: float) -> np.ndarray:
    """``P(k)`` for ``k = 0 .. count - 1`` of a Poisson law of ``mean > 0``: the values of
    ``scipy.stats.poisson.pmf(np.arange(count), mean)``.

    Examples
    --------
    >>> poisson_pmf(3, 1.0).round(6).tolist()
    [0.367879, 0.367879, 0.18394]
    """
    mu = float(mean)
    log_mu = math.log(mu)
    xl = np.array([0.0] + [k * log_mu for k in range(1, count)], np.float64)[:count]
    gl = np.array([_lgam(float(k + 1)) for k in range(count)], np.float64)
    return np.asarray(np.clip(np.exp(xl - gl - mu), 0, 1), np.float64)
