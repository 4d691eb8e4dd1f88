"""The bundled networks: they read, they have the sizes and features their README states,
the analyses run on them, and the README says they are invented."""

from __future__ import annotations

from pathlib import Path

import networkx as nx
import numpy as np
import pytest

import netctl
from netctl.io import read
from netctl.io.system_spec import read_spec
from netctl.models import apply_model

NET = Path(__file__).resolve().parents[2] / "networks"


def test_readme_says_invented():
    text = (NET / "README.md").read_text()
    assert "**invented**" in text
    for f in NET.iterdir():
        if f.suffix in (".csv", ".toml", ".graphml"):
            assert f.name in text, f.name


def test_regional_grid():
    spec = read_spec(NET / "regional_grid.toml")
    g = spec.system
    assert 100 <= g.n_states <= 300
    assert np.all(np.isfinite(g.nodes["x"])) and np.all(np.isfinite(g.nodes["y"]))
    assert 10 <= int(g.nodes["actuator"].sum()) < g.n_states
    assert (g.A != g.A.T).nnz == 0  # lines act both ways
    assert nx.is_strongly_connected(g.to_networkx())
    assert len(spec.subsystems) == 5 and spec.ties and not spec.unassigned
    so = apply_model(g, "second-order")
    assert netctl.minimum_inputs(so).n_inputs >= 1


def test_chemical_plant_has_recycles_costs_and_ties():
    spec = read_spec(NET / "chemical_plant.toml")
    g = spec.system
    G = g.to_networkx()
    # gas recycle and liquid recycle: each recycle stream lies on a cycle of the plant
    for recycle in ("gas_recycle_flow", "recycle_flow"):
        back = [v for v in G.successors(recycle) if v != recycle]
        assert any(nx.has_path(G, v, recycle) for v in back), recycle
    assert G.has_edge("gas_recycle_flow", "mixer_comp") and G.has_edge("recycle_flow",
                                                                       "mixer_comp")
    assert np.nansum(g.nodes["actuator_cost"]) > 0 and np.all(g.nodes["sensor_cost"] > 0)
    assert ("separation", "top_analyser", "feed", "feed_valve", "signal") in spec.ties
    assert "feed_valve" not in g.input_names  # consumed by the signal tie
    # the installed design is controllable; without the reflux valve (the valve
    # `netctl place` proposes first) it is not, and says why
    assert netctl.controllability(g).controllable
    keep = [k for k, u in enumerate(g.input_names) if u != "reflux_valve"]
    less = g.with_inputs(g.B.tocsc()[:, keep], names=[g.input_names[k] for k in keep])
    report = netctl.controllability(less)
    assert not report.controllable and report.reasons()


def test_water_network():
    w = read(NET / "water_network.graphml")
    assert 400 <= w.n_states <= 600
    kinds = set(w.nodes["kind"].tolist())
    assert {"junction", "reservoir", "pump", "tank", "valve"} <= kinds
    act = w.nodes["actuator"]
    assert set(w.nodes["kind"][act].tolist()) == {"pump", "valve"}
    assert netctl.minimum_inputs(w).n_inputs >= 1


@pytest.mark.parametrize("name", ["regional_grid.toml", "water_network.graphml"])
def test_build_script_reproduces_the_files(name):
    import importlib.util

    spec = importlib.util.spec_from_file_location("build_networks", NET / "build_networks.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    text = mod.regional_grid() if name.endswith(".toml") else mod.water_network()
    assert text == (NET / name).read_text()
