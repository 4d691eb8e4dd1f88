"""The vocabulary of the text summaries: ``--terms network|engineering`` or the system
description's ``[system] terms``; one shared helper (netctl/commands/_options.py).

The network words (driver nodes, N_D, n_D = N_D / N) are those of Liu, Slotine &
Barabási, Nature 473:167-173 (2011); the choice of cautions is the project's own
contract (DESIGN.md, "Cautions"; no published source). JSON never changes with the words.
"""

from __future__ import annotations

import json

import pytest

from netctl.cli import main
from netctl.commands._options import CAUTION, RESEARCH_CAUTION

EDGES = "a,b\nb,c\nb,d\nc,a\n"  # 4 nodes, 4 links, one cycle a -> b -> c -> a
VERBS = [
    pytest.param(["drivers"], False, id="drivers"),
    pytest.param(["inspect"], False, id="inspect"),
    pytest.param(["check", "--inputs", "a"], True, id="check"),
    pytest.param(["roles"], True, id="roles"),
    pytest.param(["compare", "--samples", "3", "--seed", "1", "--executor", "serial"],
                 False, id="compare"),
    pytest.param(["node-control", "--sweeps", "20", "--centrality"], False,
                 id="node-control"),
]


@pytest.fixture
def net(tmp_path):
    p = tmp_path / "net.csv"
    p.write_text(EDGES)
    return str(p)


def _run(capsys, argv):
    code = main(argv)
    return code, capsys.readouterr().out


@pytest.mark.parametrize("verb, had_caution", VERBS)
def test_network_terms_words_and_research_note(capsys, net, verb, had_caution):
    code, eng = _run(capsys, [verb[0], net, *verb[1:]])
    code2, nw = _run(capsys, [verb[0], net, *verb[1:], "--terms", "network"])
    assert code == code2
    assert f"{net}: 4 states" in eng and f"{net}: 4 nodes" in nw
    assert " states" not in nw.split("\n")[0]
    assert RESEARCH_CAUTION in nw and CAUTION not in nw
    assert (CAUTION in eng) == had_caution and RESEARCH_CAUTION not in eng
    if verb[0] in ("drivers", "inspect", "roles", "compare"):
        assert "driver nodes N_D" in nw and "minimum inputs" in eng


@pytest.mark.parametrize("verb, had_caution", VERBS)
def test_json_does_not_depend_on_the_terms(capsys, net, verb, had_caution):
    _, eng = _run(capsys, [verb[0], net, *verb[1:], "--json"])
    _, nw = _run(capsys, [verb[0], net, *verb[1:], "--json", "--terms", "network"])
    assert json.loads(eng) == json.loads(nw)


def test_curve_takes_the_terms(capsys):
    argv = ["curve", "--family", "erdos-renyi", "--nodes", "50", "--samples", "1",
            "--mean-degrees", "2", "--quiet"]
    _, eng = _run(capsys, argv)
    _, nw = _run(capsys, [*argv, "--terms", "network"])
    assert RESEARCH_CAUTION in nw and RESEARCH_CAUTION not in eng


def _spec(tmp_path, system_lines, inputs=""):
    p = tmp_path / "s.toml"
    p.write_text("[system]\n" + system_lines + "\n[couplings]\nlinks = [[\"a\", \"b\"], "
                 "[\"b\", \"c\"]]\n" + inputs)
    return str(p)


def test_the_file_chooses_network_terms(capsys, tmp_path):
    path = _spec(tmp_path, 'name = "study"\nterms = "network"')
    _, out = _run(capsys, ["drivers", path])
    assert f"{path}: 3 nodes" in out and "driver nodes N_D" in out
    assert RESEARCH_CAUTION in out
    _, out = _run(capsys, ["drivers", path, "--terms", "engineering"])
    assert f"{path}: 3 states" in out and "minimum inputs" in out


def test_a_plant_keeps_the_engineering_caution_in_network_words(capsys, tmp_path):
    path = _spec(tmp_path, 'name = "pumps"', inputs='[inputs]\nu1 = ["a"]\n')
    code, out = _run(capsys, ["check", path, "--terms", "network"])
    assert code == 0 and f"{path}: 3 nodes" in out
    assert CAUTION in out and RESEARCH_CAUTION not in out


def test_an_unknown_terms_key_value_is_refused_with_its_line(capsys, tmp_path):
    path = _spec(tmp_path, 'name = "x"\nterms = "biology"')
    assert main(["drivers", path]) == 2
    err = capsys.readouterr().err
    assert f"{path}:3" in err and "'biology'" in err and "'network'" in err
