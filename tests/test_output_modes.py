"""Every output file gets the same permissions: 0666 less the umask, like a plain open()
(issue 25, item 7: the attack-curve plot of sweep was private, 0600). Common practice
(POSIX open(2) semantics), no source."""

from __future__ import annotations

import os
import stat

import pytest

from netctl.cli import main


@pytest.fixture
def umask022():
    old = os.umask(0o022)
    yield 0o644
    os.umask(old)


def test_sweep_outputs_share_one_mode(tmp_path, umask022, capsys):
    net = tmp_path / "net.csv"
    net.write_text("a,b\nb,c\nc,a\nc,d\n")
    plot, csv, out = tmp_path / "p.png", tmp_path / "s.csv", tmp_path / "o.json"
    assert main(["sweep", str(net), "--attack", "random", "--steps", "2", "--plot",
                 str(plot), "--csv", str(csv), "--out", str(out)]) in (0, 1)
    capsys.readouterr()
    for f in (plot, csv, out):
        assert stat.S_IMODE(f.stat().st_mode) == umask022, f.name


@pytest.mark.parametrize("verb, word", [("map", ".geojson"), ("report", ".md")])
def test_out_help_is_true(verb, word, capsys):
    """map and report write their own formats to --out, not the JSON result."""
    with pytest.raises(SystemExit):
        main([verb, "--help"])
    text = capsys.readouterr().out
    block = text[text.index("  --out"):].split("\n  --", 1)[0]
    assert word in block and "full result as JSON" not in block
