"""Facts about netctl itself that every layer may quote: the version and the caution.

Lowest layer (beside :mod:`netctl.errors`): imports nothing, so that reports, the
command line and the package root can all use these without importing each other.
"""

from __future__ import annotations

__all__ = ["CAUTION", "GRID_CAUTION", "__version__"]

__version__ = "0.1.0"

#: The caution every verdict and report carries (results concern a model, not the plant).
CAUTION = ("Caution: results concern a linear(ized) structural model, not the plant itself; "
           "a structurally controllable design can still need impractically large inputs. "
           "Safety-relevant decisions follow the operator's procedures, applicable codes and "
           "licensed engineers.")

#: The caution of every grid result (text, JSON, report): what a planner may take from it.
GRID_CAUTION = ("results concern a linearized model of the grid, not operating decisions, "
                "which stay with the system operator's procedures and applicable codes")
