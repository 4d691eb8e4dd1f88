"""Grid actuator placement on the invented regional grid (networks/regional_grid.toml).

Places the cheapest set of actuators (only at buses the file marks as candidate sites,
with their costs) that makes the bus network structurally controllable, and writes the
per-bus table (is each bus a chosen site?) as CSV to join onto an asset register.

Run: python3 examples/grid_actuators.py [OUTDIR]

The grid is invented; results concern a linear(ized) structural model and do not replace
the operator's procedures, applicable codes or licensed engineers.
"""

from __future__ import annotations

import sys
from pathlib import Path

import netctl
import netctl.io as nio
from netctl.io.tables import write_table

ROOT = Path(__file__).resolve().parents[1]


def main(outdir: Path) -> int:
    grid = nio.read(ROOT / "networks" / "regional_grid.toml")
    design = netctl.place_inputs(grid)  # candidate sites and costs from the node table
    print(f"{grid.n_states} buses; {int(grid.nodes['actuator'].sum())} candidate sites")
    print(f"goal met: {design.goal_met}; {len(design.sites)} actuators, cost {design.cost:g}")
    print("sites:", ", ".join(design.site_names))
    write_table(design, outdir / "grid_actuators.csv")
    return 0 if design.goal_met else 1


if __name__ == "__main__":
    sys.exit(main(Path(sys.argv[1]) if len(sys.argv) > 1 else Path(".")))
