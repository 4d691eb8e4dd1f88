"""What the start-up benchmarks share: whole processes of two source trees, in turn.

Each command runs once with the *before* tree first on ``PYTHONPATH``, then once with the
*after* tree (A B A B ...), so that the two runs of a pair see the same load; the figures
are the medians of each side and the medians of the per-pair ratios after/before. Wall
seconds from ``time.perf_counter``, CPU seconds (user + system of the child and the
children it waited for) from ``os.wait4``. Used by bench_startup.py, bench_compare.py,
bench_small_maps.py, bench_small_numeric.py and bench_report_figures.py (run as scripts
from any folder).
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import time
from collections.abc import Iterable

__all__ = ["run_once", "env_for", "check_trees", "machine_line", "in_turn", "tree_options",
           "pair_row", "floor_row"]

Times = tuple[float, float]

#: this checkout: the default tree measured
ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def tree_options(ap: argparse.ArgumentParser, runs: int) -> None:
    """The options every two-tree benchmark takes: --before, --after, --runs."""
    ap.add_argument("--before", required=True, help="source tree of the baseline (a checkout)")
    ap.add_argument("--after", default=ROOT, help="source tree measured (default: this one)")
    ap.add_argument("--runs", type=int, default=runs, help=f"pairs per command (default {runs})")


def run_once(argv: list[str], env: dict[str, str], cwd: str,
             ok: Iterable[int] = (0, 1)) -> Times:
    """Wall and CPU seconds of one whole process (its output thrown away); ``cwd`` must
    hold no ``netctl`` folder (``-c`` and ``-m`` put it first on the path). An exit status
    outside ``ok`` stops the benchmark."""
    t0 = time.perf_counter()
    proc = subprocess.Popen(argv, env=env, cwd=cwd, stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    code = os.waitstatus_to_exitcode(status)
    if code not in tuple(ok):
        raise SystemExit(f"{' '.join(argv)} exited with {code}")
    return wall, usage.ru_utime + usage.ru_stime


def env_for(tree: str | None) -> dict[str, str]:
    """This environment with ``tree`` as the whole ``PYTHONPATH`` (``None``: none)."""
    env = dict(os.environ)
    if tree is None:
        env.pop("PYTHONPATH", None)
    else:
        env["PYTHONPATH"] = tree
    return env


def check_trees(trees: Iterable[str], cwd: str) -> None:
    """Stop unless each tree's interpreter imports netctl from that tree; first compile
    each tree's modules to bytecode (``compileall``), as an installation does: where
    ``PYTHONDONTWRITEBYTECODE`` is set (this workplace sets it) a fresh checkout would
    otherwise compile every module it imports in every run (about 40 ms of a 2-line
    run), while a tree whose ``__pycache__`` was filled earlier would not."""
    trees = list(trees)
    for tree in trees:
        subprocess.run([sys.executable, "-m", "compileall", "-q",
                        os.path.join(tree, "netctl")], check=True, stdout=subprocess.DEVNULL)
    for tree in trees:
        where = subprocess.run([sys.executable, "-c", "import netctl; print(netctl.__file__)"],
                               env=env_for(tree), cwd=cwd, capture_output=True, text=True)
        if not where.stdout.startswith(os.path.abspath(tree)):
            raise SystemExit(f"{tree}: netctl comes from {where.stdout.strip()!r}")


def machine_line() -> str:
    """One comment line: machine, CPUs, Python, date and load average."""
    load = " ".join(f"{x:.2f}" for x in os.getloadavg())
    return (f"# {platform.node()} {platform.processor() or platform.machine()}, "
            f"{os.cpu_count()} CPUs, Python {platform.python_version()}, "
            f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}, load average {load}")


def in_turn(tail: list[str], before: str, after: str, cwd: str, runs: int, warmup: int = 1,
            ok: Iterable[int] = (0, 1)) -> tuple[dict[str, Times], float, float]:
    """``python3 *tail`` with each tree in turn, ``warmup`` pairs first (not counted: the
    file cache), then ``runs`` pairs. Returns the median (wall, CPU) of each side
    (``"before"``, ``"after"``) and the medians of the paired wall and CPU ratios."""
    rows: dict[str, list[Times]] = {"before": [], "after": []}
    for k in range(runs + warmup):
        pair = {side: run_once([sys.executable, *tail], env_for(tree), cwd, ok)
                for side, tree in (("before", before), ("after", after))}
        if k >= warmup:
            for side in rows:
                rows[side].append(pair[side])
    med = {s: (statistics.median(w for w, _ in r), statistics.median(c for _, c in r))
           for s, r in rows.items()}
    rw = statistics.median(a[0] / b[0] for a, b in zip(rows["after"], rows["before"]))
    rc = statistics.median(a[1] / b[1] for a, b in zip(rows["after"], rows["before"]))
    return med, rw, rc


def pair_row(name: str, tail: list[str], trees: dict[str, str], cwd: str, runs: int,
             ok: Iterable[int] = (0, 1)) -> None:
    """Print one Markdown row: ``python3 *tail`` with the trees ``trees["before"]`` and
    ``trees["after"]`` in turn (:func:`in_turn`): medians of wall and CPU seconds of each
    side, then the paired ratios."""
    med, rw, rc = in_turn(tail, trees["before"], trees["after"], cwd, runs, ok=ok)
    print(f"| {name} | {med['before'][0]:.3f} | {med['after'][0]:.3f} | "
          f"{med['before'][1]:.3f} | {med['after'][1]:.3f} | {rw:.2f} | {rc:.2f} |",
          flush=True)


def floor_row(name: str, code: str, cwd: str, runs: int) -> None:
    """Print one Markdown row: ``python3 -c code`` with no tree (an import floor), one
    warm-up then ``runs`` runs, medians in the "after" columns."""
    got = [run_once([sys.executable, "-c", code], env_for(None), cwd)
           for _ in range(runs + 1)][1:]
    print(f"| floor: {name} | | {statistics.median(w for w, _ in got):.3f} | | "
          f"{statistics.median(c for _, c in got):.3f} | | |", flush=True)
