"""The example scripts run and write what their docstrings promise."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_greenhouse_example_writes_map_and_report(tmp_path):
    r = subprocess.run([sys.executable, str(ROOT / "examples" / "greenhouse_map.py"),
                        str(tmp_path)], capture_output=True, text=True, cwd=ROOT)
    assert r.returncode == 0, r.stderr
    png = tmp_path / "greenhouse_map.png"
    html = tmp_path / "greenhouse_report.html"
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    text = html.read_text()
    assert "<html" in text.lower() and "licensed engineers" in text
