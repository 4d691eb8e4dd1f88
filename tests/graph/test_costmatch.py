"""Extra columns matched at least cost (``netctl.graph.costmatch``), against NetworkX.

Reference outside the project: ``networkx.max_weight_matching`` (Galil's blossom
method; maxcardinality=True) on the whole bipartite graph, real and extra columns, with
edge weight ``BIG + reward``: it finds a matching of the largest size and, among those,
of the largest reward. The kernel, started from a maximum matching of the real columns
that matches as many barred rows as possible (also from NetworkX, weights
``BIG + barred``), must reach the same size and the same reward, run as Python and
compiled.
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest

from netctl import _jit
from netctl.graph.costmatch import extend_matching_least_cost
from netctl.graph.extra_columns import extend_matching
from netctl.graph.matching import transpose_index

BIG = 1000


def _mwm(edges, weight):
    G = nx.Graph()
    G.add_weighted_edges_from((("r", r), ("c", c), weight(r, c)) for r, c in edges)
    M = nx.max_weight_matching(G, maxcardinality=True)
    return {(a[1], b[1]) if a[0] == "r" else (b[1], a[1]) for a, b in M}


def _case(rng):
    n_r, n_c, n_x = (int(v) for v in rng.integers(1, 9, 3))
    real = {(int(r), int(c)) for r, c in zip(rng.integers(0, n_r, 2 * n_r),
                                             rng.integers(0, n_c, 2 * n_r))}
    extra = [sorted(set(rng.integers(0, n_r, int(rng.integers(1, 4))).tolist()))
             for _ in range(n_x)]
    barred = rng.random(n_r) < rng.random()
    full = rng.random(n_x) < 0.5
    return n_r, n_c, real, extra, barred, full


def _reward(barred, full, n_c):
    return lambda r, c: int(barred[r]) if c < n_c or full[c - n_c] else 0


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_least_cost_extension_matches_networkx_max_weight_matching(mode):
    rng = np.random.default_rng(5)
    checked = telling = 0
    for _ in range(300):
        n_r, n_c, real, extra, barred, full = _case(rng)
        start = _mwm(real, lambda r, c: BIG + int(barred[r]))
        rm = np.full(n_r, -1, np.int64)
        cm = np.full(n_c, -1, np.int64)
        for r, c in start:
            rm[r], cm[c] = c, r
        ptr = np.zeros(n_r + 1, np.int64)
        for r, _c in real:
            ptr[r + 1] += 1
        np.cumsum(ptr, out=ptr)
        ind = np.array([c for _r, c in sorted(real)], np.int64)
        tr = transpose_index(ptr, ind, n_c)
        xptr = np.concatenate([[0], np.cumsum([len(e) for e in extra])]).astype(np.int64)
        xind = np.array([r for e in extra for r in e], np.int64)
        # the same extension without costs (the earlier way), to count telling cases
        prm, _, _ = extend_matching(tr, n_c, rm, cm, (xptr, xind),
                                    np.full(len(extra), -1, np.int64))
        with (_jit.always_python() if mode == "python" else _jit.always_compiled()):
            xm = extend_matching_least_cost((ptr, ind), tr, n_c, rm, cm, (xptr, xind),
                                            barred, full)
        # a valid matching: real part as before in size, extra columns on their rows
        for k, r in enumerate(xm.tolist()):
            if r >= 0:
                assert r in extra[k] and rm[r] == n_c + k
        pairs = [(r, int(c)) for r, c in enumerate(rm.tolist()) if c >= 0]
        assert len({c for _r, c in pairs}) == len(pairs)
        assert all((r, c) in real for r, c in pairs if c < n_c)
        assert int((cm >= 0).sum()) == len(start)
        rew = _reward(barred, full, n_c)
        allx = real | {(r, n_c + k) for k, e in enumerate(extra) for r in e}
        ref = _mwm(allx, lambda r, c: BIG + rew(r, c))
        assert len(pairs) == len(ref)
        got = sum(rew(r, c) for r, c in pairs)
        want = sum(rew(r, c) for r, c in ref)
        assert got == want
        checked += 1
        plain = sum(rew(r, int(c)) for r, c in enumerate(prm.tolist()) if c >= 0)
        telling += int(plain < want)
    assert checked == 300 and telling > 30  # 48 of 300 tell them apart
