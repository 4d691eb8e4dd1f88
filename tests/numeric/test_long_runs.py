"""Long numeric runs: progress on stderr and the shared executor (issue 22, item 4).

* ``verify`` samples and the per-candidate Gramians of ``energy --select`` run on the
  executor the structural batches use (``--executor``, ``--workers``, ``--scheduler``);
  the answer must not depend on it: the same JSON with one worker, two workers, the
  serial executor and Dask, and the same again for the same ``--seed``.
* ``energy`` and ``modes`` tell a terminal what they are doing when a step is long
  (eigen-decomposition, cluster ranks, PBH certification, Gramians, greedy rounds), and
  say nothing off a terminal or with ``--quiet``.

The contract is the project's own (DESIGN.md, "Command line"; no published source). The
reference for the numbers is the run without the executor; the numbers themselves are
checked against scipy, sympy and mpmath in the other files of this folder.
"""

from __future__ import annotations

import io
import json
import re
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

import netctl.ensemble.executor as executor_module
from netctl.cli import main
from netctl.ensemble.executor import run_tasks
from netctl.numeric.selection import select_actuators
from netctl.system import StructuredSystem


class Tty(io.StringIO):
    def isatty(self) -> bool:
        return True


def _weighted_ring(n: int = 14, seed: int = 3) -> StructuredSystem:
    """A damped directed ring with chords and random weights (Hurwitz: every diagonal
    entry dominates its row), a scenario of our own."""
    rng = np.random.default_rng(seed)
    A = np.zeros((n, n))
    for i in range(n):
        A[(i + 1) % n, i] = rng.uniform(0.5, 1.5)
    for u, v in ((0, 5), (3, 9), (7, 2), (11, 4)):
        A[v % n, u % n] = rng.uniform(0.5, 1.5)
    A -= np.diag(rng.uniform(3.0, 4.0, n))
    return StructuredSystem.from_matrices(A, np.zeros((n, 0)))


@pytest.fixture
def weighted_file(tmp_path: Path) -> Path:
    s = _weighted_ring()
    A = s.A.toarray()
    f = tmp_path / "ring.csv"
    rows = ["source,target,weight"]
    for v, u in zip(*np.nonzero(A)):
        rows.append(f"s{u},s{v},{float(A[v, u])!r}")
    f.write_text("\n".join(rows) + "\n")
    return f


@pytest.fixture
def ring_file(tmp_path: Path) -> Path:
    f = tmp_path / "ring.txt"
    f.write_text("".join(f"s{i} s{(i + 1) % 16}\n" for i in range(16)) + "s0 s7\ns4 s12\n")
    return f


@pytest.fixture
def calls(monkeypatch):
    """Record every run on the shared executor (then run it for real)."""
    seen: list[tuple[str, int, int | None]] = []
    real = executor_module.run_tasks

    def spy(func, items, **kw):
        seen.append((kw.get("executor", "local"), len(items), kw.get("workers")))
        return real(func, items, **kw)

    monkeypatch.setattr(executor_module, "run_tasks", spy)
    return seen


def _json(argv: list[str], monkeypatch) -> tuple[int, dict]:
    out = io.StringIO()
    monkeypatch.setattr(sys, "stdout", out)
    monkeypatch.setattr(sys, "stderr", io.StringIO())
    code = main([*argv, "--json"])
    return code, json.loads(out.getvalue())


# ------------------------------------------------------------------ executor, Python API
def test_candidate_gramians_on_one_or_two_workers_equal_the_run_here():
    system = _weighted_ring()
    here = select_actuators(system, budget=4)
    for workers in (1, 2):
        got: list[int] = []

        def runner(task, items, shared, workers=workers):
            got.append(len(items))
            return run_tasks(task, items, shared=shared, executor="local", workers=workers)

        there = select_actuators(system, budget=4, runner=runner)
        assert got == [system.n_states]  # every state is a candidate: one task each
        assert there.to_dict() == here.to_dict(), workers
    assert here.selected.size == 4 and here.structurally_controllable


def test_candidate_gramians_in_order_matter():
    # the check above can fail: a runner that hands back the Gramians of other states
    # (here: in reverse order) changes the choice
    system = _weighted_ring()
    here = select_actuators(system, budget=4)

    def shuffled(task, items, shared):
        return list(reversed(run_tasks(task, items, shared=shared, executor="serial")))

    assert select_actuators(system, budget=4, runner=shuffled).to_dict() != here.to_dict()


