"""The combinatorial engine: integer index arrays in, integer index arrays out.

No names and no I/O live here; the structural analyses call these kernels and attach
names at the result boundary.
"""

from netctl.graph.components import (
    condensation_sources,
    reachable_from,
    strongly_connected_components,
)
from netctl.graph.matching import is_valid_matching, maximum_matching
from netctl.graph.transpose import transpose_csr
from netctl.graph.dm import alternating_reach_rows, alternating_reach_cols, dm_coarse

__all__ = [
    "alternating_reach_cols",
    "alternating_reach_rows",
    "condensation_sources",
    "dm_coarse",
    "is_valid_matching",
    "maximum_matching",
    "reachable_from",
    "strongly_connected_components",
    "transpose_csr",
]
