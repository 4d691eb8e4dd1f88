"""Speed of the failure analyses (issue 24): audit of a design on 10^5 states, secure
placement on 10^4 states.

    PYTHONPATH=. python3 benchmarks/bench_failures.py [--n-audit 100000] [--n-place 10000]

Audit: a directed Erdős–Rényi network (mean degree 4), the design a minimum dedicated
one plus 20 redundant actuators; ``audit_design`` (one matching, dominators, then the
useful/useless test per non-critical actuator) against recomputing Lin's test once per
actuator (timed on 50 actuators, scaled to all: same run, so the ratio is fair).
Placement (network: directed Erdős–Rényi, mean degree 3, largest strongly
connected component, so strongly connected, rank deficient): ``secure_placement`` (N-1 over actuators) with the exact method given
``--time-limit`` seconds, then the two-step method, and the gap to the proven bound.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from netctl.generate import erdos_renyi
from netctl.structural import minimum_inputs
from netctl.structural.failures import audit_design, audit_links, fewest_failures, \
    secure_placement
from netctl.structural.failures._core import is_controlling


def _t(f):
    t = time.perf_counter()
    out = f()
    return out, time.perf_counter() - t


def _er_with_ring(n: int):
    """The largest strongly connected component of a directed Erdős–Rényi network (mean
    degree 4) of about ``n / 0.63`` states (about ``n`` states): every N-1 design exists there (a state
    without in-links would need two actuators), and ``A`` is rank deficient."""
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    from netctl import StructuredSystem

    g = erdos_renyi(int(n / 0.63), mean_degree=4.0, seed=3)
    _, lab = connected_components(g.A, directed=True, connection="strong")
    big = np.flatnonzero(lab == np.bincount(lab).argmax())
    sub = sp.csr_array(g.A[big][:, big])
    return StructuredSystem.from_matrices(sub)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n-audit", type=int, default=100_000)
    ap.add_argument("--n-place", type=int, default=10_000)
    ap.add_argument("--time-limit", type=float, default=30.0)
    ap.add_argument("--skip-audit", action="store_true")
    ap.add_argument("--skip-place", action="store_true")
    ap.add_argument("--k2", action="store_true", help="also k = 2 on case300")
    a = ap.parse_args()
    if not a.skip_audit:
        _audit(a)
    if not a.skip_place:
        _place(a)
    _grid(a)


def _grid(a: argparse.Namespace) -> None:
    """IEEE 300-bus case from pandapower (optional extra), first-order model."""
    try:
        import pandapower.networks as pn
    except ImportError:
        print("case300: pandapower not installed, skipped")
        return
    from netctl.io.power_grid import from_pandapower

    s = from_pandapower(pn.case300())
    runs = [("elements", 1), ("lines", 1)] + ([("elements", 2), ("lines", 2)]
                                              if a.k2 else [])
    for against, k in runs:
        r, t = _t(lambda: secure_placement(s, against=against, k=k,
                                           time_limit=a.time_limit))
        print(f"case300 ({s.n_states} states, {s.n_links} links) against {against} k={k}: "
              f"{t:.1f} s, method {r.method}, {r.sites.size} sites, lower bound "
              f"{r.lower_bound:g}, gap {100 * r.gap:.1f}%, verified {r.verified}, "
              f"scenarios {getattr(r, 'scenarios', 'all')}")


def _audit(a: argparse.Namespace) -> None:
    s = erdos_renyi(a.n_audit, mean_degree=4.0, seed=1)
    d = minimum_inputs(s, dedicated=True).drivers
    rng = np.random.default_rng(0)
    extra = rng.choice(np.setdiff1d(np.arange(a.n_audit), d), 20, replace=False)
    sysd = s.with_inputs(np.sort(np.concatenate([d, extra])))
    audit_design(erdos_renyi(200, seed=2).with_inputs([0, 1]))  # compile
    au, t_audit = _t(lambda: audit_design(sysd))
    ff, t_ff = _t(lambda: fewest_failures(sysd))
    ll, t_ll = _t(lambda: audit_links(sysd))
    B = sysd.B.tocsc()
    sample = np.arange(0, sysd.n_inputs, max(1, sysd.n_inputs // 50))[:50]

    def naive():
        for k in sample:
            keep = np.setdiff1d(np.arange(sysd.n_inputs), [k])
            is_controlling(sysd.A, B[:, keep].tocsr())
    _, t_naive = _t(naive)
    t_naive_all = t_naive / sample.size * sysd.n_inputs
    print(f"audit n={a.n_audit} links={s.n_links} actuators={sysd.n_inputs}: "
          f"audit_design {t_audit:.2f} s ({au.counts()}); fewest_failures {t_ff:.2f} s "
          f"(value {ff.value}); audit_links {t_ll:.2f} s ({ll.n_lines} lines, "
          f"{int(ll.breaking.sum())} breaking); per-actuator recomputation "
          f"{t_naive_all:.1f} s extrapolated from {sample.size} -> ratio "
          f"{t_naive_all / t_audit:.0f}x")


def _place(a: argparse.Namespace) -> None:
    p = _er_with_ring(a.n_place)
    r, t_p = _t(lambda: secure_placement(p, time_limit=a.time_limit))
    print(f"secure placement n={p.n_states} ({p.n_links} links): {t_p:.1f} s, method {r.method}, "
          f"{r.sites.size} sites, cost {r.cost:g}, lower bound {r.lower_bound:g}, "
          f"gap {100 * r.gap:.1f}%, verified {r.verified}, linear relaxation "
          f"{getattr(r, 'lp_bound', float('nan')):g}")
    r2, t_p2 = _t(lambda: secure_placement(p, method="two-step"))
    print(f"two-step alone n={p.n_states}: {t_p2:.1f} s, {r2.sites.size} sites, "
          f"gap {100 * r2.gap:.1f}% (to the linear relaxation), "
          f"verified {r2.verified}")


if __name__ == "__main__":
    main()
