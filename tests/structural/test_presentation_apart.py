"""Analyses never load matplotlib (STYLE.md, "Presentation apart"; issue 14): drawing
lives in netctl.viz. Checked in a fresh interpreter so other tests' imports do not count.
House rule, common practice, no source."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

SCRIPT = """
import importlib, pkgutil, sys
for name in ("netctl.structural", "netctl.numeric", "netctl.ensemble"):
    pkg = importlib.import_module(name)
    for m in pkgutil.walk_packages(pkg.__path__, name + "."):
        importlib.import_module(m.name)
loaded = sorted(k for k in sys.modules if k.split(".")[0] == "matplotlib")
print(",".join(loaded[:3]))
"""


def test_importing_every_analysis_module_leaves_matplotlib_unloaded():
    out = subprocess.run([sys.executable, "-c", SCRIPT], cwd=ROOT, capture_output=True,
                         text=True, check=True,
                         env={**os.environ, "PYTHONPATH": str(ROOT)})
    assert out.stdout.strip() == "", f"analysis modules loaded {out.stdout.strip()}"