def test_candidate_gramians_on_a_dask_cluster():
    distributed = pytest.importorskip(
        "distributed", reason="Dask distributed is not installed (optional extra netctl[dask])")
    system = _weighted_ring()
    here = select_actuators(system, budget=4)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the cluster's own start-up chatter is not ours
        cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                           dashboard_address=None)
        try:
            there = select_actuators(system, budget=4, runner=lambda t, i, s: run_tasks(
                t, i, shared=s, executor="dask", scheduler=cluster.scheduler_address))
        finally:
            cluster.close()
    assert there.to_dict() == here.to_dict()


# ------------------------------------------------------------------ executor, command line
def test_verify_runs_its_samples_on_the_executor_end_to_end(ring_file, monkeypatch, calls):
    from netctl.commands import _options

    monkeypatch.setattr(_options, "EXECUTOR_MIN_STATES", 0)  # a small file counts as large
    base = ["verify", str(ring_file), "--inputs", "s0", "--samples", "4", "--seed", "5"]
    runs = {}
    for extra in (["--executor", "serial"], ["--workers", "1"], ["--workers", "2"]):
        code, runs[" ".join(extra)] = _json(base + extra, monkeypatch)
        assert code == 0
    assert calls == [("serial", 4, None), ("local", 4, 1), ("local", 4, 2)]
    first, *rest = runs.values()
    assert all(r == first for r in rest)
    assert [s["seed"] for s in first["samples"]] == [5, 6, 7, 8]
    # reproducible with --seed, and the seed matters
    assert _json(base + ["--workers", "2"], monkeypatch)[1] == first
    other = _json(base[:-1] + ["6", "--workers", "2"], monkeypatch)[1]
    assert [s["seed"] for s in other["samples"]] == [6, 7, 8, 9]
    assert [s["smallest_kept"] for s in other["samples"]] != \
        [s["smallest_kept"] for s in first["samples"]]


def test_small_verify_stays_in_process_by_default(ring_file, monkeypatch, calls):
    code, _ = _json(["verify", str(ring_file), "--inputs", "s0", "--samples", "3"],
                    monkeypatch)
    assert code == 0 and calls == []  # 16 states: starting workers would cost more


def test_energy_select_runs_its_gramians_on_the_executor(weighted_file, monkeypatch, calls):
    from netctl.commands import energy as energy_cmd

    monkeypatch.setattr(energy_cmd, "SELECT_EXECUTOR_MIN_STATES", 0)
    base = ["energy", str(weighted_file), "--weights", "given", "--select", "4"]
    outs = [_json(base + extra, monkeypatch)
            for extra in (["--workers", "1"], ["--workers", "2"], ["--executor", "serial"])]
    assert [c for c, _ in outs] == [0, 0, 0]
    assert calls == [("local", 14, 1), ("local", 14, 2), ("serial", 14, None)]
    assert outs[0][1] == outs[1][1] == outs[2][1]
    assert outs[0][1]["selection"]["budget"] == 4


# ------------------------------------------------------------------ progress
def _stderr(argv: list[str], monkeypatch, stream) -> str:
    monkeypatch.setattr(sys, "stderr", stream)
    monkeypatch.setattr(sys, "stdout", io.StringIO())
    assert main(argv) in (0, 1)
    return stream.getvalue()


def _finished(text: str) -> list[str]:
    """The last state of every stderr line (progress rewrites a line with \\r)."""
    return [line.split("\r")[-1] for line in text.split("\n") if line]


def _defective_file(tmp_path: Path) -> Path:
    # the matrix: eigenvalue 1 with a Jordan block of size 3 and one of size 1
    # (rank(A - I) = 2 by hand), so the cluster ranks and the PBH loop have work to do
    A = [[1, 0, 0, 0], [0, 1, 1, 0], [0, -1, 1, 1], [0, 0, 1, 1]]
    rows = ["source,target,weight"]
    for v in range(4):
        for u in range(4):
            if A[v][u]:
                rows.append(f"x{u},x{v},{A[v][u]}")
    f = tmp_path / "defective.csv"
    f.write_text("\n".join(rows) + "\n")
    return f


