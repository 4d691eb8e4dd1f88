r"""Actuator and sensor placement under real constraints: eligible sites, costs, budgets,
candidate actuators acting on several states, target sets.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a dedicated actuator at state ``i``
adds the input column ``e_i`` to ``B``; a candidate actuator adds one column of ``B``
that may act on several states. Sensors are placed on the dual system (``A^T``, ``C^T``).

Problems solved (see :func:`place_inputs` for the methods and their guarantees):

* **dedicated** -- the cheapest set of eligible states to drive, one input each, that
  makes the system structurally controllable. Exact in polynomial time (one min-cost
  assignment; Pequito, Kar & Aguiar 2016).
* **candidates** -- the cheapest subset of user-given actuator columns (each with a
  cost). NP-hard in general; exact mixed-integer programme (HiGHS through
  :func:`scipy.optimize.milp`) up to :data:`MILP_MAX_VARIABLES` variables, otherwise a
  greedy submodular cover with a proven ratio and a reported gap.
* **best effort** -- when the budget is too small for full control, the affordable
  design of largest generic controllable dimension (Hosoe 1980), exhaustive on small
  cases, otherwise a budgeted greedy with a proven ratio and a reported gap.
* **target** -- the cheapest dedicated drivers for a set of target states
  (:func:`place_target_inputs`; Gao, Liu, D'Souza & Barabási 2014).

One module a job, all through one loop (``_loop``). Public: eligibility and costs
(:mod:`.sites`), the result (:mod:`.result`), actuators (:mod:`.inputs`), the sensor
dual (:mod:`.sensors`) and target placement (:mod:`.target`). Private: the reduced
problem (``_reduced``), exact minimum cost for dedicated actuators (``_assignment``),
the MILP for shared candidate columns (``_milp``), the greedy cover (``_cover``), best
effort under a budget (``_budget``) and the choice among them with Lin's check
(``_design``). Site and candidate files are read by
:mod:`netctl.io.sites` into the records of :mod:`netctl.records`.

Results concern a linear(ized) structural model; they do not replace the operator's
procedures, applicable codes or licensed engineers (see ``netctl.cli.CAUTION``).
"""

from netctl.records import Candidates, Sites
from netctl.structural.placement._budget import EXHAUSTIVE_MAX_CANDIDATES
from netctl.structural.placement._design import DIMENSION_MAX_STATES, MILP_MAX_VARIABLES
from netctl.structural.placement._loop import METHODS
from netctl.structural.placement.inputs import place_inputs
from netctl.structural.placement.result import Placement
from netctl.structural.placement.sensors import place_sensors
from netctl.structural.placement.sites import candidates_from_sites, sites_from_nodes
from netctl.structural.placement.target import place_target_inputs

__all__ = [
    "Candidates",
    "DIMENSION_MAX_STATES",
    "EXHAUSTIVE_MAX_CANDIDATES",
    "METHODS",
    "MILP_MAX_VARIABLES",
    "Placement",
    "Sites",
    "candidates_from_sites",
    "place_inputs",
    "place_sensors",
    "place_target_inputs",
    "sites_from_nodes",
]
