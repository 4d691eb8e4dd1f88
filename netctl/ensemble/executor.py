"""One executor for many independent runs: serial, local processes, or Dask distributed.

A task is a top-level function ``func(item, seed, shared)``: ``item`` is one element of
the work list, ``seed`` a :class:`numpy.random.SeedSequence` of its own (spawned from the
run's seed, so every task's randomness depends only on the run's seed and the task's
position, never on which worker ran it or how many there were), and ``shared`` one
read-only object every task sees (sent to each worker once). Results come back in the
order of the work list.
"""

from __future__ import annotations

import math
import os
from collections.abc import Callable, Iterable, Sequence
from itertools import repeat
from typing import Any

import numpy as np

from netctl.errors import OptionError

__all__ = ["EXECUTORS", "run_tasks", "spawn_seeds", "default_workers"]

#: executor name -> what runs the tasks
EXECUTORS: dict[str, str] = {
    "local": "worker processes on this machine (concurrent.futures), the default",
    "serial": "one after another in this process (no parallelism; for debugging)",
    "dask": "a Dask distributed cluster: --scheduler ADDRESS, or a local cluster when no "
            "address is given (needs the optional extra: pip install 'netctl[dask]')",
}

_SHARED: Any = None  # the shared object inside a local worker process
_CONNECT_TIMEOUT = "10s"  # how long to try reaching a Dask scheduler


def default_workers() -> int:
    """CPUs this process may use."""
    try:
        return max(len(os.sched_getaffinity(0)), 1)
    except AttributeError:  # pragma: no cover - not Linux
        return max(os.cpu_count() or 1, 1)


def spawn_seeds(seed: Any, n: int) -> tuple[int, list[np.random.SeedSequence]]:
    """The run's entropy and one independent child seed per task.

    ``seed`` may be None (fresh entropy, returned so the run can be repeated), an int,
    or a SeedSequence.
    """
    if isinstance(seed, np.random.SeedSequence):
        ss = seed
    elif seed is None:
        ss = np.random.SeedSequence()
    else:
        if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
            raise OptionError(f"seed must be a whole number >= 0, found {seed!r}.")
        ss = np.random.SeedSequence(int(seed))
    entropy = ss.entropy if isinstance(ss.entropy, int) else int(np.asarray(ss.entropy)[0])
    return entropy, ss.spawn(n)


def run_tasks(func: Callable[[Any, np.random.SeedSequence, Any], Any], items: Sequence[Any], *,
              seed: Any = None, shared: Any = None, executor: str = "local",
              workers: int | None = None, scheduler: str | None = None,
              progress: Callable[[int, int], None] | None = None) -> list[Any]:
    r"""Run ``func(item, seed, shared)`` for every item; results in item order.

    Parameters
    ----------
    func : callable
        A module-level function (it is sent to other processes by reference).
    items : sequence
        The work list.
    seed : None, int or numpy.random.SeedSequence
        Root of the per-task seeds (:meth:`numpy.random.SeedSequence.spawn`).
    shared : object, optional
        Passed to every call; pickled once per worker (local) or scattered once to every
        worker (Dask), not once per task.
    executor : {"local", "serial", "dask"}
        See :data:`EXECUTORS`.
    workers : int, optional
        Worker processes (local: default the CPUs available, at most one per task;
        Dask local cluster: default 2). Ignored for ``serial`` and for a Dask scheduler
        address (the cluster has its own).
    progress : callable(done, total), optional
        Called as tasks finish (in item order for local processes; the command line
        prints it on a terminal).
    scheduler : str, optional
        Address of a running Dask scheduler (``tcp://host:8786``); only with
        ``executor="dask"``.

    Returns
    -------
    list
        ``func``'s results, in the order of ``items``. Identical for the same ``seed``
        whichever executor and worker count ran them.

    Raises
    ------
    OptionError
        Unknown executor, bad worker count, ``scheduler`` without Dask, Dask missing or
        the scheduler unreachable. An exception raised by a task is raised again here.

    Notes
    -----
    Local processes start by ``fork`` when that is safe (POSIX, Python < 3.12, the
    caller runs no other Python thread): netctl's compiled kernels are loaded once in the
    caller and every worker inherits them. Otherwise through a ``forkserver`` (loaded
    once, so workers still start warm), else ``spawn``. Tasks are handed out in chunks of about
    ``len(items) / (4 * workers)``.

    Examples
    --------
    >>> run_tasks(_example_task, [1, 2, 3], seed=5, executor="serial")
    [1, 4, 9]
    """
    if executor not in EXECUTORS:
        raise OptionError(f"unknown executor {executor!r}; choose one of "
                          f"{', '.join(EXECUTORS)}.")
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int)
                                or workers < 1):
        raise OptionError(f"workers must be a whole number >= 1, found {workers!r}.")
    if scheduler is not None and executor != "dask":
        raise OptionError(f"a scheduler address ({scheduler!r}) needs executor 'dask', "
                          f"found {executor!r}; add --executor dask or drop --scheduler.")
    items = list(items)
    _, seeds = spawn_seeds(seed, len(items))
    if not items:
        return []
    total = len(items)

    def tick(results: Iterable[Any]) -> list[Any]:
        out = []
        for r in results:
            out.append(r)
            if progress is not None:
                progress(len(out), total)
        return out

    if executor == "dask":
        return _run_dask(func, items, seeds, shared, workers, scheduler, tick)
    n_workers = min(workers or default_workers(), len(items))
    if executor == "serial" or n_workers == 1:
        return tick(func(item, s, shared) for item, s in zip(items, seeds))
    from concurrent.futures import ProcessPoolExecutor  # here: serial runs need neither

    ctx = _context()
    if ctx.get_start_method() == "fork":
        import netctl.ensemble._preload  # noqa: F401  (warm kernels once; workers inherit)
    elif ctx.get_start_method() == "forkserver":
        # the task's own module too when it is netctl's (e.g. a verb's task), so that
        # this layer never has to import the layers above it to warm them
        task_module = getattr(func, "__module__", None) or ""
        ctx.set_forkserver_preload(["netctl.ensemble._preload"] + (
            [task_module] if task_module.startswith("netctl.") else []))
    chunk = max(1, math.ceil(len(items) / (4 * n_workers)))
    with ProcessPoolExecutor(max_workers=n_workers, mp_context=ctx, initializer=_init_worker,
                             initargs=(shared,)) as pool:
        return tick(pool.map(_call_local, repeat(func), items, seeds, chunksize=chunk))


