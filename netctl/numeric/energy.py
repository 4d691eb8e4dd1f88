"""Control energy: the controllability Gramian and its energy metrics, with the verdict.

Greedy actuator choice is in :mod:`netctl.numeric.selection`, per-state discrete-time
metrics in :mod:`netctl.numeric.node_metrics`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.errors import OptionError
from netctl.numeric.gramian import (
    PRECISION_BUDGET,
    SmallestEigenvalue,
    _check_finite,
    _choose_horizon,
    factor_eigenvalues,
    _gramian_vanloan,
    gramian_factor,
    max_precision,
    smallest_eigenvalue_mp,
)
from netctl.numeric._tasks import Progress, announce
from netctl.numeric.rank import _dense, _weights_of
from netctl.numeric.verdict import Verdict, judge
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["EnergyReport", "gramian", "energy", "AVERAGE_NOTE", "PRECISION_STATES"]

#: most states for --precision (mpmath)
PRECISION_STATES = 200  # our choice, no source: mpmath Gramians stay within minutes
_EPS = float(np.finfo(float).eps)


def gramian(A: np.ndarray, B: np.ndarray, horizon: float | None = None) -> np.ndarray:
    r"""Controllability Gramian ``W = int_0^T e^{At} B B^T e^{A^T t} dt`` (dense, PSD).

    Formed as ``L L^T`` from its Cholesky factor
    (:func:`netctl.numeric.gramian.gramian_factor`: Hammarling's method for
    ``horizon=None`` and Hurwitz ``A``, Gauss-Legendre quadrature otherwise), so it is
    positive semidefinite by construction.

    References
    ----------
    .. [1] C. F. Van Loan, "Computing integrals involving the matrix exponential",
       IEEE TAC 23(3):395-404, 1978. doi:10.1109/TAC.1978.1101743

    Examples
    --------
    >>> import numpy as np
    >>> round(float(gramian(np.array([[-1.0]]), np.array([[1.0]]), 1.0)[0, 0]), 7)
    0.4323324
    """
    L = gramian_factor(np.asarray(A, dtype=float), np.asarray(B, dtype=float), horizon)
    return L @ L.T





@dataclass(frozen=True)
class EnergyReport(ResultTables):
    """Outcome of :func:`energy`.

    Attributes
    ----------
    horizon : float or None
        ``None`` for infinite horizon.
    lambda_min, lambda_max, trace, log_det : float
        Of the Gramian ``W``, from its Cholesky factor (never negative). ``1/lambda_min``
        is the energy needed for the hardest unit target, ``1/lambda_max`` for the
        easiest.
    lambda_min_upper : float
        An upper bound on the true ``lambda_min`` in double precision:
        ``(sigma_min + n eps sigma_max)^2`` with ``sigma`` the factor's singular values.
        ``1 / lambda_min_upper`` is a lower bound on the worst-case energy per unit target.
    condition : float
        A lower bound on the condition number of ``W`` (``lambda_max / lambda_min_upper``).
    verdict : Verdict
        One of the three verdicts (:mod:`netctl.numeric.verdict`) or controllable.
    average_energy : float
        ``tr(W^-1) / n``: the mean minimum energy over unit targets (``inf`` when the
        Gramian is singular in working precision).
    average_controllability : ndarray
        Per state ``i``: ``tr W`` with a single input at ``i``. A *ranking* of states by
        how much of the state space one input there reaches cheaply; it does not imply
        that one input there makes the system controllable.
    precision : SmallestEigenvalue or None
        With ``precision=N``: the extreme eigenvalues in ``N``-digit arithmetic.
    """

    _frame_rows = "states"
    _frame_values = ("average_controllability",)

    n_states: int
    n_inputs: int
    horizon: float | None
    horizon_note: str
    lambda_min: float
    lambda_max: float
    trace: float
    log_det: float
    average_energy: float
    average_controllability: np.ndarray
    gramian: np.ndarray = field(repr=False)
    state_names: tuple[str, ...] = field(repr=False)
    input_names: tuple[str, ...] = field(repr=False)
    weights: str = "given"
    lambda_min_upper: float = 0.0
    condition: float = np.inf
    verdict: Verdict = field(default_factory=lambda: Verdict("controllable"))
    structural_dimension: int = 0
    numeric_dimension: int | None = None
    numeric_margin: float = np.inf
    precision: SmallestEigenvalue | None = None

    @property
    def controllable(self) -> bool:
        """Not uncontrollable: the verdict is controllable or ill-conditioned."""
        return not self.verdict.failing

    @property
    def worst_energy_bound(self) -> float:
        """Lower bound on the energy for the hardest unit target (``1/lambda_min_upper``)."""
        return 1.0 / self.lambda_min_upper if self.lambda_min_upper > 0 else np.inf

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        def f(x: float) -> float | str:
            return float(x) if np.isfinite(x) else ("inf" if x > 0 else "-inf")

        d: dict[str, Any] = {
            "analysis": "control energy",
            "weights": self.weights,
            "n_states": self.n_states,
            "n_inputs": self.n_inputs,
            "inputs": list(self.input_names),
            "horizon": self.horizon,
            "horizon_note": self.horizon_note,
            "controllable": self.controllable,
            "verdict": self.verdict.to_dict(),
            "structural_dimension": self.structural_dimension,
            "numeric_dimension": self.numeric_dimension,
            "numeric_margin": f(self.numeric_margin),
            "lambda_min": self.lambda_min,
            "lambda_min_upper_bound": self.lambda_min_upper,
            "lambda_max": self.lambda_max,
            "condition_number_lower_bound": f(self.condition),
            "digits_lost": f(float(np.log10(self.condition)) if self.condition > 0 else 0.0),
            "trace": self.trace,
            "log_det": f(self.log_det),
            "log_det_is_upper_bound": bool(self.n_states) and not (
                self.lambda_min > self.n_states * _EPS * self.lambda_max),
            "average_energy": f(self.average_energy),
            "worst_energy": f(1.0 / self.lambda_min) if self.lambda_min > 0 else "inf",
            "worst_energy_lower_bound": f(self.worst_energy_bound),
            "average_controllability": dict(zip(self.state_names,
                                                self.average_controllability.tolist())),
            "average_controllability_note": AVERAGE_NOTE,
        }
        if self.precision is not None:
            d["precision"] = self.precision.to_dict()
        if self.n_states <= 50:
            d["gramian"] = self.gramian.tolist()
        return d


#: how average controllability is to be read (used by the command line and report)
AVERAGE_NOTE = ("a ranking of single states by tr W (how much of the state space one input "
                "there reaches cheaply); it does not imply controllability")


def energy(system: StructuredSystem, *, horizon: float | None = None,
           precision: int | None = None, progress: Progress | None = None) -> EnergyReport:
    r"""Gramian-based energy metrics of ``(A, B)`` with the stored (given) weights.

    Parameters
    ----------
    system : StructuredSystem
    horizon : float, optional
        Control time ``T``. Default: infinite horizon when ``A`` is Hurwitz, else
        ``T = 1`` (the report says which). ``inf`` insists on the infinite horizon
        (usage error when ``A`` is not Hurwitz, e.g. singular).
    precision : int, optional
        Also compute the Gramian's extreme eigenvalues with this many decimal digits
        (mpmath; at most 200 states and :func:`netctl.numeric.gramian.max_precision`).
    progress : callable(stage, done, total), optional
        Told before and after each long step (Gramian factor, average controllability,
        rank test, multiple precision); see :data:`netctl.numeric._tasks.Progress`.

    Returns
    -------
    EnergyReport
        ``lambda_min``, ``trace``, ``log_det``, ``average_energy`` of ``W``, the
        average controllability of every state [1]_, [2]_, and the verdict.

    Notes
    -----
    The Gramian is computed as its Cholesky factor (Hammarling 1982; quadrature for a
    finite horizon), so it is positive semidefinite and ``lambda_min >= 0``. The verdict
    takes three steps: Lin's structural condition on the pattern; the staircase rank
    test on these numbers (:func:`netctl.numeric.staircase`); the condition number of
    ``W``. A controllable pair whose Gramian has condition number above ``1/eps`` is
    *controllable but ill-conditioned beyond working precision*: the hardest direction
    costs at least ``1/lambda_min_upper`` per unit target, more than double precision
    resolves. The minimum energy from ``x0`` to ``xf`` in time ``T`` is
    ``v^T W(T)^{-1} v`` with ``v = xf - e^{AT} x0`` (Kailath, *Linear Systems*, 1980).
    Dense, ``O(n^3)``.

    References
    ----------
    .. [1] F. Pasqualetti, S. Zampieri, F. Bullo, "Controllability metrics, limitations
       and algorithms for complex networks", IEEE TCNS 1(1):40-52, 2014.
       doi:10.1109/TCNS.2014.2310254
    .. [2] S. Gu et al., "Controllability of structural brain networks", Nat. Commun.
       6:8414, 2015. doi:10.1038/ncomms9414

    Examples
    --------
    >>> import numpy as np
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_matrices(-np.eye(2), np.eye(2))
    >>> r = energy(s)
    >>> r.horizon, round(r.lambda_min, 12), round(r.trace, 12), r.verdict.key
    (None, 0.5, 1.0, 'controllable')
    """
    from netctl.numeric.rank import staircase
    from netctl.structural import controllability

    A, B = _dense(system)
    n = A.shape[0]
    _check_finite(A, B, tuple(system.state_names))
    T, note = _choose_horizon(A, horizon)
    if precision is not None:
        _check_precision(precision, n)
    announce(progress, "Gramian factor", 0, 1)
    L = gramian_factor(A, B, T)
    W = L @ L.T
    announce(progress, "Gramian factor", 1, 1)
    announce(progress, "average controllability", 0, 1)
    avg = np.diag(_gramian_vanloan(A.T, np.eye(n), T)).copy() if n else np.zeros(0)
    announce(progress, "average controllability", 1, 1)
    ev = factor_eigenvalues(L) if n else np.zeros(0)
    lmin = float(ev[0]) if n else 0.0
    lmax = float(ev[-1]) if n else 0.0
    smax = float(np.sqrt(lmax))
    upper = (float(np.sqrt(lmin)) + max(n, 1) * _EPS * smax) ** 2
    cond = lmax / upper if upper > 0 else (np.inf if lmax > 0 else 1.0)
    resolved = bool(n) and lmin > n * _EPS * lmax
    avg_energy = float(np.sum(1.0 / ev)) / n if resolved else np.inf
    if resolved:
        ld = float(np.sum(np.log(ev)))
    elif n and lmax > 0:  # an upper bound: each eigenvalue at most (sigma + n eps s_max)^2
        ld = float(np.sum(2 * np.log(np.sqrt(ev) + n * _EPS * smax)))
    else:
        ld = -np.inf
    st = controllability(system, dimension=True)
    s_dim = int(st.controllable_dimension if st.controllable_dimension is not None
                else (n if st.controllable else 0))
    announce(progress, "staircase rank test", 0, 1)
    rt = staircase(system) if n else None
    announce(progress, "staircase rank test", 1, 1)
    num_dim = rt.dimension if rt is not None else 0
    margin = float(rt.margin) if rt is not None else np.inf
    verdict = judge(n=n, structural_dimension=s_dim, numeric_dimension=num_dim,
                    numeric_margin=margin, condition=cond,
                    worst_energy_bound=(1.0 / upper if upper > 0 else np.inf))
    if verdict.failing:  # uncontrollable: the Gramian is singular, whatever rounding shows
        ld, avg_energy = -np.inf, np.inf
    prec = None
    if precision is not None:
        announce(progress, f"{int(precision)}-digit Gramian", 0, 1)
        prec = smallest_eigenvalue_mp(A, B, T, int(precision))
        announce(progress, f"{int(precision)}-digit Gramian", 1, 1)
    return EnergyReport(
        n_states=n, n_inputs=B.shape[1], horizon=T, horizon_note=note, lambda_min=lmin,
        lambda_max=lmax, trace=float(np.trace(W)), log_det=ld, average_energy=avg_energy,
        average_controllability=avg, gramian=W, state_names=tuple(system.state_names),
        input_names=tuple(system.input_names), weights=_weights_of(system),
        lambda_min_upper=upper, condition=cond, verdict=verdict, structural_dimension=s_dim,
        numeric_dimension=num_dim, numeric_margin=margin, precision=prec)


def _check_precision(precision: int, n: int) -> None:
    limit = max_precision(n)
    if isinstance(precision, bool) or not isinstance(precision, (int, np.integer)) \
            or precision < 16:
        raise OptionError(f"precision must be a whole number of decimal digits >= 16, "
                          f"found {precision!r}.")
    if n > PRECISION_STATES or precision > limit:
        raise OptionError(
            f"--precision {precision} is too large for {n} states: multiple-precision "
            f"Gramians are limited to {PRECISION_STATES} states and n^3 x digits <= "
            f"{PRECISION_BUDGET:.0e} (netctl's own cost limit, about a minute of work; here "
            f"at most {limit} digits); use fewer digits or a smaller (reduced) model.")
