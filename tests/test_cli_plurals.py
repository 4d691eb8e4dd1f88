"""Text summaries say "1 input", "1 state" (never "1 inputs"), and the numeric verbs name
a random start only when the weights were drawn with one (given weights use none).
Common practice of English text, no source; the --json output is untouched (tests/golden)."""

from __future__ import annotations

import re

import pytest

from netctl.cli import main


def _text(capsys, *argv):
    main([str(a) for a in argv])
    return capsys.readouterr().out


def _no_one_plural(out):
    bad = re.findall(r"\b1 (?:dedicated )?(?:states|inputs|sensors|driver nodes|nodes)\b", out)
    assert not bad, out


def test_check_fix_of_one(tmp_path, capsys):
    p = tmp_path / "two.csv"
    p.write_text("a,b\n")
    out = _text(capsys, "check", p, "--inputs", "b")
    assert "smallest fix: add 1 dedicated input at a" in out
    _no_one_plural(out)
    out = _text(capsys, "check", p, "--inputs", "b", "--terms", "network")
    assert "add 1 dedicated driver node at a" in out
    out = _text(capsys, "check", p, "--outputs", "a")
    assert "add 1 dedicated sensor at b" in out
    (tmp_path / "four.csv").write_text("a,b\nc,d\nd,c\nb,a\n")
    out = _text(capsys, "check", tmp_path / "four.csv", "--inputs", "b")
    assert "smallest fix: add 1 dedicated input at c" in out


def test_one_state_file(tmp_path, capsys):
    p = tmp_path / "one.csv"
    p.write_text("a\n")
    for verb in (["check", p, "--outputs", "a"], ["place", p], ["drivers", p]):
        out = _text(capsys, *verb)
        assert out.startswith(f"{p}: 1 state,"), out
        _no_one_plural(out)


def test_drivers_wiring_of_one_shared_input(tmp_path, capsys):
    # a 2-cycle x <-> y (perfectly matched, no input reaches it) and a link p -> q: one
    # shared input drives p and a state of the cycle (Liu, Slotine & Barabasi 2011)
    p = tmp_path / "cyc.csv"
    p.write_text("x,y\ny,x\np,q\n")
    out = _text(capsys, "drivers", p)
    assert "wiring: 1 input; see --json" in out
    _no_one_plural(out)


@pytest.mark.parametrize("verb", ["modes", "energy"])
def test_given_weights_name_no_random_start(tmp_path, capsys, verb):
    p = tmp_path / "w.csv"
    p.write_text("a,b,2\nb,c,3\nc,a,0.5\n")
    out = _text(capsys, verb, p)
    assert re.search(r"weights: given$", out, re.M), out
    out = _text(capsys, verb, p, "--weights", "independent", "--seed", "4")
    assert "weights: independent (seed 4)" in out
