"""The TOML system description: content, subsystems and ties, errors, round trips.

Expected matrices are written out by hand from the file text (dense numpy), independent
of the reader's code path.
"""

from __future__ import annotations

import numpy as np
import pytest

from netctl.cli import main
from netctl.errors import MissingFileError, NetworkFileError
from netctl.io import read, write
from netctl.io.system_spec import read_spec, write_system

PLANT = """
[system]
name = "two-tank test rig"
description = "invented for the tests"

[states]
pump = { x = 0.0, y = 0.0, actuator = true, actuator_cost = 3.5, self = true }
tank1 = { x = 1.0, y = 0.5, sensor = true, sensor_cost = 1.0, material = "steel" }
tank2 = { x = 2.0, y = 0.5, actuator = false, volume = 12 }
drain = {}

[couplings]
links = [["pump", "tank1"], ["tank1", "tank2"]]
file = "extra.csv"

[inputs]
motor = ["pump"]
inflow = ["tank2"]

[outputs]
level1 = "tank1"
level2 = ["tank2"]

[subsystems]
supply = ["pump", "tank1"]
storage = { states = ["tank2", "drain"] }

[[ties]]
from = ["supply", "level1"]
to = ["storage", "inflow"]
kind = "signal"
"""


def make(tmp_path, text=PLANT, extra="tank2,drain\n"):
    (tmp_path / "extra.csv").write_text(extra)
    p = tmp_path / "plant.toml"
    p.write_text(text)
    return p


def test_full_description(tmp_path):
    with pytest.warns(UserWarning, match="1 duplicate link was merged"):
        spec = read_spec(make(tmp_path))
    s = spec.system
    assert spec.name == "two-tank test rig"
    assert s.state_names == ("pump", "tank1", "tank2", "drain")
    # links: pump->tank1, tank1->tank2, tank2->drain (file), pump self-loop, and the signal
    # tie level1 (reads tank1) => inflow (acts on tank2): tank1 -> tank2, already a link
    want = np.zeros((4, 4))
    for u, v in [(0, 1), (1, 2), (2, 3), (0, 0), (1, 2)]:
        want[v, u] = 1
    assert np.array_equal(s.A.toarray(), want)
    # the input fed by the signal tie is no longer external
    assert s.input_names == ("motor",)
    assert s.B.toarray().tolist() == [[1], [0], [0], [0]]
    assert s.output_names == ("level1", "level2")
    assert s.C.toarray().tolist() == [[0, 1, 0, 0], [0, 0, 1, 0]]
    assert s.nodes["x"][:3].tolist() == [0.0, 1.0, 2.0] and np.isnan(s.nodes["x"][3])
    assert s.nodes["actuator"].tolist() == [True, True, False, True]
    assert s.nodes["material"].tolist() == [None, "steel", None, None]
    assert s.nodes["volume"].tolist() == [None, None, 12, None]
    assert s.nodes["subsystem"].tolist() == ["supply", "supply", "storage", "storage"]
    assert spec.subsystems == {"supply": ("pump", "tank1"), "storage": ("tank2", "drain")}
    assert spec.inputs["inflow"] == ("tank2",)
    assert spec.ties == (("supply", "level1", "storage", "inflow", "signal"),
                         ("supply", "tank1", "storage", "tank2", "state"))


def test_subsystem_systems_compose_back_to_the_flat_system(tmp_path):
    from netctl.structural.interconnect import compose

    with pytest.warns(UserWarning, match="duplicate"):
        spec = read_spec(make(tmp_path))
    parts = spec.subsystem_systems()
    assert parts["supply"].state_names == ("pump", "tank1")
    assert parts["storage"].input_names == ("inflow",)
    comp = compose(parts, spec.ties)
    flat = spec.system
    names = [n.split(".", 1)[1] for n in comp.system.state_names]
    order = flat.index_of(names)
    assert np.array_equal(comp.system.A.toarray() != 0,
                          flat.A.toarray()[np.ix_(order, order)] != 0)


