"""The result of every placement: :class:`Placement`, the chosen actuators (sensors), their
cost, how good the design is (bounds, gap, guarantee) and its independent check.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; an actuator is a column of ``B``, a
sensor a row of ``C``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl.records import Candidates
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

if TYPE_CHECKING:
    import scipy.sparse as sp

__all__ = ["Placement"]


# ====================================================================== result
@dataclass(frozen=True)
class Placement(ResultTables):
    """A placement of actuators (or sensors) and how good it is.

    Attributes
    ----------
    kind : {"inputs", "sensors"}
    problem : {"dedicated", "candidates", "target"}
    method : str
        Which algorithm produced the design: ``"assignment"`` (exact min-cost
        assignment), ``"milp"`` (HiGHS), ``"greedy"``, ``"exhaustive"``,
        ``"target-greedy"`` (Gao et al. 2014).
    feasible : bool
        Some design within the site / candidate constraints meets the goal (full
        controllability, or control of the targets), whatever its cost.
    goal_met : bool
        The returned design meets the goal and the budget.
    best_effort : bool
        The budget was too small: the design maximizes the generic controllable
        dimension among affordable designs instead.
    sites : ndarray of int
        States acted on (read) by the chosen actuators (sensors), sorted.
    chosen : ndarray of int
        Indices of the chosen candidates (for dedicated problems, one per site).
    cost : float
    lower_bound : float or None
        Proven lower bound on the minimum cost (cost problems).
    upper_bound : float or None
        Proven upper bound on the best achievable dimension (best-effort problems).
    optimal : bool
        Proven optimal (``gap == 0``); never for a best effort on sites or candidates
        that cannot make the system controllable (``feasible=False``).
    gap : float
        Relative optimality gap: ``(cost - lower_bound) / cost`` for cost problems,
        ``(upper_bound - dimension) / upper_bound`` for best effort; 0 when optimal;
        ``inf`` when infeasible (``null`` in :meth:`to_dict`).
    dimension : int or None
        Generic controllable (observable) dimension of the design (Hosoe); for target
        problems the generic rank of ``C_T [B AB ...]``. ``None`` when the design fails
        and the system has more than :data:`DIMENSION_MAX_STATES` states (the
        dimension is then too costly to report by default).
    goal_dimension : int
        ``n``, or the number of targets.
    verified : bool or None
        Independent check of the design (:func:`netctl.structural.controllability` on the
        system with the design installed; target rank for target problems); ``None``
        when skipped.
    inaccessible : ndarray of int
        States no chosen input reaches (no chosen sensor sees), by that check.
    reasons : tuple of str
        Why the goal cannot be met (infeasible or budget too small).
    guarantee : str
        What the method guarantees.
    """

    _frame_rows = "states"
    _frame_sets = ("sites", "inaccessible", "targets")

    kind: str
    problem: str
    method: str
    feasible: bool
    goal_met: bool
    best_effort: bool
    sites: np.ndarray
    chosen: np.ndarray
    cost: float
    lower_bound: float | None
    upper_bound: float | None
    optimal: bool
    gap: float
    dimension: int | None
    goal_dimension: int
    verified: bool | None
    inaccessible: np.ndarray
    reasons: tuple[str, ...]
    guarantee: str
    budget: float | None
    candidates: Candidates = field(repr=False)
    state_names: tuple[str, ...] = field(repr=False)
    targets: np.ndarray | None = None
    model: str = "given"

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    @property
    def site_names(self) -> list[str]:
        return self.names(self.sites)

    def design(self) -> sp.csr_array:
        """The chosen input matrix ``B`` (``n x k``; for sensors the transpose of ``C``)."""
        return self.candidates.matrix(self.chosen, len(self.state_names))

    def apply(self, system: StructuredSystem) -> StructuredSystem:
        """``system`` with the chosen actuators (sensors) added to its existing ones."""
        import scipy.sparse as sp

        M = self.design()
        names = [self.candidates.names[int(k)] for k in self.chosen]
        if self.kind == "inputs":
            B = sp.hstack([system.B, M], format="csr") if system.n_inputs else M
            return system.with_inputs(B, names=list(system.input_names) + names)
        C = sp.vstack([system.C, M.T], format="csr") if system.n_outputs else M.T
        return system.with_outputs(C, names=list(system.output_names) + names)

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        word = "actuators" if self.kind == "inputs" else "sensors"
        return {
            "analysis": "placement",
            "kind": self.kind,
            "problem": self.problem,
            "method": self.method,
            "model": self.model,
            "n_states": len(self.state_names),
            "feasible": self.feasible,
            "goal_met": self.goal_met,
            "best_effort": self.best_effort,
            "sites": self.site_names,
            word: [{"name": self.candidates.names[int(k)],
                    "states": self.names(self.candidates.states_of(int(k))),
                    "cost": float(self.candidates.cost[int(k)])} for k in self.chosen],
            "cost": float(self.cost),
            "budget": self.budget,
            "optimal": self.optimal,
            "gap": float(self.gap) if math.isfinite(self.gap) else None,
            "lower_bound": self.lower_bound,
            "upper_bound": self.upper_bound,
            "dimension": self.dimension,
            "goal_dimension": int(self.goal_dimension),
            "targets": None if self.targets is None else self.names(self.targets),
            "verified": self.verified,
            "inaccessible": self.names(self.inaccessible),
            "reasons": list(self.reasons),
            "guarantee": self.guarantee,
        }
