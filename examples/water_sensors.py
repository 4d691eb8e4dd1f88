"""Water network sensors on EPANET's Net3 example, as shipped inside WNTR.

Reads Net3.inp with WNTR (optional extra: pip install "netctl[water]"), turns it into a
system (junctions and tanks are states; reservoirs and demands disturbances), places the
fewest pressure sensors that make the network structurally observable, and writes the
per-junction table as CSV.

Run: python3 examples/water_sensors.py [OUTDIR]

Results concern a linear(ized) structural model of the network and do not replace the
utility's procedures, applicable codes or licensed engineers.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import netctl
from netctl._extras import require
from netctl.errors import MissingExtraError
from netctl.io.tables import write_table
from netctl.io.water import from_wntr


def main(outdir: Path) -> int:
    try:
        wntr = require("wntr", "examples/water_sensors.py")
    except MissingExtraError as exc:
        print(exc, file=sys.stderr)
        return 2
    inp = os.path.join(os.path.dirname(wntr.__file__), "library", "networks", "Net3.inp")
    water = from_wntr(wntr.network.WaterNetworkModel(inp))
    design = netctl.place_sensors(water)
    print(f"{water.n_states} junctions and tanks, {water.n_disturbances} disturbances")
    print(f"{len(design.sites)} sensors make it observable: {design.goal_met}")
    print("sensors at:", ", ".join(design.site_names))
    write_table(design, outdir / "water_sensors.csv")
    return 0 if design.goal_met else 1


if __name__ == "__main__":
    sys.exit(main(Path(sys.argv[1]) if len(sys.argv) > 1 else Path(".")))
