"""Plant station arrangement on the invented chemical plant (networks/chemical_plant.toml).

Arranges the installed valves and sensors into one control station per plant section
(feed, reaction, separation: the node table's ``subsystem``), and checks for each section
whether its own station alone reaches (controllability) and sees (observability) the
section's states; where it does not, proposes the fewest valves and sensors to add to that
station. Writes the per-state findings of every section as CSV (column ``fix``: add a
valve there).

Run: python3 examples/plant_stations.py [OUTDIR]

The plant is invented; results concern a linear(ized) structural model and do not replace
the operator's procedures, process-safety reviews or licensed engineers.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

import netctl
import netctl.io as nio
from netctl.io.tables import write_table

ROOT = Path(__file__).resolve().parents[1]


def main(outdir: Path) -> int:
    plant = nio.read(ROOT / "networks" / "chemical_plant.toml")
    section = np.asarray(plant.nodes["subsystem"])
    acts = plant.B.tocsc()
    reads = plant.C.tocsr()
    groups = {}
    for name in sorted(set(section.tolist())):
        mine = set(np.flatnonzero(section == name).tolist())
        groups[name] = {
            "inputs": [plant.input_names[k] for k in range(plant.n_inputs)
                       if set(acts.indices[acts.indptr[k]:acts.indptr[k + 1]]) & mine],
            "outputs": [plant.output_names[r] for r in range(plant.n_outputs)
                        if set(reads.indices[reads.indptr[r]:reads.indptr[r + 1]]) & mine]}
    stations = netctl.make_stations(plant, groups)  # refuses overlapping stations
    for st in stations:
        keep = np.flatnonzero(section == st.name)
        local = netctl.StructuredSystem.from_matrices(
            plant.A[keep][:, keep], plant.B[keep][:, list(st.inputs)],
            plant.C[list(st.outputs)][:, keep],
            state_names=[plant.state_names[i] for i in keep], weighted=False)
        c, o = netctl.controllability(local), netctl.observability(local)
        print(f"{st.name}: {len(st.inputs)} valve(s), {len(st.outputs)} sensor(s); "
              f"reaches all: {c.controllable}; sees all: {o.controllable}")
        if not c.controllable:
            print(f"  add valves at: {', '.join(c.names(c.fix))}")
        if not o.controllable:
            print(f"  add sensors at: {', '.join(o.names(o.fix))}")
        write_table(c, outdir / f"station_{st.name}.csv")
    return 0


if __name__ == "__main__":
    sys.exit(main(Path(sys.argv[1]) if len(sys.argv) > 1 else Path(".")))
