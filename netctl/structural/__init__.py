"""Generic (pattern-only) analyses: they hold for almost all weights."""

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
