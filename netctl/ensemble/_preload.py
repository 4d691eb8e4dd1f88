"""Imported once by the local executor's fork server: loads netctl's readers, models,
analyses and compiled kernels there, so that every worker forked from it starts warm (no
per-worker import or kernel loading). The module of the task itself is preloaded beside
this one by the executor (never imported from here: the ensemble layer does not import
the command line). Never raises: a failure here only costs the workers their warm
start."""

from __future__ import annotations

__all__: list[str] = []


def _warm() -> None:
    import os
    import tempfile
    import warnings

    import netctl.models  # noqa: F401  (readers, models and analyses a task may use)
    from netctl._jit import always_compiled
    from netctl.io import read
    from netctl.structural import controllability, minimum_inputs
    from netctl.system import StructuredSystem

    with warnings.catch_warnings(), always_compiled():  # small inputs would stay Python
        warnings.simplefilter("ignore")
        system = StructuredSystem.from_edges([0, 1, 2, 2], [1, 2, 0, 3], 4)
        minimum_inputs(system)
        controllability(system.with_inputs([0]))
        fd, path = tempfile.mkstemp(suffix=".csv")
        try:
            with os.fdopen(fd, "w") as fh:
                fh.write("0 1\n1 2\n")
            read(path)
        finally:
            os.unlink(path)


try:
    _warm()
except Exception:  # noqa: BLE001 - a cold start is still correct
    pass
