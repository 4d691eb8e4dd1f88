"""``k`` simultaneous losses, sampled with a seed and recomputed exactly:
:func:`sampled_losses`."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import take
from netctl.errors import OptionError
from netctl.graph.matching import maximum_matching
from netctl.structural.robustness._common import (
    Progress,
    _check_elements,
    _design_ok,
    _matching_size,
    _n_d,
    _remove_links,
)
from netctl.system import StructuredSystem

__all__ = ["SampledLosses", "sampled_losses"]


@dataclass(frozen=True)
class SampledLosses:
    """``k`` simultaneous losses, sampled (see :func:`sampled_losses`).

    ``lost[s]`` holds the positions lost in sample ``s`` (link positions in
    :meth:`StructuredSystem.edges` order, or states); ``n_inputs_after[s]`` the minimum
    number of inputs afterwards; ``controllable_after[s]`` whether the system's design
    survives (all True when it has no inputs).
    """

    elements: str
    k: int
    seed: int
    n_states: int
    n_inputs: int
    lost: np.ndarray
    n_inputs_after: np.ndarray
    has_design: bool
    controllable_before: bool | None
    controllable_after: np.ndarray
    sources: np.ndarray = field(repr=False)
    targets: np.ndarray = field(repr=False)
    state_names: Sequence[str] = field(repr=False)

    @property
    def n_samples(self) -> int:
        return int(self.lost.shape[0])

    def fraction_costly(self) -> float:
        """Share of samples whose losses raise the minimum number of inputs."""
        return float(np.mean(self.n_inputs_after > self.n_inputs)) if self.n_samples else 0.0

    def fraction_breaking(self) -> float:
        """Share of samples whose losses break the (controllable) design."""
        if not self.has_design or not self.controllable_before or not self.n_samples:
            return 0.0
        return float(np.mean(~self.controllable_after))

    def labels(self, s: int) -> list[str]:
        names = self.state_names
        if self.elements == "links":
            return [f"{names[int(self.sources[j])]} -> {names[int(self.targets[j])]}"
                    for j in self.lost[s]]
        return [names[int(j)] for j in self.lost[s]]

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "sampled_losses",
            "elements": self.elements,
            "k": self.k,
            "seed": self.seed,
            "n_samples": self.n_samples,
            "n_inputs": self.n_inputs,
            "n_inputs_after": {"mean": float(np.mean(self.n_inputs_after))
                               if self.n_samples else None,
                               "max": int(self.n_inputs_after.max()) if self.n_samples
                               else None},
            "fraction_costly": self.fraction_costly(),
            "has_design": self.has_design,
            "controllable_before": self.controllable_before,
            "fraction_breaking": self.fraction_breaking(),
            "samples": [{"lost": self.labels(s), "n_inputs_after": int(self.n_inputs_after[s]),
                         **({"controllable_after": bool(self.controllable_after[s])}
                            if self.has_design else {})}
                        for s in range(self.n_samples)],
        }


def sampled_losses(system: StructuredSystem, *, elements: str = "links", k: int = 2,
                   samples: int = 100, seed: int = 0,
                   progress: Progress | None = None) -> SampledLosses:
    """``k`` links (or states) lost at once, ``samples`` times at random, recomputed exactly.

    Parameters
    ----------
    system : StructuredSystem
        Its inputs, if any, are the design to check.
    elements : {"links", "nodes"}
    k : int
        Elements lost together in each sample (``1 <= k <=`` number of elements).
    samples : int
        Number of samples (>= 1).
    seed : int
        Seed of ``numpy.random.default_rng``; the same seed gives the same samples.
    progress : callable, optional
        Called as ``progress(done, total)`` after each sample.

    Returns
    -------
    SampledLosses

    Notes
    -----
    Each sample removes ``k`` distinct elements drawn uniformly without replacement and
    recomputes one maximum matching of ``A`` (warm-started from the intact matching for
    link losses), and, with a design, one of ``[A B]`` and a breadth-first search:
    ``samples`` near-linear recomputations. Exact per sample; the shares are estimates.
    Sampling ``k`` losses uniformly is common practice in robustness studies (no
    single source).

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 2], [1, 2, 0], inputs=[0])   # 3-cycle
    >>> r = sampled_losses(s, k=2, samples=5, seed=1)
    >>> r.n_inputs, sorted(set(r.n_inputs_after.tolist())), r.fraction_breaking()
    (1, [2], 1.0)
    """
    _check_elements(elements)
    for name, val, low in (("k", k, 1), ("samples", samples, 1)):
        if not isinstance(val, (int, np.integer)) or isinstance(val, bool) or val < low:
            raise OptionError(f"{name} must be an integer >= {low}, found {val!r}.")
    A, B = system.pattern("A"), system.pattern("B")
    n = system.n_states
    total = A.nnz if elements == "links" else n
    if k > total:
        raise OptionError(f"k={k} exceeds the number of {elements} ({total}); choose "
                          f"k <= {total}.")
    rng = np.random.default_rng(seed)
    size0 = _matching_size(A)
    has_design = system.n_inputs > 0
    ok_before = _design_ok(A, B)[0] if has_design else None
    rm0, cm0 = maximum_matching(A.indptr, A.indices, n) if n else (
        np.zeros(0, np.int64), np.zeros(0, np.int64))
    src, tgt = system.edges()
    lost = np.empty((samples, k), np.int64)
    nd = np.empty(samples, np.int64)
    ok = np.ones(samples, bool)
    for s in range(samples):
        pick = np.sort(rng.choice(total, size=k, replace=False))
        lost[s] = pick
        if elements == "links":
            A2 = _remove_links(A, pick)
            rm = rm0.copy()
            cm = cm0.copy()
            gone = tgt[pick][rm0[tgt[pick]] == src[pick]]
            cm[rm[gone]] = -1
            rm[gone] = -1
            rmx, _ = maximum_matching(A2.indptr, A2.indices, n, row_match=rm, col_match=cm)
            size = int(np.count_nonzero(rmx >= 0))
            nd[s] = _n_d(n, size)
            if has_design:
                ok[s] = _design_ok(A2, B)[0]
        else:
            keep = np.ones(n, bool)
            keep[pick] = False
            kept = np.flatnonzero(keep)
            A2 = take(A, kept, kept)
            nd[s] = _n_d(n - k, _matching_size(A2))
            if has_design:
                ok[s] = _design_ok(A2, take(B, rows=kept))[0]
        if progress is not None:
            progress(s + 1, samples)
    return SampledLosses(elements=elements, k=int(k), seed=int(seed), n_states=n,
                         n_inputs=_n_d(n, size0), lost=lost, n_inputs_after=nd,
                         has_design=has_design, controllable_before=ok_before,
                         controllable_after=ok, sources=src, targets=tgt,
                         state_names=system.state_names)
