"""Whole-run rule for continuous integration: under ``CI=true`` a skipped test fails.

A test that skips because a tool is missing (a browser, an optional library) tests
nothing; on a developer's machine that is allowed (the skip reason says what to install),
but in CI every component must be exercised, so ``.ci/run`` installs what every test needs
and this hook turns any skip into a failed run, listing each skipped test and its reason.
Tests marked ``xfail`` are not skips and are left alone.
"""

from __future__ import annotations

import os

import pytest

_SKIPPED: list[str] = []


def _in_ci() -> bool:
    return os.environ.get("CI", "").strip().lower() in ("true", "1", "yes")


def _note(report: pytest.CollectReport | pytest.TestReport) -> None:
    if report.skipped and not hasattr(report, "wasxfail"):
        reason = report.longrepr[2] if isinstance(report.longrepr, tuple) else str(
            report.longrepr)
        _SKIPPED.append(f"{report.nodeid}: {reason}")


def pytest_runtest_logreport(report: pytest.TestReport) -> None:
    _note(report)


def pytest_collectreport(report: pytest.CollectReport) -> None:
    _note(report)


def pytest_sessionfinish(session: pytest.Session, exitstatus: int) -> None:
    if _in_ci() and _SKIPPED and exitstatus == 0:
        session.exitstatus = pytest.ExitCode.TESTS_FAILED


def pytest_terminal_summary(terminalreporter: object, exitstatus: int) -> None:
    if _in_ci() and _SKIPPED:
        tr = terminalreporter
        tr.write_sep("=", f"CI=true: {len(_SKIPPED)} skipped test(s) fail this run",  # type: ignore[attr-defined]
                     red=True)
        for line in _SKIPPED:
            tr.write_line(f"SKIPPED IN CI {line}")  # type: ignore[attr-defined]
        tr.write_line("Install what they need (see .ci/run) or remove the skip.")  # type: ignore[attr-defined]
