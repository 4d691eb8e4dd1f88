"""Ctrl-C during start-up (issue 27, item 4).

``netctl`` is a console script that pip generates: it runs ``from netctl.__main__ import
run`` and then ``run()``, whose first statement guards the import of the command line
(Ctrl-C there ends with one line and status 130). Before that guard only the interpreter's
own start-up (``site``, ``.pth`` files) and the import of ``netctl.__main__`` can be
interrupted; a KeyboardInterrupt there is printed by Python itself (nothing has been
opened or written yet). This test keeps netctl's part of that window minimal: importing
the entry point loads no module beyond the package's own few small ones (common practice
for command-line start-up, no source).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def test_entry_point_import_loads_nothing_before_the_guard():
    probe = (f"import sys\nsys.path.insert(0, {str(ROOT)!r})\nbefore = set(sys.modules)\n"
             "from netctl.__main__ import run\nafter = set(sys.modules)\nimport json\n"
             "print(json.dumps(sorted(after - before)))")
    r = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                       timeout=120, cwd=ROOT)
    assert r.returncode == 0, r.stderr
    loaded = json.loads(r.stdout.strip().splitlines()[-1])
    # the package's own few small modules (netctl, _meta, _hooks, __main__), no library
    assert all(m == "__future__" or m.split(".")[0] == "netctl" for m in loaded), loaded
    assert len(loaded) <= 6, loaded


def test_interrupt_while_importing_the_command_line_is_one_line(monkeypatch, capsys):
    """Ctrl-C inside the guarded import: status 130 and one line, no traceback."""
    import builtins

    import netctl.__main__ as entry

    real_import = builtins.__import__

    def interrupted(name, *args, **kwargs):
        if name == "netctl.cli":
            raise KeyboardInterrupt
        return real_import(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", interrupted)
    assert entry.run() == 130
    assert capsys.readouterr().err == "netctl: interrupted\n"
