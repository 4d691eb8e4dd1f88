"""From a plain network to the state-space pattern its physics implies.

* ``first-order``: one state per node; couplings along the links. Self-loops in the
  file are kept as self-dynamics of those states only.
* ``self-loops``: the same, with self-dynamics (damping, decay) on every state.

Self-dynamics change the answer drastically (with a self-loop on every state, one input
is generically enough for a strongly connected network), so the choice is explicit and
recorded in :attr:`StructuredSystem.model`.
"""

from __future__ import annotations

from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["MODELS", "apply_model"]

MODELS: dict[str, str] = {
    "first-order": "one state per node, couplings along the links, self-loops only where given",
    "self-loops": "one state per node, couplings along the links, self-dynamics on every state",
}


def apply_model(network: StructuredSystem, model: str) -> StructuredSystem:
    """The state-space pattern of ``network`` under ``model`` (one of :data:`MODELS`)."""
    if model not in MODELS:
        raise OptionError(f"unknown model {model!r}; choose one of {', '.join(MODELS)}.")
    if model == "self-loops":
        return network.with_self_loops()._replace(model=model)
    return network._replace(model=model)
