"""Every import in ``netctl/`` follows the layer table of docs/ARCHITECTURE.md.

The table is read from the document itself (so the picture and the rule cannot drift);
every ``import`` statement is checked, at module level, inside functions and under
``TYPE_CHECKING`` alike. Layering rule: common practice (a lower layer never imports a
higher one; DESIGN.md "Layers"), no published source.
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DOC = ROOT / "docs" / "ARCHITECTURE.md"


def _table(text: str, heading: str) -> list[list[str]]:
    """Rows (cells, backticks removed) of the first Markdown table after ``heading``."""
    part = text.split(heading, 1)[1]
    rows = []
    for line in part.splitlines():
        line = line.strip()
        if not line.startswith("|"):
            if rows:
                break
            continue
        cells = [c.strip().replace("`", "") for c in line.strip("|").split("|")]
        if set("".join(cells)) <= set("-: "):
            continue
        rows.append(cells)
    return rows[1:]  # without the header


def read_rules(text: str) -> tuple[dict[str, tuple[int, tuple[str, ...], frozenset[str]]],
                                   dict[tuple[str, str], str]]:
    """``layer -> (number, modules, may import)`` and ``(module, imported) -> why``."""
    layers = {}
    for num, name, modules, may, _job in _table(text, "## Layers"):
        mods = tuple(re.findall(r"netctl[\w.]*", modules))
        allowed = frozenset(x.strip() for x in may.split(",") if x.strip() not in ("", "—"))
        layers[name] = (int(num), mods, allowed)
    exceptions = {(m, i): why for m, i, why in _table(text, "## Exceptions")}
    return layers, exceptions


def layer_of(module: str, layers: dict[str, tuple[int, tuple[str, ...], frozenset[str]]]
             ) -> str | None:
    """The layer whose module prefix matches ``module`` best (longest prefix)."""
    best, best_len = None, -1
    for name, (_, mods, _) in layers.items():
        for m in mods:
            if (module == m or module.startswith(m + ".")) and len(m) > best_len:
                best, best_len = name, len(m)
    return best


def module_name(path: Path, package_root: Path) -> str:
    rel = path.relative_to(package_root.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def imports_of(path: Path, module: str, package_root: Path) -> list[tuple[int, str]]:
    """``(line, imported module)`` for every netctl import in the file (any depth)."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    is_pkg = path.name == "__init__.py"
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out.extend((node.lineno, a.name) for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                pkg = module.split(".") if is_pkg else module.split(".")[:-1]
                pkg = pkg[:len(pkg) - node.level + 1]
                base = ".".join(pkg + ([base] if base else []))
            for a in node.names:
                # ``from pkg import sub`` imports a submodule when one exists
                sub = f"{base}.{a.name}"
                sub_path = package_root.parent / Path(*sub.split("."))
                if sub_path.with_suffix(".py").is_file() or (sub_path / "__init__.py").is_file():
                    out.append((node.lineno, sub))
                else:
                    out.append((node.lineno, base))
    return [(ln, m) for ln, m in out if m == "netctl" or m.startswith("netctl.")]


def violations(package_root: Path, text: str) -> tuple[list[str], set[tuple[str, str]]]:
    """Messages for imports the table forbids, and the exceptions that were used."""
    layers, exceptions = read_rules(text)
    bad: list[str] = []
    used: set[tuple[str, str]] = set()
    for path in sorted(package_root.rglob("*.py")):
        module = module_name(path, package_root)
        mine = layer_of(module, layers)
        if mine is None:
            bad.append(f"{module}: in no layer of docs/ARCHITECTURE.md; add it to a row")
            continue
        for line, imported in imports_of(path, module, package_root):
            theirs = layer_of(imported, layers)
            if theirs is None:
                bad.append(f"{path}:{line}: imports {imported}, which is in no layer")
                continue
            if theirs == mine or theirs in layers[mine][2]:
                continue
            hit = next((k for k in exceptions if k[0] == module and
                        (imported == k[1] or imported.startswith(k[1] + "."))), None)
            if hit is not None:
                used.add(hit)
                continue
            a, b = layers[mine][0], layers[theirs][0]
            way = "up" if b > a else "across" if b == a else "past"
            bad.append(f"{path.relative_to(package_root.parent)}:{line}: {module} "
                       f"({mine}) imports {imported} ({theirs}): {way} the layers; "
                       f"{mine} may import {', '.join(sorted(layers[mine][2])) or 'nothing'}")
    return bad, used


def test_layer_table_is_well_formed():
    layers, exceptions = read_rules(DOC.read_text(encoding="utf-8"))
    assert {"base", "graph", "system", "io", "structural", "numeric", "ensemble", "viz",
            "report", "commands", "cli"} <= set(layers)
    for name, (num, mods, allowed) in layers.items():
        assert mods, name
        for other in allowed:
            assert other in layers, f"{name} may import unknown layer {other!r}"
            assert layers[other][0] < num, f"{name} (#{num}) may import {other}, not lower"
    assert layers["graph"][2] == {"base"}  # the engine imports nothing but errors
    for why in exceptions.values():
        assert why, "every exception needs its reason"


def test_every_import_follows_the_layer_table():
    bad, used = violations(ROOT / "netctl", DOC.read_text(encoding="utf-8"))
    assert not bad, "\n".join(bad)


def test_no_exception_is_stale():
    _, exceptions = read_rules(DOC.read_text(encoding="utf-8"))
    _, used = violations(ROOT / "netctl", DOC.read_text(encoding="utf-8"))
    stale = set(exceptions) - used
    assert not stale, f"exceptions no longer needed; remove them from the table: {stale}"


@pytest.mark.parametrize("where, source, expect", [
    pytest.param("graph/matching.py", "def f():\n    from netctl.system import X\n",
                 "up the layers", id="function-level-upward"),
    pytest.param("ensemble/executor.py", "import netctl.cli\n", "up the layers",
                 id="ensemble-imports-cli"),
    pytest.param("io/edgelist.py", "from netctl.models import apply_model\n",
                 "across the layers", id="sibling"),
    pytest.param("report/sections.py", "from typing import TYPE_CHECKING\n"
                 "if TYPE_CHECKING:\n    from netctl.commands import VERBS\n",
                 "up the layers", id="type-checking-upward"),
    pytest.param("structural/roles.py", "from . import _x\nfrom ..io import read\n",
                 "past the layers", id="relative-import-analysis-reads-files"),
])
def test_a_forbidden_import_is_reported(tmp_path, where, source, expect):
    """The checker itself: a small fake package with one bad import must fail."""
    pkg = tmp_path / "netctl"
    for d in ("graph", "io", "structural", "ensemble", "report", "commands"):
        (pkg / d).mkdir(parents=True)
        (pkg / d / "__init__.py").write_text("")
    for f in ("__init__.py", "system.py", "models.py", "cli.py", "errors.py",
              "io/read.py", "structural/_x.py"):
        (pkg / f).write_text("")
    (pkg / where).write_text(source)
    bad, _ = violations(pkg, DOC.read_text(encoding="utf-8"))
    assert len(bad) == 1 and expect in bad[0], bad
