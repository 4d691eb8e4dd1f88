"""Disturbances, regulated outputs and stations in every format that can hold them."""

from __future__ import annotations

import networkx as nx
import pytest

import netctl.io as nio
from netctl import StructuredSystem, make_stations
from netctl.errors import NetworkFileError
from netctl.io.stations import read_stations
from netctl.io.system_spec import read_spec, write_system


def _system(weighted: bool) -> StructuredSystem:
    w = [2.0, 1.5, 0.5, 3.0, 1.0] if weighted else None
    s = StructuredSystem.from_named_edges(
        ["sun", "a", "b", "rain", "c"], ["a", "b", "c", "c", "a"], weights=w,
        nodes={"x": [0.0, 1.0, 2.0, 3.0, 4.0]})
    return s.states_to_disturbances(["sun", "rain"]).with_regulated(["c"])


def _named(s: StructuredSystem) -> dict[str, object]:
    def entries(M, rows, cols):
        C = M.tocoo()
        return sorted((rows[i], cols[j], float(v)) for i, j, v in zip(C.row, C.col, C.data))
    x, w, z = s.state_names, s.disturbance_names, s.regulated_names
    return {"states": sorted(x), "A": entries(s.A, x, x), "E": entries(s.E, x, w),
            "H": entries(s.H, z, x)}


@pytest.mark.parametrize("weighted", [False, True], ids=["pattern", "weighted"])
@pytest.mark.parametrize("suffix", [".csv", ".graphml", ".gml", ".json", ".toml"])
def test_round_trip_keeps_disturbances_and_regulated_outputs(tmp_path, suffix, weighted):
    s = _system(weighted)
    path = tmp_path / f"net{suffix}"
    if suffix == ".csv":  # the edge list has no node table, and says so
        with pytest.warns(UserWarning, match="holds no node table; the columns x "):
            nio.write(s, path)
    else:
        nio.write(s, path)
    back = nio.read(path)
    assert back.disturbance_names == s.disturbance_names
    assert back.regulated_names == s.regulated_names
    assert _named(back) == _named(s)  # the edge list may renumber states
    if suffix != ".csv":  # the edge list has no node table
        assert back.disturbance_nodes["x"].tolist() == [0.0, 4.0]


def test_graphml_marks_are_plain_node_attributes_networkx_reads(tmp_path):
    # Outside reference: networkx's own GraphML reader sees the marks as node attributes.
    path = tmp_path / "net.graphml"
    nio.write(_system(False), path)
    g = nx.read_graphml(path)
    assert g.nodes["sun"]["disturbance"] is True and g.nodes["c"]["regulated"] is True
    assert set(g.successors("rain")) == {"c"} and g.in_degree("rain") == 0


def test_toml_sections_and_stations(tmp_path):
    p = tmp_path / "plant.toml"
    p.write_text('''
[states]
tank = {}
pump = { self = true }
weather = { disturbance = true, x = 5.0 }
[couplings]
links = [["pump", "tank"], ["weather", "tank"]]
[inputs]
motor = ["pump"]
[outputs]
level = ["tank"]
[disturbances]
demand = ["tank", "pump"]
[regulated]
quality = ["tank"]
[stations]
local = { inputs = ["motor"], outputs = ["level"] }
''')
    spec = read_spec(p)
    s = spec.system
    assert s.state_names == ("tank", "pump")
    assert s.disturbance_names == ("demand", "weather")
    assert s.disturbed_by("weather") == ["tank"] and s.disturbed_by("demand") == ["tank", "pump"]
    assert s.regulated_names == ("quality",)
    st = spec.station_records()
    assert st == make_stations(s, {"local": {"inputs": ["motor"], "outputs": ["level"]}})
    assert read_stations(p, s) == st
    out = tmp_path / "again.toml"
    write_system(s, out, stations=st)
    again = read_spec(out)
    assert again.system.same_as(s.with_disturbances(s.E, names=s.disturbance_names,
                                                    nodes=s.disturbance_nodes))
    assert again.station_records() == st


BAD = [
    pytest.param('[states]\na = {}\nw = { disturbance = true }\n[couplings]\n'
                 'links = [["a", "w"]]\n', 3, "'w' is marked as a disturbance but has 1 "
                 "incoming link", id="incoming-link"),
    pytest.param('[states]\nw = { disturbance = true, self = true }\na = {}\n[couplings]\n'
                 'links = [["w", "a"]]\n', 2, "a self-loop", id="self-loop"),
    pytest.param('[states]\nw = { disturbance = true }\na = {}\n[couplings]\n'
                 'links = [["w", "a"]]\n[inputs]\nu = ["w"]\n', 2, "an input acts on it",
                 id="input-on-disturbance"),
    pytest.param('[couplings]\nlinks = [["a", "b"]]\n[inputs]\nu = ["a"]\n[outputs]\ny = ["b"]\n'
                 '[stations]\none = { inputs = ["u", "v"] }\n', 8,
                 "station 'one' names the input 'v', which is not an input", id="unknown-input"),
    pytest.param('[couplings]\nlinks = [["a", "b"]]\n[inputs]\nu = ["a"]\n[outputs]\ny = ["b"]\n'
                 '[stations]\none = { outputs = ["yy"] }\n', 8,
                 "station 'one' names the output 'yy'", id="unknown-output"),
    pytest.param('[couplings]\nlinks = [["a", "b"]]\n[inputs]\nu = ["a"]\n[outputs]\ny = ["b"]\n'
                 '[stations]\none = { inputs = ["u"] }\ntwo = { inputs = ["u"], outputs = ["y"] }\n',
                 9, "stations 'one' and 'two' overlap: both hold the input 'u'", id="overlap"),
    pytest.param('[states]\nw = { disturbance = "yes" }\n', 2,
                 "attribute 'disturbance' of 'w' must be true or false", id="not-bool"),
]


@pytest.mark.parametrize("text, line, message", BAD)
def test_bad_toml_names_file_line_and_item(tmp_path, text, line, message):
    p = tmp_path / "bad.toml"
    p.write_text(text)
    with pytest.raises(NetworkFileError, match=message) as exc:
        read_spec(p)
    assert str(exc.value).startswith(f"{p}:{line}:")


def test_edge_list_marker_errors_name_the_line(tmp_path):
    p = tmp_path / "net.csv"
    p.write_text("# invented\n# disturbances: a, ghost\na,b\n")
    with pytest.raises(NetworkFileError, match=r":2: the '# disturbances:' line names 'ghost'"):
        nio.read(p)
    p.write_text("# disturbances: a\n# disturbances: b\na,b\nb,c\n")
    with pytest.raises(NetworkFileError, match=r":2: 'b' is marked as a disturbance"):
        nio.read(p)


def test_graph_file_disturbance_with_incoming_link(tmp_path):
    g = nx.DiGraph()
    g.add_node("w", disturbance=True)
    g.add_edge("a", "w")
    p = tmp_path / "g.graphml"
    nx.write_graphml(g, p)
    with pytest.raises(NetworkFileError, match="'w' is marked as a disturbance but has 1"):
        nio.read(p)
