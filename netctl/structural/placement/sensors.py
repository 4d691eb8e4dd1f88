"""Sensor placement: the dual of actuator placement. A sensor design makes ``(A, C)``
structurally observable iff its transpose makes the dual ``(A^T, C^T)`` structurally
controllable, so the same solvers run on ``system.dual()`` (edges reversed: every *sink*
component needs a sensor).

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a sensor reading state ``i`` adds the
row ``e_i^T`` to ``C``.
"""

from __future__ import annotations

from netctl.records import Candidates, Sites
from netctl.structural.placement._design import place_design
from netctl.structural.placement.result import Placement
from netctl.system import StructuredSystem

__all__ = ["place_sensors"]


def place_sensors(
    system: StructuredSystem,
    *,
    sites: Sites | None = None,
    candidates: Candidates | None = None,
    budget: float | None = None,
    method: str = "auto",
    time_limit: float = 60.0,
    verify: bool = True,
) -> Placement:
    """Cheapest sensor design that makes ``system`` structurally observable.

    The dual of :func:`~netctl.structural.placement.place_inputs`, computed on ``system.dual()`` (edges reversed, so
    *sink* components each need a sensor). ``sites`` default to the node table's
    ``sensor`` / ``sensor_cost`` columns; ``candidates`` are sensors reading several
    states (rows of ``C``). The check uses :func:`netctl.structural.observability`.

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (observability by duality).
    .. [2] S. Pequito, S. Kar, A. P. Aguiar, "Minimum cost input/output design for
       large-scale linear structural systems", Automatica 68:384-391, 2016.
       arXiv:1407.3327

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.structural.placement import place_sensors
    >>> p = place_sensors(StructuredSystem.from_edges([0, 1], [1, 2], 3))   # path
    >>> p.site_names, p.goal_met
    (['x2'], True)
    """
    return place_design(system, "sensors", sites, candidates, budget, method, time_limit,
                        verify)
