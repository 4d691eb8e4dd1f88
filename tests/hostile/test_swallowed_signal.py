"""A signal must end the run as interrupted even when a library catches the
KeyboardInterrupt it raises and raises something else instead.

Seen in the wild: a SIGTERM arriving while numba compiled a kernel during a read left
numba's "RuntimeError: no compiled object yet"; the reader's catch-all turned it into
"unexpected error in FILE" and the run ended with exit 2 (a bad file) instead of 143.
The exit statuses are the shell's convention for a process ended by a signal, 128 + N
(POSIX sh, "Exit Status"; SIGINT 2 -> 130, SIGTERM 15 -> 143).
"""

from __future__ import annotations

import os
import signal

import pytest

import netctl.io as nio
from netctl.cli import main


def _swallowing_reader(sig):
    def read(path, model=None):
        try:
            os.kill(os.getpid(), sig)  # delivered here, in the main thread
        except KeyboardInterrupt as exc:  # what a library's cleanup may do
            raise RuntimeError("no compiled object yet") from exc
        raise AssertionError("the signal was not delivered")
    return read


@pytest.mark.parametrize("sig, code", [(signal.SIGTERM, 143), (signal.SIGINT, 130)])
def test_interruption_turned_into_a_read_error_is_still_an_interruption(
        tmp_path, monkeypatch, capsys, sig, code):
    (tmp_path / "g.csv").write_text("a,b\nb,c\n")
    entry = nio.FORMATS["edgelist"]
    monkeypatch.setitem(nio.FORMATS, "edgelist", (_swallowing_reader(sig), *entry[1:]))
    monkeypatch.chdir(tmp_path)
    assert main(["convert", "g.csv", "out.json"]) == code
    err = capsys.readouterr().err
    assert "error" not in err and ("terminated" in err or "interrupted" in err)
    assert sorted(os.listdir(tmp_path)) == ["g.csv"]


@pytest.mark.parametrize("sig, code", [(signal.SIGTERM, 143), (signal.SIGINT, 130)])
def test_interruption_turned_into_another_error_is_still_an_interruption(
        tmp_path, monkeypatch, capsys, sig, code):
    import netctl.commands.drivers as drivers

    (tmp_path / "g.csv").write_text("a,b\nb,c\n")

    def load(*args, **kwargs):
        return _swallowing_reader(sig)(None)

    monkeypatch.setattr(drivers, "load_system", load)
    monkeypatch.chdir(tmp_path)
    assert main(["drivers", "g.csv"]) == code
    assert "Traceback" not in capsys.readouterr().err


def test_handlers_are_put_back(tmp_path, monkeypatch):
    (tmp_path / "g.csv").write_text("a,b\n")
    monkeypatch.chdir(tmp_path)
    before = signal.getsignal(signal.SIGINT), signal.getsignal(signal.SIGTERM)
    assert main(["drivers", "g.csv"]) == 0
    assert (signal.getsignal(signal.SIGINT), signal.getsignal(signal.SIGTERM)) == before
