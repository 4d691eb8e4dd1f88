"""Control energy: controllability Gramian, energy metrics, greedy actuator selection."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.linalg as la

from netctl.errors import OptionError
from netctl.numeric.rank import _dense, _weights_of
from netctl.system import StructuredSystem

__all__ = ["EnergyReport", "ActuatorSelection", "NodeControllability", "gramian", "energy",
           "select_actuators", "node_controllability", "SELECT_LIMIT"]

SELECT_LIMIT = 400


def gramian(A: np.ndarray, B: np.ndarray, horizon: float | None = None) -> np.ndarray:
    r"""Controllability Gramian ``W = int_0^T e^{At} B B^T e^{A^T t} dt`` (dense).

    ``horizon=None``: infinite horizon, ``A W + W A^T + B B^T = 0`` (needs Hurwitz
    ``A``; Bartels–Stewart, ``scipy.linalg.solve_continuous_lyapunov``). Otherwise
    Van Loan's block exponential [1]_: with ``F = expm([[-A, B B^T], [0, A^T]] T)``,
    ``W(T) = F_22^T F_12``.

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
class EnergyReport:
    """Outcome of :func:`energy`.

    Attributes
    ----------
    horizon : float or None
        ``None`` for infinite horizon.
    lambda_min, lambda_max, trace, log_det : float
        Of the Gramian ``W``. ``1/lambda_min`` is the energy needed for the hardest unit
        target, ``1/lambda_max`` for the easiest.
    average_energy : float
        ``tr(W^-1) / n``: the mean minimum energy over unit targets drawn uniformly on
        the sphere (``inf`` when ``W`` is singular).
    average_controllability : ndarray
        Per state ``i``: ``tr W`` with a single input at ``i`` (larger = more of the
        state space reached with little energy).
    gramian : ndarray
        The Gramian itself (not in ``to_dict`` above 50 states).
    """

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

    @property
    def controllable(self) -> bool:
        """``lambda_min`` clears ``n * eps * lambda_max`` (the Gramian is nonsingular)."""
        eps = float(np.finfo(float).eps)
        return self.lambda_min > max(self.n_states, 1) * eps * max(self.lambda_max, 1e-300)

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        def f(x: float) -> float | str:
            return x if np.isfinite(x) else ("inf" if x > 0 else "-inf")

        d: dict[str, Any] = {
            "analysis": "control energy",
            "weights": self.weights,
            "n_states": self.n_states,
            "n_inputs": self.n_inputs,
            "inputs": list(self.input_names),
            "horizon": self.horizon,
            "horizon_note": self.horizon_note,
            "controllable": self.controllable,
            "lambda_min": self.lambda_min,
            "lambda_max": self.lambda_max,
            "trace": self.trace,
            "log_det": f(self.log_det),
            "average_energy": f(self.average_energy),
            "worst_energy": f(1.0 / self.lambda_min) if self.lambda_min > 0 else "inf",
            "average_controllability": dict(zip(self.state_names,
                                                self.average_controllability.tolist())),
        }
        if self.n_states <= 50:
            d["gramian"] = self.gramian.tolist()
        return d


def energy(system: StructuredSystem, *, horizon: float | None = None) -> EnergyReport:
    r"""Gramian-based energy metrics of ``(A, B)`` with the stored (given) weights.

    Parameters
    ----------
    system : StructuredSystem
    horizon : float, optional
        Control time ``T``. Default: infinite horizon when ``A`` is Hurwitz, else
        ``T = 1`` (the report says which).

    Returns
    -------
    EnergyReport
        ``lambda_min``, ``trace``, ``log_det``, ``average_energy`` of ``W`` and the
        average controllability of every state [1]_, [2]_.

    Notes
    -----
    The minimum energy to move from ``x0`` to ``xf`` in time ``T`` is
    ``v^T W(T)^{-1} v`` with ``v = xf - e^{AT} x0``; so ``1/lambda_min`` bounds it per
    unit ``||v||^2`` (Kailath, *Linear Systems*, 1980). Average controllability per state
    is the diagonal of the Gramian of ``(A^T, I)`` (``tr W`` is additive over
    dedicated inputs). Dense, ``O(n^3)``.

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
    >>> r.horizon, r.lambda_min, r.trace
    (None, 0.5, 1.0)
    """
    A, B = _dense(system)
    n = A.shape[0]
    T, note = _choose_horizon(A, horizon)
    W = gramian(A, B, T)
    avg = np.diag(gramian(A.T, np.eye(n), T)).copy() if n else np.zeros(0)
    ev = np.linalg.eigvalsh(W) if n else np.zeros(0)
    lmin = float(ev[0]) if n else 0.0
    lmax = float(ev[-1]) if n else 0.0
    eps = float(np.finfo(float).eps)
    if n and lmin > n * eps * max(lmax, 1e-300):
        avg_energy = float(np.sum(1.0 / ev)) / n
        ld = float(np.sum(np.log(ev)))
    else:
        avg_energy = np.inf
        ld = -np.inf
    return EnergyReport(
        n_states=n, n_inputs=B.shape[1], horizon=T, horizon_note=note, lambda_min=lmin,
        lambda_max=lmax, trace=float(np.trace(W)), log_det=ld, average_energy=avg_energy,
        average_controllability=avg, gramian=W, state_names=tuple(system.state_names),
        input_names=tuple(system.input_names), weights=_weights_of(system))


