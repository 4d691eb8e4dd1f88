"""Is a network's minimum number of inputs unusual for its degrees? Observed vs null model."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.ensemble.cavity import CavityPrediction, cavity_driver_fraction
from netctl.ensemble.executor import run_tasks, spawn_seeds
from netctl.ensemble.null import (
    NULL_MODELS,
    configuration_model,
    degree_preserving_swaps,
    degree_sequences,
    n_unmatched,
    random_links,
    undirected_null,
)
from netctl.errors import InvalidSystemError, OptionError
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["IN_PROCESS_WORK", "NullComparison", "compare_to_null", "null_sample_inputs"]

#: With ``executor="local"``, an ensemble of at most this many samples x (states + links)
#: runs in this process: starting worker processes (and loading the compiled kernels
#: they use) costs more than such samples, and the per-sample seeds give the same
#: results either way (common practice, no source: measured, benchmarks/RESULTS.md).
IN_PROCESS_WORK: int = 20_000


@dataclass(frozen=True)
class NullComparison(ResultTables):
    """Outcome of :func:`compare_to_null`.

    Attributes
    ----------
    null : str
        The null model (:data:`netctl.ensemble.NULL_MODELS`).
    observed_n_inputs : int
        Minimum inputs of the network, ``max(n - |M*|, 1)``.
    samples : ndarray of int
        Minimum inputs of each null-model sample, in sample order.
    seed : int
        Entropy of the run; the same seed gives the same samples on any executor.
    prediction : CavityPrediction or None
        The analytic fraction for the network's in/out-degree distributions; ``None``
        without links.
    """

    _frame_rows = "summary"

    null: str
    n_states: int
    n_links: int
    n_self_loops: int
    observed_n_inputs: int
    samples: np.ndarray
    seed: int
    prediction: CavityPrediction | None
    model: str = "given"
    notes: tuple[str, ...] = field(default=())
    undirected: bool = False

    @property
    def n_samples(self) -> int:
        return int(self.samples.size)

    @property
    def mean(self) -> float:
        """Ensemble mean of the minimum inputs."""
        return float(self.samples.mean()) if self.samples.size else 0.0

    @property
    def std(self) -> float:
        """Ensemble standard deviation (``ddof=1``; 0 with one sample)."""
        return float(self.samples.std(ddof=1)) if self.samples.size > 1 else 0.0

    @property
    def standard_error(self) -> float:
        """Standard error of the ensemble mean, ``std / sqrt(samples)``."""
        return self.std / float(np.sqrt(self.n_samples)) if self.n_samples else 0.0

    @property
    def z_score(self) -> float | None:
        """``(observed - mean) / std``; ``None`` when the ensemble has no spread."""
        if self.std == 0.0:
            return None
        return (self.observed_n_inputs - self.mean) / self.std

    def fraction(self, count: float) -> float | None:
        """``count / n_states`` (``None`` without states)."""
        return count / self.n_states if self.n_states else None

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary."""
        pred = self.prediction
        return {
            "analysis": "null_comparison",
            "null": self.null,
            "null_description": NULL_MODELS[self.null],
            "undirected": self.undirected,
            "model": self.model,
            "n_states": self.n_states,
            "n_links": self.n_links,
            "n_self_loops": self.n_self_loops,
            "observed_n_inputs": self.observed_n_inputs,
            "observed_fraction": self.fraction(self.observed_n_inputs),
            "n_samples": self.n_samples,
            "seed": self.seed,
            "null_mean": self.mean,
            "null_std": self.std,
            "null_mean_fraction": self.fraction(self.mean),
            "null_std_fraction": self.fraction(self.std),
            "null_standard_error": self.standard_error,
            "null_standard_error_fraction": self.fraction(self.standard_error),
            "z_score": self.z_score,
            "predicted_fraction": None if pred is None else pred.driver_fraction,
            "predicted_n_inputs": None if pred is None else pred.driver_fraction * self.n_states,
            "prediction": None if pred is None else pred.to_dict(),
            "samples": self.samples.tolist(),
            "notes": list(self.notes),
        }


