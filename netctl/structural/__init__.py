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
from netctl.structural.inputs import (
    InputDesign,
    NetworkSummary,
    minimum_inputs,
    minimum_sensors,
    summarize,
)

__all__ = [
    "ControllabilityReport",
    "Dilation",
    "InaccessibleGroup",
    "InputDesign",
    "NetworkSummary",
    "controllability",
    "is_structurally_controllable",
    "is_structurally_observable",
    "minimum_inputs",
    "minimum_sensors",
    "observability",
    "summarize",
]
