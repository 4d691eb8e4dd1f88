"""What the in-process kernel benchmarks share (bench_folds.py, bench_kernels.py): an old
and a new callable timed in turn in one process, and the equality of their answers.

``pair_row`` runs each callable once untimed (compile or load the cache) and checks the
answers agree, then times ``repeat`` pairs, old then new, in CPU seconds
(``time.process_time``), and prints one Markdown row. Rows whose label holds none of the
words in :data:`ONLY` are skipped (the scripts fill it from ``--only``).
"""

from __future__ import annotations

import time
from collections.abc import Callable
from typing import Any

import numpy as np

__all__ = ["ONLY", "pair_row", "eq"]

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
