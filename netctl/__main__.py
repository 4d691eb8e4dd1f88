"""``python -m netctl``: the ``netctl`` command."""

from netctl.cli import main

__all__: list[str] = []

if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
