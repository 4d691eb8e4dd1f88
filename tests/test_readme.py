"""The README's console examples are real: each `$ netctl ...` line is run through the
entry point from the repository root and must print exactly what the README shows
(and `$ echo $?` must show its exit status)."""

from __future__ import annotations

import re
import shlex
from pathlib import Path

import pytest

from netctl.cli import main

ROOT = Path(__file__).resolve().parents[1]


def _console_examples():
    text = (ROOT / "README.md").read_text()
    for block in re.findall(r"```console\n(.*?)```", text, flags=re.S):
        lines = block.splitlines()
        i = 0
        while i < len(lines):
            if lines[i].startswith("$ netctl "):
                cmd = lines[i][2:]
                out = []
                i += 1
                while i < len(lines) and not lines[i].startswith("$ "):
                    out.append(lines[i])
                    i += 1
                status = None
                if i < len(lines) and lines[i] == "$ echo $?":
                    status = int(lines[i + 1])
                    i += 2
                while out and not out[-1].strip():
                    out.pop()
                yield cmd, "\n".join(out), status
            else:
                i += 1


EXAMPLES = list(_console_examples())


def test_readme_has_console_examples():
    assert len(EXAMPLES) >= 2


@pytest.mark.parametrize("cmd, expected, status", EXAMPLES, ids=[e[0] for e in EXAMPLES])
def test_readme_console_example(cmd, expected, status, capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    argv = shlex.split(cmd)[1:]
    code = main(argv)
    out = capsys.readouterr().out.rstrip("\n")
    # the caution line is printed by `check`; the README shows it abbreviated or not at all
    got = [ln for ln in out.splitlines() if not ln.strip().startswith("Caution:")]
    assert "\n".join(got) == expected
    if status is not None:
        assert code == status
