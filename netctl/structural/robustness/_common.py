"""Helpers shared by the loss analyses: option checks, link removal, recomputation."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from netctl._csr import Pattern, transpose_pattern
from netctl.errors import OptionError
from netctl.graph.components import reachable_from
from netctl.graph.matching import maximum_matching
from netctl.structural._engine import stack_AB

__all__ = ["ELEMENTS", "Progress", "LossOutcomes"]

ELEMENTS: tuple[str, ...] = ("links", "nodes")

Progress = Callable[[int, int], None]


def _check_elements(elements: str) -> None:
    if elements not in ELEMENTS:
        raise OptionError(f"elements must be one of {', '.join(map(repr, ELEMENTS))}, "
                          f"found {elements!r}.")


def _n_d(n: int, size: int) -> int:
    return max(n - size, 1) if n else 0


def _remove_links(A: Pattern, drop: np.ndarray) -> Pattern:
    """``A`` (a stored pattern) without the links at CSR positions ``drop``."""
    keep = np.ones(A.nnz, bool)
    keep[drop] = False
    n = A.shape[0]
    rows = np.repeat(np.arange(n, dtype=np.int64), np.diff(A.indptr))[keep]
    ptr = np.zeros(n + 1, np.int64)
    np.cumsum(np.bincount(rows, minlength=n), out=ptr[1:])
    return Pattern(A.data[keep], A.indices[keep], ptr, A.shape).frozen()


def _design_ok(A: Pattern, B: Pattern) -> tuple[bool, int, int]:
    """(controllable, rank of [A B], number of inaccessible states), recomputed."""
    n = A.shape[0]
    indptr, indices, n_cols = stack_AB(A, B)
    rm, _ = maximum_matching(indptr, indices, n_cols)
    rank = int(np.count_nonzero(rm >= 0))
    At = transpose_pattern(A)
    reach = reachable_from(At.indptr, At.indices, np.flatnonzero(np.diff(B.indptr)))
    unreached = int(n - np.count_nonzero(reach))
    return bool(rank == n and unreached == 0), rank, unreached


def _matching_size(A: Pattern) -> int:
    if A.shape[0] == 0:
        return 0
    rm, _ = maximum_matching(A.indptr, A.indices, A.shape[1])
    return int(np.count_nonzero(rm >= 0))


class LossOutcomes:
    """What a sweep of single losses shares, for result classes that hold the fields
    ``has_design``, ``controllable_before``, ``controllable_after`` (per loss),
    ``n_inputs`` and ``n_inputs_after`` (per loss)."""

    has_design: bool
    controllable_before: bool | None
    controllable_after: np.ndarray
    n_inputs: int
    n_inputs_after: np.ndarray

    @property
    def breaking(self) -> np.ndarray:
        """Positions of the losses that break a controllable design (sorted)."""
        if not self.has_design or not self.controllable_before:
            return np.zeros(0, np.int64)
        return np.flatnonzero(~self.controllable_after)

    @property
    def costly(self) -> np.ndarray:
        """Positions of the losses that raise the minimum number of inputs (sorted)."""
        return np.flatnonzero(self.n_inputs_after > self.n_inputs)