@dataclass(frozen=True)
class ActuatorSelection:
    """Outcome of :func:`select_actuators`: greedy set against the structural one.

    ``selected``: states in the order the greedy rule picked them; ``gains``: the
    objective after each pick. ``structural``: a minimum dedicated input set from the
    structural analysis (Commault–Dion / Pequito et al.), with its objective.
    The objective is ``log det(W_S + epsilon I)``.
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

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        return {
            "analysis": "greedy actuator selection (log det)",
            "budget": int(self.selected.size),
            "selected": self.names(self.selected),
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


def select_actuators(system: StructuredSystem, *, budget: int | None = None,
                     candidates: Any = None, horizon: float | None = None,
                     epsilon: float | None = None) -> ActuatorSelection:
    r"""Greedy actuator placement maximizing ``log det`` of the Gramian [1]_.

    With dedicated inputs the Gramian is additive, ``W_S = sum_{i in S} W_i``, and
    ``S -> log det(W_S + epsilon I)`` is monotone submodular, so adding, one at a time,
    the state with the largest gain is within ``1 - 1/e`` of the best set of the same
    size [1]_. The result is compared with a minimum dedicated input set of the
    structural analysis (same budget by default).

    Parameters
    ----------
    system : StructuredSystem
        Weighted (stored values used); the existing inputs are ignored.
    budget : int, optional
        Number of actuators; default the size of the structural minimum set.
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
    One Gramian per candidate and one Cholesky per candidate and round:
    ``O(|candidates| n^3 (1 + budget))``; limited to 400 states.

    References
    ----------
    .. [1] T. H. Summers, F. L. Cortesi, J. Lygeros, "On submodularity and
       controllability in complex dynamical networks", IEEE TCNS 3(1):91-101, 2016.
       doi:10.1109/TCNS.2015.2453711

    Examples
    --------
    >>> import numpy as np
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_matrices(np.diag([-1.0, -2.0, -3.0]), np.zeros((3, 0)))
    >>> r = select_actuators(s, budget=1)
    >>> r.names(r.selected)
    ['x0']
    """
    from netctl.structural import minimum_inputs

    A, _ = _dense(system)
    n = A.shape[0]
    if n > SELECT_LIMIT:
        raise OptionError(f"greedy selection needs one Gramian per candidate (O(n^4)); "
                          f"{n} states exceed the limit of {SELECT_LIMIT}. Pass fewer "
                          "candidates or use a smaller (reduced) model.")
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
    Ws = {int(i): gramian(A, np.eye(n)[:, [i]], T) for i in cand.tolist()}
    extra = set(struct.tolist()) - set(Ws)
    Ws.update({i: gramian(A, np.eye(n)[:, [i]], T) for i in sorted(extra)})
    W_all = gramian(A, np.eye(n), T)
    eps = (1e-6 * max(float(np.trace(W_all)), 1e-300) / max(n, 1)) if epsilon is None \
        else float(epsilon)
    base = eps * np.eye(n)
    current = base.copy()
    chosen: list[int] = []
    gains: list[float] = []
    for _ in range(k):
        best, best_val = -1, -np.inf
        for i in cand.tolist():
            if i in chosen:
                continue
            val = _logdet(current + Ws[i])
            if best < 0 or val > best_val + 1e-12 * max(1.0, abs(best_val)):
                best, best_val = i, val
        chosen.append(best)
        current = current + Ws[best]
        gains.append(best_val)
    W_struct = base + sum((Ws[int(i)] for i in struct.tolist()), np.zeros((n, n)))
    return ActuatorSelection(
        selected=np.asarray(chosen, np.int64), gains=np.asarray(gains),
        objective=float(gains[-1]),
        lambda_min=max(0.0, float(np.linalg.eigvalsh(current - base)[0])),
        structural=struct, structural_objective=_logdet(W_struct),
        structural_lambda_min=max(0.0, float(np.linalg.eigvalsh(W_struct - base)[0])) if n
        else 0.0,
        epsilon=eps, horizon=T, horizon_note=note, state_names=tuple(system.state_names))


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
