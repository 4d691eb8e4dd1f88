"""The CI rule (root conftest.py): under CI=true a skipped test fails the run."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize("ci, code", [("true", 1), ("", 0)], ids=["ci", "local"])
def test_a_skip_fails_only_under_ci(tmp_path, ci, code):
    shutil.copy(ROOT / "conftest.py", tmp_path / "conftest.py")
    (tmp_path / "test_a.py").write_text("import pytest\n\ndef test_ok():\n    pass\n\n"
                                        "def test_skips():\n    pytest.skip('no tool')\n")
    (tmp_path / "test_b.py").write_text("import pytest\n"
                                        "pytest.importorskip('no_such_module_anywhere')\n")
    env = dict(os.environ, CI=ci)
    proc = subprocess.run([sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider",
                           "--rootdir", str(tmp_path), str(tmp_path)], cwd=tmp_path,
                          env=env, capture_output=True, text=True, timeout=120)
    assert proc.returncode == code, proc.stdout[-2000:]
    if ci:
        assert "2 skipped test(s) fail this run" in proc.stdout
        assert "test_a.py::test_skips: Skipped: no tool" in proc.stdout
