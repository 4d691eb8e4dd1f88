"""Exact controllability for given weights (Yuan et al. 2013): eigenvalue multiplicities."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.errors import OptionError
from netctl.numeric import _small_linalg as sl
from netctl.numeric._tasks import Progress, announce
from netctl.numeric.prime_field import MERSENNE_61, krylov_dimension_mod_p
from netctl.numeric.rank import _dense, _weights_of, staircase_dimension
from netctl.numeric.spectrum import (
    EXACT_LIMIT,
    Cluster,
    exact_spectrum,
    jordan_clusters,
    rational_matrix,
)
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["ExactControllability", "Multiplicity", "exact_controllability", "ARITHMETIC",
           "CERTAIN_DECADES"]

_EPS = float(np.finfo(float).eps)
#: how exact_controllability computes: auto = exact rationals where possible
ARITHMETIC = ("auto", "exact", "float")
#: a float rank decision with a margin below this many decades is not certified
#: (common practice, no source)
CERTAIN_DECADES = 2.0
_MODULAR_CERT_LIMIT = 2000
_PRIME_2 = 2**31 - 1


@dataclass(frozen=True)
class Multiplicity:
    """An eigenvalue (cluster mean) with algebraic and geometric multiplicity.

    ``margin``: decades of the rank decision that gave ``geometric`` (``inf`` when exact).
    """

    eigenvalue: complex
    algebraic: int
    geometric: int
    margin: float = np.inf


@dataclass(frozen=True)
class ExactControllability(ResultTables):
    """Outcome of :func:`exact_controllability`.

    Attributes
    ----------
    n_inputs : int
        Minimum number of inputs (independent columns of ``B``) for controllability
        with these weights: the largest geometric multiplicity, at least 1. Never more
        than ``n_drivers``.
    eigenvalue : complex
        The eigenvalue attaining it (``lambda_M``).
    drivers : ndarray of int
        States where dedicated inputs make the system controllable: the rows of
        ``A - lambda_M I`` that depend on the others, plus any state another eigenvalue
        still needed (``n_drivers >= n_inputs``; equal in the usual case).
    verified : bool
        The driver set is certified: dedicated inputs at ``drivers`` pass PBH at every
        eigenvalue -- exactly (Krylov rank modulo a prime of the integer-scaled matrix,
        which never exceeds the rank over the rationals) or by the staircase with a
        margin of at least ``CERTAIN_DECADES``. ``certificate`` says which, or why not.
    count_certain : bool
        ``n_inputs`` is exact (rational arithmetic) or every multiplicity decision has a
        margin of at least ``CERTAIN_DECADES``.
    arithmetic : str
        ``"exact"`` (rational multiplicities) or ``"float"`` (Jordan-aware clusters).
    mixing : ndarray or None
        A ``n_drivers x n_inputs`` integer matrix ``R`` such that ``n_inputs`` shared
        inputs ``B = E_drivers R`` are certified to control the system (the count is
        attained), or ``None`` when that could not be certified.
    multiplicities : tuple of Multiplicity
        Every eigenvalue cluster with algebraic multiplicity above one.
    sites : str
        Which states the drivers were drawn from ("" when every state was allowed).
    n_eligible : int
        How many states that is (-1 when every state was allowed).
    feasible : bool
        False when no dedicated inputs on those states control the system (then
        ``drivers`` is empty, ``verified`` False and ``unreachable_mode`` an eigenvalue
        whose left eigenvectors vanish on every allowed state).
    """

    _frame_rows = "states"
    _frame_sets = ("drivers",)

    n_states: int
    n_inputs: int
    eigenvalue: complex
    drivers: np.ndarray
    verified: bool
    verification_margin: float
    multiplicities: tuple[Multiplicity, ...]
    symmetric: bool
    state_names: tuple[str, ...] = field(repr=False)
    weights: str = "given"
    certificate: str = ""
    count_certain: bool = True
    count_margin: float = np.inf
    arithmetic: str = "float"
    mixing: np.ndarray | None = field(default=None, repr=False)
    sites: str = ""
    n_eligible: int = -1
    feasible: bool = True
    unreachable_mode: complex | None = None

    @property
    def n_drivers(self) -> int:
        """Number of dedicated driver states proposed."""
        return int(self.drivers.size)

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        z = complex(self.eigenvalue)
        return {
            "analysis": "exact controllability",
            "weights": self.weights,
            "n_states": self.n_states,
            "n_inputs": self.n_inputs,
            "eigenvalue": [round(z.real, 12), round(z.imag, 12)],
            "drivers": self.names(self.drivers),
            "n_drivers": self.n_drivers,
            "verified": self.verified,
            "verification_margin": _jf(self.verification_margin),
            "certificate": self.certificate,
            "arithmetic": self.arithmetic,
            "count_certain": self.count_certain,
            "count_margin": _jf(self.count_margin),
            "shared_inputs": (None if self.mixing is None else [
                {self.state_names[int(d)]: int(self.mixing[r, c])
                 for r, d in enumerate(self.drivers.tolist())}
                for c in range(self.mixing.shape[1])]),
            "symmetric": self.symmetric,
            "multiplicities": [
                {"eigenvalue": [round(complex(m.eigenvalue).real, 12),
                                round(complex(m.eigenvalue).imag, 12)],
                 "algebraic": m.algebraic, "geometric": m.geometric,
                 "margin": _jf(m.margin)}
                for m in self.multiplicities],
            **({} if not self.sites else {"sites": {
                "rule": self.sites, "n_eligible": self.n_eligible, "feasible": self.feasible,
                "unreachable_mode": (None if self.unreachable_mode is None else
                                     [round(self.unreachable_mode.real, 12),
                                      round(self.unreachable_mode.imag, 12)])}}),
        }


def _jf(x: float) -> float | str:
    return float(x) if np.isfinite(x) else ("inf" if x > 0 else "-inf")




def _dependent_rows(M: np.ndarray, rows: np.ndarray, count: int) -> np.ndarray:
    """The ``count`` rows among ``rows`` of ``M`` that pivoted QR leaves last."""
    if count <= 0 or rows.size == 0:
        return np.zeros(0, np.int64)
    piv = sl.qr_pivots(M[rows].conj().T, rows.size - count)
    return np.sort(rows[piv[rows.size - count:]]).astype(np.int64)


def _exact_dependent_rows(Mint: Any, value: Any, rows: list[int]) -> list[int]:
    """Rows (among ``rows``) of ``Mint - value I`` dependent on the earlier ones (exact)."""
    import flint

    n = Mint.nrows()
    if not rows:
        return []
    q = flint.fmpq(value.numerator, value.denominator)
    ents = Mint.tolist()
    sub = [[flint.fmpq(int(ents[i][j])) - (q if i == j else 0) for j in range(n)]
           for i in rows]
    T = flint.fmpq_mat(sub).transpose()  # columns = the chosen rows
    R, r = T.rref()
    pivots: set[int] = set()
    col = 0
    for i in range(int(r)):
        while col < len(rows) and R[i, col] == 0:
            col += 1
        pivots.add(col)
        col += 1
    return [rows[k] for k in range(len(rows)) if k not in pivots]


def _modular_rank(Mint: Any, D: np.ndarray, R: np.ndarray | None = None) -> int:
    """Krylov dimension of ``(M, E_D R)`` modulo two primes (the larger of the two).

    Never above the rank over the rationals, so ``== n`` certifies controllability."""
    n = Mint.nrows()
    M = np.array([[int(x) for x in row] for row in Mint.tolist()], dtype=object)
    B = np.zeros((n, D.size), dtype=object)
    B[D, np.arange(D.size)] = 1
    if R is not None:
        B = B.dot(R.astype(object))
    best = 0
    for p in (MERSENNE_61, _PRIME_2):
        Ap = np.array((M % p).tolist(), dtype=np.int64) if n else np.zeros((0, 0), np.int64)
        Bp = np.array((B % p).tolist(), dtype=np.int64).reshape(n, -1)
        best = max(best, krylov_dimension_mod_p(Ap, Bp, p))
        if best == n:
            break
    return best


def exact_controllability(system: StructuredSystem, *, tol: float | None = None,
                          arithmetic: str = "auto", seed: int = 0,
                          progress: Progress | None = None,
                          sites: Any = "node table") -> ExactControllability:
    r"""Minimum inputs and a driver set for the *given* weights (exact controllability).

    By the PBH test, ``(A, B)`` is controllable iff ``rank [A - lambda I, B] = n`` at
    every eigenvalue, so ``B`` needs at least ``mu(lambda) = n - rank(A - lambda I)``
    columns (the geometric multiplicity) at each eigenvalue; the minimum number of
    inputs is ``N_D = max_lambda mu(lambda)`` [1]_.

    Parameters
    ----------
    system : StructuredSystem
        Weighted (the stored values are used; see :func:`netctl.numeric.realize`).
    tol : float, optional
        Rank tolerance of the float driver checks; default ``1e3 n eps ||A||_2``.
    arithmetic : {"auto", "exact", "float"}
        ``auto``: exact rational multiplicities when every entry of ``A`` is a ratio of
        small integers and ``n <= 200``, else floating point. ``exact`` insists (usage
        error when not possible).
    seed : int
        Seed of the integer mixing matrix that shows the count is attained.
    progress : callable(stage, done, total), optional
        Told of the eigenvalues, each cluster rank decision and each step of the PBH
        certification (:data:`netctl.numeric._tasks.Progress`).
    sites : "node table", "any" or boolean array, default "node table"
        Which states may be drivers (:func:`netctl.structural._engine.site_tiers`): the
        node table's ``actuator`` column, and in a second-order (swing) model velocity
        (frequency) states only, never positions (angles). When the drivers found
        above include another state, they are chosen again on the allowed states (at
        each eigenvalue the rows of ``A - lambda I`` off the allowed states are taken
        first, the dependent allowed rows become drivers); when no allowed set
        exists, ``feasible`` is False and ``unreachable_mode`` names the eigenvalue.

    Returns
    -------
    ExactControllability

    Notes
    -----
    *Multiplicities.* Exact: the characteristic polynomial of the integer-scaled matrix
    is factored over the integers and ``rank_Q p(A)`` gives each geometric multiplicity
    (python-flint). Float: eigenvalues are clustered with a radius that grows like
    ``eps^(1/k)`` for a cluster of ``k`` (a Jordan block of size ``k`` splits that
    far under rounding), and ``n - rank(A - mu I)`` at the cluster mean is decided by
    the singular values, with the margin reported (:func:`netctl.numeric.spectrum.jordan_clusters`).

    *Drivers* [1]_: the rows of ``A - lambda_M I`` that depend on the others (exact row
    echelon form, or QR with column pivoting in floating point). Then at every other
    eigenvalue the rows outside the drivers must stay independent (PBH with dedicated
    inputs); where they do not, the dependent ones become drivers too. So
    ``n_drivers >= n_inputs``; when larger, ``n_inputs`` *shared* inputs (columns mixing
    the drivers, ``mixing``) still suffice, and that is certified too. The final set is
    certified exactly (Krylov rank modulo two primes of the integer-scaled matrix; the
    rank modulo a prime never exceeds the rational rank) when ``A`` is rational,
    otherwise by the staircase with its margin; ``certificate`` says which, or that it
    could not be certified. One of many driver sets; deterministic. Dense, ``O(n^3)``.

    References
    ----------
    .. [1] Z. Yuan, C. Zhao, Z. Di, W.-X. Wang, Y.-C. Lai, "Exact controllability of
       complex networks", Nat. Commun. 4:2447, 2013. doi:10.1038/ncomms3447

    Examples
    --------
    >>> import networkx as nx
    >>> from netctl import StructuredSystem
    >>> k5 = StructuredSystem.from_networkx(nx.complete_graph(5))
    >>> r = exact_controllability(k5)
    >>> r.n_inputs, round(r.eigenvalue.real, 9), r.verified, r.arithmetic
    (4, -1.0, True, 'exact')
    """
    if arithmetic not in ARITHMETIC:
        raise OptionError(f"unknown arithmetic {arithmetic!r}; choose one of "
                          f"{', '.join(ARITHMETIC)}.")
    A, _ = _dense(system)
    n = A.shape[0]
    names = tuple(system.state_names)
    weights = _weights_of(system)
    if not np.all(np.isfinite(A)):
        bad = np.argwhere(~np.isfinite(A))[0]
        raise OptionError(f"A[{names[bad[0]]}, {names[bad[1]]}] is {A[bad[0], bad[1]]!r}; "
                          "exact controllability needs finite weights. Fix the weight in "
                          "the file or choose sampled --weights.")
    symmetric = bool(np.array_equal(A, A.T))
    if n == 0:
        return ExactControllability(0, 0, 0j, np.zeros(0, np.int64), True, np.inf, (),
                                    symmetric, names, weights, "empty system", True, np.inf,
                                    "exact")
    scale = max(sl.norm2(A), 1e-300)
    t = 1e3 * n * _EPS * scale if tol is None else float(tol)
    rat = rational_matrix(A) if arithmetic != "float" else None
    use_exact = rat is not None and n <= EXACT_LIMIT
    if arithmetic == "exact" and not use_exact:
        raise OptionError(
            f"exact arithmetic needs integer or rational weights (denominator <= 10^6) and "
            f"at most {EXACT_LIMIT} states; found {n} states"
            f"{'' if rat is not None else ' with non-rational weights'}. Use 'auto'.")
    if use_exact:
        assert rat is not None
        clusters = exact_spectrum(rat[0], rat[1])
    else:
        clusters = jordan_clusters(A, symmetric=symmetric, progress=progress)
    count_margin = min((c.margin for c in clusters if c.algebraic > 1), default=np.inf)
    count_certain = use_exact or count_margin >= CERTAIN_DECADES
    order = sorted(range(len(clusters)), key=lambda i: (-clusters[i].geometric,
                                                        clusters[i].eigenvalue.real,
                                                        clusters[i].eigenvalue.imag))
    top = clusters[order[0]]
    n_inputs = max(1, top.geometric)
    chosen: set[int] = set()
    if top.geometric > 1:
        if top.rational is not None and rat is not None:
            chosen.update(_exact_dependent_rows(rat[0], top.rational * rat[1],
                                                list(range(n))))
        else:
            M = A - top.eigenvalue * np.eye(n)
            chosen.update(_dependent_rows(M, np.arange(n), top.geometric).tolist())
    # every other eigenvalue: rows outside the drivers must stay independent (PBH)
    if use_exact and rat is not None:
        for c in clusters:
            if c.rational is None:
                continue
            rest = sorted(set(range(n)) - chosen)
            chosen.update(_exact_dependent_rows(rat[0], c.rational * rat[1], rest))
    certificate, verified = "", False
    if rat is not None and n <= _MODULAR_CERT_LIMIT and chosen:
        if _modular_rank(rat[0], np.array(sorted(chosen), np.int64)) == n:
            certificate, verified = "exact (Krylov rank modulo a prime, integer-scaled A)", True
    if not verified:
        chosen = _float_pbh_fill(A, clusters, chosen, t, symmetric, progress)
        if rat is not None and n <= _MODULAR_CERT_LIMIT:
            if _modular_rank(rat[0], np.array(sorted(chosen), np.int64)) == n:
                certificate, verified = ("exact (Krylov rank modulo a prime, "
                                         "integer-scaled A)"), True
    from netctl.structural._engine import site_tiers

    tiers = site_tiers(system.nodes, system.model, n, sites)
    site_rule, allowed = tiers[0]
    feasible, bad_mode = True, None
    if allowed is not None and not all(bool(allowed[i]) for i in chosen):
        for site_rule, allowed in tiers:
            assert allowed is not None
            got, bad_mode = _fill_on_sites(A, clusters, np.asarray(allowed, bool), t)
            if got is not None:
                chosen, bad_mode = got, None
                break
        feasible = bad_mode is None
        certificate, verified = "", False
        if not feasible:
            chosen = set()
            certificate = ("no driver set on the allowed sites: the mode at eigenvalue "
                           f"{complex(bad_mode or 0j):.6g} is not reached from them")
        elif rat is not None and n <= _MODULAR_CERT_LIMIT and \
                _modular_rank(rat[0], np.array(sorted(chosen), np.int64)) == n:
            certificate, verified = "exact (Krylov rank modulo a prime, integer-scaled A)", True
    n_ok = -1 if allowed is None else int(np.count_nonzero(allowed))
    drivers = np.array(sorted(chosen), np.int64)
    announce(progress, "staircase check of the drivers", 0, 1)
    Bd = np.zeros((n, drivers.size))
    Bd[drivers, np.arange(drivers.size)] = 1.0
    nrm_ab = float(np.sqrt(np.linalg.norm(A) ** 2 + drivers.size))
    ts = n * _EPS * max(nrm_ab, 1.0)
    dim, _, dec, _ = staircase_dimension(A, Bd, ts)
    announce(progress, "staircase check of the drivers", 1, 1)
    kept = dec.kept if np.isfinite(dec.kept) else ts
    margin = float(np.log10(kept / max(dec.dropped, ts))) if kept > 0 else -np.inf
    if not verified and feasible:
        if dim == n and margin >= CERTAIN_DECADES:
            certificate, verified = f"staircase, margin {margin:.3g} decades", True
        elif dim == n:
            certificate = (f"could not be certified: the staircase finds full dimension "
                           f"only {margin:.3g} decades above rounding")
        else:
            certificate = (f"could not be certified: the staircase finds dimension {dim} "
                           f"of {n} with these drivers")
    mixing = None
    if verified and drivers.size > n_inputs and rat is not None and n <= _MODULAR_CERT_LIMIT:
        rng = np.random.default_rng(seed)
        R = rng.integers(1, 2**20, size=(drivers.size, n_inputs)).astype(np.int64)
        if _modular_rank(rat[0], drivers, R) == n:
            mixing = R
    elif verified and drivers.size == n_inputs:
        mixing = np.eye(n_inputs, dtype=np.int64)
    mults = tuple(Multiplicity(c.eigenvalue, c.algebraic, c.geometric, c.margin)
                  for c in clusters if c.algebraic > 1)
    return ExactControllability(
        n_states=n, n_inputs=n_inputs, eigenvalue=complex(top.eigenvalue), drivers=drivers,
        verified=verified, verification_margin=margin, multiplicities=mults,
        symmetric=symmetric, state_names=names, weights=weights, certificate=certificate,
        count_certain=bool(count_certain), count_margin=float(count_margin),
        arithmetic="exact" if use_exact else "float", mixing=mixing, sites=site_rule,
        n_eligible=n_ok, feasible=feasible,
        unreachable_mode=None if bad_mode is None else complex(bad_mode))


def _simple(clusters: list[Cluster], lam: np.ndarray) -> list[int]:
    """Positions in ``lam`` of the simple eigenvalues (their left eigenvectors are the
    ones used): a float cluster's own index, else the nearest computed eigenvalue."""
    return sorted({int(c.indices[0]) if c.indices.size else
                   int(np.argmin(np.abs(lam - c.eigenvalue)))
                   for c in clusters if c.algebraic == 1})


