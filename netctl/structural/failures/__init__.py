"""Designs that survive failures: audit, failure count and secure placement.

* :func:`audit_design` -- every actuator (sensor) of a design: critical (a single point
  of failure), useful but replaceable, or useless (Commault, Dion & Trinh 2008).
* :func:`audit_links` -- every line (both directions of a coupling, or the links
  between two nodes of a second-order model) whose loss breaks the design.
* :func:`fewest_failures` -- the smallest number of actuators (sensors) whose joint
  loss breaks the design (NP-hard; exact integer programme, else labelled bounds).
* :func:`secure_placement` -- the cheapest dedicated actuators (sensors) that keep the
  system structurally controllable (observable) after any ``k`` of them fail, or after
  any one line fails.

Results concern a linear(ized) structural model; they do not replace the operator's
procedures, applicable codes or licensed engineers.

The names below are imported from their modules on first access (PEP 562): an audit of
a design loads neither the placement programmes nor scipy.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from netctl._lazy import lazy_names

if TYPE_CHECKING:
    from netctl.structural.failures.audit import (
        ELEMENT_CLASSES,
        KINDS,
        DesignAudit,
        audit_design,
    )
    from netctl.structural.failures.links import LineLosses, audit_links, line_elements
    from netctl.structural.failures.secure import (
        AGAINST,
        SECURE_METHODS,
        SecurePlacement,
        secure_placement,
    )
    from netctl.structural.failures.withstand import FailureCount, fewest_failures

#: public name -> the module (under netctl.structural.failures) that defines it
_HOME: dict[str, str] = {
    "ELEMENT_CLASSES": "audit", "KINDS": "audit", "DesignAudit": "audit",
    "audit_design": "audit",
    "LineLosses": "links", "audit_links": "links", "line_elements": "links",
    "AGAINST": "secure", "SECURE_METHODS": "secure", "SecurePlacement": "secure",
    "secure_placement": "secure",
    "FailureCount": "withstand", "fewest_failures": "withstand",
}
__all__ = [
    "AGAINST",
    "DesignAudit",
    "ELEMENT_CLASSES",
    "FailureCount",
    "KINDS",
    "LineLosses",
    "SECURE_METHODS",
    "SecurePlacement",
    "audit_design",
    "audit_links",
    "fewest_failures",
    "line_elements",
    "secure_placement",
]

# A public name, imported from its module on first access (PEP 562).
__getattr__, __dir__ = lazy_names(__name__, _HOME, globals(), __all__)
