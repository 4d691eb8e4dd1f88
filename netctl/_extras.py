"""Optional third-party packages, imported only when a feature needs them.

Each optional feature names its extra in ``pyproject.toml``; a missing package gives one
line saying what to install, never a traceback from deep inside an import.
"""

from __future__ import annotations

import importlib
from types import ModuleType

from netctl.errors import MissingExtraError

__all__ = ["EXTRAS", "require", "release"]

#: module -> (distribution on PyPI, netctl extra that installs it)
EXTRAS: dict[str, tuple[str, str]] = {
    "pandas": ("pandas", "frames"),
    "pyarrow": ("pyarrow", "parquet"),
    "pyarrow.parquet": ("pyarrow", "parquet"),
    "pypsa": ("pypsa", "pypsa"),
    "wntr": ("wntr", "water"),
    "pandapower": ("pandapower", "power"),
}


def require(module: str, purpose: str) -> ModuleType:
    """Import ``module`` or raise :class:`MissingExtraError` naming the extra to install.

    Parameters
    ----------
    module : str
        A key of :data:`EXTRAS`.
    purpose : str
        What needs it, for the message (``"Placement.to_frame()"``).

    Examples
    --------
    >>> require("numpy_that_does_not_exist", "a test")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    netctl.errors.MissingExtraError: a test needs the optional package 'numpy_that_does_not_exist'...
    """
    try:
        return importlib.import_module(module)
    except ImportError:
        dist, extra = EXTRAS.get(module, (module, ""))
        how = (f'pip install "netctl[{extra}]" (or pip install {dist})' if extra
               else f"pip install {dist}")
        raise MissingExtraError(f"{purpose} needs the optional package {dist!r}, which is "
                                f"not installed: {how}.") from None


def release(text: str) -> tuple[int, ...]:
    """The major and minor numbers of a version string (``"1.2.3rc1"`` -> ``(1, 2)``),
    for comparing an installed library with the oldest release an adapter supports."""
    out = []
    for part in text.split(".")[:2]:
        digits = "".join(ch for ch in part if ch.isdigit())
        out.append(int(digits) if digits else 0)
    return tuple(out)
