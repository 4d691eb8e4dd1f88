"""Cost of the strictness checks that run beside general-purpose parsers (issue 27).

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_read_checks.py --entries 5000000 --edges 200000 --repeat 3

* Matrix Market: :func:`netctl.io.mtx.read_mtx` on a synthetic real general coordinate
  file, against the same read with the entry-line count check
  (:func:`netctl.io.mtx._count_tokens`, which refuses extra numbers on an entry line that
  scipy's parser ignores) switched off; and the check alone.
* GraphML: :func:`netctl.io.graphml.read_graphml` on a synthetic file, against the
  second parsing pass alone (:func:`netctl.io.graphml._check_ids`: duplicate node ids
  with different attributes, edges to undeclared nodes).

Times are the best of ``--repeat`` runs in this process (the Matrix Market reads with
and without the check interleaved); the ratio column is time / the full read, so the
numbers compare within one run on a shared machine.
"""

from __future__ import annotations

import argparse
import os
import platform
import tempfile
import time
import warnings
from collections.abc import Callable

import numpy as np


def best(fn: Callable[[], object], repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--entries", type=int, default=5_000_000)
    ap.add_argument("--edges", type=int, default=200_000)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()

    import scipy.io
    import scipy.sparse as sp

    import netctl.io.mtx as mtx
    from netctl import StructuredSystem
    from netctl.io import graphml

    print(f"# {platform.node()} {platform.processor() or platform.machine()}, "
          f"{os.cpu_count()} CPUs, python {platform.python_version()}, "
          f"{time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}")
    rng = np.random.default_rng(7)
    with tempfile.TemporaryDirectory() as tmp:
        n = max(10, args.entries // 10)
        M = sp.coo_matrix((rng.random(args.entries), (rng.integers(0, n, args.entries),
                                                      rng.integers(0, n, args.entries))),
                          shape=(n, n))
        p = os.path.join(tmp, "big.mtx")
        scipy.io.mmwrite(p, M)
        data = open(p, "rb").read()
        size_end = data.find(b"\n", data.find(b"\n", data.find(b"\n") + 1) + 1) + 1

        def read() -> None:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                mtx.read_mtx(p)

        real = mtx._count_tokens
        n_entries = int(data[:size_end].split()[-1])
        with_check: list[float] = []
        without: list[float] = []
        def read_without() -> None:
            mtx._count_tokens = lambda d, s: 3 * n_entries  # the answer, without work
            try:
                read()
            finally:
                mtx._count_tokens = real

        for k in range(2 * args.repeat):  # interleaved, each first in turn (the first of
            if k % 2 == 0:                 # a pair pays for freeing the previous result)
                with_check.append(best(read, 1))
                without.append(best(read_without, 1))
            else:
                without.append(best(read_without, 1))
                with_check.append(best(read, 1))
        full, unchecked = min(with_check), min(without)
        alone = best(lambda: real(data, size_end), args.repeat)
        print(f"\nMatrix Market, {args.entries:,} entries ({len(data) / 1e6:.0f} MB)")
        print(f"{'what':38s} {'seconds':>8s} {'ratio':>6s}")
        for what, t in (("read_mtx (with the check)", full),
                        ("read_mtx, check returning at once", unchecked),
                        ("entry-line count check alone", alone)):
            print(f"{what:38s} {t:8.3f} {t / full:6.3f}")

        m = args.edges
        k = max(10, m // 5)
        src, dst = rng.integers(0, k, m), rng.integers(0, k, m)
        A = sp.csr_array((rng.random(m), (dst, src)), shape=(k, k))
        s = StructuredSystem.from_matrices(A, state_names=[f"bus{i}" for i in range(k)],
                                           weighted=True)
        g = os.path.join(tmp, "big.graphml")
        graphml.write_graphml(s, g)
        gdata = open(g, "rb").read()

        def gread() -> None:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                graphml.read_graphml(g)

        full = best(gread, args.repeat)
        alone = best(lambda: graphml._check_ids(g, gdata), args.repeat)
        print(f"\nGraphML, {k:,} nodes, {A.nnz:,} edges ({len(gdata) / 1e6:.0f} MB)")
        print(f"{'what':38s} {'seconds':>8s} {'ratio':>6s}")
        for what, t in (("read_graphml (both passes)", full),
                        ("second pass (_check_ids) alone", alone)):
            print(f"{what:38s} {t:8.3f} {t / full:6.3f}")


if __name__ == "__main__":
    main()
