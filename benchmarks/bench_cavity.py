"""Check: the cavity prediction against the configuration-model ensemble at N = 10^5.

Run by hand (not part of the test suite; a smaller version is in tests/test_cavity_ensemble.py):

    python benchmarks/bench_cavity.py                       # N = 10^5, 20 samples each
    python benchmarks/bench_cavity.py --n 20000 --samples 10

For each degree-sequence family below, one pair of in/out-degree sequences of length N is
drawn (seeded), the prediction of :func:`netctl.ensemble.cavity_driver_fraction` is
computed from those sequences, and ``--samples`` configuration-model networks with exactly
those sequences (random stub matching, :func:`netctl.ensemble.configuration_model`) give
the ensemble mean of ``n_D = (N - |M*|) / N`` and its standard error
(sample standard deviation / sqrt(samples)). The script prints a Markdown table with the
prediction, Liu et al.'s mean of the two sides (the formula used before), the ensemble
mean +- standard error, ``z = (mean - prediction) / standard error`` and the trivial bound
``max(P_out(0), P_in(0))``, and exits 1 if any ``|z| >= 3``. Paste the table into
benchmarks/RESULTS.md.
"""

from __future__ import annotations

import argparse
import math
import sys
import time

import numpy as np

from netctl.ensemble import cavity_driver_fraction, configuration_model
from netctl.ensemble.null import n_unmatched

__all__ = ["FAMILIES", "degree_sequences_for"]


def _balance(out_d: np.ndarray, in_d: np.ndarray, rng: np.random.Generator) -> None:
    """Add links' worth of stubs at random states of the short side until both sums agree."""
    diff = int(in_d.sum() - out_d.sum())
    short = out_d if diff > 0 else in_d
    np.add.at(short, rng.integers(0, short.size, abs(diff)), 1)


def _power(n: int, gamma: float, kmin: int, rng: np.random.Generator) -> np.ndarray:
    """Discrete power law P(k) ~ k^-gamma for k >= kmin (continuous Pareto, floored)."""
    u = rng.random(n)
    return np.floor(kmin * (1.0 - u) ** (-1.0 / (gamma - 1.0))).astype(np.int64)


def _shifted(n: int, gamma: float, k0: int, rng: np.random.Generator) -> np.ndarray:
    """P(k) ~ (k + k0)^-gamma on k = 0..300 (REFERENCES.md §2 heavy-tailed check)."""
    k = np.arange(301)
    p = (k + k0) ** -float(gamma)
    return rng.choice(k, size=n, p=p / p.sum()).astype(np.int64)


def _silent(n: int, links: int, silent_out: float, silent_in: float,
            rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray]:
    """Random links among states of which a fraction never sends / never receives."""
    senders = np.flatnonzero(rng.random(n) >= silent_out)
    receivers = np.flatnonzero(rng.random(n) >= silent_in)
    src = rng.choice(senders, links)
    dst = rng.choice(receivers, links)
    return np.bincount(src, minlength=n), np.bincount(dst, minlength=n)


def degree_sequences_for(name: str, n: int, seed: int = 0) -> tuple[np.ndarray, np.ndarray]:
    """Out- and in-degree sequences (equal sums) of the family ``name`` at size ``n``."""
    rng = np.random.default_rng([seed, sum(map(ord, name))])
    kind, *par = name.split(":")
    if kind == "poisson":
        c = float(par[0]) / 2.0
        out_d, in_d = rng.poisson(c, n), rng.poisson(c, n)
    elif kind == "silent":
        return _silent(n, int(float(par[0]) * n), float(par[1]), float(par[2]), rng)
    elif kind == "power":
        out_d = _power(n, float(par[1]), int(par[2]), rng)
        in_d = _power(n, float(par[0]), int(par[2]), rng)
    elif kind == "shifted":
        out_d = _shifted(n, float(par[0]), int(par[1]), rng)
        in_d = _shifted(n, float(par[0]), int(par[1]), rng)
    elif kind == "poisson-power":
        out_d = rng.poisson(float(par[0]), n)
        in_d = _power(n, float(par[1]), 1, rng)
    elif kind == "regular-poisson":
        out_d = np.full(n, int(par[0]))
        in_d = rng.poisson(float(par[0]), n)
    else:
        raise ValueError(f"unknown family {name!r}")
    out_d, in_d = out_d.astype(np.int64), in_d.astype(np.int64)
    _balance(out_d, in_d, rng)
    return out_d, in_d


#: family -> description. Parameters after ':' are read by :func:`degree_sequences_for`.
FAMILIES: dict[str, str] = {
    "poisson:2": "directed Erdos-Renyi, <k> = 2 (one root)",
    "poisson:8": "directed Erdos-Renyi, <k> = 8 (three roots, symmetric core)",
    "poisson:12": "directed Erdos-Renyi, <k> = 12",
    "silent:4:0.3:0": "4 links per state, 30% of states never send (issue example)",
    "silent:5:0.1:0.2": "5 links per state, 10% never send, 20% never receive",
    "power:2.5:3.5:1": "power laws, in-exponent 2.5, out-exponent 3.5, k >= 1",
    "power:2.2:4.0:1": "power laws, in-exponent 2.2, out-exponent 4.0, k >= 1",
    "power:3.0:2.1:1": "power laws, in-exponent 3.0, out-exponent 2.1, k >= 1",
    "poisson-power:3:2.5": "Poisson out-degrees (mean 3), power-law in-degrees (2.5, k >= 1)",
    "shifted:3:5": "(k + 5)^-3 both ways (REFERENCES.md §2: cavity 0.46596)",
    "shifted:2.5:3": "(k + 3)^-2.5 both ways (REFERENCES.md §2: cavity 0.54729)",
    "regular-poisson:3": "every out-degree 3, Poisson in-degrees of mean 3",
}


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=float, default=1e5)
    ap.add_argument("--samples", type=int, default=20)
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--families", default=",".join(FAMILIES))
    args = ap.parse_args(argv)
    n = int(args.n)
    print(f"N = {n}, {args.samples} configuration-model samples per family; "
          f"SE = sample standard deviation / sqrt(samples)\n")
    print("| family | roots | bound | prediction | mean of sides (old) | ensemble mean +- SE "
          "| z | seconds |")
    print("|---|---|---|---|---|---|---|---|")
    worst = 0.0
    for fam in args.families.split(","):
        t0 = time.perf_counter()
        out_d, in_d = degree_sequences_for(fam, n, args.seed)
        p = cavity_driver_fraction(out_d, in_d)
        old = 0.5 * (p.unmatched_out + p.unmatched_in)
        ss = np.random.SeedSequence([args.seed, 7]).spawn(args.samples)
        fr = np.array([n_unmatched(*configuration_model(out_d, in_d, seed=s), n) / n
                       for s in ss])
        se = fr.std(ddof=1) / math.sqrt(fr.size)
        if se > 0:
            z = (fr.mean() - p.driver_fraction) / se
        else:  # every sample alike: agreement means equality up to rounding
            z = 0.0 if abs(fr.mean() - p.driver_fraction) < 1e-12 else math.inf
        worst = max(worst, abs(z))
        print(f"| {fam} | {p.n_roots} | {p.lower_bound:.5f} | {p.driver_fraction:.5f} | "
              f"{old:.5f} | {fr.mean():.5f} +- {se:.5f} | {z:+.2f} | "
              f"{time.perf_counter() - t0:.1f} |", flush=True)
    print(f"\nlargest |z| = {worst:.2f}")
    return 0 if worst < 3 else 1


if __name__ == "__main__":
    sys.exit(main())
