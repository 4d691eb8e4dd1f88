"""Eigenvalue multiplicities that survive rounding: Jordan-aware clusters, exact rationals.

A Jordan block of size ``k`` perturbed by rounding of size ``eta`` splits its eigenvalue
into ``k`` values about ``eta^(1/k)`` apart (Lidskii; Moro, Burke & Overton 1997). A fixed
clustering radius therefore splits every defective eigenvalue of size three or more into
"simple" pieces. Here the radius grows with the cluster size, and the geometric
multiplicity of each cluster is decided by the numerical rank of ``A - mu I`` at the
cluster mean, with the margin of that decision. For small matrices with integer or
rational entries the multiplicities are computed exactly instead (python-flint).
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import numpy as np

from netctl.numeric._tasks import Progress

__all__ = ["Cluster", "jordan_clusters", "rational_matrix", "exact_spectrum",
           "EXACT_LIMIT", "MAX_BLOCK"]

_EPS = float(np.finfo(float).eps)
#: largest matrix for which exact rational multiplicities are computed
EXACT_LIMIT = 200
#: largest Jordan block the float clustering looks for (eps^(1/4) ~ 1e-4)
MAX_BLOCK = 4
#: safety factor on the backward error of the eigenvalue solver (common practice, no source)
_SAFETY = 1e3
_MAX_DENOMINATOR = 10**6


@dataclass(frozen=True)
class Cluster:
    """One eigenvalue with its multiplicities.

    ``indices``: positions in the computed spectrum (float path; empty when exact);
    ``margin``: decades between the smallest singular value of ``A - mu I`` counted as
    nonzero and the largest counted as zero (``inf`` when exact). ``minpoly``: for an exact
    irrational eigenvalue, the coefficients (highest first) of its minimal polynomial,
    whose roots all share these multiplicities.
    """

    eigenvalue: complex
    algebraic: int
    geometric: int
    margin: float
    indices: np.ndarray
    exact: bool = False
    minpoly: tuple[int, ...] = ()
    rational: Fraction | None = None


def _radius(k: int, n: int, scale: float) -> float:
    return float((_SAFETY * max(n, 1) * _EPS) ** (1.0 / k) * scale)


def _component_labels(rows: np.ndarray, cols: np.ndarray, n: int) -> np.ndarray:
    """Connected components of the undirected graph with edges ``rows[k] -- cols[k]`` on
    ``n`` vertices, numbered in order of their smallest vertex (as
    ``scipy.sparse.csgraph.connected_components`` numbers them). Up to
    :data:`~netctl.numeric.rank.SMALL_STATES` vertices by netctl's union-find on NumPy
    arrays (no scipy import), above by scipy's; the same labels."""
    from netctl.numeric.rank import SMALL_STATES

    if n <= SMALL_STATES:
        from netctl._csr import coo_pattern
        from netctl.graph.components import weak_component_labels

        g = coo_pattern(rows, cols, None, (n, n), count=False)[0]
        return weak_component_labels(g.indptr, g.indices)[1]
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    g = sp.coo_array((np.ones(rows.size), (rows, cols)), shape=(n, n)).tocsr() if rows.size \
        else sp.csr_array((n, n))
    return connected_components(g + sp.eye_array(n, format="csr"), directed=False)[1]


def jordan_clusters(A: np.ndarray, lam: np.ndarray | None = None, *,
                    symmetric: bool = False, progress: Progress | None = None
                    ) -> list[Cluster]:
    r"""Eigenvalue clusters sized for Jordan blocks, each with its geometric multiplicity.

    Eigenvalue ``i`` and its ``k - 1`` nearest neighbours form one eigenvalue when they
    lie within ``r_k = (c n eps)^(1/k) ||A||_2`` of it (``k <= MAX_BLOCK``, ``c = 1e3``):
    the spread of a Jordan block of size ``k`` under a backward error ``n eps ||A||``
    [1]_. Overlapping groups are joined. The geometric multiplicity is
    ``n - rank(A - mu I)`` at the cluster mean ``mu``, from the singular values with
    tolerance ``c n eps ||A||_2`` (never more than the cluster size, at least one).

    Parameters
    ----------
    A : ndarray
        Dense square matrix.
    lam : ndarray, optional
        Its eigenvalues (computed when omitted).
    symmetric : bool
        Hermitian ``A``: every eigenvalue is semisimple; clusters use ``r_1`` only.
    progress : callable(stage, done, total), optional
        Told of each cluster rank decision (one SVD of ``A - mu I`` per cluster of
        two or more eigenvalues; :data:`netctl.numeric._tasks.Progress`).

    Returns
    -------
    list of Cluster
        Sorted by (real, imaginary) part of the mean.

    References
    ----------
    .. [1] J. Moro, J. V. Burke, M. L. Overton, "On the Lidskii-Vishik-Lyusternik
       perturbation theory for eigenvalues of matrices with arbitrary Jordan structure",
       SIAM J. Matrix Anal. Appl. 18(4):793-817, 1997. doi:10.1137/S0895479895294666
    """
    from netctl.numeric import _small_linalg as sl  # NumPy alone on small matrices
    # (issue 15): no scipy.linalg import there

    A = np.asarray(A)
    n = A.shape[0]
    if n == 0:
        return []
    if lam is None:
        if progress is not None:
            progress("eigenvalues", 0, 1)
        lam = sl.eigvalsh(A).astype(complex) if symmetric else sl.eigvals(A)
        if progress is not None:
            progress("eigenvalues", 1, 1)
    lam = np.asarray(lam, complex)
    scale = max(sl.norm2(A), 1e-300)
    kmax = 1 if symmetric else min(MAX_BLOCK, n)
    rows: list[int] = []
    cols: list[int] = []
    d = np.abs(lam[:, None] - lam[None, :]) if n <= 4000 else None
    for i in range(n):
        di = d[i] if d is not None else np.abs(lam - lam[i])
        order = np.argsort(di, kind="stable")
        for k in range(max(kmax, 2), 1, -1):
            if k > n:
                continue
            if di[order[k - 1]] <= _radius(k, n, scale):
                rows.extend([i] * k)
                cols.extend(order[:k].tolist())
                break
        if symmetric:
            near = np.flatnonzero(di <= _radius(1, n, scale))
            rows.extend([i] * near.size)
            cols.extend(near.tolist())
    labels = _component_labels(np.asarray(rows, np.int64), np.asarray(cols, np.int64), n)
    tol = _SAFETY * n * _EPS * scale
    out: list[Cluster] = []
    sizes = np.bincount(labels)
    multiple = int(np.count_nonzero(sizes > 1)) if not symmetric else 0
    ranked = 0
    for c in np.unique(labels):
        idx = np.flatnonzero(labels == c)
        mu = complex(np.mean(lam[idx]))
        if idx.size == 1 or symmetric:
            out.append(Cluster(mu, int(idx.size), int(idx.size), np.inf, idx))
            continue
        if progress is not None:
            progress("cluster ranks", ranked, multiple)
        ranked += 1
        s = sl.svdvals(A - mu * np.eye(n))
        geo = int(np.count_nonzero(s <= tol))
        geo = max(1, min(geo, int(idx.size)))
        kept = float(s[n - geo - 1]) if n - geo - 1 >= 0 else np.inf
        dropped = max(float(s[n - geo]), _EPS * scale)
        margin = float(np.log10(kept / dropped)) if np.isfinite(kept) else np.inf
        out.append(Cluster(mu, int(idx.size), geo, margin, idx))
    if progress is not None and multiple:
        progress("cluster ranks", multiple, multiple)
    out.sort(key=lambda c: (round(c.eigenvalue.real, 9), round(c.eigenvalue.imag, 9)))
    return out


