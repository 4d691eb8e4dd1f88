"""Draw the map of an invented greenhouse climate network and write a report.

The network is made up for this example: air temperature and humidity in three growing
zones, the heating loop, roof vents, a misting line and a thermal screen. Edge u -> v
means "the state of u influences the state of v".

    python3 examples/greenhouse_map.py [OUTDIR]

writes OUTDIR/greenhouse_map.png and OUTDIR/greenhouse_report.html.
"""

from __future__ import annotations

import sys
from pathlib import Path

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402

from netctl import StructuredSystem, controllability  # noqa: E402
from netctl.report import build_report, write_report  # noqa: E402
from netctl.viz import draw_map, map_marks, save_figure  # noqa: E402

LINKS = [
    ("boiler", "heating_loop"), ("heating_loop", "air_temp_east"),
    ("heating_loop", "air_temp_centre"), ("heating_loop", "air_temp_west"),
    ("roof_vent", "air_temp_east"), ("roof_vent", "humidity_east"),
    ("air_temp_east", "humidity_east"), ("air_temp_centre", "humidity_centre"),
    ("air_temp_west", "humidity_west"), ("misting_line", "humidity_centre"),
    ("misting_line", "humidity_west"), ("thermal_screen", "air_temp_centre"),
    ("thermal_screen", "air_temp_west"), ("humidity_centre", "leaf_wetness"),
    ("humidity_west", "leaf_wetness"), ("air_temp_east", "air_temp_centre"),
    ("air_temp_centre", "air_temp_east"), ("air_temp_centre", "air_temp_west"),
    ("air_temp_west", "air_temp_centre"),
]
# a rough floor plan, metres (x east, y north)
PLAN = {
    "boiler": (0, 0), "heating_loop": (4, 0), "air_temp_east": (18, 6),
    "air_temp_centre": (11, 6), "air_temp_west": (4, 6), "humidity_east": (18, 12),
    "humidity_centre": (11, 12), "humidity_west": (4, 12), "roof_vent": (22, 9),
    "misting_line": (7, 16), "thermal_screen": (7, 2), "leaf_wetness": (8, 19),
}


def main(outdir: Path) -> None:
    outdir.mkdir(parents=True, exist_ok=True)
    sources, targets = zip(*LINKS)
    names = list(PLAN)
    system = StructuredSystem.from_named_edges(
        sources, targets, states=names,
        nodes={"x": [float(PLAN[s][0]) for s in names],
               "y": [float(PLAN[s][1]) for s in names]}, model="first-order")
    proposal = ["boiler", "misting_line"]  # the actuators the team has today
    verdict = controllability(system.with_inputs(proposal))
    print("proposal structurally controllable:", verdict.controllable)
    for reason in verdict.reasons():
        print("  -", reason)

    marks = map_marks(system, inputs=proposal)
    ax = draw_map(system, marks)  # states at their floor-plan coordinates
    save_figure(ax.figure, outdir / "greenhouse_map.png")
    plt.close(ax.figure)

    report = build_report(system, inputs=proposal, source="greenhouse (example network)")
    write_report(report, outdir / "greenhouse_report.html")
    print("wrote", outdir / "greenhouse_map.png", "and", outdir / "greenhouse_report.html")


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else Path("."))
