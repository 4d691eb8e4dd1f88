"""Writing an edge list (``netctl convert ... OUT.csv``) names what the format cannot
hold — the inputs, the outputs and the node table — instead of dropping them silently.

What the source files carry is read back independently: the node table of the bundled
water network with ``networkx.read_graphml``, the installed design of the heating loop
with ``tomllib``.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import networkx as nx

from netctl.cli import main

NETS = Path(__file__).resolve().parents[2] / "networks"


def test_water_network_node_table_named_when_lost(tmp_path, capsys):
    src = NETS / "water_network.graphml"
    G = nx.read_graphml(src)
    columns = sorted({k for _, d in G.nodes(data=True) for k in d})
    assert main(["convert", str(src), str(tmp_path / "w.csv")]) == 0
    err = capsys.readouterr().err
    assert "holds no node table" in err
    assert f"the columns {', '.join(columns)} were not written" in err


def test_installed_design_named_when_lost(tmp_path, capsys):
    src = NETS / "heating_loop.toml"
    spec = tomllib.loads(src.read_text())
    assert main(["convert", str(src), str(tmp_path / "h.csv")]) == 0
    err = capsys.readouterr().err
    assert (f"the {len(spec['inputs'])} input(s) and {len(spec['outputs'])} output(s) "
            "were not written") in err


def test_plain_edge_list_round_trip_warns_nothing(tmp_path, capsys):
    p = tmp_path / "a.csv"
    p.write_text("a,b\nb,c\nlonely\n")
    assert main(["convert", str(p), str(tmp_path / "b.csv")]) == 0
    assert "warning" not in capsys.readouterr().err
