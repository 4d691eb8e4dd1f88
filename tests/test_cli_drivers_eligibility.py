"""``netctl drivers`` / ``sensors`` say when the minimum set they print lands on a state
the node table says cannot host an actuator (sensor), instead of proposing it silently.

The node table is read back independently with networkx (``read_graphml``) and the tank
train is invented; its source state ``inlet_flow`` must be driven in every minimum set
(a source component is reached only by an input on one of its states: Lin 1974).
"""

from __future__ import annotations

import json
from pathlib import Path

import networkx as nx
import pytest

from netctl.cli import main

ROOT = Path(__file__).resolve().parents[1]
WATER = ROOT / "networks" / "water_network.graphml"

TANKS = """
[system]
name = "invented tank train"
[states]
inlet_flow = { actuator = false, sensor = false }
tank1 = { actuator = true }
tank2 = { actuator = true }
tank3 = { actuator = true, sensor = true }
[couplings]
links = [["inlet_flow", "tank1"], ["tank1", "tank2"], ["tank1", "tank3"]]
"""


@pytest.mark.parametrize("verb, column", [("drivers", "actuator"), ("sensors", "sensor")])
def test_water_network_ineligible_sites_named(verb, column, capsys):
    G = nx.read_graphml(WATER)
    assert main([verb, str(WATER), "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    chosen = d["drivers" if verb == "drivers" else "sensors"]
    want = [s for s in chosen if not G.nodes[s][column]]
    assert d["not_eligible"] == want
    main([verb, str(WATER)])
    text = capsys.readouterr().out
    if want:
        assert f"({column} = false) ({len(want)})" in text and "netctl place" in text
        # the analysis already left as few barred states as a maximum matching can
        assert "no maximum matching avoids these" in text
    else:
        assert "not allowed" not in text


def test_source_state_barred_by_node_table_is_flagged(tmp_path, capsys):
    p = tmp_path / "tanks.toml"
    p.write_text(TANKS)
    assert main(["drivers", str(p), "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    # inlet_flow alone is a source component: every minimum set drives it (Lin 1974)
    G = nx.DiGraph([("inlet_flow", "tank1"), ("tank1", "tank2"), ("tank1", "tank3")])
    sources = [n for n in G if G.in_degree(n) == 0]
    assert sources == ["inlet_flow"] and "inlet_flow" in d["drivers"]
    assert d["not_eligible"] == ["inlet_flow"]
    main(["drivers", str(p)])
    assert "not allowed by the node table (actuator = false) (1): inlet_flow" in \
        capsys.readouterr().out


SINK_BARRED = """
[system]
name = "invented tank train, gauge barred on the last tank"
[states]
inlet = { actuator = true }
tank1 = { actuator = true }
tank2 = { actuator = false, sensor = false }
tank3 = { actuator = true }
[couplings]
links = [["inlet", "tank1"], ["tank1", "tank2"], ["tank1", "tank3"]]
"""


def test_check_fix_on_a_barred_sink_is_flagged(tmp_path, capsys):
    p = tmp_path / "tanks.toml"
    p.write_text(SINK_BARRED)
    G = nx.DiGraph([("inlet", "tank1"), ("tank1", "tank2"), ("tank1", "tank3")])
    # tank2 is a sink component: only a sensor on it sees it (Lin 1974, dual)
    assert [n for n in G if G.out_degree(n) == 0] == ["tank2", "tank3"]
    assert main(["check", str(p), "--outputs", "tank3", "--json"]) == 1
    d = json.loads(capsys.readouterr().out)
    assert d["fix"]["states"] == ["tank2"] and d["fix_not_eligible"] == ["tank2"]
    main(["check", str(p), "--outputs", "tank3"])
    out = capsys.readouterr().out
    assert "not allowed by the node table (sensor = false) (1): tank2" in out
    assert "netctl place --sensors" in out