def test_modes_progress_on_a_terminal_unless_quiet(tmp_path, monkeypatch):
    from netctl.commands import _options

    f = _defective_file(tmp_path)
    argv = ["modes", str(f), "--inputs", "x0,x1", "--weights", "given"]
    assert _stderr(argv, monkeypatch, Tty()) == ""  # 4 states: not a long run
    monkeypatch.setattr(_options, "DENSE_FLOPS_PER_SECOND", 1.0)  # now every run is long
    done = _finished(_stderr(argv, monkeypatch, Tty()))
    assert done[0] == "netctl: modes: eigen-decomposition 1/1", done
    # one eigenvalue (1, algebraic multiplicity 4): one cluster, ranked and reached
    assert "netctl: modes: cluster ranks 1/1" in done, done
    assert "netctl: modes: mode reach 1/1" in done, done
    assert done[-1] == "netctl: modes: staircase rank test 1/1", done
    assert _stderr(argv + ["--quiet"], monkeypatch, Tty()) == ""
    assert _stderr(argv, monkeypatch, io.StringIO()) == ""  # a pipe or a file


def test_modes_progress_covers_cluster_ranks_and_pbh(monkeypatch):
    # float arithmetic (irrational weights): the cluster rank decisions and the PBH
    # certification loop report each step
    from netctl.numeric.exact import exact_controllability

    J = np.array([[1.0, 1.0, 0.0], [0.0, 1.0, 1.0], [0.0, 0.0, 1.0]]) * np.sqrt(2.0)
    A = np.block([[J, np.zeros((3, 2))], [np.zeros((2, 3)), np.diag([np.e, np.pi])]])
    seen: list[tuple[str, int, int]] = []
    r = exact_controllability(StructuredSystem.from_matrices(A, np.zeros((5, 0))),
                              arithmetic="float", progress=lambda *a: seen.append(a))
    assert r.n_inputs == 1 and r.arithmetic == "float"
    stages = [s for s, _, _ in seen]
    assert ("cluster ranks", 1, 1) in seen and ("PBH certification", 3, 3) in seen, seen
    assert stages.index("eigenvalues") < stages.index("cluster ranks") < \
        stages.index("PBH certification")


def test_energy_progress_on_a_terminal_unless_quiet(weighted_file, monkeypatch):
    from netctl.commands import _options

    argv = ["energy", str(weighted_file), "--weights", "given", "--select", "3"]
    assert _stderr(argv, monkeypatch, Tty()) == ""  # 14 states: not a long run
    monkeypatch.setattr(_options, "DENSE_FLOPS_PER_SECOND", 1.0)
    done = _finished(_stderr(argv, monkeypatch, Tty()))
    for line in ("netctl: energy: Gramian factor 1/1",
                 "netctl: energy: average controllability 1/1",
                 "netctl: energy: staircase rank test 1/1",
                 "netctl: energy, greedy choice: candidate Gramians 14/14"):
        assert line in done, done
    assert any(re.fullmatch(r"netctl: energy, greedy choice: (exchanges|greedy additions) "
                            r"(\d+)/\2", x) for x in done), done
    assert _stderr(argv + ["--quiet"], monkeypatch, Tty()) == ""
    assert _stderr(argv, monkeypatch, io.StringIO()) == ""


def test_energy_candidate_progress_comes_from_the_executor(weighted_file, monkeypatch):
    from netctl.commands import _options
    from netctl.commands import energy as energy_cmd

    monkeypatch.setattr(energy_cmd, "SELECT_EXECUTOR_MIN_STATES", 0)
    monkeypatch.setattr(_options, "DENSE_FLOPS_PER_SECOND", 1e30)  # nothing else is long
    argv = ["energy", str(weighted_file), "--weights", "given", "--select", "3",
            "--workers", "2"]
    assert _finished(_stderr(argv, monkeypatch, Tty())) == [
        "netctl: energy: candidate Gramians 14/14"]
    assert _stderr(argv + ["--quiet"], monkeypatch, Tty()) == ""


def test_numeric_analyses_never_print():
    # progress goes through callbacks from the command line; the numeric layer writes
    # nothing itself (STYLE.md: no printing in analyses)
    root = Path(__file__).resolve().parents[2] / "netctl" / "numeric"
    for path in sorted(root.glob("*.py")):
        text = path.read_text()
        assert not re.search(r"\bprint\(|sys\.std(err|out)", text), path.name
