"""Which modules a command loads: one ``netctl`` run in a fresh interpreter (shared by
the start-up tests of the figure writers)."""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: Modules that mean the plotting library was loaded.
PLOTTING = ("matplotlib", "PIL")


def exit_and_modules(argv: list[str], prefixes: tuple[str, ...] = PLOTTING
                     ) -> tuple[int, list[str]]:
    """Exit status of ``netctl argv`` in a fresh interpreter (this checkout first on
    the path) and the loaded modules named by one of ``prefixes`` (or under them)."""
    code = (f"import sys\nsys.path.insert(0, {str(ROOT)!r})\nfrom netctl.cli import main\n"
            f"code = main({argv!r})\n"
            f"print(code, sorted(m for m in sys.modules if m.split('.')[0] in {prefixes!r}))")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                       timeout=300, cwd=ROOT)
    assert r.returncode == 0, r.stderr
    status, _, mods = r.stdout.strip().splitlines()[-1].partition(" ")
    return int(status), ast.literal_eval(mods)