def test_read_dispatches_on_toml_suffix(tmp_path):
    with pytest.warns(UserWarning, match="duplicate"):
        s = read(make(tmp_path))
    assert s.n_states == 4 and s.n_inputs == 1


def test_weights_and_undirected(tmp_path):
    p = tmp_path / "w.toml"
    p.write_text('[couplings]\nundirected = true\nlinks = [["a", "b", 2.5], ["b", "c", -1]]\n'
                 '[states]\nc = { self = -0.5 }\n')
    s = read_spec(p).system
    assert s.weighted
    i = s.index_of(["a", "b", "c"])
    A = s.A.toarray()[np.ix_(i, i)]
    assert A.tolist() == [[0, 2.5, 0], [2.5, 0, -1], [0, -1, -0.5]]


def test_missing_weight_among_weighted_links_warns(tmp_path):
    p = tmp_path / "w.toml"
    p.write_text('[couplings]\nlinks = [["a", "b", 2.5], ["b", "c"]]\n')
    with pytest.warns(UserWarning, match=r"1 coupling\(s\) without a weight were given the "
                      r"weight 1\.0"):
        s = read_spec(p).system
    assert sorted(s.A.data.tolist()) == [1.0, 2.5]


@pytest.mark.parametrize("weighted", [False, True])
def test_round_trip(tmp_path, weighted):
    text = PLANT.replace('links = [["pump", "tank1"]', 'links = [["pump", "tank1", 0.25]'
                         if weighted else 'links = [["pump", "tank1"]')
    with pytest.warns(UserWarning):
        a = read_spec(make(tmp_path, text)).system
    out = tmp_path / "copy.toml"
    write(a, out)
    b = read(out)
    assert b.state_names == a.state_names and b.weighted == a.weighted
    assert np.array_equal(b.A.toarray(), a.A.toarray())
    assert np.array_equal(b.B.toarray(), a.B.toarray()) and b.input_names == a.input_names
    assert np.array_equal(b.C.toarray(), a.C.toarray()) and b.output_names == a.output_names
    for k, col in a.nodes.items():
        assert k in b.nodes
        x, y = col.tolist(), b.nodes[k].tolist()
        assert [v for v in x if v == v] == [v for v in y if v == v], k


def test_large_couplings_go_to_a_side_file(tmp_path, monkeypatch):
    import netctl.io.system_writer as mod

    monkeypatch.setattr(mod, "INLINE_LINKS", 2)
    p = tmp_path / "big.toml"
    p.write_text('[couplings]\nlinks = [["a", "b"], ["b", "c"], ["c", "a"], ["c", "d"]]\n')
    s = read(p)
    write_system(s, tmp_path / "copy.toml")
    assert (tmp_path / "copy.edges.csv").exists()
    assert 'file = "copy.edges.csv"' in (tmp_path / "copy.toml").read_text()
    t = read(tmp_path / "copy.toml")
    assert np.array_equal(t.A.toarray(), s.A.toarray())


