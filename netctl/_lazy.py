"""Names of a package imported from their modules on first access (PEP 562).

A package that offers many names but should cost nothing to import lists, for each name,
the module that defines it; :func:`lazy_names` returns the package's module-level
``__getattr__`` and ``__dir__``. The first access imports the module and stores the value
in the package, so later accesses are plain attribute look-ups.

References
----------
PEP 562 -- Module __getattr__ and __dir__ (I. Levkivskyi, 2017).
"""

from __future__ import annotations

import importlib
from collections.abc import Callable, Iterable, Mapping
from typing import Any

__all__ = ["lazy_names"]


def lazy_names(package: str, home: Mapping[str, str], namespace: dict[str, Any],
               listed: Iterable[str] | None = None,
               ) -> tuple[Callable[[str], Any], Callable[[], list[str]]]:
    """``__getattr__`` and ``__dir__`` for ``package``.

    Parameters
    ----------
    package : str
        The package's ``__name__``.
    home : mapping of str to str
        Name -> module holding it: relative to ``package`` (``"edgelist"``) or absolute
        when it starts with ``"netctl."``.
    namespace : dict
        The package's ``globals()``, where a value is kept after its first access.
    listed : iterable of str, optional
        The names ``dir(package)`` adds to what is already loaded (default: ``home``).
    """
    shown = frozenset(home if listed is None else listed)

    def __getattr__(name: str) -> Any:
        where = home.get(name)
        if where is None:
            raise AttributeError(f"module {package!r} has no attribute {name!r}")
        module = where if where.startswith("netctl.") else f"{package}.{where}"
        value = getattr(importlib.import_module(module), name)
        namespace[name] = value
        return value

    def __dir__() -> list[str]:
        return sorted(set(namespace) | shown)

    return __getattr__, __dir__
