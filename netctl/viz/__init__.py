"""Network maps and charts (matplotlib, imported lazily).

:func:`draw_map` draws a network with its driver nodes, control paths and trouble
spots; :func:`map_marks` computes what a map marks without drawing;
:func:`node_positions` places the states. The charts in :mod:`netctl.viz.charts` draw
plain arrays, so they do not depend on the analyses that produce them. The visual
language (shapes, fills, colours) is defined once in :mod:`netctl.viz.style`.
"""

from netctl.viz.charts import (
    plot_attack_curves,
    plot_null_model,
    plot_role_composition,
    plot_weakest_modes,
)
from netctl.viz.layout import LAYOUTS, node_positions
from netctl.viz.marks import LAYERS, MapMarks, map_marks, roles_available
from netctl.viz.network import GID_PREFIX, draw_map
from netctl.viz.output import FIGURE_FORMATS, save_figure

__all__ = [
    "FIGURE_FORMATS",
    "GID_PREFIX",
    "LAYERS",
    "LAYOUTS",
    "MapMarks",
    "draw_map",
    "map_marks",
    "node_positions",
    "plot_attack_curves",
    "plot_null_model",
    "plot_role_composition",
    "plot_weakest_modes",
    "roles_available",
    "save_figure",
]
