"""Hosoe's dimension on a second thread (``netctl._background``) while the reasons of a
failing design are found: the same numbers as the sequential path and as SciPy's
minimum-weight full bipartite matching, progress passed on by the caller's thread,
errors raised in the caller, and a signal ends a run that is waiting for it."""

from __future__ import annotations

import importlib
import os
import signal
import subprocess
import sys
import textwrap
import threading
import time

import numpy as np
import pytest
import scipy.sparse as sp

from netctl import StructuredSystem
from netctl._background import Background

ctl = importlib.import_module("netctl.structural.controllability")


def _failing_system(rng: np.random.Generator, n: int) -> StructuredSystem:
    # random directed links and inputs on a few states: most such designs leave states
    # unreached (invented data)
    k = 3 * n
    src, dst = rng.integers(0, n, k), rng.integers(0, n, k)
    A = sp.csr_array((np.ones(k), (dst, src)), shape=(n, n))
    m = int(rng.integers(1, 4))
    B = sp.csr_array((np.ones(m), (rng.integers(0, n, m), np.arange(m))), shape=(n, m))
    return StructuredSystem.from_matrices(A, B)


def test_background_dimension_equals_sequential_and_scipy(monkeypatch):
    # reference: SciPy's LAPJVsp assignment on the same costs (_hosoe_dimension_reference)
    rng = np.random.default_rng(23)
    started = 0
    seen = []
    for trial in range(40):
        s = _failing_system(rng, int(rng.integers(5, 300)))
        monkeypatch.setattr(ctl, "BACKGROUND_LINKS", 10**12)
        plain = ctl.controllability(s)
        monkeypatch.setattr(ctl, "BACKGROUND_LINKS", 0)
        threads = threading.active_count()
        steps = []
        got = ctl.controllability(s, progress=lambda *a: steps.append(
            (threading.current_thread() is threading.main_thread(), a)))
        started += got.inaccessible.size > 0
        seen += steps
        assert got.to_dict() == plain.to_dict(), trial
        acc = np.ones(s.n_states, bool)
        acc[got.inaccessible] = False
        want = ctl._hosoe_dimension_reference(s.pattern("A").to_scipy(),
                                              s.pattern("B").to_scipy(), acc)
        assert got.controllable_dimension == want, trial
        assert threading.active_count() == threads  # the worker has finished
    assert started > 20
    assert all(main for main, _ in seen)
    assert any(a[0] == "controllable dimension" for _, a in seen)


def test_background_passes_on_progress_and_errors():
    def work(note):
        for k in range(3):
            note(k + 1, 3)
            time.sleep(0.15)
        return "done"

    steps = []
    assert Background(work).result(lambda d, t: steps.append((d, t))) == "done"
    assert steps[-1] == (3, 3) and steps == sorted(set(steps))

    def broken(note):
        raise ValueError("from the worker")

    with pytest.raises(ValueError, match="from the worker"):
        Background(broken).result()


@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM])
def test_a_signal_ends_a_run_waiting_for_the_worker(sig, tmp_path):
    # the caller waits in short steps and the worker is a daemon thread: the run must
    # end within a few seconds of the signal, not when the 60 s of work are over
    code = textwrap.dedent("""
        import signal, sys, time
        from netctl._background import Background
        signal.signal(signal.SIGTERM, lambda *a: sys.exit(143))
        job = Background(lambda note: time.sleep(60))
        print("waiting", flush=True)
        job.result()
    """)
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    with subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.PIPE,
                          stderr=subprocess.PIPE, env=env) as p:
        assert p.stdout.readline().strip() == b"waiting"
        time.sleep(0.3)
        t0 = time.monotonic()
        p.send_signal(sig)
        p.communicate(timeout=20)
        assert time.monotonic() - t0 < 10
    # an uncaught KeyboardInterrupt ends Python by SIGINT itself (returncode -2)
    assert p.returncode == (143 if sig == signal.SIGTERM else -signal.SIGINT)
