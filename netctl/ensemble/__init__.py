"""Null models, analytic predictions, and one executor for many independent runs.

* :func:`configuration_model`, :func:`degree_preserving_swaps`: degree-preserving
  randomizations on edge arrays (seeded, array code); :func:`random_links`: the
  Erdős–Rényi null that keeps only the numbers of states and links.
* :func:`cavity_driver_fraction`: the driver-node fraction predicted from in/out-degree
  distributions (Liu, Slotine & Barabási 2011).
* :func:`compare_to_null`: observed minimum inputs against a null-model ensemble.
* :func:`run_tasks`: runs independent tasks serially, on local processes or on Dask, with
  per-task seeds that make results independent of the executor.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from netctl._lazy import lazy_names

if TYPE_CHECKING:
    from netctl.ensemble.cavity import CavityPrediction, cavity_driver_fraction, degree_distribution
    from netctl.ensemble.compare import NullComparison, compare_to_null, null_sample_inputs
    from netctl.ensemble.executor import EXECUTORS, default_workers, run_tasks, spawn_seeds
    from netctl.ensemble.null import (
        NULL_MODELS,
        configuration_model,
        degree_preserving_swaps,
        degree_sequences,
        n_unmatched,
        random_links,
        undirected_null,
    )

#: name -> submodule; loaded on first access (the null models' kernels may need numba
#: on large inputs, which should not load for ``--help`` or the executor alone)
_LAZY: dict[str, str] = {
    "CavityPrediction": "netctl.ensemble.cavity",
    "EXECUTORS": "netctl.ensemble.executor",
    "NULL_MODELS": "netctl.ensemble.null",
    "NullComparison": "netctl.ensemble.compare",
    "cavity_driver_fraction": "netctl.ensemble.cavity",
    "compare_to_null": "netctl.ensemble.compare",
    "configuration_model": "netctl.ensemble.null",
    "default_workers": "netctl.ensemble.executor",
    "degree_distribution": "netctl.ensemble.cavity",
    "degree_preserving_swaps": "netctl.ensemble.null",
    "degree_sequences": "netctl.ensemble.null",
    "n_unmatched": "netctl.ensemble.null",
    "null_sample_inputs": "netctl.ensemble.compare",
    "random_links": "netctl.ensemble.null",
    "undirected_null": "netctl.ensemble.null",
    "run_tasks": "netctl.ensemble.executor",
    "spawn_seeds": "netctl.ensemble.executor",
}

__all__ = [
    "EXECUTORS",
    "NULL_MODELS",
    "CavityPrediction",
    "NullComparison",
    "cavity_driver_fraction",
    "compare_to_null",
    "configuration_model",
    "default_workers",
    "degree_distribution",
    "degree_preserving_swaps",
    "degree_sequences",
    "n_unmatched",
    "null_sample_inputs",
    "random_links",
    "run_tasks",
    "spawn_seeds",
    "undirected_null",
]


__getattr__, __dir__ = lazy_names(__name__, _LAZY, globals(), __all__)
