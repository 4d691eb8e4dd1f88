"""What the in-process kernel benchmarks share (bench_folds.py, bench_kernels.py): a module
as it was at an earlier revision, an old and a new callable timed in turn in one
process, and the equality of their answers.

``pair_row`` runs each callable once untimed (compile or load the cache) and checks the
answers agree, then times ``repeat`` pairs, old then new, in CPU seconds
(``time.process_time``), and prints one Markdown row. Rows whose label holds none of the
words in :data:`ONLY` are skipped (the scripts fill it from ``--only``).
"""

from __future__ import annotations

import importlib.util
import os
import subprocess
import sys
import time
from collections.abc import Callable
from typing import Any

import numpy as np

__all__ = ["ONLY", "pair_row", "eq", "load_old", "load_file"]

#: the checkout these scripts belong to
ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))

#: words a row's label must hold one of (empty: every row)
ONLY: list[str] = []


def pair_row(label: str, old: Callable[[], Any], new: Callable[[], Any], repeat: int,
             same: Callable[[Any, Any], bool], *, paired: bool = True) -> None:
    """``| label | old median s | new median s | ratio | ratio of minima |``; the ratio
    is the median of the paired ratios new/old (``paired``) or the ratio of the medians."""
    if ONLY and not any(w in label for w in ONLY):
        return
    a, b = old(), new()  # warm-up (compile or load the cache) and the answer check
    assert same(a, b), label
    to, tn = [], []
    for _ in range(repeat):
        t = time.process_time()
        old()
        to.append(time.process_time() - t)
        t = time.process_time()
        new()
        tn.append(time.process_time() - t)
    mo, mn = float(np.median(to)), float(np.median(tn))
    ratio = float(np.median(np.array(tn) / np.array(to))) if paired else mn / mo
    print(f"| {label} | {mo:.4f} | {mn:.4f} | {ratio:.2f} | {min(tn) / min(to):.2f} |",
          flush=True)


def eq(a: Any, b: Any) -> bool:
    """Equal answers: arrays element by element, tuples item by item."""
    if isinstance(a, tuple):
        return all(eq(x, y) for x, y in zip(a, b))
    return bool(np.array_equal(np.asarray(a), np.asarray(b)))


def load_old(base: str, path: str, name: str, folder: str) -> Any:
    """The module at ``path`` as it is at revision ``base`` (``git show``), written into
    ``folder`` and imported as ``name``."""
    src = subprocess.run(["git", "-C", ROOT, "show", f"{base}:{path}"], check=True,
                         capture_output=True, text=True).stdout
    f = os.path.join(folder, name + ".py")
    with open(f, "w") as fh:
        fh.write(src)
    return load_file(f, name)


def load_file(f: str, name: str) -> Any:
    """The module in file ``f``, imported as ``name`` (a copy of its own)."""
    spec = importlib.util.spec_from_file_location(name, f)
    assert spec and spec.loader
    mod = importlib.util.module_from_spec(spec)
    sys.modules[name] = mod
    spec.loader.exec_module(mod)
    return mod
