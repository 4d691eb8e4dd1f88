"""The command line with disturbances: reported apart, never driven or sensed, bad input
refused with one line and exit 2 (issue 23, items 1, 5 and 8)."""

from __future__ import annotations

import json
from pathlib import Path

import networkx as nx
import pytest

from netctl.cli import main

ROOT = Path(__file__).resolve().parents[1]
HEATING = str(ROOT / "networks" / "heating_loop.csv")
PLANT = str(ROOT / "networks" / "chemical_plant.toml")


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("verb", ["drivers", "sensors", "inspect", "place", "roles"])
def test_every_verb_reports_disturbances_and_never_places_on_one(capsys, verb):
    code, out, _ = run(capsys, verb, PLANT, "--json")
    data = json.loads(out)
    assert sorted(data["disturbances"]["disturbances"]) == [
        "cooling_water_temp", "feed_composition", "steam_header_pressure"]
    assert data["disturbances"]["regulated"] == {"product_purity": ["column_bottom_comp"]}
    text = json.dumps({k: v for k, v in data.items() if k != "disturbances"})
    for w in data["disturbances"]["disturbances"]:
        assert w not in text  # no driver, sensor, site or role is a disturbance
    code, out, _ = run(capsys, verb, PLANT)
    assert out.splitlines()[1].startswith("  disturbances (3; not states")


def test_heating_minimum_inputs_are_for_states_only(capsys):
    # Outside reference: networkx maximum matching on the state-only graph of the file
    # (links out of the marked disturbances removed); N_D = max(n - |M|, 1), Liu, Slotine &
    # Barabasi (2011), Nature 473, 167-173.
    lines = [ln for ln in Path(HEATING).read_text().splitlines()
             if ln and not ln.startswith("#") and ln != "source,target"]
    dist = {"outdoor_temp", "solar_collector"}
    g = nx.DiGraph([tuple(ln.split(",")) for ln in lines if ln.split(",")[0] not in dist])
    bip = nx.Graph()
    top = [("o", v) for v in g]
    bip.add_nodes_from(top)
    bip.add_nodes_from(("i", v) for v in g)
    bip.add_edges_from((("o", u), ("i", v)) for u, v in g.edges())
    matched = len(nx.bipartite.hopcroft_karp_matching(bip, top_nodes=top)) // 2
    code, out, _ = run(capsys, "drivers", HEATING, "--json")
    data = json.loads(out)
    assert data["n_states"] == g.number_of_nodes() == 12
    assert data["n_inputs"] == max(g.number_of_nodes() - matched, 1)


@pytest.mark.parametrize("option", ["--inputs", "--outputs"])
def test_disturbance_named_in_a_design_is_exit_2_and_nothing_written(capsys, tmp_path, option):
    out_file = tmp_path / "result.json"
    code, out, err = run(capsys, "check", HEATING, option, "fuel_valve,outdoor_temp",
                         "--out", str(out_file))
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1
    assert f"{option}: 'outdoor_temp' is a disturbance, not a state" in err
    assert "'substation_park'" in err  # points to the states it acts on
    assert not out_file.exists()


def test_disturbance_with_incoming_link_is_exit_2_naming_it(capsys, tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("# disturbances: rain\nsource,target\nrain,soil\nsoil,river\nriver,rain\n")
    out_file = tmp_path / "result.json"
    code, out, err = run(capsys, "drivers", str(bad), "--out", str(out_file))
    assert code == 2 and out == "" and not out_file.exists()
    assert len(err.strip().splitlines()) == 1
    assert f"{bad}:1: 'rain' is marked as a disturbance but has 1 incoming link" in err


@pytest.mark.parametrize("stations, message", [
    ('a = { inputs = ["coolant_valve", "quench_valve"] }', "names the input 'quench_valve'"),
    ('a = { outputs = ["no_such_gauge"] }', "names the output 'no_such_gauge'"),
    ('a = { inputs = ["coolant_valve"] }\nb = { inputs = ["steam_valve", "coolant_valve"] }',
     "stations 'a' and 'b' overlap: both hold the input 'coolant_valve'"),
])
def test_bad_stations_file_is_one_line_naming_the_item(tmp_path, stations, message):
    from netctl.errors import NetworkFileError
    from netctl.io import read
    from netctl.io.stations import read_stations

    plant = read(PLANT)
    p = tmp_path / "stations.toml"
    p.write_text("[stations]\n" + stations + "\n")
    with pytest.raises(NetworkFileError, match=message) as exc:
        read_stations(p, plant)
    assert "\n" not in str(exc.value) and str(exc.value).startswith(f"{p}:")
