"""Null models, analytic predictions, and one executor for many independent runs.

* :func:`configuration_model`, :func:`degree_preserving_swaps`: degree-preserving
  randomizations on edge arrays (seeded, array code).
* :func:`cavity_driver_fraction`: the driver-node fraction predicted from in/out-degree
  distributions (Liu, Slotine & Barabási 2011).
* :func:`compare_to_null`: observed minimum inputs against a null-model ensemble.
* :func:`run_tasks`: runs independent tasks serially, on local processes or on Dask, with
  per-task seeds that make results independent of the executor.
"""

from netctl.ensemble.cavity import CavityPrediction, cavity_driver_fraction, degree_distribution
from netctl.ensemble.compare import NullComparison, compare_to_null, null_sample_inputs
from netctl.ensemble.executor import EXECUTORS, default_workers, run_tasks, spawn_seeds
from netctl.ensemble.null import (
    NULL_MODELS,
    configuration_model,
    degree_preserving_swaps,
    degree_sequences,
    n_unmatched,
)

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
    "run_tasks",
    "spawn_seeds",
]
