"""Generic (pattern-only) analyses: they hold for almost all weights.

The names below are imported from their modules on first access (PEP 562), so that a
verb loads only the analyses it runs (``netctl drivers`` needs neither decoupling nor
fixed modes, and their graph and shortest-path libraries).
"""

from __future__ import annotations

import sys
import types
from typing import TYPE_CHECKING, Any

from netctl._lazy import lazy_names

if TYPE_CHECKING:
    from netctl.structural.controllability import (
        ControllabilityReport,
        Dilation,
        InaccessibleGroup,
        controllability,
        is_structurally_controllable,
        is_structurally_observable,
        observability,
    )
    from netctl.structural.decoupling import (
        DecouplingReport,
        TransferRank,
        decoupling,
        transfer_rank,
    )
    from netctl.structural.fixed_modes import FixedModesReport, fixed_modes
    from netctl.structural.inputs import (
        InputDesign,
        NetworkSummary,
        minimum_inputs,
        minimum_sensors,
        summarize,
    )

#: public name -> the module (under netctl.structural) that defines it
_HOME: dict[str, str] = {
    "ControllabilityReport": "controllability", "Dilation": "controllability",
    "InaccessibleGroup": "controllability", "controllability": "controllability",
    "is_structurally_controllable": "controllability",
    "is_structurally_observable": "controllability", "observability": "controllability",
    "DecouplingReport": "decoupling", "TransferRank": "decoupling",
    "decoupling": "decoupling", "transfer_rank": "decoupling",
    "FixedModesReport": "fixed_modes", "fixed_modes": "fixed_modes",
    "InputDesign": "inputs", "NetworkSummary": "inputs", "minimum_inputs": "inputs",
    "minimum_sensors": "inputs", "summarize": "inputs",
}

__all__ = [
    "ControllabilityReport",
    "DecouplingReport",
    "Dilation",
    "FixedModesReport",
    "InaccessibleGroup",
    "InputDesign",
    "NetworkSummary",
    "TransferRank",
    "controllability",
    "decoupling",
    "fixed_modes",
    "is_structurally_controllable",
    "is_structurally_observable",
    "minimum_inputs",
    "minimum_sensors",
    "observability",
    "summarize",
    "transfer_rank",
]


# A public name, imported from its module on first access (PEP 562).
__getattr__, __dir__ = lazy_names(__name__, _HOME, globals(), __all__)


class _Package(types.ModuleType):
    """This package, whose functions keep their names when the modules of the same name
    are imported (``netctl.structural.controllability`` stays the function, as when this
    package imported every analysis eagerly; the module is in ``sys.modules``)."""

    def __setattr__(self, name: str, value: Any) -> None:
        if isinstance(value, types.ModuleType) and _HOME.get(name) == name:
            value = getattr(value, name)
        super().__setattr__(name, value)


sys.modules[__name__].__class__ = _Package
