"""Control energy: controllability Gramian, energy metrics, greedy actuator selection."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.linalg as la

from netctl.errors import OptionError
from netctl.numeric.gramian import (
    SmallestEigenvalue,
    factor_eigenvalues,
    gramian_factor,
    max_precision,
    smallest_eigenvalue_mp,
)
from netctl.numeric.rank import _dense, _weights_of
from netctl.numeric.verdict import Verdict, judge
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["EnergyReport", "ActuatorSelection", "NodeControllability", "gramian", "energy",
           "select_actuators", "node_controllability", "SELECT_LIMIT", "PRECISION_STATES"]

SELECT_LIMIT = 400
#: most states for --precision (mpmath)
PRECISION_STATES = 200
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


def _gramian_vanloan(A: np.ndarray, B: np.ndarray, horizon: float | None = None
                     ) -> np.ndarray:
    """Unfactored Gramian (Bartels-Stewart or Van Loan [1]_): fast, for greedy gains.

    References
    ----------
    .. [1] C. F. Van Loan, IEEE TAC 23(3):395-404, 1978. doi:10.1109/TAC.1978.1101743
    """
    A = np.asarray(A, dtype=float)
    B = np.asarray(B, dtype=float)
    n = A.shape[0]
    Q = B @ B.T
    if horizon is None:
        W = la.solve_continuous_lyapunov(A, -Q)
    else:
        M = np.zeros((2 * n, 2 * n))
        M[:n, :n] = -A
        M[:n, n:] = Q
        M[n:, n:] = A.T
        F = la.expm(M * float(horizon))
        W = F[n:, n:].T @ F[:n, n:]
    return (W + W.T) / 2


def _is_hurwitz(A: np.ndarray) -> bool:
    if A.shape[0] == 0:
        return True
    return bool(np.max(la.eigvals(A).real) < -1e-9 * max(1.0, float(np.linalg.norm(A))))


def _choose_horizon(A: np.ndarray, horizon: float | None) -> tuple[float | None, str]:
    if horizon is not None and horizon == np.inf:
        if not _is_hurwitz(A):
            lam = la.eigvals(A)
            worst = lam[int(np.argmax(lam.real))]
            what = ("singular (an eigenvalue is 0)" if np.min(np.abs(lam)) <=
                    1e-12 * max(1.0, float(np.linalg.norm(A))) else
                    f"not Hurwitz (eigenvalue {complex(worst):.4g})")
            raise OptionError(f"the infinite-horizon Gramian needs a stable A, but A is "
                              f"{what}; give a finite horizon (e.g. --horizon 1).")
        return None, "infinite horizon (A is Hurwitz: Lyapunov equation)"
    if horizon is not None:
        if not (np.isfinite(horizon) and horizon > 0):
            raise OptionError(f"horizon must be a positive number of time units, found "
                              f"{horizon!r}; omit it for the infinite-horizon Gramian of a "
                              "stable system.")
        return float(horizon), f"finite horizon T = {horizon:g}"
    if _is_hurwitz(A):
        return None, "infinite horizon (A is Hurwitz: Lyapunov equation)"
    return 1.0, "finite horizon T = 1 (A is not Hurwitz, so the infinite-horizon Gramian " \
                "does not exist)"


def _logdet(W: np.ndarray) -> float:
    sign, ld = np.linalg.slogdet(W)
    return float(ld) if sign > 0 else -np.inf


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


def _check_finite(A: np.ndarray, B: np.ndarray, names: tuple[str, ...]) -> None:
    for M, what in ((A, "A"), (B, "B")):
        if M.size and not np.all(np.isfinite(M)):
            i, j = np.argwhere(~np.isfinite(M))[0]
            where = (f"{names[i]} <- {names[j]}" if what == "A" else f"{names[i]}, input {j}")
            raise OptionError(f"{what}[{where}] is {M[i, j]!r}; Gramians need finite "
                              "weights. Fix that weight in the file, or choose sampled "
                              "--weights.")


def energy(system: StructuredSystem, *, horizon: float | None = None,
           precision: int | None = None) -> EnergyReport:
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
    L = gramian_factor(A, B, T)
    W = L @ L.T
    avg = np.diag(_gramian_vanloan(A.T, np.eye(n), T)).copy() if n else np.zeros(0)
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
    rt = staircase(system) if n else None
    num_dim = rt.dimension if rt is not None else 0
    margin = float(rt.margin) if rt is not None else np.inf
    verdict = judge(n=n, structural_dimension=s_dim, numeric_dimension=num_dim,
                    numeric_margin=margin, condition=cond,
                    worst_energy_bound=(1.0 / upper if upper > 0 else np.inf))
    if verdict.failing:  # uncontrollable: the Gramian is singular, whatever rounding shows
        ld, avg_energy = -np.inf, np.inf
    prec = smallest_eigenvalue_mp(A, B, T, int(precision)) if precision is not None else None
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
            f"Gramians are limited to {PRECISION_STATES} states and n^3 x digits <= 8e8 "
            f"(here at most {limit} digits); use fewer digits or a smaller (reduced) model.")


@dataclass(frozen=True)
class ActuatorSelection:
    """Outcome of :func:`select_actuators`: an energy-aware, structurally controllable set.

    ``selected``: states in the order they were taken (the structural start first);
    ``gains``: ``log det(W_S + epsilon I)`` after each. ``structural``: the minimum
    dedicated input set of the structural analysis the selection started from, with its
    objective. ``lambda_min`` values come from the Gramian's Cholesky factor (>= 0); where
    double precision does not resolve them, they are the upper bound
    ``(sigma_min + n eps sigma_max)^2``.
    ``swaps``: exchanges that raised the objective while keeping Lin's condition.
    """

    selected: np.ndarray
    gains: np.ndarray
    objective: float
    lambda_min: float
    structural: np.ndarray
    structural_objective: float
    structural_lambda_min: float
    epsilon: float
    horizon: float | None
    horizon_note: str
    state_names: tuple[str, ...] = field(repr=False)
    structurally_controllable: bool = True
    swaps: int = 0

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        return {
            "analysis": "greedy actuator selection (log det) among structurally "
                        "controllable sets",
            "budget": int(self.selected.size),
            "selected": self.names(self.selected),
            "structurally_controllable": self.structurally_controllable,
            "swaps": self.swaps,
            "objective_after_each": self.gains.tolist(),
            "objective": self.objective,
            "lambda_min": self.lambda_min,
            "structural_minimum_set": self.names(self.structural),
            "structural_objective": self.structural_objective,
            "structural_lambda_min": self.structural_lambda_min,
            "epsilon": self.epsilon,
            "horizon": self.horizon,
            "horizon_note": self.horizon_note,
        }


def _lambda_min_upper(A: np.ndarray, B: np.ndarray, T: float | None) -> float:
    """Smallest Gramian eigenvalue where resolved, else its upper bound
    ``(sigma_min + n eps sigma_max)^2`` (from the factor; never negative)."""
    n = A.shape[0]
    if n == 0:
        return 0.0
    ev = factor_eigenvalues(gramian_factor(A, B, T))
    if ev[0] > n * _EPS * ev[-1]:
        return float(ev[0])
    return float((np.sqrt(ev[0]) + n * _EPS * np.sqrt(ev[-1])) ** 2)


_SWAP_LIMIT = 20000  # structural checks allowed for the exchange pass


def _structurally_controllable(system: StructuredSystem, states: list[int]) -> bool:
    from netctl.structural import controllability

    return bool(controllability(system.with_inputs(np.asarray(states, np.int64)),
                                dimension=False).controllable)


def _generic_dimension(system: StructuredSystem, states: list[int]) -> int:
    from netctl.structural import controllability

    r = controllability(system.with_inputs(np.asarray(states, np.int64)), dimension=True)
    return int(r.controllable_dimension if r.controllable_dimension is not None
               else system.n_states * int(r.controllable))


def select_actuators(system: StructuredSystem, *, budget: int | None = None,
                     candidates: Any = None, horizon: float | None = None,
                     epsilon: float | None = None) -> ActuatorSelection:
    r"""Energy-aware actuator placement among structurally controllable sets.

    ``log det`` of the Gramian measures the volume of states reachable with unit energy.
    With dedicated inputs the Gramian is additive, ``W_S = sum_{i in S} W_i``, and
    ``S -> log det(W_S + epsilon I)`` is monotone submodular, so greedy additions are
    within ``1 - 1/e`` of the best set of the same size [1]_. But the objective alone
    can favour sets that leave states unreachable (so does the trace, [2]_). Here the
    search keeps Lin's condition [3]_: it starts from a minimum dedicated input set of
    the structural analysis (structurally controllable by construction), exchanges
    members for candidates where that raises ``log det`` and keeps the set structurally
    controllable, then adds states greedily up to ``budget`` (a superset of a
    structurally controllable set stays so). When the structural set is not among the
    candidates, each pick maximizes first the generic controllable dimension (Hosoe),
    then ``log det``.

    Parameters
    ----------
    system : StructuredSystem
        Weighted (stored values used); the existing inputs are ignored.
    budget : int, optional
        Number of actuators; default the size of the structural minimum set. A budget
        below it is a usage error (no set that small is controllable for any weight).
    candidates : sequence of state names or indices, optional
        Eligible states (default: all; the node table's ``actuator`` column when present).
    horizon : float, optional
        As in :func:`energy`.
    epsilon : float, optional
        Regularization; default ``1e-6 * tr(W_all) / n`` with ``W_all`` the Gramian
        with an input on every state.

    Returns
    -------
    ActuatorSelection

    Notes
    -----
    One Gramian per candidate, one ``log det`` per candidate and round, and a
    structural test per exchange tried: ``O(|candidates| n^3 (1 + budget))``; limited
    to 400 states.

    References
    ----------
    .. [1] T. H. Summers, F. L. Cortesi, J. Lygeros, "On submodularity and
       controllability in complex dynamical networks", IEEE TCNS 3(1):91-101, 2016.
       doi:10.1109/TCNS.2015.2453711
    .. [2] F. Pasqualetti, S. Zampieri, F. Bullo, IEEE TCNS 1(1):40-52, 2014.
       doi:10.1109/TCNS.2014.2310254
    .. [3] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
       doi:10.1109/TAC.1974.1100557

    Examples
    --------
    >>> import numpy as np
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_matrices(np.diag([-1.0, -2.0, -3.0]), np.zeros((3, 0)))
    >>> r = select_actuators(s, budget=3)
    >>> r.names(r.selected)
    ['x0', 'x1', 'x2']
    """
    from netctl.structural import minimum_inputs

    A, _ = _dense(system)
    n = A.shape[0]
    if n > SELECT_LIMIT:
        raise OptionError(f"greedy selection needs one Gramian per candidate (O(n^4)); "
                          f"{n} states exceed the limit of {SELECT_LIMIT}. Pass fewer "
                          "candidates or use a smaller (reduced) model.")
    _check_finite(A, np.zeros((n, 0)), tuple(system.state_names))
    T, note = _choose_horizon(A, horizon)
    struct = minimum_inputs(system, dedicated=True).drivers.astype(np.int64)
    k = int(struct.size if budget is None else budget)
    if candidates is None:
        if "actuator" in system.nodes:
            cand = np.flatnonzero(np.asarray(system.nodes["actuator"], bool))
        else:
            cand = np.arange(n)
    else:
        cand = system.index_of(list(candidates)) if not isinstance(candidates, np.ndarray) \
            else np.asarray(candidates, np.int64)
    cand = np.unique(cand).astype(np.int64)
    if not 1 <= k <= cand.size:
        raise OptionError(f"budget must lie between 1 and the {cand.size} candidate state(s), "
                          f"found {k}.")
    if k < struct.size:
        raise OptionError(f"budget {k} is below the {struct.size} dedicated inputs every "
                          "structurally controllable design needs (Commault-Dion; Pequito "
                          f"et al.): fewer leave states uncontrollable for every weight. "
                          f"Use a budget of at least {struct.size}.")
    Ws = {int(i): _gramian_vanloan(A, np.eye(n)[:, [i]], T)
          for i in sorted(set(cand.tolist()) | set(struct.tolist()))}
    W_all = _gramian_vanloan(A, np.eye(n), T)
    eps = (1e-6 * max(float(np.trace(W_all)), 1e-300) / max(n, 1)) if epsilon is None \
        else float(epsilon)
    base = eps * np.eye(n)

    def obj(states: list[int]) -> float:
        return _logdet(base + sum((Ws[i] for i in states), np.zeros((n, n))))

    cset = set(cand.tolist())
    chosen: list[int] = []
    gains: list[float] = []
    swaps = 0
    if set(struct.tolist()) <= cset:
        chosen = [int(i) for i in struct.tolist()]
        if chosen and len(chosen) * cand.size <= _SWAP_LIMIT:
            current = obj(chosen)
            for pos in range(len(chosen)):
                best_i, best_val = chosen[pos], current
                for j in cand.tolist():
                    if j in chosen:
                        continue
                    trial = chosen[:pos] + [j] + chosen[pos + 1:]
                    val = obj(trial)
                    if val > best_val + 1e-9 * max(1.0, abs(best_val)) and \
                            _structurally_controllable(system, trial):
                        best_i, best_val = j, val
                if best_i != chosen[pos]:
                    chosen[pos] = best_i
                    current = best_val
                    swaps += 1
        running: list[int] = []
        for i in chosen:
            running.append(i)
            gains.append(obj(running))
    current_W = base + sum((Ws[i] for i in chosen), np.zeros((n, n)))
    dims_needed = not chosen
    while len(chosen) < k:
        best, best_key = -1, (-1, -np.inf)
        for i in cand.tolist():
            if i in chosen:
                continue
            val = _logdet(current_W + Ws[i])
            dim = _generic_dimension(system, chosen + [i]) if dims_needed else n
            key = (dim, val)
            if best < 0 or key[0] > best_key[0] or (
                    key[0] == best_key[0] and val > best_key[1] + 1e-12 * max(1.0, abs(
                        best_key[1]))):
                best, best_key = i, key
        chosen.append(best)
        current_W = current_W + Ws[best]
        gains.append(best_key[1])
        if dims_needed and best_key[0] == n:
            dims_needed = False
    ok = _structurally_controllable(system, chosen)
    lam_sel = _lambda_min_upper(A, np.eye(n)[:, chosen], T)
    lam_struct = _lambda_min_upper(A, np.eye(n)[:, struct], T)
    return ActuatorSelection(
        selected=np.asarray(chosen, np.int64), gains=np.asarray(gains),
        objective=float(gains[-1]), lambda_min=lam_sel, structural=struct,
        structural_objective=obj([int(i) for i in struct.tolist()]),
        structural_lambda_min=lam_struct, epsilon=eps, horizon=T, horizon_note=note,
        state_names=tuple(system.state_names), structurally_controllable=ok, swaps=swaps)


@dataclass(frozen=True)
class NodeControllability:
    """Per-state metrics of :func:`node_controllability` (discrete time, Gu et al.)."""

    average: np.ndarray
    modal: np.ndarray
    scale: float
    state_names: tuple[str, ...] = field(repr=False)

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        return {"analysis": "node controllability (discrete time, A / (1 + sigma_max))",
                "scale": self.scale,
                "average": dict(zip(self.state_names, self.average.tolist())),
                "modal": dict(zip(self.state_names, self.modal.tolist()))}


def node_controllability(system: StructuredSystem) -> NodeControllability:
    r"""Average and modal controllability of every state, in discrete time [1]_.

    ``A`` is scaled to ``A_s = A / (1 + sigma_max(A))`` (Schur stable). Average
    controllability of state ``i`` is ``tr W_inf`` with one input at ``i``, i.e. the
    diagonal of the solution of ``X = A_s^T X A_s + I``; for symmetric ``A`` it equals
    ``sum_j v_ij^2 / (1 - lambda_j^2)``. Modal controllability is
    ``phi_i = sum_j (1 - |lambda_j|^2) v_ij^2`` with the (orthonormal, for symmetric
    ``A``) eigenvectors ``v_j`` of ``A_s``; high values mark states that can push the
    fast-decaying, hard-to-reach modes.

    Notes
    -----
    For a nonsymmetric ``A`` the modal measure uses the normalized right eigenvectors
    (it is defined for symmetric networks in [1]_). Dense, ``O(n^3)``.

    References
    ----------
    .. [1] S. Gu et al., "Controllability of structural brain networks", Nat. Commun.
       6:8414, 2015. doi:10.1038/ncomms9414

    Examples
    --------
    >>> import networkx as nx
    >>> from netctl import StructuredSystem
    >>> r = node_controllability(StructuredSystem.from_networkx(nx.path_graph(3)))
    >>> r.modal.round(6).tolist()
    [0.828427, 0.656854, 0.828427]
    """
    A, _ = _dense(system)
    n = A.shape[0]
    if n == 0:
        return NodeControllability(np.zeros(0), np.zeros(0), 1.0, ())
    scale = 1.0 + float(la.svdvals(A)[0])
    As = A / scale
    X = la.solve_discrete_lyapunov(As.T, np.eye(n))
    if np.array_equal(A, A.T):
        lam, V = la.eigh(As)
        mag = lam ** 2
    else:
        lam_c, Vc = la.eig(As)
        V = np.abs(Vc / np.linalg.norm(Vc, axis=0))
        mag = np.abs(lam_c) ** 2
    modal = (V ** 2) @ (1.0 - mag)
    return NodeControllability(average=np.diag(X).copy(), modal=np.asarray(modal, float),
                               scale=scale, state_names=tuple(system.state_names))
