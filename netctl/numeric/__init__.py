"""Numeric analyses: sampled realizations, reliable rank tests, exact controllability
for given weights, modal controllability and control energy.

Structural analyses (:mod:`netctl.structural`) answer for almost all weights of a
pattern; the analyses here use *numbers* -- the file's weights or weights sampled under
a stated parameterization (:data:`PARAMETERIZATIONS`) -- and always say which.

The names below are imported from their modules on first access (PEP 562), so that a
verb loads only the analyses it runs (``netctl verify`` on a small file needs neither
the Gramians nor the sparse certificate, nor the scipy modules they import).
"""

from __future__ import annotations

import sys
import types
from typing import TYPE_CHECKING, Any

from netctl._lazy import lazy_names

if TYPE_CHECKING:
    from netctl.numeric.certificate import sparse_certificate
    from netctl.numeric.energy import EnergyReport, energy, gramian
    from netctl.numeric.exact import ExactControllability, Multiplicity, exact_controllability
    from netctl.numeric.modal import ModalReport, ModeReach, modal_controllability
    from netctl.numeric.node_metrics import NodeControllability, node_controllability
    from netctl.numeric.prime_field import modular
    from netctl.numeric.rank import LostMode, RankTest, pbh, staircase
    from netctl.numeric.realize import PARAMETERIZATIONS, realize
    from netctl.numeric.selection import ActuatorSelection, select_actuators
    from netctl.numeric.verify import Verification, verify

#: public name -> the module (under netctl.numeric) that defines it
_HOME: dict[str, str] = {
    "sparse_certificate": "certificate",
    "EnergyReport": "energy", "energy": "energy", "gramian": "energy",
    "ExactControllability": "exact", "Multiplicity": "exact",
    "exact_controllability": "exact",
    "ModalReport": "modal", "ModeReach": "modal", "modal_controllability": "modal",
    "NodeControllability": "node_metrics", "node_controllability": "node_metrics",
    "modular": "prime_field",
    "LostMode": "rank", "RankTest": "rank", "pbh": "rank", "staircase": "rank",
    "PARAMETERIZATIONS": "realize", "realize": "realize",
    "ActuatorSelection": "selection", "select_actuators": "selection",
    "Verification": "verify", "verify": "verify",
}

__all__ = [
    "ActuatorSelection",
    "EnergyReport",
    "ExactControllability",
    "LostMode",
    "ModalReport",
    "ModeReach",
    "Multiplicity",
    "NodeControllability",
    "PARAMETERIZATIONS",
    "RankTest",
    "Verification",
    "energy",
    "exact_controllability",
    "gramian",
    "modal_controllability",
    "modular",
    "node_controllability",
    "pbh",
    "realize",
    "select_actuators",
    "sparse_certificate",
    "staircase",
    "verify",
]


# A public name, imported from its module on first access (PEP 562).
__getattr__, __dir__ = lazy_names(__name__, _HOME, globals(), __all__)


class _Package(types.ModuleType):
    """This package, whose functions keep their names when the modules of the same name
    are imported (``netctl.numeric.energy`` and ``netctl.numeric.verify`` stay the
    functions, as when this package imported every analysis eagerly; the modules are in
    ``sys.modules``)."""

    def __setattr__(self, name: str, value: Any) -> None:
        if isinstance(value, types.ModuleType) and _HOME.get(name) == name:
            value = getattr(value, name)
        super().__setattr__(name, value)


sys.modules[__name__].__class__ = _Package
