"""No tracked file names the workplace-only timing tool or the workplace's own library path.

Everything committed must run with public tools (benchmarks time whole processes with
``os.wait4``, see ``run_once`` in benchmarks/bench_verbs.py, or ``/usr/bin/time -v``), so the
project never names a tool that exists only on the build machine. The forbidden words are
put together from pieces here, so that this file does not hold them itself. Rule: the
project's own (brief, "Speed/memory targets"); common practice, no published source.
"""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: The workplace tool's names (any of ``-``, ``_``, a space or nothing between the parts)
#: and the workplace library's path, built from pieces.
FORBIDDEN = re.compile(
    "|".join([
        "farm" + r"[-_ ]?" + "(?:" + "ben" + "ch" + "|" + "stu" + "dio" + ")",
        re.escape("/work/" + "." + "library"),
    ]),
    re.IGNORECASE,
)


def tracked_files(root: Path) -> list[Path]:
    """The files git tracks under ``root``; every file outside ``.git`` if it is no checkout."""
    try:
        out = subprocess.run(["git", "ls-files", "-z"], cwd=root, capture_output=True,
                             check=True).stdout
    except (OSError, subprocess.CalledProcessError):
        return [p for p in root.rglob("*") if p.is_file() and ".git" not in p.parts
                and "__pycache__" not in p.parts]
    return [root / name for name in out.decode().split("\0") if name]


def offending_lines(paths: list[Path], root: Path) -> list[str]:
    """``path:line: text`` for every line of ``paths`` that holds a forbidden word."""
    found = []
    for path in paths:
        if not path.is_file():  # deleted in the working tree but still in the index
            continue
        text = path.read_bytes().decode("utf-8", errors="replace")
        for number, line in enumerate(text.splitlines(), 1):
            if FORBIDDEN.search(line):
                found.append(f"{path.relative_to(root)}:{number}: {line.strip()[:120]}")
    return found


def test_the_pattern_catches_each_spelling(tmp_path):
    # the check must be able to fail: each spelling in a throw-away file is found
    names = ["farm" + "-" + "bench", "Farm" + "_" + "Bench", "farm" + "stu" + "dio",
             "/work/" + ".library/env"]
    for i, word in enumerate(names):
        (tmp_path / f"f{i}.md").write_text(f"timed with {word} -n 5\n")
    (tmp_path / "clean.md").write_text("whole processes, A and B in turn, medians\n")
    found = offending_lines(sorted(tmp_path.iterdir()), tmp_path)
    assert [f.split(":")[0] for f in found] == [f"f{i}.md" for i in range(len(names))]


def test_no_tracked_file_names_the_workplace_timing_tool():
    found = offending_lines(tracked_files(ROOT), ROOT)
    assert not found, ("say 'whole processes, A and B in turn, medians of paired ratios' "
                       "instead:\n" + "\n".join(found))
