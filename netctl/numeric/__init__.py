"""Numeric analyses: sampled realizations, reliable rank tests, exact controllability
for given weights, modal controllability and control energy.

Structural analyses (:mod:`netctl.structural`) answer for almost all weights of a
pattern; the analyses here use *numbers* -- the file's weights or weights sampled under
a stated parameterization (:data:`PARAMETERIZATIONS`) -- and always say which.
"""

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
