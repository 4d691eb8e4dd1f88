"""Late-bound helpers that a higher layer lends to a lower one.

The result mixin (:mod:`netctl.tables`, base layer) shows a small map in notebooks, but
maps are drawn by :mod:`netctl.viz`, a much higher layer that the base must not import.
The package root (the api layer, which may import viz) puts the renderer into
:data:`RENDERERS` when ``netctl`` is imported; the mixin calls whatever is there and
shows no map when nothing is. Imports nothing, so this costs ``import netctl`` nothing.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

__all__ = ["RENDERERS"]

#: ``"result_map"`` -> ``f(result, system) -> str``: an HTML fragment (an inline SVG map
#: of ``system`` with the roles ``result`` found, or a note); absent while unset.
RENDERERS: dict[str, Callable[[Any, Any], str]] = {}
