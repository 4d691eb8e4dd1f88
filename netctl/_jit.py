"""Compiled kernels that cost nothing until an input is large enough to need them.

:func:`njit` stands in for :func:`numba.njit` on every kernel of netctl. The decorated
kernel is a :class:`Kernel`: called on small arrays it runs its own Python body (the
kernels are plain loops over NumPy arrays, written for numba's subset of Python, which
Python runs too); called on arrays whose total number of elements reaches
:data:`THRESHOLD`, it imports numba, compiles (or loads from numba's on-disk cache) and
runs the compiled kernel. A command on a network of a few dozen states therefore never
imports numba, whose import and first cache load cost about 0.4 s of CPU — more than
the rest of a small run together (``benchmarks/RESULTS.md``, start-up section).

Once numba is loaded in the process, or once the Python bodies have been handed
:data:`PYTHON_BUDGET` array elements in all (many small calls, as in a sweep, add up to
one large one), every kernel runs compiled.

Both paths run the same source on the same arrays, so they agree wherever the body
means the same thing in Python and in numba; the tests in ``tests/test_jit.py`` check
the matching and component kernels both ways against SciPy and NetworkX. A kernel whose
meaning depends on numba's fixed-width integer arithmetic (the edge-list scanner's
64-bit hashing) is declared with ``python=False``: it is always compiled, and small
inputs take a separate plain-Python path in their caller instead.

A compiled kernel calls compiled kernels: its body is compiled against a copy of its
module's globals in which every kernel is replaced by its numba dispatcher.

The environment variable ``NETCTL_JIT_THRESHOLD`` overrides the threshold (``0``: always
compiled, as before; a very large number: always Python, for tests).
"""

from __future__ import annotations

import contextlib
import os
import sys
import threading
import types
from collections.abc import Callable, Iterator
from typing import Any

__all__ = ["THRESHOLD", "Kernel", "njit", "always_compiled", "always_python"]


def _threshold_from_env() -> int:
    raw = os.environ.get("NETCTL_JIT_THRESHOLD", "")
    try:
        return max(0, int(raw)) if raw.strip() else 4096
    except ValueError:
        return 4096


#: Total array elements over a kernel's arguments from which the compiled kernel runs
#: (common practice, no source: measured so that a Python body on this many elements
#: costs less than numba's import and first cache load, about 0.4 s).
THRESHOLD: int = _threshold_from_env()

#: Array elements handed to Python bodies in this process after which every kernel runs
#: compiled (many small calls cost as much as one large one; common practice, no source).
PYTHON_BUDGET: int = 50 * THRESHOLD
_python_work = 0

_lock = threading.RLock()
_force = threading.local()


class Kernel:
    """A kernel that runs its Python body on small inputs and numba's on large ones.

    Parameters
    ----------
    func : callable
        The kernel's body, in numba's subset of Python.
    options : dict
        Passed to :func:`numba.njit` when the kernel is first compiled.
    python : bool
        ``False``: never run the Python body (always compiled).
    """

    def __init__(self, func: Callable[..., Any], options: dict[str, Any], python: bool) -> None:
        self.py_func = func
        self.options = options
        self.python = python
        self.dispatcher: Any = None
        self.__name__ = func.__name__
        self.__qualname__ = func.__qualname__
        self.__module__ = func.__module__
        self.__doc__ = func.__doc__
        self.__wrapped__ = func

    def __repr__(self) -> str:
        return f"<netctl kernel {self.__module__}.{self.__qualname__}>"

    def _small(self, args: tuple[Any, ...], kwargs: dict[str, Any]) -> bool:
        mode = getattr(_force, "mode", None)
        if not self.python or mode == "compiled":
            return False
        if mode == "python":
            return True
        global _python_work
        if "numba" in sys.modules:  # loaded already: compiled kernels cost little more
            return False
        total = 0
        for a in (*args, *kwargs.values()):
            size = getattr(a, "size", None)
            if isinstance(size, int) and hasattr(a, "dtype"):
                total += size
                if total >= THRESHOLD:
                    return False
        if _python_work + total > PYTHON_BUDGET:  # many small calls add up
            return False
        _python_work += total
        return True

    def __call__(self, *args: Any, **kwargs: Any) -> Any:
        if self.python and any(type(a) is list and not a for a in args):
            # an empty Python list comes only from a kernel body run in Python (compiled
            # bodies pass typed lists); numba cannot type it, so stay in Python
            return self.py_func(*args, **kwargs)
        d = self.dispatcher
        if d is None:
            if self._small(args, kwargs):
                return self.py_func(*args, **kwargs)
            d = self.compiled()
        elif (not d.overloads or getattr(_force, "mode", None) == "python") and \
                self._small(args, kwargs):
            # numba is loaded but this kernel has no compiled version for these types
            # yet: a small input is not worth a compilation or a cache load
            return self.py_func(*args, **kwargs)
        return d(*args, **kwargs)

    def compiled(self) -> Any:
        """The numba dispatcher of this kernel (imports numba on first use)."""
        with _lock:
            if self.dispatcher is None:
                _materialize(self)
        return self.dispatcher


def _materialize(kernel: Kernel) -> None:
    """Give ``kernel``, and every kernel it reaches through module globals, a numba
    dispatcher. Each compiled body sees a copy of its module's globals in which kernels
    are replaced by their dispatchers (numba resolves callees there); the module's own
    globals keep the :class:`Kernel` objects, so Python bodies stay Python."""
    from numba import njit as numba_njit

    todo = [kernel]
    made: list[tuple[Kernel, dict[str, Any]]] = []
    while todo:
        k = todo.pop()
        if k.dispatcher is not None:
            continue
        f = k.py_func
        g = dict(f.__globals__)
        body = types.FunctionType(f.__code__, g, f.__name__, f.__defaults__, f.__closure__)
        body.__qualname__ = f.__qualname__
        body.__module__ = f.__module__
        body.__doc__ = f.__doc__
        body.__annotations__ = dict(f.__annotations__)
        k.dispatcher = numba_njit(**k.options)(body)
        made.append((k, g))
        todo.extend(v for v in g.values() if isinstance(v, Kernel) and v.dispatcher is None)
    for _, g in made:
        for name, value in list(g.items()):
            if isinstance(value, Kernel):
                g[name] = value.dispatcher


def njit(*args: Any, python: bool = True, **options: Any) -> Any:
    """Decorator standing in for :func:`numba.njit` (same options), lazily compiled.

    Use as ``@njit(cache=True, nogil=True)``; ``python=False`` for a kernel that must
    never run as Python (see the module docstring).
    """
    if args and callable(args[0]) and not options:
        return Kernel(args[0], {}, python)

    def wrap(func: Callable[..., Any]) -> Kernel:
        return Kernel(func, dict(options), python)

    return wrap


@contextlib.contextmanager
def _forced(mode: str) -> Iterator[None]:
    old = getattr(_force, "mode", None)
    _force.mode = mode
    try:
        yield
    finally:
        _force.mode = old


def always_compiled() -> contextlib.AbstractContextManager[None]:
    """Within this block (this thread), every kernel runs compiled (used to warm the
    executor's workers, by benchmarks and by tests)."""
    return _forced("compiled")


def always_python() -> contextlib.AbstractContextManager[None]:
    """Within this block (this thread), every kernel that may runs its Python body,
    whatever the input size (tests compare both paths)."""
    return _forced("python")
