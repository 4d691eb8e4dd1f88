"""Analytic driver-node fraction from a degree distribution (cavity method)."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from netctl.errors import InvalidSystemError, OptionError

__all__ = ["CavityPrediction", "cavity_driver_fraction", "degree_distribution"]

#: Values of the fixed-point functions this close to 0 are roots (a few ulps of 1).
_ZERO = 8 * np.finfo(np.float64).eps
_GRID = 4097  # sign-change scan of the fixed-point map on [0, 1]


@dataclass(frozen=True)
class CavityPrediction:
    """Outcome of :func:`cavity_driver_fraction`.

    Attributes
    ----------
    driver_fraction : float
        Predicted ``n_D = N_D / N`` for large random networks with these degrees: the
        larger of ``unmatched_out`` and ``unmatched_in``, never below ``lower_bound``.
    mean_in_degree : float
        ``z = <k_in> = <k_out>`` = links / states (half the mean total degree
        ``<k> = <k_in> + <k_out>`` of Liu, Slotine & Barabási).
    w1, w2, w1_hat, w2_hat : float
        The physical solution of the self-consistent equations (probabilities that a
        cavity message says "leaf" or "matched", see Notes of
        :func:`cavity_driver_fraction`).
    n_roots : int
        Roots of the fixed-point equation for ``w1`` found in [0, 1]: 1 without a core,
        3 typically when a core exists.
    unmatched_out, unmatched_in : float
        Fractions of out-copies (link sources) and of in-copies (link targets) that leaf
        removal leaves isolated, i.e. unmatched.
    core_out, core_in : float
        Fractions of out-copies and in-copies in the core left by leaf removal.
    lower_bound : float
        ``max(P_out(0), P_in(0))``: states that send nothing or receive nothing.
    """

    driver_fraction: float
    mean_in_degree: float
    w1: float
    w2: float
    w1_hat: float
    w2_hat: float
    n_roots: int
    unmatched_out: float = 0.0
    unmatched_in: float = 0.0
    core_out: float = 0.0
    core_in: float = 0.0
    lower_bound: float = 0.0

    @property
    def mean_total_degree(self) -> float:
        """``<k> = <k_in> + <k_out> = 2 L / N`` (the x-axis of Liu et al. 2011)."""
        return 2.0 * self.mean_in_degree

    def to_dict(self) -> dict[str, Any]:
        return {"analysis": "cavity_prediction", "driver_fraction": self.driver_fraction,
                "mean_in_degree": self.mean_in_degree,
                "mean_total_degree": self.mean_total_degree,
                "unmatched_out": self.unmatched_out, "unmatched_in": self.unmatched_in,
                "core_out": self.core_out, "core_in": self.core_in,
                "lower_bound": self.lower_bound,
                "w1": self.w1, "w2": self.w2,
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

    def G(self, x: Any) -> Any:
        if np.ndim(x):  # a grid of points at once (the root scan)
            return np.power(np.asarray(x, np.float64)[:, None], self.k) @ self.p
        return float(np.dot(self.p, np.power(x, self.k)))

    def H(self, x: Any) -> Any:
        if np.ndim(x):
            return np.power(np.asarray(x, np.float64)[:, None], self.k1) @ self.q
        return float(np.dot(self.q, np.power(x, self.k1)))


def _clean(x: float) -> float:
    """``x`` with rounding noise below 1e-12 (a core that does not exist) shown as 0."""
    return 0.0 if abs(x) < 1e-12 else float(x)


def _brentq(f: Callable[[float], float], xa: float, xb: float, xtol: float, rtol: float,
            maxiter: int) -> float:
    """Root of ``f`` in the bracket ``[xa, xb]`` by Brent's method [1]_, step for step the
    algorithm of ``scipy.optimize.brentq`` (its C routine ``brentq.c``, by Charles Harris):
    the same double operations in the same order, so the same root to the last bit
    (``tests/test_ensemble_small_paths.py`` checks that against SciPy). Here because importing
    ``scipy.optimize`` costs more than a whole ``compare`` run on a small network
    (issue 15; ``benchmarks/RESULTS.md``). ``f(xa)`` and ``f(xb)`` must differ in sign
    (else ValueError); no convergence in ``maxiter`` steps raises RuntimeError, as SciPy
    does. Translated from SciPy's C code under SciPy's BSD licence (THIRD_PARTY_NOTICES.md).

    References
    ----------
    .. [1] R. P. Brent, "Algorithms for Minimization Without Derivatives", Prentice-Hall,
       1973, chapter 4 (details from memory).
    """
    xpre, xcur = float(xa), float(xb)
    xblk = fblk = spre = scur = 0.0
    fpre = float(f(xpre))
    fcur = float(f(xcur))
    if fpre == 0:
        return xpre
    if fcur == 0:
        return xcur
    if math.copysign(1.0, fpre) == math.copysign(1.0, fcur):
        raise ValueError(f"f({xpre!r}) = {fpre!r} and f({xcur!r}) = {fcur!r} have the same "
                         "sign; Brent's method needs a bracket with a sign change.")
    for _ in range(maxiter):
        if fpre != 0 and fcur != 0 and \
                math.copysign(1.0, fpre) != math.copysign(1.0, fcur):
            xblk = xpre
            fblk = fpre
            spre = scur = xcur - xpre
        if abs(fblk) < abs(fcur):
            xpre, xcur, xblk = xcur, xblk, xcur
            fpre, fcur, fblk = fcur, fblk, fcur
        delta = (xtol + rtol * abs(xcur)) / 2
        sbis = (xblk - xcur) / 2
        if fcur == 0 or abs(sbis) < delta:
            return xcur
        if abs(spre) > delta and abs(fcur) < abs(fpre):
            if xpre == xblk:  # interpolate
                stry = -fcur * (xcur - xpre) / (fcur - fpre)
            else:  # extrapolate
                dpre = (fpre - fcur) / (xpre - xcur)
                dblk = (fblk - fcur) / (xblk - xcur)
                stry = -fcur * (fblk * dblk - fpre * dpre) / (dblk * dpre * (fblk - fpre))
            if 2 * abs(stry) < min(abs(spre), 3 * abs(sbis) - delta):  # good short step
                spre = scur
                scur = stry
            else:  # bisect
                spre = scur = sbis
        else:  # bisect
            spre = scur = sbis
        xpre = xcur
        fpre = fcur
        if abs(scur) > delta:
            xcur += scur
        else:
            xcur += delta if sbis > 0 else -delta
        fcur = float(f(xcur))
    raise RuntimeError(f"Brent's method did not converge in {maxiter} iterations "
                       f"(last value {xcur!r}).")


def _roots(f: Callable[[Any], Any]) -> list[float]:
    """All sign-change roots of ``f`` on [0, 1], bracketed by a grid, refined by Brent.

    A grid value within a few rounding errors of 0 (``_ZERO``; ``f`` is a difference of
    probabilities) is a root itself: ``w = 1`` solves the equations exactly when no
    state has excess degree 0 on the other side, and rounding can leave ``f(1)`` at
    2e-16 with no sign change to bracket."""
    xs = np.linspace(0.0, 1.0, _GRID)
    fs = np.asarray(f(xs), np.float64)  # the whole grid at once; Brent refines by scalars
    fs = np.where(np.abs(fs) <= _ZERO, 0.0, fs)
    roots = [float(x) for x, v in zip(xs, fs) if v == 0.0]
    for i in np.flatnonzero(fs[:-1] * fs[1:] < 0):
        roots.append(_brentq(f, xs[i], xs[i + 1], xtol=1e-15, rtol=1e-15, maxiter=200))
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
        Which root of the closed fixed-point equations to use when they have several.
        Both give the same fraction: the largest roots exchange the roles of the two
        sides (see Notes), and the fraction is the larger side. The middle one of three
        roots is unphysical and is never used.
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
    The minimum number of inputs is ``N - |M*|`` for a maximum matching ``M*`` of the
    bipartite graph of out-copies (link sources) and in-copies (link targets) [1]_. On
    a locally tree-like random graph it follows from leaf removal [2]_: matching a
    vertex of degree 1 with its only neighbour is always part of some maximum matching;
    repeated, it leaves isolated vertices (unmatched) and a core whose vertices all have
    degree >= 2, with ``c_out`` out-copies and ``c_in`` in-copies. On a random graph
    the core's maximum matching saturates its smaller side [3]_, so if ``u_out`` and
    ``u_in`` are the fractions left isolated on each side,
    ``n_D = u_out + max(0, c_out - c_in) = max(u_out, u_in)`` (both sides have ``N``
    vertices and leaf removal matches them in pairs, so ``u_out + c_out = u_in + c_in``).

    Cavity messages (a vertex, seen from one neighbour, is a *leaf* "L" in the rest
    of the tree, always *matched* "M" there, or undecided) give the fractions [1]_:
    with ``G(x) = sum P_out(k) x^k``, ``Gh(x) = sum P_in(k) x^k``, ``H = G'/G'(1)``,
    ``Hh = Gh'/Gh'(1)`` and ``z = <k_in> = <k_out>``, an out-copy says L with probability
    ``w1 = H(wh2)`` and M with ``w2 = 1 - H(1 - wh1)``; an in-copy says L with ``wh1 =
    Hh(w2)`` and M with ``wh2 = 1 - Hh(1 - w1)``. These close as ``w1 = H(1 - Hh(1 -
    w1))`` and ``wh1 = Hh(1 - H(1 - wh1))``; leaf removal started from "all undecided"
    converges to the smallest roots. Counting the pairs matched by leaf removal
    (vertices that receive an L, less the links that carry L both ways) and the core,

    .. math:: u_{out} = \hat G(1-w_1) + G(\hat w_2) - 1 + z\,w_1(1-\hat w_2),\qquad
              u_{in} = G(1-\hat w_1) + \hat G(w_2) - 1 + z\,\hat w_1(1-w_2),

    and ``n_D = max(u_out, u_in)``. Liu et al.'s formula [1]_ is their mean
    ``(u_out + u_in) / 2``: right when the two sides' cores are equal (for example when
    ``P_in = P_out``, or without a core), too low otherwise, even below the bound
    ``max(P_out(0), P_in(0))`` that states sending or receiving nothing impose. The
    largest roots give the same two values exchanged. Derivation and checks against
    the configuration-model ensemble: ``docs/SCALE.md``.

    Each closed equation is solved by scanning [0, 1] on a grid of 4097 points for sign
    changes and refining every bracket with Brent's method (the algorithm of
    ``scipy.optimize.brentq``, run in Python: same roots, without that import);
    a root always exists because ``f(0) >= 0 >= f(1)``. The prediction holds for the
    configuration model with these degree sequences (any correlation between a state's
    own in- and out-degree is irrelevant: the bipartite graph never joins a state's two
    copies); correlations between neighbours, clustering and other structure are not
    described. It is the same when in and out are exchanged (a matching of ``A`` is one
    of ``A^T``). Cost: O(grid x distinct degrees).

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011, Supplementary Information Sec. IV.
       doi:10.1038/nature10011
    .. [2] R. M. Karp, M. Sipser, "Maximum matchings in sparse random graphs", Proc.
       22nd IEEE FOCS, 364-375, 1981. doi:10.1109/SFCS.1981.21
    .. [3] L. Zdeborová, M. Mézard, "The number of matchings in random graphs",
       J. Stat. Mech. P05003, 2006 (from memory); M. Bauer, O. Golinelli, "Core
       percolation in random graphs: a critical phenomena analysis", Eur. Phys. J. B
       24:339-352, 2001 (from memory).

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

    def sides(w1: float, wh1: float) -> tuple[float, float, float, float, float, float]:
        wh2 = 1.0 - gh.H(1.0 - w1)
        w2 = 1.0 - g.H(1.0 - wh1)
        u_out = gh.G(1.0 - w1) + g.G(wh2) - 1.0 + z * w1 * (1.0 - wh2)
        u_in = g.G(1.0 - wh1) + gh.G(w2) - 1.0 + z * wh1 * (1.0 - w2)
        return w2, wh2, u_out, u_in, (1.0 - w1 - w2), (1.0 - wh1 - wh2)

    r_out = _roots(lambda w: g.H(1.0 - gh.H(1.0 - w)) - w)
    r_in = _roots(lambda w: gh.H(1.0 - g.H(1.0 - w)) - w)
    # physical solution (leaf removal from "all undecided"): the smallest roots
    w1, wh1 = r_out[0], r_in[0]
    w2, wh2, u_out, u_in, und_out, und_in = sides(w1, wh1)
    # core: no L received and >= 2 undecided neighbours
    c_out = g.G(1.0 - wh1) - g.G(wh2) - z * w1 * und_in
    c_in = gh.G(1.0 - w1) - gh.G(w2) - z * wh1 * und_out
    if root == "largest":  # the largest roots give the two sides exchanged
        w1, wh1 = r_out[-1], r_in[-1]
        w2, wh2, u_in, u_out, _, _ = sides(w1, wh1)
    n_roots = len(r_out)
    bound = max(g.G(0.0), gh.G(0.0))
    # max(., bound) only absorbs rounding: the derivation gives u >= P(0) on each side
    nd = max(u_out, u_in, bound)
    return CavityPrediction(driver_fraction=float(nd), mean_in_degree=float(z), w1=w1, w2=w2,
                            w1_hat=wh1, w2_hat=wh2, n_roots=n_roots,
                            unmatched_out=float(u_out), unmatched_in=float(u_in),
                            core_out=_clean(c_out), core_in=_clean(c_in),
                            lower_bound=float(bound))