def _context() -> Any:
    """``fork`` where it is safe and quiet (POSIX, Python < 3.12, no other Python
    thread): workers start instantly with everything loaded. Else ``forkserver`` (a clean
    server preloaded once), else ``spawn``."""
    import multiprocessing as mp
    import sys
    import threading

    methods = mp.get_all_start_methods()
    if "fork" in methods and sys.version_info < (3, 12) and threading.active_count() == 1:
        return mp.get_context("fork")
    return mp.get_context("forkserver" if "forkserver" in methods else "spawn")


def _init_worker(shared: Any) -> None:
    global _SHARED
    _SHARED = shared


def _call_local(func: Callable[..., Any], item: Any, seed: np.random.SeedSequence) -> Any:
    return func(item, seed, _SHARED)


def _call_dask(item: Any, seed: np.random.SeedSequence, *, task: Callable[..., Any],
               shared: Any) -> Any:
    return task(item, seed, shared)


def _example_task(item: int, seed: np.random.SeedSequence, shared: Any) -> int:
    return item * item


def _import_dask() -> Any:
    try:
        import distributed
    except ImportError:
        raise OptionError("executor 'dask' needs Dask distributed, which is not installed. "
                          "Install the optional extra: pip install 'netctl[dask]' (or pip "
                          "install 'dask[distributed]'), or use --executor local.") from None
    return distributed


def _run_dask(func: Callable[..., Any], items: list[Any], seeds: list[np.random.SeedSequence],
              shared: Any, workers: int | None, scheduler: str | None,
              tick: Callable[[Iterable[Any]], list[Any]]) -> list[Any]:
    distributed = _import_dask()
    cluster = None
    if scheduler is not None:
        try:
            client = distributed.Client(scheduler, timeout=_CONNECT_TIMEOUT,
                                        set_as_default=False)
        except (OSError, TimeoutError) as exc:
            raise OptionError(f"cannot reach the Dask scheduler at {scheduler!r} ({exc}). "
                              "Check the address (tcp://HOST:PORT) and that the scheduler "
                              "runs, or drop --scheduler to start a local cluster.") from None
    else:
        cluster = distributed.LocalCluster(n_workers=workers or 2, threads_per_worker=1,
                                           processes=True, dashboard_address=None)
        client = distributed.Client(cluster, set_as_default=False)
    try:
        # a one-element list keeps a dict or tuple in one piece (scatter splits containers)
        shared_f = client.scatter([shared], broadcast=True)[0] if shared is not None else None
        futures = client.map(_call_dask, items, seeds, task=func, shared=shared_f, pure=False)
        return tick(f.result() for f in futures)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
