"""Readers live in netctl/io only, and the records they return sit below io and the analyses.

House rule (DESIGN.md, STYLE.md; common practice, no source): nothing outside
``netctl/io/`` opens a user's file; a lower layer never imports a higher one. Checked on
the source text with Python's own parser (``ast``), imports inside functions included.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "netctl"

#: Packages of analyses: they take systems and records, never file names.
ANALYSES = ("structural", "numeric", "graph", "ensemble")
#: Calls that read a file.
FILE_CALLS = {"open", "read_text", "read_bytes", "loadtxt", "genfromtxt", "load"}


def _modules(*parts: str) -> list[Path]:
    out: list[Path] = []
    for p in parts:
        path = PKG / p
        out.extend(sorted(path.rglob("*.py")) if path.is_dir() else [path])
    return out


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    out: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            out.add(node.module)
    return out


def _file_calls(path: Path) -> list[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Call):
            f = node.func
            name = f.id if isinstance(f, ast.Name) else f.attr if isinstance(f, ast.Attribute) else ""
            if name in FILE_CALLS:
                found.append(f"{path.name}:{node.lineno}: {name}(...)")
    return found


def _rel(path: Path) -> str:
    return str(path.relative_to(PKG.parent))


@pytest.mark.parametrize("path", _modules(*ANALYSES, "records.py", "system.py"), ids=_rel)
def test_analyses_open_no_file(path):
    assert _file_calls(path) == []


@pytest.mark.parametrize("path", _modules("structural", "numeric", "graph"), ids=_rel)
def test_analyses_import_no_reader(path):
    # (the ensemble layer sits above io and may use it; it still opens no file itself)
    assert sorted(m for m in _imports(path) if m == "netctl.io" or m.startswith("netctl.io.")) == []


@pytest.mark.parametrize("path", _modules("io"), ids=_rel)
def test_readers_import_no_analysis(path):
    above = ("netctl.structural", "netctl.numeric", "netctl.ensemble", "netctl.commands",
             "netctl.cli", "netctl.report", "netctl.viz")
    assert sorted(m for m in _imports(path) if m.startswith(above)) == []


def test_records_sit_below_io_and_analyses():
    allowed = {"__future__", "collections.abc", "dataclasses", "typing", "numpy",
               "scipy.sparse", "netctl.errors", "netctl.system"}
    assert _imports(PKG / "records.py") <= allowed


def test_the_detector_sees_a_reader_outside_io(tmp_path):
    """The checks above can fail: a module that opens a file and imports io is caught."""
    bad = tmp_path / "probe.py"
    bad.write_text("def f(p, system):\n    from netctl.io.sites import read_sites\n\n"
                   "    with open(p) as fh:\n        fh.read()\n"
                   "    return read_sites(p, system)\n")
    assert _file_calls(bad) == ["probe.py:4: open(...)"]
    assert "netctl.io.sites" in _imports(bad)
