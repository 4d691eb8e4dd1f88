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

from __future__ import annotations

import functools
import importlib
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

from netctl._hooks import RENDERERS as _RENDERERS
from netctl._meta import __version__

if TYPE_CHECKING:  # the eager imports, for type checkers and IDEs
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
        MissingExtraError,
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
        DecouplingReport,
        FixedModesReport,
        InputDesign,
        NetworkSummary,
        TransferRank,
        controllability,
        decoupling,
        fixed_modes,
        is_structurally_controllable,
        is_structurally_observable,
        minimum_inputs,
        minimum_sensors,
        observability,
        summarize,
        transfer_rank,
    )
    from netctl.structural.interconnect import interconnection
    from netctl.structural.placement import (
        Placement,
        place_inputs,
        place_sensors,
        place_target_inputs,
    )
    from netctl.structural.robustness import ElementSweep, contingency_sweep, element_sweep, what_if
    from netctl.structural.roles import LinkRoles, NodeRoles, link_roles, node_roles
    from netctl.structural.strong import (
        StrongInputDesign,
        StrongReport,
        is_strongly_controllable,
        minimum_strong_inputs,
        strong_controllability,
    )
    from netctl.stations import Station, make_stations
    from netctl.system import StructuredSystem

#: public name -> the module that defines it. Submodules are imported on first access
#: (PEP 562), so ``import netctl`` stays fast and loads no SciPy, Numba or Matplotlib.
_LAZY: dict[str, str] = {
    "ControllabilityReport": "netctl.structural",
    "DecouplingReport": "netctl.structural",
    "ElementSweep": "netctl.structural.robustness",
    "EnergyReport": "netctl.numeric",
    "ExactControllability": "netctl.numeric",
    "FixedModesReport": "netctl.structural",
    "InputDesign": "netctl.structural",
    "InvalidSystemError": "netctl.errors",
    "LinkRoles": "netctl.structural.roles",
    "MissingExtraError": "netctl.errors",
    "MissingFileError": "netctl.errors",
    "ModalReport": "netctl.numeric",
    "NetctlError": "netctl.errors",
    "NetworkFileError": "netctl.errors",
    "NetworkSummary": "netctl.structural",
    "NodeRoles": "netctl.structural.roles",
    "NullComparison": "netctl.ensemble",
    "OptionError": "netctl.errors",
    "Placement": "netctl.structural.placement",
    "RankTest": "netctl.numeric",
    "Station": "netctl.stations",
    "StrongInputDesign": "netctl.structural.strong",
    "StrongReport": "netctl.structural.strong",
    "StructuredSystem": "netctl.system",
    "TransferRank": "netctl.structural",
    "UnknownNameError": "netctl.errors",
    "Verification": "netctl.numeric",
    "cavity_driver_fraction": "netctl.ensemble",
    "compare_to_null": "netctl.ensemble",
    "configuration_model": "netctl.ensemble",
    "contingency_sweep": "netctl.structural.robustness",
    "controllability": "netctl.structural",
    "decoupling": "netctl.structural",
    "degree_preserving_swaps": "netctl.ensemble",
    "element_sweep": "netctl.structural.robustness",
    "energy": "netctl.numeric",
    "exact_controllability": "netctl.numeric",
    "fixed_modes": "netctl.structural",
    "interconnection": "netctl.structural.interconnect",
    "is_strongly_controllable": "netctl.structural.strong",
    "is_structurally_controllable": "netctl.structural",
    "is_structurally_observable": "netctl.structural",
    "link_roles": "netctl.structural.roles",
    "make_stations": "netctl.stations",
    "minimum_inputs": "netctl.structural",
    "minimum_sensors": "netctl.structural",
    "minimum_strong_inputs": "netctl.structural.strong",
    "modal_controllability": "netctl.numeric",
    "node_roles": "netctl.structural.roles",
    "observability": "netctl.structural",
    "place_inputs": "netctl.structural.placement",
    "place_sensors": "netctl.structural.placement",
    "place_target_inputs": "netctl.structural.placement",
    "realize": "netctl.numeric",
    "run_tasks": "netctl.ensemble",
    "strong_controllability": "netctl.structural.strong",
    "summarize": "netctl.structural",
    "transfer_rank": "netctl.structural",
    "verify": "netctl.numeric",
    "what_if": "netctl.structural.robustness",
}

__all__ = [
    "ControllabilityReport",
    "DecouplingReport",
    "ElementSweep",
    "EnergyReport",
    "ExactControllability",
    "FixedModesReport",
    "InputDesign",
    "InvalidSystemError",
    "LinkRoles",
    "MissingExtraError",
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
    "TransferRank",
    "UnknownNameError",
    "Verification",
    "__version__",
    "cavity_driver_fraction",
    "compare_to_null",
    "configuration_model",
    "contingency_sweep",
    "controllability",
    "decoupling",
    "degree_preserving_swaps",
    "element_sweep",
    "energy",
    "exact_controllability",
    "fixed_modes",
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
    "transfer_rank",
    "verify",
    "what_if",
]


#: subpackages and modules reachable as attributes (``netctl.structural``) without an
#: explicit import, as when the package root imported them eagerly
_SUBMODULES = frozenset({"cli", "commands", "ensemble", "errors", "generate", "graph", "io",
                         "models", "numeric", "report", "structural", "system", "tables",
                         "viz"})


#: analyses whose results remember the system they were computed on (for the small map
#: of the notebook view, :meth:`netctl.tables.ResultTables.with_system`)
_KEEP_SYSTEM = frozenset({
    "compare_to_null", "contingency_sweep", "controllability", "decoupling", "element_sweep",
    "energy",
    "exact_controllability", "fixed_modes", "link_roles", "minimum_inputs", "minimum_sensors", "minimum_strong_inputs",
    "modal_controllability", "node_roles", "observability", "place_inputs", "place_sensors",
    "place_target_inputs", "strong_controllability", "summarize", "transfer_rank", "verify"})


def _keeping_system(func: Callable[..., Any], name: str) -> Callable[..., Any]:
    """``func`` whose result remembers the system it was given (first argument)."""

    @functools.wraps(func)
    def analysis(*args: Any, **kwargs: Any) -> Any:
        result = func(*args, **kwargs)
        from netctl.system import StructuredSystem
        from netctl.tables import ResultTables, attach_system

        system = args[0] if args else kwargs.get("system")
        if isinstance(system, StructuredSystem) and isinstance(result, ResultTables):
            attach_system(result, system)
        return result

    # found again under this name by pickle (the executor sends functions by name)
    analysis.__module__ = __name__
    analysis.__qualname__ = name
    return analysis


def _result_map(result: Any, system: Any) -> str:
    """The notebook map, drawn by viz (lent to the base layer through ``_hooks``)."""
    from netctl.viz.small_map import result_map_html

    return result_map_html(result, system)


_RENDERERS["result_map"] = _result_map


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        if name in _SUBMODULES:
            return importlib.import_module(f"netctl.{name}")
        raise AttributeError(f"module 'netctl' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    if name in _KEEP_SYSTEM:
        value = _keeping_system(value, name)
    globals()[name] = value  # later look-ups skip this function
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
