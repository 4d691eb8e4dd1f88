"""Progress of long runs on stderr: ``batch`` (one tick a file), ``curve`` (one a
generated network), ``compare`` (one a null sample) and ``node-control --centrality``
(a hundredth of the states), only when stderr is a terminal and never with ``--quiet``.

The contract is the project's own (DESIGN.md, "Command line"; no published source).
"""

from __future__ import annotations

import io

import pytest

from netctl.cli import main


class Tty(io.StringIO):
    def isatty(self) -> bool:
        return True


@pytest.fixture
def net(tmp_path):
    d = tmp_path / "nets"
    d.mkdir()
    (d / "a.csv").write_text("a,b\nb,c\n")
    (d / "b.csv").write_text("x,y\ny,x\nx,z\n")
    return d


def _stderr(monkeypatch, argv, stream):
    monkeypatch.setattr("sys.stderr", stream)
    code = main(argv)
    return code, stream.getvalue()


RUNS = [
    pytest.param(lambda d, t: ["batch", str(d), "--task", "drivers", "--out",
                               str(t / "o.csv"), "--executor", "serial"],
                 "netctl: batch drivers, files 2/2", id="batch"),
    pytest.param(lambda d, t: ["curve", "--family", "erdos-renyi", "--nodes", "40",
                               "--samples", "2", "--mean-degrees", "1,2"],
                 "netctl: [1/1] erdos-renyi, networks 4/4", id="curve"),
    pytest.param(lambda d, t: ["compare", str(d / "b.csv"), "--samples", "3",
                               "--executor", "serial", "--seed", "1"],
                 "netctl: null-model samples 3/3", id="compare"),
    pytest.param(lambda d, t: ["node-control", str(d / "b.csv"), "--centrality",
                               "--sweeps", "5"],
                 "netctl: control centrality, states 3/3", id="node-control"),
]


@pytest.mark.parametrize("make, last", RUNS)
def test_progress_on_a_terminal_and_silence_otherwise(monkeypatch, capsys, net, tmp_path,
                                                       make, last):
    argv = make(net, tmp_path)
    code, err = _stderr(monkeypatch, argv, Tty())
    assert code in (0, 1)
    assert err.split("\r")[-1].rstrip("\n") == last
    _, err = _stderr(monkeypatch, [*argv, "--quiet"], Tty())
    assert err == ""
    _, err = _stderr(monkeypatch, argv, io.StringIO())  # a pipe or a file: no progress
    assert err == ""


def test_check_shows_the_dimension_phases_on_a_terminal(monkeypatch, tmp_path):
    """``check`` on a large failing design: one line a stage (reach and matching, then
    the controllable dimension, ending at all the unmatched states placed), only on a
    terminal and never with ``--quiet``; the links-per-second estimate is lowered so
    that a small network counts as large."""
    monkeypatch.setattr("netctl.commands._options.LINKS_PER_SECOND", 1.0)
    f = tmp_path / "net.csv"
    # a star out of a plus a chain: one input on a leaves b, c, d dilated
    f.write_text("a,b\na,c\na,d\nd,e\ne,f\n")
    argv = ["check", str(f), "--inputs", "a"]
    code, err = _stderr(monkeypatch, argv, Tty())
    assert code == 1
    lines = [line.split("\r")[-1] for line in err.split("\n") if line]
    assert lines[0] == "netctl: controllability: reach and matching 1/1"
    assert lines[-1].startswith("netctl: controllability: controllable dimension "
                                "(--no-dimension skips it) ")
    done, total = lines[-1].rsplit(" ", 1)[1].split("/")
    assert done == total and int(total) > 0
    _, err = _stderr(monkeypatch, [*argv, "--quiet"], Tty())
    assert err == ""
    _, err = _stderr(monkeypatch, argv, io.StringIO())
    assert err == ""
