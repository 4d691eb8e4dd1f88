"""What a failure or a proposed change does: contingency sweeps, attack curves, what-if.

* :func:`contingency_sweep` -- every single link (or state) lost in turn: the minimum
  number of inputs afterwards and, when the system carries an input design, whether the
  design stays structurally controllable and why not. Computed from one maximum matching
  of ``A`` (and one of ``[A B]``) plus dominators of the input-reachability graph, not by
  one recomputation per element.
* :func:`sampled_losses` -- ``k > 1`` simultaneous losses, sampled with a seed and
  recomputed exactly.
* :func:`attack_curve` -- the minimum number of inputs as states or links are removed at
  random or by a targeting rule (drawn by :func:`netctl.viz.plot_attack_curves`).
* :func:`what_if` -- before and after a proposed change (links added or removed, states
  removed), side by side.
* :func:`element_sweep` -- every grid element (branch, transformer, bus, generator) lost
  in turn by its case ID (N-1), exact.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from typing import TYPE_CHECKING

from netctl._lazy import lazy_names
from netctl.structural.robustness._common import ELEMENTS
from netctl.structural.robustness.attack import ATTACK_STRATEGIES, AttackCurve, attack_curve
from netctl.structural.robustness.contingency import ContingencySweep, contingency_sweep
from netctl.structural.robustness.sampled import SampledLosses, sampled_losses
from netctl.structural.robustness.whatif import WhatIf, apply_change, what_if

if TYPE_CHECKING:
    from netctl.structural.robustness.elements import ElementSweep, element_sweep
    from netctl.structural.robustness.outages import element_effects

#: the grid-element analyses, imported from their modules on first access (PEP 562): they
#: serve grid files only, so a sweep or what-if on any other network does not load them
_HOME: dict[str, str] = {"ElementSweep": "elements", "element_sweep": "elements",
                         "element_effects": "outages"}

__all__ = [
    "ATTACK_STRATEGIES",
    "AttackCurve",
    "ContingencySweep",
    "ELEMENTS",
    "ElementSweep",
    "SampledLosses",
    "WhatIf",
    "apply_change",
    "attack_curve",
    "contingency_sweep",
    "element_effects",
    "element_sweep",
    "sampled_losses",
    "what_if",
]

__getattr__, __dir__ = lazy_names(__name__, _HOME, globals(), __all__)