def rational_matrix(A: np.ndarray) -> tuple[Any, int] | None:
    """``(integer fmpz_mat, denominator)`` when every entry of ``A`` is a ratio of small
    integers (denominator <= 10^6, round-tripping the stored float), else ``None``.

    References
    ----------
    .. [1] W. B. Hart, FLINT: Fast Library for Number Theory, https://flintlib.org
       (exact integer matrices through python-flint).
    """
    A = np.asarray(A)
    if A.size and not np.all(np.isfinite(A)) or np.iscomplexobj(A):
        return None
    vals = np.unique(A)
    fr: dict[float, Fraction] = {}
    for v in vals.tolist():
        f = Fraction(v).limit_denominator(_MAX_DENOMINATOR)
        if float(f) != v:
            return None
        fr[v] = f
    den = 1
    for f in fr.values():
        den = den * f.denominator // np.gcd(den, f.denominator)
    import flint  # only for a rational matrix: sampled weights never need it

    ints = [[int(fr[v] * den) for v in row] for row in A.tolist()]
    return flint.fmpz_mat(ints) if ints else flint.fmpz_mat(0, 0), int(den)


def exact_spectrum(M: Any, denominator: int = 1) -> list[Cluster]:
    r"""Exact eigenvalue multiplicities of an integer matrix (python-flint).

    The characteristic polynomial is factored over the integers. A factor ``p`` of
    multiplicity ``e`` gives ``deg p`` eigenvalues of algebraic multiplicity ``e``; for
    ``e = 1`` the geometric multiplicity is 1, otherwise it is
    ``(n - rank_Q p(M)) / deg p`` (the kernel of ``p(M)`` is the sum of the eigenspaces
    of the roots of ``p``, which are Galois conjugates with equal multiplicities).
    Rational eigenvalues are listed as one cluster each; an irrational factor as one
    cluster per root (numeric value), all marked exact. ``M`` is ``denominator * A``;
    the eigenvalues returned are those of ``A``.

    References
    ----------
    .. [1] Z. Yuan, C. Zhao, Z. Di, W.-X. Wang, Y.-C. Lai, "Exact controllability of
       complex networks", Nat. Commun. 4:2447, 2013. doi:10.1038/ncomms3447
    """
    import flint

    n = M.nrows()
    if n == 0:
        return []
    _, factors = M.charpoly().factor()
    I = flint.fmpz_mat([[int(i == j) for j in range(n)] for i in range(n)])
    out: list[Cluster] = []
    for p, e in factors:
        coeffs = [int(c) for c in p.coeffs()]  # lowest first
        d = len(coeffs) - 1
        if e == 1:
            geo = 1
        else:
            P = flint.fmpz_mat(n, n)
            for c in reversed(coeffs):  # Horner: P = P M + c I
                P = P * M + I * c
            geo = (n - int(P.rank())) // d
        value = None
        if d == 1:
            value = Fraction(-coeffs[0], coeffs[1] * denominator)
            roots = [complex(value)]
        else:
            roots = [complex(z) / denominator
                     for z in np.roots(np.array(coeffs[::-1], dtype=float))]
        for z in roots:
            out.append(Cluster(z, int(e), int(geo), np.inf, np.zeros(0, np.int64), True,
                               tuple(coeffs[::-1]), value))
    out.sort(key=lambda c: (round(c.eigenvalue.real, 9), round(c.eigenvalue.imag, 9)))
    return out
