"""Verbs of the ``netctl`` command beyond the core ones in :mod:`netctl.cli`.

Every module in this package exposes ``register(subparsers, common)``; :mod:`netctl.cli`
discovers them (sorted by module name), so adding a verb never edits a shared file.
``common`` is the parent parser holding FILE, ``--format``, ``--model``, ``--json`` and
``--out``; use :func:`netctl.cli.load_system`, :func:`netctl.cli.emit` and
:func:`netctl.cli.parse_names` inside the handlers, raise :class:`netctl.errors.NetctlError`
subclasses for bad input (the CLI turns them into exit status 2), and return 0 when the
property holds and 1 when it does not.
"""

__all__: list[str] = []
