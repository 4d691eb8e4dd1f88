"""``netctl place`` on a file with an installed design says that design is kept (and
costs nothing) or, for target placement, not used: "sites (0)" alone read as "nothing
placed" with no reason.

The installed inputs are read back with tomllib, the wiring with networkx, and the kept
design plus the placed sites is checked by the Kalman rank on random weights (numpy):
for independent random nonzeros, full rank for almost all weights exactly when the
pattern is structurally controllable (Lin 1974; from memory).
"""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import networkx as nx
import numpy as np
import pytest

from netctl.cli import main

NETS = Path(__file__).resolve().parents[1] / "networks"
TOML = NETS / "heating_loop.toml"


def _spec():
    spec = tomllib.loads(TOML.read_text())
    lines = [ln for ln in (NETS / "heating_loop.csv").read_text().splitlines()
             if ln and not ln.startswith("#") and ln != "source,target"]
    G = nx.DiGraph([tuple(ln.split(",")[:2]) for ln in lines])
    G.remove_nodes_from(["outdoor_temp", "solar_collector"])  # disturbances, not states
    return spec, G


def _kalman_rank(G, driven_sets, seed=0):
    names = sorted(G)
    pos = {s: i for i, s in enumerate(names)}
    n = len(names)
    rng = np.random.default_rng(seed)
    A = np.zeros((n, n))
    for u, v in G.edges():  # u influences v: A[v, u] != 0
        A[pos[v], pos[u]] = rng.uniform(0.5, 2.0)
    B = np.zeros((n, len(driven_sets)))
    for k, states in enumerate(driven_sets):
        for s in states:
            B[pos[s], k] = rng.uniform(0.5, 2.0)
    K = np.hstack([np.linalg.matrix_power(A, j) @ B for j in range(n)])
    return int(np.linalg.matrix_rank(K)), n


@pytest.mark.parametrize("sensors", [False, True])
def test_installed_design_is_named_as_kept(sensors, capsys):
    spec, G = _spec()
    table = spec["outputs" if sensors else "inputs"]
    args = ["place", str(TOML)] + (["--sensors"] if sensors else [])
    code = main(args + ["--json"])
    d = json.loads(capsys.readouterr().out)
    assert d["kept"] == list(table)
    # the kept design with the placed sites is complete (controllable / observable)
    H = G.reverse() if sensors else G
    rank, n = _kalman_rank(H, list(table.values()) + [[s] for s in d["sites"]])
    assert (rank == n) is d["goal_met"] and code == (0 if rank == n else 1)
    main(args)
    text = capsys.readouterr().out
    assert f"the file's {len(table)} installed {'sensor' if sensors else 'input'}(s)" in text
    assert "kept at no cost" in text


def test_target_placement_says_installed_inputs_are_not_used(capsys):
    spec, G = _spec()
    main(["place", str(TOML), "--targets", "substation_park,substation_mill", "--json"])
    d = json.loads(capsys.readouterr().out)
    assert d["not_used"] == list(spec["inputs"]) and "kept" not in d
    # the placed sites alone reach both targets (they are built from no inputs)
    reach = set().union(*(nx.descendants(G, s) | {s} for s in d["sites"]))
    assert {"substation_park", "substation_mill"} <= reach
