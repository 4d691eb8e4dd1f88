"""``python -m netctl`` and the ``netctl`` command's entry point.

The command-line module is imported inside :func:`run`, so that Ctrl-C during start-up
ends the run with status 130 and one line, not a traceback (before this module runs,
only the interpreter's own start-up can be interrupted, and nothing has been written).
"""

from __future__ import annotations

import sys

__all__ = ["run"]


def run() -> int:
    """Import the command line and run it; exit status as :func:`netctl.cli.main`."""
    try:
        from netctl.cli import main
    except KeyboardInterrupt:
        print("netctl: interrupted", file=sys.stderr)
        return 130
    return main()


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(run())
