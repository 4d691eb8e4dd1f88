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



def _ends_cleanly(probe: str, tmp_path, sig, code) -> None:
    """Run ``probe`` (a script that reads g.csv through netctl's command line and sends
    ``sig`` from a place that swallows exceptions): the run must end as interrupted with
    ``code``, print no traceback, and leave no output file."""
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    (tmp_path / "g.csv").write_text("a,b\nb,c\n")
    r = subprocess.run([sys.executable, "-c", probe.format(root=str(root), sig=int(sig))],
                       cwd=tmp_path, capture_output=True, text=True, timeout=120)
    assert r.returncode == code, r.stderr
    assert "Traceback" not in r.stderr and "Exception ignored" not in r.stderr, r.stderr
    assert ("terminated" if sig == signal.SIGTERM else "interrupted") in r.stderr
    assert sorted(os.listdir(tmp_path)) == ["g.csv"]


# A signal that lands while compiled code has called back into Python: numba's first compile
# of a kernel hands the object code to a Python callback of llvmlite's (to write its cache).
# An exception raised there cannot unwind the compiled caller; Python prints it with a
# traceback ("Exception ignored in ...") and the run goes on. Seen once in CI (SIGTERM 0.5 s
# into a `convert` with a cold numba cache). The handler must wait until the callback has
# returned. The probe builds a real C -> Python callback with ctypes whose code is filed
# under llvmlite's name for it, as numba's is, and sends the signal from inside it.
_CALLBACK_PROBE = r"""
import ctypes, os, signal, sys, time
sys.path.insert(0, {root!r})
import llvmlite
import netctl.cli as cli
import netctl.io as nio

where = os.path.join(os.path.dirname(llvmlite.__file__), "binding", "executionengine.py")
space = {{}}
exec(compile("def _raw_object_cache_notify(data):\n    import os, time\n    os.kill(os.getpid(), {sig})\n"
             "    time.sleep(0.2)\n", where, "exec"), space)
store = ctypes.CFUNCTYPE(None, ctypes.c_int)(space["_raw_object_cache_notify"])
entry = nio.FORMATS["edgelist"]

def read(path, model=None):
    store(1)           # the signal arrives in here
    time.sleep(2.0)    # back in netctl's own code: it must end the run now
    return entry[0](path, model)

nio.FORMATS["edgelist"] = (read, *entry[1:])
sys.exit(cli.main(["convert", "g.csv", "out.json"]))
"""


@pytest.mark.parametrize("sig, code", [(signal.SIGTERM, 143), (signal.SIGINT, 130)])
def test_signal_inside_a_compiled_callback_ends_the_run_without_a_traceback(
        tmp_path, sig, code):
    _ends_cleanly(_CALLBACK_PROBE, tmp_path, sig, code)


def test_a_signal_deferred_then_outrun_leaves_no_alarm_behind(tmp_path, monkeypatch):
    """A deferral whose run ends before the retry cancels the retry and puts SIGALRM back."""
    import netctl.cli as cli

    (tmp_path / "g.csv").write_text("a,b\n")
    monkeypatch.chdir(tmp_path)
    before = signal.getsignal(signal.SIGALRM)
    real = cli._main

    def run(argv):
        code = real(argv)
        cli._alarm_before.append(signal.signal(signal.SIGALRM, cli._on_deferred))
        cli._deferred.append(signal.SIGTERM)
        signal.setitimer(signal.ITIMER_REAL, 30.0)
        return code

    monkeypatch.setattr(cli, "_main", run)
    assert cli.main(["drivers", "g.csv"]) == 0
    assert signal.getitimer(signal.ITIMER_REAL) == (0.0, 0.0)
    assert signal.getsignal(signal.SIGALRM) == before and not cli._deferred


def test_a_signal_elsewhere_in_llvmlite_is_raised_at_once():
    """Only llvmlite's callbacks from compiled code defer the signal: one that lands while
    llvmlite is being imported or is called from Python must interrupt there and then (a
    deferred one could fire later inside C code that prints and swallows it)."""
    import llvmlite

    import netctl.cli as cli

    space: dict = {}
    where = os.path.join(os.path.dirname(llvmlite.__file__), "binding", "ffi.py")
    exec(compile("import sys\nframe = sys._getframe()\n", where, "exec"), space)
    before = signal.getsignal(signal.SIGALRM)
    with pytest.raises(KeyboardInterrupt):
        cli._on_sigint(signal.SIGINT, space["frame"])
    assert not cli._deferred and signal.getsignal(signal.SIGALRM) == before
    cli._received.clear()


# The same inside a destructor: llvmlite's handles free their LLVM objects in __del__ (seen
# once: SIGTERM 18 s into a cold `convert`, "Exception ignored in: ObjectRef.__del__").
_DESTRUCTOR_PROBE = r"""
import os, signal, sys, time
sys.path.insert(0, {root!r})
import netctl.cli as cli
import netctl.io as nio

class Handle:
    def __del__(self):
        os.kill(os.getpid(), {sig})
        time.sleep(0.2)

entry = nio.FORMATS["edgelist"]

def read(path, model=None):
    Handle()           # freed at once: the signal arrives in its destructor
    time.sleep(2.0)    # back in netctl's own code: it must end the run now
    return entry[0](path, model)

nio.FORMATS["edgelist"] = (read, *entry[1:])
sys.exit(cli.main(["convert", "g.csv", "out.json"]))
"""


@pytest.mark.parametrize("sig, code", [(signal.SIGTERM, 143), (signal.SIGINT, 130)])
def test_signal_inside_a_destructor_ends_the_run_without_a_traceback(tmp_path, sig, code):
    _ends_cleanly(_DESTRUCTOR_PROBE, tmp_path, sig, code)


# And inside a weak-reference callback of the import system: importlib frees a module's
# lock through one (seen in CI: Ctrl-C 0.2 s into `convert`, during the imports). The probe
# files its callback under importlib's frozen name, as the real one is.
_WEAKREF_PROBE = r"""
import os, signal, sys, time, weakref
sys.path.insert(0, {root!r})
import netctl.cli as cli
import netctl.io as nio

space = {{}}
exec(compile("def cb(ref):\n    import os, time\n    os.kill(os.getpid(), {sig})\n"
             "    time.sleep(0.2)\n", "<frozen importlib._bootstrap>", "exec"), space)

class Lock:
    pass

entry = nio.FORMATS["edgelist"]

def read(path, model=None):
    lock = Lock()
    ref = weakref.ref(lock, space["cb"])
    del lock           # the callback runs now: the signal arrives in it
    time.sleep(2.0)    # back in netctl's own code: it must end the run now
    return entry[0](path, model)

nio.FORMATS["edgelist"] = (read, *entry[1:])
sys.exit(cli.main(["convert", "g.csv", "out.json"]))
"""


@pytest.mark.parametrize("sig, code", [(signal.SIGTERM, 143), (signal.SIGINT, 130)])
def test_signal_inside_an_import_callback_ends_the_run_without_a_traceback(
        tmp_path, sig, code):
    _ends_cleanly(_WEAKREF_PROBE, tmp_path, sig, code)
