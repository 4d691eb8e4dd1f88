"""One exception tree for netctl.

Every error raised on purpose by netctl is a :class:`NetctlError`. Each subclass also
derives from the builtin exception a Python user would expect (``ValueError``,
``KeyError``, ``FileNotFoundError``), so ``except ValueError`` keeps working.
Messages say what was expected, what was found (with ``repr``), where, and the fix.
"""

from __future__ import annotations

__all__ = [
    "NetctlError",
    "InvalidSystemError",
    "NetworkFileError",
    "UnknownNameError",
    "OptionError",
    "MissingFileError",
    "MissingExtraError",
    "OutputFileError",
    "LimitError",
]


class NetctlError(Exception):
    """Base class of every error netctl raises on purpose."""


class InvalidSystemError(NetctlError, ValueError):
    """A system could not be built: shapes, indices or weights are inconsistent."""


class OptionError(NetctlError, ValueError):
    """An option has a value outside its closed set of choices or its valid range."""


class NetworkFileError(NetctlError, ValueError):
    """A network or system file is malformed.

    Attributes ``path`` and ``line`` (1-based, or ``None``) locate the problem.
    """

    def __init__(self, message: str, *, path: object = None, line: int | None = None) -> None:
        super().__init__(message)
        self.path = path
        self.line = line


class MissingFileError(NetctlError, FileNotFoundError):
    """A file named by the user does not exist or cannot be opened."""

    def __str__(self) -> str:  # FileNotFoundError formats its args oddly; keep the message
        return str(self.args[0]) if self.args else ""


class UnknownNameError(NetctlError, KeyError):
    """A state, input or output name that the system does not have."""

    def __str__(self) -> str:  # KeyError would wrap the message in quotes
        return str(self.args[0]) if self.args else ""


class MissingExtraError(NetctlError, ImportError):
    """An optional extra (a third-party package) is needed but not installed.

    The message names the package and the ``pip install "netctl[EXTRA]"`` command.
    """


class OutputFileError(NetctlError, ValueError):
    """An output file cannot be written: it is one of the inputs, its folder is missing,
    it names a folder, or the write failed (disk full, permission denied)."""


class LimitError(NetworkFileError):
    """A file declares or holds more than a documented limit allows (size, nesting depth,
    digits of a number). The message names the limit and how to raise it."""
