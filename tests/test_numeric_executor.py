"""Numeric samples on the shared executor, with progress (issue 22, item 4; issue 15).

``verify`` runs its samples through a runner the command line passes in (the numeric
layer does not import the executor); the results must be those of the samples run one
after another in the caller: same seeds, same rank tests. The reference for the verdict
itself is the structural dimension (checked elsewhere against published values).
"""

from __future__ import annotations

import io
import json
import sys

import pytest

from netctl.ensemble.executor import run_tasks
from netctl.numeric.verify import verify
from netctl.system import StructuredSystem


def _system():
    # a directed ring with chords, driven at one state (structurally controllable)
    n = 12
    src = [i for i in range(n)] + [0, 3, 6]
    dst = [(i + 1) % n for i in range(n)] + [5, 9, 2]
    return StructuredSystem.from_edges(src, dst, n).with_inputs([0])


@pytest.mark.parametrize("executor", ["serial", "local"])
def test_verify_samples_on_the_executor_equal_the_serial_run(executor):
    system = _system()
    seen = []

    def runner(task, items, shared):
        return run_tasks(task, items, shared=shared, executor=executor, workers=2,
                         progress=lambda done, total: seen.append((done, total)))

    a = verify(system, weights="independent", samples=4, seed=7)
    b = verify(system, weights="independent", samples=4, seed=7, runner=runner)
    assert json.dumps(a.to_dict(), default=str) == json.dumps(b.to_dict(), default=str)
    assert seen == [(1, 4), (2, 4), (3, 4), (4, 4)]


def test_run_tasks_reports_progress_in_order():
    seen = []
    out = run_tasks(_square, [1, 2, 3], seed=1, executor="serial",
                    progress=lambda d, t: seen.append((d, t)))
    assert out == [1, 4, 9] and seen == [(1, 3), (2, 3), (3, 3)]


def _square(item, seed, shared):
    return item * item


class _Terminal(io.StringIO):
    def isatty(self):
        return True


@pytest.mark.parametrize("quiet", [False, True])
def test_verify_progress_on_a_terminal_unless_quiet(tmp_path, monkeypatch, quiet):
    from netctl.cli import main

    f = tmp_path / "ring.txt"
    f.write_text("".join(f"s{i} s{(i + 1) % 12}\n" for i in range(12)))
    err = _Terminal()
    monkeypatch.setattr(sys, "stderr", err)
    monkeypatch.setattr(sys, "stdout", io.StringIO())
    argv = ["verify", str(f), "--inputs", "s0", "--samples", "3", "--executor", "serial"]
    assert main(argv + (["--quiet"] if quiet else [])) == 0
    text = err.getvalue()
    assert ("samples" in text and "3/3" in text) != quiet, text


@pytest.mark.parametrize("quiet", [False, True])
def test_long_steps_show_progress_on_a_terminal_unless_quiet(tmp_path, monkeypatch, quiet):
    """A step expected to pass 2 s is announced (here: the expected speeds lowered so a
    small file counts as long); never with --quiet, never off a terminal."""
    from netctl.cli import main
    from netctl.commands import _options

    f = tmp_path / "ring.txt"
    f.write_text("".join(f"s{i} s{(i + 1) % 12}\n" for i in range(12)))
    monkeypatch.setattr(_options, "READ_BYTES_PER_SECOND", 1.0)
    monkeypatch.setattr(_options, "LINKS_PER_SECOND", 1.0)
    for stderr in (_Terminal(), io.StringIO()):
        monkeypatch.setattr(sys, "stderr", stderr)
        monkeypatch.setattr(sys, "stdout", io.StringIO())
        assert main(["drivers", str(f)] + (["--quiet"] if quiet else [])) == 0
        text = stderr.getvalue()
        shown = isinstance(stderr, _Terminal) and not quiet
        assert ("reading" in text and "minimum inputs ... done" in text) == shown, text
