"""The stage progress line (``netctl.report.progress.stage_progress``): a line each time
another percent of a stage is reached, whether the work advances one step at a time or
jumps (the dimension's phases place thousands of states at once). Rule: common
practice, no source."""

from __future__ import annotations

import io

from netctl.report.progress import stage_progress


def _shown(buf: io.StringIO) -> list[str]:
    return [part for line in buf.getvalue().split("\n") for part in line.split("\r")
            if part]


def test_jumps_between_percents_are_each_shown():
    buf = io.StringIO()
    tick = stage_progress("check", stream=buf, enabled=True)
    for done in (0, 113568, 132470, 135355, 135701):  # a run's phases (from a benchmark)
        tick("controllable dimension", done, 135701)
    assert _shown(buf) == [f"netctl: check: controllable dimension {d}/135701"
                           for d in (0, 113568, 132470, 135355, 135701)]


def test_single_steps_show_about_a_hundred_lines():
    buf = io.StringIO()
    tick = stage_progress("modes", stream=buf, enabled=True)
    for done in range(1001):
        tick("mode reach", done, 1000)
    shown = _shown(buf)
    assert len(shown) == 101 and shown[-1] == "netctl: modes: mode reach 1000/1000"
    assert buf.getvalue().endswith("\n")


def test_a_new_stage_starts_its_own_count():
    buf = io.StringIO()
    tick = stage_progress("x", stream=buf, enabled=True)
    tick("a", 50, 100)
    tick("b", 0, 10)
    tick("b", 10, 10)
    assert _shown(buf) == ["netctl: x: a 50/100", "netctl: x: b 0/10", "netctl: x: b 10/10"]
    assert stage_progress("x", stream=io.StringIO()) is None  # not a terminal
