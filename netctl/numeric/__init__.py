"""Numeric analyses: sampled realizations, reliable rank tests, exact controllability
for given weights, modal controllability and control energy.

Structural analyses (:mod:`netctl.structural`) answer for almost all weights of a
pattern; the analyses here use *numbers* -- the file's weights or weights sampled under
a stated parameterization (:data:`PARAMETERIZATIONS`) -- and always say which.
"""

from netctl.numeric.exact import ExactControllability, Multiplicity, exact_controllability
from netctl.numeric.rank import (
    LostMode,
    RankTest,
    modular,
    pbh,
    sparse_certificate,
    staircase,
)
from netctl.numeric.realize import PARAMETERIZATIONS, realize
from netctl.numeric.verify import Verification, verify

__all__ = [
    "ExactControllability",
    "LostMode",
    "Multiplicity",
    "PARAMETERIZATIONS",
    "RankTest",
    "Verification",
    "exact_controllability",
    "modular",
    "pbh",
    "realize",
    "sparse_certificate",
    "staircase",
    "verify",
]