def _poisson_pmf(mean: float) -> np.ndarray:
    """Poisson probabilities P(k), k = 0 .. mean + 12 sqrt(mean) + 30, renormalized
    (the values of ``scipy.stats.poisson.pmf``, computed without importing SciPy: see
    :mod:`netctl.ensemble._poisson`)."""
    from netctl.ensemble._poisson import poisson_pmf

    p = poisson_pmf(int(mean + 12 * np.sqrt(mean) + 30), mean)
    return np.asarray(p / p.sum(), np.float64)


def null_sample_inputs(index: int, seed: np.random.SeedSequence, shared: Any) -> int:
    """Minimum inputs of one null-model sample (an executor task; see :func:`run_tasks`).

    ``shared`` is ``(null, sources, targets, n_states, loops, undirected)`` of the
    observed links without self-loops (each undirected link once when ``undirected``),
    and the states with a self-loop (kept in place).
    """
    null, src, dst, n, loops, undirected = shared
    if undirected:
        s, t = undirected_null(null, src, dst, n, seed=seed)
    elif null == "degree":
        out_d, in_d = degree_sequences(src, dst, n)
        s, t = configuration_model(out_d, in_d, seed=seed)
    elif null == "erdos-renyi":
        s, t = random_links(n, src.size, seed=seed)
    else:
        s, t, _ = degree_preserving_swaps(src, dst, n, seed=seed)
    s = np.concatenate([s, loops])
    t = np.concatenate([t, loops])
    return max(n_unmatched(s, t, n), 1) if n else 0


