"""netctl: structural (graph-based) controllability analysis of large networked systems.

Conventions (stated once here and in DESIGN.md; used everywhere):

* The model is ``dx/dt = A x + B u, y = C x``.
* An edge ``u -> v`` means "state u influences state v", i.e. ``A[v, u] != 0``.
* ``B[i, k] != 0`` means input k acts on state i (state i is a *driver node*);
  ``C[r, i] != 0`` means output r reads state i.
* Structural analyses look only at the pattern and answer for almost all weights;
  numeric analyses say which weights they used.
* Whether states have self-dynamics (self-loops) is an explicit model choice
  (:mod:`netctl.models`), recorded on every system and in every report.

Results concern a linear(ized) model, not the plant: they do not replace the operator's
procedures, applicable codes or the judgement of licensed engineers.
"""

from netctl.ensemble import (
    NullComparison,
    cavity_driver_fraction,
    compare_to_null,
    configuration_model,
    degree_preserving_swaps,
    run_tasks,
)
from netctl.errors import (
    InvalidSystemError,
    MissingFileError,
    NetctlError,
    NetworkFileError,
    OptionError,
    UnknownNameError,
)
from netctl.numeric import (
    EnergyReport,
    ExactControllability,
    ModalReport,
    RankTest,
    Verification,
    energy,
    exact_controllability,
    modal_controllability,
    realize,
    verify,
)
from netctl.structural import (
    ControllabilityReport,
    InputDesign,
    NetworkSummary,
    controllability,
    is_structurally_controllable,
    is_structurally_observable,
    minimum_inputs,
    minimum_sensors,
    observability,
    summarize,
)
from netctl.structural.interconnect import interconnection
from netctl.structural.placement import (
    Placement,
    place_inputs,
    place_sensors,
    place_target_inputs,
)
from netctl.structural.robustness import contingency_sweep, what_if
from netctl.structural.roles import LinkRoles, NodeRoles, link_roles, node_roles
from netctl.structural.strong import (
    StrongInputDesign,
    StrongReport,
    is_strongly_controllable,
    minimum_strong_inputs,
    strong_controllability,
)
from netctl.system import Station, StructuredSystem, make_stations

__version__ = "0.1.0"

__all__ = [
    "ControllabilityReport",
    "EnergyReport",
    "ExactControllability",
    "InputDesign",
    "InvalidSystemError",
    "LinkRoles",
    "MissingFileError",
    "ModalReport",
    "NetctlError",
    "NetworkFileError",
    "NetworkSummary",
    "NodeRoles",
    "NullComparison",
    "OptionError",
    "Placement",
    "RankTest",
    "Station",
    "StrongInputDesign",
    "StrongReport",
    "StructuredSystem",
    "UnknownNameError",
    "Verification",
    "__version__",
    "cavity_driver_fraction",
    "compare_to_null",
    "configuration_model",
    "contingency_sweep",
    "controllability",
    "degree_preserving_swaps",
    "energy",
    "exact_controllability",
    "interconnection",
    "is_strongly_controllable",
    "is_structurally_controllable",
    "is_structurally_observable",
    "link_roles",
    "make_stations",
    "minimum_inputs",
    "minimum_sensors",
    "minimum_strong_inputs",
    "modal_controllability",
    "node_roles",
    "observability",
    "place_inputs",
    "place_sensors",
    "place_target_inputs",
    "realize",
    "run_tasks",
    "strong_controllability",
    "summarize",
    "verify",
    "what_if",
]
