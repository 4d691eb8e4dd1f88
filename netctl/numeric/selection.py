"""Energy-aware actuator placement among structurally controllable sets (greedy log det)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.errors import OptionError
from netctl.numeric.gramian import (
    _check_finite,
    _choose_horizon,
    factor_eigenvalues,
    _gramian_vanloan,
    gramian_factor,
    _logdet,
    single_input_gramian,
    single_input_plan,
)
from netctl.numeric._tasks import Progress, Runner, announce
from netctl.numeric.rank import _dense
from netctl.system import StructuredSystem

__all__ = ["ActuatorSelection", "select_actuators", "SELECT_LIMIT"]

SELECT_LIMIT = 400
_EPS = float(np.finfo(float).eps)



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


_SWAP_LIMIT = 20000  # structural checks allowed for the exchange pass (our choice)
#: relative gain in log det that counts as a better exchange / a better addition (our
#: choice, no source: well above rounding of a log det, far below any gain that matters)
_SWAP_GAIN = 1e-9
_TIE = 1e-12


def _candidate_gramian(i: int, _seed: Any, plan: tuple[Any, ...]) -> np.ndarray:
    """Executor task: the Gramian with one dedicated input at state ``i`` (``plan``: the
    Schur form or quadrature steps of ``A``, :func:`netctl.numeric.gramian.
    single_input_plan`, sent to each worker once). No randomness: the result does not
    depend on the worker or the seed."""
    return single_input_gramian(plan, i)


def _structurally_controllable(system: StructuredSystem, states: list[int]) -> bool:
    from netctl.structural import controllability

    return bool(controllability(system.with_inputs(system.names_of(states)),
                                dimension=False).controllable)


def _generic_dimension(system: StructuredSystem, states: list[int]) -> int:
    from netctl.structural import controllability

    r = controllability(system.with_inputs(system.names_of(states)), dimension=True)
    return int(r.controllable_dimension if r.controllable_dimension is not None
               else system.n_states * int(r.controllable))


def select_actuators(system: StructuredSystem, *, budget: int | None = None,
                     candidates: Any = None, horizon: float | None = None,
                     epsilon: float | None = None, runner: Runner | None = None,
                     progress: Progress | None = None) -> ActuatorSelection:
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
    runner : callable, optional
        Runs the per-candidate Gramians as independent tasks
        (:data:`netctl.numeric._tasks.Runner`, e.g. local processes or Dask); default:
        one after another here. The result is identical either way.
    progress : callable(stage, done, total), optional
        Told of each candidate Gramian (when no runner is given: the runner reports its
        own), each exchange position and each greedy addition.

    Returns
    -------
    ActuatorSelection

    Notes
    -----
    One Gramian per candidate -- all from one Schur form of ``A`` (Bartels-Stewart) or
    one set of quadrature steps (finite horizon), :func:`netctl.numeric.gramian.
    single_input_gramian` --, one ``log det`` per candidate and round, and a structural
    test per exchange tried: ``O(|candidates| n^3 (1 + budget))``; limited to 400
    states.

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
    need = sorted(set(cand.tolist()) | set(struct.tolist()))
    plan = single_input_plan(A, T)  # one Schur form (or one set of steps) for all
    if runner is not None and len(need) > 1:
        Ws = dict(zip(need, runner(_candidate_gramian, need, plan)))
    else:
        Ws = {}
        for done, i in enumerate(need):
            announce(progress, "candidate Gramians", done, len(need))
            Ws[i] = _candidate_gramian(i, None, plan)
        announce(progress, "candidate Gramians", len(need), len(need))
    W_all = _gramian_vanloan(A, np.eye(n), T)
    # regularization 1e-6 of the mean eigenvalue of W_all: our choice, no source (it keeps
    # log det finite for sets that do not yet reach every state)
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
                announce(progress, "exchanges", pos, len(chosen))
                best_i, best_val = chosen[pos], current
                for j in cand.tolist():
                    if j in chosen:
                        continue
                    trial = chosen[:pos] + [j] + chosen[pos + 1:]
                    val = obj(trial)
                    if val > best_val + _SWAP_GAIN * max(1.0, abs(best_val)) and \
                            _structurally_controllable(system, trial):
                        best_i, best_val = j, val
                if best_i != chosen[pos]:
                    chosen[pos] = best_i
                    current = best_val
                    swaps += 1
            announce(progress, "exchanges", len(chosen), len(chosen))
        running: list[int] = []
        for i in chosen:
            running.append(i)
            gains.append(obj(running))
    current_W = base + sum((Ws[i] for i in chosen), np.zeros((n, n)))
    dims_needed = not chosen
    start = len(chosen)
    while len(chosen) < k:
        announce(progress, "greedy additions", len(chosen) - start, k - start)
        best, best_key = -1, (-1, -np.inf)
        for i in cand.tolist():
            if i in chosen:
                continue
            val = _logdet(current_W + Ws[i])
            dim = _generic_dimension(system, chosen + [i]) if dims_needed else n
            key = (dim, val)
            if best < 0 or key[0] > best_key[0] or (
                    key[0] == best_key[0] and val > best_key[1] + _TIE * max(1.0, abs(
                        best_key[1]))):
                best, best_key = i, key
        chosen.append(best)
        current_W = current_W + Ws[best]
        gains.append(best_key[1])
        if dims_needed and best_key[0] == n:
            dims_needed = False
    if k > start:
        announce(progress, "greedy additions", k - start, k - start)
    ok = _structurally_controllable(system, chosen)
    lam_sel = _lambda_min_upper(A, np.eye(n)[:, chosen], T)
    lam_struct = _lambda_min_upper(A, np.eye(n)[:, struct], T)
    return ActuatorSelection(
        selected=np.asarray(chosen, np.int64), gains=np.asarray(gains),
        objective=float(gains[-1]), lambda_min=lam_sel, structural=struct,
        structural_objective=obj([int(i) for i in struct.tolist()]),
        structural_lambda_min=lam_struct, epsilon=eps, horizon=T, horizon_note=note,
        state_names=tuple(system.state_names), structurally_controllable=ok, swaps=swaps)
