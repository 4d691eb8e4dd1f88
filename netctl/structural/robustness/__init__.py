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

if TYPE_CHECKING:
    from netctl.structural.robustness._common import ELEMENTS
    from netctl.structural.robustness.attack import (
        ATTACK_STRATEGIES,
        AttackCurve,
        attack_curve,
    )
    from netctl.structural.robustness.contingency import ContingencySweep, contingency_sweep
    from netctl.structural.robustness.elements import ElementSweep, element_sweep
    from netctl.structural.robustness.outages import element_effects
    from netctl.structural.robustness.sampled import SampledLosses, sampled_losses
    from netctl.structural.robustness.whatif import WhatIf, apply_change, what_if

#: public name -> the module (under this package) that defines it; imported on first
#: access (PEP 562): the grid-element analyses serve grid files only, and a what-if on a
#: small file loads neither the sweeps nor scipy
_HOME: dict[str, str] = {
    "ELEMENTS": "_common", "ATTACK_STRATEGIES": "attack", "AttackCurve": "attack",
    "attack_curve": "attack", "ContingencySweep": "contingency",
    "contingency_sweep": "contingency", "ElementSweep": "elements",
    "element_effects": "outages", "element_sweep": "elements",
    "SampledLosses": "sampled", "sampled_losses": "sampled", "WhatIf": "whatif",
    "apply_change": "whatif", "what_if": "whatif",
}

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
