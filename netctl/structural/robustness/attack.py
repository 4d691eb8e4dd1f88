"""Attack curves: the minimum number of inputs as states or links are removed at random
or by a targeting rule (:func:`attack_curve`). Drawing them is presentation:
:func:`netctl.viz.plot_attack_curves`."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from netctl._csr import take
from netctl.errors import OptionError
from netctl.structural.robustness._common import (
    Progress,
    _check_elements,
    _matching_size,
    _n_d,
    _remove_links,
)
from netctl.structural.roles import link_roles, node_roles
from netctl.system import StructuredSystem

__all__ = ["ATTACK_STRATEGIES", "AttackCurve", "attack_curve"]

#: Orders in which :func:`attack_curve` removes elements.
ATTACK_STRATEGIES: tuple[str, ...] = ("random", "degree", "role")


# ---------------------------------------------------------------------- attack curves
@dataclass(frozen=True)
class AttackCurve:
    """Minimum inputs as elements are removed in one order (see :func:`attack_curve`)."""

    strategy: str
    elements: str
    seed: int
    n_states: int
    n_links: int
    n_removed: np.ndarray
    fraction_removed: np.ndarray
    states_left: np.ndarray
    links_left: np.ndarray
    n_inputs: np.ndarray

    @property
    def driver_fraction(self) -> np.ndarray:
        """``n_inputs / states_left``; NaN where no state is left (0/0 is undefined, so
        plots leave that point out and the JSON says ``null``)."""
        return np.where(self.states_left > 0,
                        self.n_inputs / np.maximum(self.states_left, 1), np.nan)

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "attack_curve", "strategy": self.strategy, "elements": self.elements,
            "seed": self.seed, "n_states": self.n_states, "n_links": self.n_links,
            "points": [{"n_removed": int(a), "fraction_removed": float(b),
                        "states_left": int(c), "links_left": int(d), "n_inputs": int(e),
                        "driver_fraction": None if f != f else float(f)}
                       for a, b, c, d, e, f in zip(self.n_removed, self.fraction_removed,
                                                   self.states_left, self.links_left,
                                                   self.n_inputs, self.driver_fraction)],
        }

    def xy(self, *, fraction: bool = True) -> tuple[np.ndarray, np.ndarray]:
        """``(share removed, N_D / states left)`` (or ``N_D`` with ``fraction=False``),
        the ``(x, y)`` pair that :func:`netctl.viz.plot_attack_curves` draws."""
        return self.fraction_removed, (self.driver_fraction if fraction else
                                       self.n_inputs.astype(np.float64))

    CSV_HEADER = ("strategy,elements,n_removed,fraction_removed,states_left,links_left,"
                  "n_inputs,driver_fraction")

    def csv_lines(self) -> list[str]:
        """CSV rows (no header; see ``AttackCurve.CSV_HEADER``)."""
        return [f"{self.strategy},{self.elements},{p['n_removed']},"
                f"{p['fraction_removed']:.6g},{p['states_left']},{p['links_left']},"
                f"{p['n_inputs']},"
                + ("" if p["driver_fraction"] is None else f"{p['driver_fraction']:.6g}")
                for p in self.to_dict()["points"]]


def _attack_order(system: StructuredSystem, elements: str, strategy: str,
                  rng: np.random.Generator) -> np.ndarray:
    A = system.pattern("A")
    n = system.n_states
    indeg = np.diff(A.indptr)
    outdeg = np.bincount(A.indices, minlength=n)
    deg = indeg + outdeg
    if elements == "nodes":
        if strategy == "random":
            return rng.permutation(n)
        if strategy == "degree":
            return np.lexsort((np.arange(n), -deg))
        roles = node_roles(system).role  # redundant (2) first, then intermittent, critical
        return np.lexsort((np.arange(n), -deg, -roles.astype(np.int64)))
    src, tgt = system.edges()
    E = src.size
    if strategy == "random":
        return rng.permutation(E)
    score = deg[src] + deg[tgt]
    if strategy == "degree":
        return np.lexsort((np.arange(E), -score))
    roles = link_roles(system).role  # critical (0) first, then ordinary, redundant
    return np.lexsort((np.arange(E), -score, roles.astype(np.int64)))


def attack_curve(system: StructuredSystem, *, elements: str = "nodes",
                 strategy: str = "random", steps: int = 20, max_fraction: float = 1.0,
                 seed: int = 0, progress: Progress | None = None) -> AttackCurve:
    """Minimum number of inputs as states or links are removed in a given order.

    Parameters
    ----------
    system : StructuredSystem
    elements : {"nodes", "links"}
    strategy : {"random", "degree", "role"}
        ``random``: a uniformly random order (seeded). ``degree``: highest total degree
        first (for links, the sum of the two ends' total degrees). ``role``: first the
        elements whose loss can raise ``N_D`` -- links critical, then ordinary, then
        redundant; states redundant (always matched), then intermittent, then critical --
        ties by degree. Orders are fixed on the intact network (a static attack).
    steps : int
        Number of removal steps (points after the first).
    max_fraction : float
        Share of the elements removed at the last step, in ``(0, 1]``.
    seed : int
        Seed for the random order.
    progress : callable, optional
        ``progress(done, total)`` after each point.

    Returns
    -------
    AttackCurve
        ``N_D = max(n' - |M*'|, 1)`` [1]_ at each point, ``0`` when no state is left.

    Notes
    -----
    One maximum matching per point: ``steps + 1`` near-linear computations. The
    targeting rules are common practice in network-robustness studies, no single source.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 2], [1, 2, 3])   # path of 4 states
    >>> c = attack_curve(s, elements="links", strategy="degree", steps=3)
    >>> c.n_removed.tolist(), c.n_inputs.tolist()
    ([0, 1, 2, 3], [1, 2, 3, 4])
    """
    _check_elements(elements)
    if strategy not in ATTACK_STRATEGIES:
        raise OptionError(f"strategy must be one of {', '.join(map(repr, ATTACK_STRATEGIES))}"
                          f", found {strategy!r}.")
    if not isinstance(steps, (int, np.integer)) or isinstance(steps, bool) or steps < 1:
        raise OptionError(f"steps must be an integer >= 1, found {steps!r}.")
    if not (isinstance(max_fraction, (int, float)) and 0 < max_fraction <= 1):
        raise OptionError(f"max_fraction must be in (0, 1], found {max_fraction!r}.")
    rng = np.random.default_rng(seed)
    A = system.pattern("A")
    n = system.n_states
    total = n if elements == "nodes" else A.nnz
    order = _attack_order(system, elements, strategy, rng)
    counts = np.unique(np.round(np.linspace(0, max_fraction * total, steps + 1)).astype(np.int64))
    nd = np.empty(counts.size, np.int64)
    states_left = np.empty(counts.size, np.int64)
    links_left = np.empty(counts.size, np.int64)
    for i, c in enumerate(counts.tolist()):
        if elements == "nodes":
            keep = np.ones(n, bool)
            keep[order[:c]] = False
            A2 = take(A, np.flatnonzero(keep), np.flatnonzero(keep)) if c else A
            n2 = n - c
        else:
            A2 = _remove_links(A, order[:c]) if c else A
            n2 = n
        nd[i] = _n_d(n2, _matching_size(A2))
        states_left[i] = n2
        links_left[i] = A2.nnz
        if progress is not None:
            progress(i + 1, counts.size)
    return AttackCurve(strategy=strategy, elements=elements, seed=int(seed), n_states=n,
                       n_links=int(A.nnz), n_removed=counts,
                       fraction_removed=counts / max(total, 1), states_left=states_left,
                       links_left=links_left, n_inputs=nd)
