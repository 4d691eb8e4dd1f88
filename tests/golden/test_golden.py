"""Every verb's ``--json`` output on the bundled networks is what it was before the move.

The stored outputs (``data/``) come from the command line itself (``regen.py``); this is a
regression pin for restructuring, not a correctness check — correctness is checked against
published values and reference libraries elsewhere in the suite.
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import os
from pathlib import Path
from typing import Any

import pytest

from tests.golden.cases import CASES, VOLATILE_KEYS

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]


def _same(a: Any, b: Any, where: str) -> list[str]:
    if isinstance(a, dict) and isinstance(b, dict):
        diffs = []
        for key in sorted(set(a) | set(b)):
            if key in VOLATILE_KEYS:
                continue
            if key not in a or key not in b:
                diffs.append(f"{where}.{key}: only in {'stored' if key in a else 'new'}")
            else:
                diffs.extend(_same(a[key], b[key], f"{where}.{key}"))
        return diffs
    if isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            return [f"{where}: length {len(a)} != {len(b)}"]
        return [d for i, (x, y) in enumerate(zip(a, b)) for d in _same(x, y, f"{where}[{i}]")]
    if isinstance(a, float) or isinstance(b, float):
        if isinstance(a, (int, float)) and isinstance(b, (int, float)):
            if math.isclose(a, b, rel_tol=1e-6, abs_tol=1e-9) or (a != a and b != b):
                return []
        return [f"{where}: {a!r} != {b!r}"]
    return [] if a == b else [f"{where}: {a!r} != {b!r}"]


@pytest.mark.parametrize("case", sorted(CASES))
def test_json_output_unchanged(case: str) -> None:
    stored = json.loads((HERE / "data" / f"{case}.json").read_text())
    from netctl.cli import main

    out, err = io.StringIO(), io.StringIO()
    cwd = os.getcwd()
    os.chdir(ROOT)
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = main([*CASES[case], "--json"])
    finally:
        os.chdir(cwd)
    assert code == stored["exit"], err.getvalue()
    diffs = _same(stored["output"], json.loads(out.getvalue()), "$")
    assert not diffs, "\n".join(diffs[:20])
