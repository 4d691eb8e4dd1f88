"""Rewrite the stored ``--json`` outputs of ``cases.py`` (run from the repository root)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from cases import CASES  # noqa: E402


def run(argv: list[str]) -> tuple[int, str]:
    proc = subprocess.run([sys.executable, "-m", "netctl.cli", *argv, "--json"],
                          capture_output=True, text=True, cwd=HERE.parents[1])
    return proc.returncode, proc.stdout


def main() -> int:
    out = HERE / "data"
    out.mkdir(exist_ok=True)
    only = set(sys.argv[1:])
    for case, argv in CASES.items():
        if only and case not in only:
            continue
        code, text = run(argv)
        try:
            data = json.loads(text)
        except json.JSONDecodeError:
            print(f"{case}: exit {code}, output is not JSON", file=sys.stderr)
            return 1
        (out / f"{case}.json").write_text(json.dumps({"exit": code, "output": data},
                                                     indent=1, sort_keys=True) + "\n")
        print(f"{case}: exit {code}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