def _fill_on_sites(A: np.ndarray, clusters: list[Cluster], allowed: np.ndarray,
                   tol: float) -> tuple[set[int] | None, complex | None]:
    """Drivers drawn from ``allowed`` only (floating point), or ``(None, eigenvalue)``
    when some eigenvalue cannot be reached from them.

    PBH with dedicated inputs on ``D``: at each eigenvalue the rows of ``A - mu I``
    outside ``D`` must be independent. Simple eigenvalues: the allowed state where the
    left eigenvector is largest, unless a driver already sees it. Repeated ones: the
    rows are taken in order, states off the allowed set first, by a QR decomposition
    without pivoting of their transpose; a row with a diagonal entry of ``R`` at or
    below ``tol`` depends on the rows before it and becomes a driver -- impossible when
    it is not allowed.
    """
    n = A.shape[0]
    lam, VL = sl.eig_left(A, cols=lambda lam: _simple(clusters, lam))
    chosen: set[int] = set()
    for c in sorted(clusters, key=lambda c: (-c.geometric, c.eigenvalue.real,
                                             c.eigenvalue.imag)):
        if c.algebraic == 1:
            i = int(c.indices[0]) if c.indices.size else int(np.argmin(np.abs(lam - c.eigenvalue)))
            w = np.abs(VL[:, i]) / np.linalg.norm(VL[:, i])
            if chosen and np.max(w[sorted(chosen)]) > 1e-8:
                continue
            on = np.where(allowed, w, 0.0)
            if on.max() <= 1e-8:
                return None, complex(c.eigenvalue)
            chosen.add(int(np.argmax(on)))
            continue
        rest = [i for i in range(n) if i not in chosen]
        rest.sort(key=lambda i: (bool(allowed[i]), i))
        if not rest:
            continue
        M = (A - c.eigenvalue * np.eye(n))[rest]
        r = sl.qr_r(M.T)
        diag = np.abs(np.diagonal(r))
        dep = [rest[k] for k in range(len(rest)) if k >= diag.size or diag[k] <= tol]
        if any(not allowed[i] for i in dep):
            return None, complex(c.eigenvalue)
        chosen.update(dep)
    if not chosen:
        on = np.flatnonzero(allowed)
        if on.size == 0:
            return None, complex(lam[0]) if lam.size else 0j
        chosen.add(int(on[0]))
    return chosen, None