# ---------------------------------------------------------------- bad input
BAD = [
    pytest.param('[states]\na = { x = 1.0\n', r"bad\.toml:2: not valid TOML, column \d+: .*"
                 r"Check quotes, brackets", id="toml-syntax"),
    pytest.param('[state]\na = {}\n', r"bad\.toml:1: unknown key 'state' in the top level; "
                 r"expected one of system, states, .* Did you mean 'states'\?",
                 id="unknown-section"),
    pytest.param('[couplings]\nlinkz = []\n', r"bad\.toml:2: unknown key 'linkz' in "
                 r"\[couplings\]; .*Did you mean 'links'\?", id="unknown-key"),
    pytest.param('[states]\na = { x = [1, 2] }\n', r"bad\.toml:2: attribute 'x' of state 'a' "
                 r"must be a number \(map coordinate\), found \[1, 2\]", id="x-not-number"),
    pytest.param('[states]\na = { colour = [1, 2] }\n', r"bad\.toml:2: attribute 'colour' of "
                 r"state 'a' has the type list .*numbers, strings or true/false",
                 id="unknown-attribute-type"),
    pytest.param('[states]\na = { when = 1979-05-27 }\n', r"attribute 'when' of state 'a' has "
                 r"the type date", id="date-attribute"),
    pytest.param('[states]\na = { actuator = "yes" }\n', r"attribute 'actuator' of state 'a' "
                 r"must be true or false, found 'yes'", id="actuator-not-bool"),
    pytest.param('[states]\na = { actuator_cost = -1 }\n', r"must be a number >= 0, found -1",
                 id="negative-cost"),
    pytest.param('[states]\na = 3\n', r"bad\.toml:2: state 'a' must be a table of attributes",
                 id="state-not-table"),
    pytest.param('[states]\npump = {}\n[inputs]\nm = ["pumpp"]\n', r"bad\.toml:4: input 'm' "
                 r"names 'pumpp', which is not a state\. Did you mean 'pump'\?",
                 id="unknown-input-state"),
    pytest.param('[couplings]\nlinks = [["a"]]\n', r"each coupling must be \[\"source\", "
                 r"\"target\"\]", id="short-link"),
    pytest.param('[subsystems]\np = ["a"]\nq = ["a", "b"]\n', r"state 'a' is in two "
                 r"subsystems \('p' and 'q'\)", id="two-subsystems"),
    pytest.param('[subsystems]\np = ["a", "b"]\n[[ties]]\nfrom = ["p", "a"]\nto = ["p", "b"]\n',
                 r"the tie p\.a -> p\.b stays inside subsystem 'p'", id="tie-inside"),
    pytest.param('[subsystems]\np = ["a"]\nq = ["b"]\n[[ties]]\nfrom = ["p", "a"]\n'
                 'to = ["r", "b"]\n', r"a tie names the subsystem 'r', which is not declared",
                 id="tie-unknown-subsystem"),
    pytest.param('[subsystems]\np = ["a"]\nq = ["b"]\n[[ties]]\nfrom = ["p", "a"]\n'
                 'to = ["q", "b"]\nkind = "signal"\n', r"a signal tie starts at p\.a: 'a' must "
                 r"be an output under \[outputs\]", id="signal-tie-not-output"),
    pytest.param('[subsystems]\np = ["a"]\nq = ["b"]\n[[ties]]\nfrom = ["p", "a"]\n'
                 'to = ["q", "b"]\nkind = "wire"\n', r"a tie's kind must be one of state, "
                 r"signal, found 'wire'", id="tie-kind"),
    pytest.param('[system]\nname = "x"\n', r"bad\.toml: the description declares no states",
                 id="no-states"),
]


@pytest.mark.parametrize("text, message", BAD)
def test_bad_descriptions(tmp_path, text, message):
    p = tmp_path / "bad.toml"
    p.write_text(text)
    with pytest.raises(NetworkFileError, match=message):
        read_spec(p)


def test_missing_coupling_file(tmp_path):
    p = tmp_path / "m.toml"
    p.write_text('[couplings]\nfile = "nowhere.csv"\n')
    with pytest.raises(MissingFileError, match=r"m\.toml:2: the coupling file 'nowhere\.csv' "
                       r"\(looked for at .*nowhere\.csv\) does not exist; paths are relative"):
        read_spec(p)


def test_error_in_coupling_file_names_that_file(tmp_path):
    p = make(tmp_path, extra="tank2 drain\ntank2 drain 3 4\n")
    with pytest.raises(NetworkFileError, match=r"extra\.csv:2: expected 'source target "
                       r"\[weight\]', found 4 columns"):
        read_spec(p)


def test_cli_reads_toml_and_rejects_bad_toml(tmp_path, capsys):
    good = tmp_path / "g.toml"
    good.write_text('[couplings]\nlinks = [["a", "b"], ["b", "c"]]\n')
    assert main(["inspect", str(good)]) == 0
    assert "3 states, 2 links" in capsys.readouterr().out
    bad = tmp_path / "b.toml"
    bad.write_text('[couplings]\nlinks = [["a", "b"]\n')
    assert main(["inspect", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "b.toml:3: not valid TOML: Unclosed array" in err
