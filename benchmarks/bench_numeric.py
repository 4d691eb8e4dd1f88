"""Numeric rank tests: speed against a reference operation in the same run (by hand).

    python3 benchmarks/bench_numeric.py            # n = 2000 / 1000 / 10^6 (several minutes)
    python3 benchmarks/bench_numeric.py --quick    # small sizes, a smoke run
    python3 benchmarks/bench_numeric.py --networks DIR   # files for the verb timings (4.)

1. staircase (netctl.numeric.staircase kernel) at n = 2000 against one numpy SVD of
   [A B] of the same size (target: within 3x); one and five dedicated inputs.
2. modular test (exact Krylov rank over GF(2^61-1), python-flint) at n = 1000.
3. sparse certificate on 10^6-state networks: a 1000 x 1000 grid with links both ways
   (one input) and a tree-like network with 20 % extra local links (minimum inputs).

4. Whole verbs, before / after (issue 22, item 4): ``--networks DIR`` writes sparse
   directed networks of 120, 200, 1000 and 2000 states (mean out-degree 4 plus a self-loop on
   every state: damping), then time two code trees as whole processes in turn (before,
   after, before, after, ... after one warm-up of each; medians and medians of the paired
   ratios after/before), as ``in_turn`` and ``run_once`` of ``bench_verbs.py`` do
   (``os.wait4``: wall, user + system CPU, peak resident set), or by hand with
   ``/usr/bin/time -v``, from a neutral folder (``python3 -m`` puts the working folder
   first on ``sys.path``)::

       /usr/bin/time -v env PYTHONPATH=BEFORE python3 -m netctl modes DIR/net1000.txt \\
           --weights independent --quiet
       /usr/bin/time -v env PYTHONPATH=AFTER python3 -m netctl modes DIR/net1000.txt \\
           --weights independent --quiet
       (three such pairs; the same for ``energy DIR/net120.txt --weights independent
        --json --quiet``: the Gramian, the rank test and the greedy choice of the
        structural count)

Networks are synthetic scenarios of our own making (seeded). The machine is shared:
quote ratios from one run, not absolute times.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from netctl import StructuredSystem
from netctl.numeric import modular, sparse_certificate
from netctl.numeric.rank import _default_tol, staircase_dimension
from netctl.structural import controllability, minimum_inputs


def timed(f, *a, **k):
    t = time.perf_counter()
    out = f(*a, **k)
    return out, time.perf_counter() - t


def random_dense(n, m, rng):
    A = (rng.random((n, n)) < 4.0 / n) * rng.uniform(0.5, 1.5, (n, n))
    A = A + np.diag(-rng.uniform(0.5, 1.5, n))      # self-dynamics: controllable patterns
    B = np.zeros((n, m))
    B[rng.choice(n, m, replace=False), np.arange(m)] = 1.0
    return A, B


def grid(k):
    n = k * k
    idx = np.arange(n).reshape(k, k)
    a = np.concatenate([idx[:, :-1].ravel(), idx[:-1, :].ravel()])
    b = np.concatenate([idx[:, 1:].ravel(), idx[1:, :].ravel()])
    return StructuredSystem.from_edges(np.concatenate([a, b]), np.concatenate([b, a]), n,
                                       inputs=[0])


def tree_like(n, rng):
    parent = (rng.random(n) * np.arange(n)).astype(np.int64)
    child, par = np.arange(1, n), parent[1:]
    extra = int(0.2 * n)
    u = rng.integers(1, n, extra)
    v = np.maximum(0, u - rng.integers(1, 50, extra))
    a, b = np.concatenate([child, u]), np.concatenate([par, v])
    src, dst = np.concatenate([a, b]), np.concatenate([b, a])
    key = np.unique(src * n + dst)
    key = key[key // n != key % n]
    s = StructuredSystem.from_edges(key // n, key % n, n)
    return minimum_inputs(s, dedicated=True).apply(s)


def write_networks(folder: str) -> None:
    """Edge lists ``net{n}.txt`` for the whole-verb timings (a scenario of our own): 200,
    1000 and 2000 states from one random stream, 120 states from another."""
    import os

    os.makedirs(folder, exist_ok=True)
    for sizes, seed in (((200, 1000, 2000), 20261204), ((120,), 20261205)):
        _write_sizes(folder, sizes, np.random.default_rng(seed))


def _write_sizes(folder: str, sizes: tuple[int, ...], rng: np.random.Generator) -> None:
    import os

    for n in sizes:
        u, v = rng.integers(0, n, 4 * n), rng.integers(0, n, 4 * n)
        keep = u != v
        pairs = sorted(set(zip(u[keep].tolist(), v[keep].tolist())))
        with open(os.path.join(folder, f"net{n}.txt"), "w") as fh:
            fh.writelines(f"n{a} n{b}\n" for a, b in pairs)
            fh.writelines(f"n{a} n{a}\n" for a in range(n))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--networks", metavar="DIR", help="write the verb-timing networks")
    args = ap.parse_args()
    if args.networks:
        write_networks(args.networks)
        return
    rng = np.random.default_rng(20261202)
    n_dense = 400 if args.quick else 2000
    n_mod = 200 if args.quick else 1000
    k_grid = 100 if args.quick else 1000
    n_tree = 10_000 if args.quick else 1_000_000

    print(f"## staircase vs one numpy SVD of [A B], n = {n_dense}")
    for m in (1, 5):
        A, B = random_dense(n_dense, m, rng)
        _, t_svd = timed(np.linalg.svd, np.hstack([A, B]))
        (dim, blocks, dec, _), t_st = timed(staircase_dimension, A, B, _default_tol(A, B))
        print(f"m={m}: svd {t_svd:.2f} s, staircase {t_st:.2f} s, ratio {t_st / t_svd:.2f}; "
              f"dimension {dim}, {len(blocks)} blocks, smallest kept {dec.kept:.3g}")

    print(f"## modular (exact, GF(2^61-1)) at n = {n_mod}")
    for m in (1, 3):
        A, B = random_dense(n_mod, m, rng)
        s = StructuredSystem.from_matrices(A, B)
        r, t = timed(modular, s)
        c, t_c = timed(controllability, s)
        print(f"m={m}: modular {t:.2f} s, dimension {r.dimension}, bound {r.failure_bound:.2g}; "
              f"structural {c.controllable_dimension} in {t_c:.3f} s")

    print("## sparse certificate")
    for name, s in ((f"grid {k_grid}x{k_grid}, 1 input", grid(k_grid)),
                    (f"tree-like n={n_tree}", tree_like(n_tree, rng))):
        r, t = timed(sparse_certificate, s, seed=1)
        c, t_c = timed(controllability, s, dimension=False)
        print(f"{name}: {s.n_states} states, {s.A.nnz} links, {s.n_inputs} inputs; "
              f"certificate {t:.2f} s (largest block {int(r.blocks[0]) if r.blocks.size else 1}, "
              f"margin {r.margin:.3g} decades, dimension {r.dimension}); structural test "
              f"{t_c:.2f} s ({'controllable' if c.controllable else 'not'})")


if __name__ == "__main__":
    main()