def _float_pbh_fill(A: np.ndarray, clusters: list[Cluster], chosen: set[int], tol: float,
                    symmetric: bool, progress: Progress | None = None) -> set[int]:
    """Add drivers until the rows of ``A - mu I`` outside them are independent at every
    cluster (floating point): simple eigenvalues by their left eigenvector, repeated
    ones by the singular values of the remaining rows."""
    n = A.shape[0]
    chosen = set(chosen)
    if symmetric:
        lam_r, V = sl.eigh(A)
        lam, VL = lam_r.astype(complex), V.astype(complex)
    else:
        announce(progress, "left eigenvectors", 0, 1)
        lam, VL = sl.eig_left(A, cols=lambda lam: _simple(clusters, lam))
        announce(progress, "left eigenvectors", 1, 1)
    announce(progress, "PBH certification", 0, len(clusters))
    for done, c in enumerate(sorted(clusters, key=lambda c: (-c.geometric, c.eigenvalue.real,
                                                             c.eigenvalue.imag))):
        if done:
            announce(progress, "PBH certification", done, len(clusters))
        if c.algebraic == 1:
            i = int(c.indices[0]) if c.indices.size else int(np.argmin(np.abs(lam - c.eigenvalue)))
            w = VL[:, i] / np.linalg.norm(VL[:, i])
            if not chosen or np.max(np.abs(w[sorted(chosen)])) <= 1e-8:
                chosen.add(int(np.argmax(np.abs(w))))
            continue
        rest = np.array(sorted(set(range(n)) - chosen), np.int64)
        if rest.size == 0:
            continue
        Mi = A - c.eigenvalue * np.eye(n)
        s = sl.svdvals(Mi[rest])
        deficit = int(np.count_nonzero(s <= tol)) + max(0, rest.size - s.size)
        chosen.update(_dependent_rows(Mi, rest, deficit).tolist())
    announce(progress, "PBH certification", len(clusters), len(clusters))
    if not chosen:
        chosen.add(0)
    return chosen
