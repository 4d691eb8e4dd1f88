"""Command lines whose ``--json`` output is pinned by ``test_golden.py``.

The outputs were stored *before* a restructuring of the package so that the move can be
shown to change no behaviour. When a later change alters an output on purpose, rerun
``python3 tests/golden/regen.py`` and say in the commit message which outputs changed and
why.
"""

from __future__ import annotations

__all__ = ["CASES", "VOLATILE_KEYS", "HEAT_INPUTS"]

H = "networks/heating_loop.csv"
P = "networks/chemical_plant.toml"
G = "networks/regional_grid.toml"
W = "networks/water_network.graphml"

# id -> argv (without the program name); every case is run with --json.
CASES: dict[str, list[str]] = {}
for tag, path in (("heating", H), ("plant", P), ("grid", G), ("water", W)):
    CASES[f"inspect-{tag}"] = ["inspect", path]
    CASES[f"drivers-{tag}"] = ["drivers", path]
    CASES[f"drivers-dedicated-{tag}"] = ["drivers", path, "--dedicated"]
    CASES[f"sensors-{tag}"] = ["sensors", path, "--dedicated"]
    CASES[f"roles-{tag}"] = ["roles", path]
    CASES[f"place-{tag}"] = ["place", path]
    CASES[f"place-sensors-{tag}"] = ["place", path, "--sensors"]
    CASES[f"strong-{tag}"] = ["strong", path]
CASES["drivers-grid-second-order"] = ["drivers", G, "--model", "second-order"]
CASES["drivers-heating-self-loops"] = ["drivers", H, "--model", "self-loops"]
CASES["check-heating"] = ["check", H, "--inputs", "fuel_valve,substation_park"]
CASES["check-heating-outputs"] = ["check", H, "--outputs", "return_header,storage_tank"]
CASES["check-plant"] = ["check", P]
# outdoor_temp and solar_collector are disturbances since issue 23: never inputs
HEAT_INPUTS = "fuel_valve,bypass_valve,pipe_south,substation_school,substation_houses"
CASES["sweep-heating"] = ["sweep", H, "--inputs", HEAT_INPUTS]
CASES["sweep-plant"] = ["sweep", P, "--elements", "both"]
CASES["whatif-heating"] = ["whatif", H, "--inputs", HEAT_INPUTS,
                           "--remove-links", "storage_tank->supply_header",
                           "--add-links", "pipe_north->pipe_south"]
CASES["strong-heating-inputs"] = ["strong", H, "--inputs", HEAT_INPUTS]
CASES["place-heating-targets"] = ["place", H, "--targets", "substation_park,substation_mill"]
CASES["place-plant-budget"] = ["place", P, "--budget", "6"]
CASES["verify-heating"] = ["verify", H, "--inputs", HEAT_INPUTS, "--samples", "3"]
CASES["verify-plant"] = ["verify", P, "--samples", "3"]
CASES["energy-plant"] = ["energy", P, "--weights", "independent"]
CASES["modes-plant"] = ["modes", P, "--weights", "independent"]
CASES["compare-heating"] = ["compare", H, "--samples", "20", "--seed", "3",
                            "--executor", "serial"]
CASES["compare-water"] = ["compare", W, "--samples", "10", "--seed", "1",
                          "--executor", "serial"]

# keys whose values are timings or machine-specific and so are not compared
VOLATILE_KEYS = frozenset({"seconds", "elapsed", "elapsed_seconds", "time", "runtime",
                           "wall_time", "duration"})
