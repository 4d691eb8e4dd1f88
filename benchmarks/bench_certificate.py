"""Sparse certificate: the two factorizations of its strongly connected blocks (by hand).

    python3 benchmarks/bench_certificate.py FILE [FILE ...]

For each network file (read as ``netctl verify`` reads it, a minimum dedicated input set
when the file has no inputs, ``independent`` weights, random start 0): the blocks of the
matched columns of ``[A B]``, the reciprocity of their links, and both factorizations
timed in turn -- the reference (COLAMD, partial pivoting) and the faster one
(``MMD_AT_PLUS_A``, threshold pivoting 0.1) -- with the margin each would report. Whole
verbs are timed as whole processes, before and after in turn (``in_turn`` and ``run_once``
of ``bench_verbs.py``, or ``/usr/bin/time -v``; see benchmarks/RESULTS.md, "Sparse
certificate on random directed networks").

Networks of the table (scenarios of our own, reproducible)::

    netctl generate erdos-renyi er_100000_6.txt --nodes 100000 --mean-degree 6 --seed 1
    netctl generate grid grid_316.txt --nodes 99856 --seed 1
"""

from __future__ import annotations

import sys
import time

import numpy as np
import scipy.sparse as sp


def main(paths: list[str]) -> None:
    from netctl.graph.components import strongly_connected_components
    from netctl.graph.matching import maximum_matching
    from netctl.io import read
    from netctl.models import resolve_model
    from netctl.numeric import certificate
    from netctl.numeric.rank import _EPS, _margin
    from netctl.numeric.realize import realize
    from netctl.structural import minimum_inputs
    from netctl.structural._engine import stack_AB

    for path in paths:
        s = resolve_model(read(path, None, orientation=None, undirected=False), None)
        if not s.n_inputs:
            s = minimum_inputs(s, dedicated=True).apply(s)
        real = realize(s, weights="independent", seed=0)
        indptr, indices, n_cols = stack_AB(s.A, s.B)
        rm, _ = maximum_matching(indptr, indices, n_cols)
        M = sp.hstack([real.A, real.B], format="csc")[:, rm].tocsr()
        M.sort_indices()
        k, lab = strongly_connected_components(M.indptr.astype(np.int64),
                                              M.indices.astype(np.int64))
        counts = np.bincount(lab, minlength=k)
        idx = np.flatnonzero(counts[lab] > 1)
        head = f"{path}: {s.n_states} states, {s.n_inputs} inputs"
        if idx.size == 0:
            print(f"{head}; no block of two or more states")
            continue
        order = idx[np.argsort(lab[idx], kind="stable")]
        sub = M[order][:, order].tocoo()
        same = lab[order][sub.row] == lab[order][sub.col]
        blk = sp.csc_matrix((sub.data[same], (sub.row[same], sub.col[same])),
                            shape=(order.size, order.size))
        tol = s.n_states * _EPS * max(float(np.abs(M.data).max()), 1.0)
        print(f"{head}; largest block {int(counts.max())}, {order.size} states in blocks, "
              f"reciprocity {certificate._reciprocity(real.A, order):.2f}")
        t = time.perf_counter()
        piv = certificate._partial_pivots(blk)
        t_ref = time.perf_counter() - t
        print(f"  reference: {t_ref:.2f} s, margin {_margin(float(piv.min()), 0.0, tol):.2f} "
              "decades")
        t = time.perf_counter()
        out = certificate._threshold_pivots(blk, tol)
        t_thr = time.perf_counter() - t
        if out is None:
            print(f"  threshold: {t_thr:.2f} s, exactly singular")
        else:
            print(f"  threshold: {t_thr:.2f} s, margin "
                  f"{_margin(float(out[0].min()), 0.0, out[1]):.2f} decades "
                  f"(tolerance raised {out[1] / tol:.3g}x by growth); ratio "
                  f"{t_thr / t_ref:.2f}")


if __name__ == "__main__":
    main(sys.argv[1:])