def compare_to_null(system: StructuredSystem, *, null: str = "degree", samples: int = 100,
                    seed: Any = None, executor: str = "local", workers: int | None = None,
                    scheduler: str | None = None,
                    undirected: bool | None = None,
                    progress: Callable[[int, int], None] | None = None) -> NullComparison:
    r"""Compare the minimum number of inputs with a degree-preserving null model.

    Parameters
    ----------
    system : StructuredSystem
        Its links (the pattern of ``A``) are randomized; inputs and weights are ignored.
    null : {"degree", "swap", "erdos-renyi"}
        ``degree``: configuration model [2]_ (stub matching, every in- and out-degree
        exact, a few repeated links and self-loops allowed). ``swap``: edge swaps of the
        observed links [3]_ (no repeated links or self-loops created). ``erdos-renyi``:
        the same numbers of states and links placed uniformly at random [4]_ (degrees
        not kept); the note then gives this ensemble's own cavity prediction.
    samples : int
        Null-model samples (>= 1; >= 2 for a spread).
    seed : None, int or SeedSequence
        The same seed gives the same samples whichever executor runs them.
    executor, workers, scheduler
        How the samples run; see :func:`netctl.ensemble.run_tasks`. ``"local"`` runs a
        small ensemble (``samples * (states + links) <= IN_PROCESS_WORK``) in this
        process, with the same results.
    undirected : bool or None
        Randomize the links as undirected ones (each link ``u -- v`` moves as a whole
        and stays both ways; degrees are undirected degrees), see
        :func:`netctl.ensemble.undirected_null`. ``None`` (default): when every link
        between distinct states goes both ways. ``True`` for a network with one-way
        links is an error.
    progress : callable(done, total), optional
        Called as samples finish (see :func:`netctl.ensemble.run_tasks`).

    Returns
    -------
    NullComparison
        Observed minimum inputs, the samples' mean, spread and z-score, and the cavity
        prediction of Liu, Slotine & Barabási [1]_ for the observed degree distributions.

    Notes
    -----
    The minimum number of inputs is ``N_D = max(n - |M*|, 1)`` [1]_. Self-loops of the
    observed network (self-dynamics, a property of the state) stay on their states and
    are not rewired; the prediction uses the degrees of the other links and does not
    describe self-loops, which a note then says. Each sample costs one randomization
    and one maximum matching, near-linear in the links.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] M. E. J. Newman, S. H. Strogatz, D. J. Watts, "Random graphs with arbitrary
       degree distributions and their applications", Phys. Rev. E 64:026118, 2001
       (details from memory).
    .. [3] S. Maslov, K. Sneppen, "Specificity and stability in topology of protein
       networks", Science 296:910-913, 2002 (details from memory).
    .. [4] P. Erdős, A. Rényi, "On random graphs I", Publ. Math. Debrecen 6:290-297, 1959
       (details from memory).

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> ring = StructuredSystem.from_edges([0, 1, 2, 3], [1, 2, 3, 0])
    >>> r = compare_to_null(ring, samples=3, seed=1, executor="serial")
    >>> r.observed_n_inputs, r.samples.tolist()
    (1, [1, 1, 1])
    """
    if null not in NULL_MODELS:
        raise OptionError(f"unknown null model {null!r}; choose one of "
                          f"{', '.join(NULL_MODELS)}.")
    if isinstance(samples, bool) or not isinstance(samples, (int, np.integer)) or samples < 1:
        raise OptionError(f"samples must be a whole number >= 1, found {samples!r}.")
    n = system.n_states
    src, dst = system.edges()
    is_loop = src == dst
    loops = src[is_loop]
    src, dst = src[~is_loop], dst[~is_loop]
    symmetric = _is_symmetric(src, dst, n)
    if undirected is None:
        undirected = bool(symmetric and src.size)
    elif undirected and not symmetric:
        raise InvalidSystemError("undirected=True needs every link between distinct states "
                                 "to go both ways; this network has one-way links. Leave "
                                 "it unset to randomize the links as directed.")
    observed = max(n_unmatched(np.concatenate([src, loops]), np.concatenate([dst, loops]), n),
                   1) if n else 0
    entropy, _ = spawn_seeds(seed, 0)
    if executor == "local" and int(samples) * (n + src.size) <= IN_PROCESS_WORK:
        executor = "serial"  # starting workers would cost more than the samples
    counts = run_tasks(null_sample_inputs, range(int(samples)), seed=entropy,
                       shared=(null, *(_halves(src, dst) if undirected else (src, dst)), n,
                               loops, undirected), executor=executor, progress=progress,
                       workers=workers, scheduler=scheduler)
    notes = []
    prediction = None
    if src.size:
        out_d, in_d = degree_sequences(src, dst, n)
        try:
            prediction = cavity_driver_fraction(out_d, in_d)
        except InvalidSystemError as exc:  # pragma: no cover - degrees come from links
            notes.append(f"no cavity prediction: {exc}")
    else:
        notes.append("no cavity prediction: the network has no links between states.")
    if undirected:
        notes.append("every link goes both ways: the null model moves undirected links as "
                     "undirected (degrees are undirected degrees).")
    if null == "erdos-renyi" and src.size and n > 1:
        er = cavity_driver_fraction(_poisson_pmf(src.size / n), distribution=True)
        notes.append(f"the cavity prediction shown is for the observed degrees; for the "
                     f"Erdős–Rényi ensemble (Poisson degrees of mean {src.size / n:.4g}) it "
                     f"is {er.driver_fraction:.4g} ({er.driver_fraction * n:.1f} inputs).")
    if loops.size:
        notes.append(f"{loops.size} self-loop(s) kept on their states in every sample; the "
                     "cavity prediction ignores self-loops.")
    return NullComparison(null=null, n_states=n, n_links=system.n_links,
                          n_self_loops=int(loops.size), observed_n_inputs=int(observed),
                          samples=np.asarray(counts, np.int64), seed=entropy,
                          prediction=prediction, model=system.model, notes=tuple(notes),
                          undirected=bool(undirected))


def _is_symmetric(src: np.ndarray, dst: np.ndarray, n: int) -> bool:
    """Whether every link ``u -> v`` has its reverse ``v -> u`` (no self-loops given)."""
    fwd = np.unique(src * np.int64(n) + dst)
    back = np.unique(dst * np.int64(n) + src)
    return bool(fwd.size == back.size and np.array_equal(fwd, back))


def _halves(src: np.ndarray, dst: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each undirected link once (``u < v``) from a symmetric link list."""
    keep = src < dst
    return src[keep], dst[keep]
