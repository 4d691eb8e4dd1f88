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
        ptr, ind, tr, xptr, xind = _arrays(n_r, n_c, real, extra)
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


def _arrays(n_r, n_c, real, extra):
    ptr = np.zeros(n_r + 1, np.int64)
    for r, _c in real:
        ptr[r + 1] += 1
    np.cumsum(ptr, out=ptr)
    ind = np.array([c for _r, c in sorted(real)], np.int64)
    tr = transpose_index(ptr, ind, n_c)
    xptr = np.concatenate([[0], np.cumsum([len(e) for e in extra])]).astype(np.int64)
    xind = np.array([r for e in extra for r in e], np.int64)
    return ptr, ind, tr, xptr, xind


def _broom(rng):
    """Extra columns that each take their own barred row at once (first round), and one
    that reaches a free row only through a matched region where every column fans out
    to several rows (a later round, whose search holds many entries at a time)."""
    n_easy = int(rng.integers(1, 4))
    m = int(rng.integers(8, 40))  # region: rows 0..m (row m free), columns 0..m-1
    real = {(i, i) for i in range(m)}
    for i in range(m):
        for j in rng.integers(i + 1, m + 1, int(rng.integers(1, 4))).tolist():
            real.add((int(j), i))
    n_r, n_c = m + 1 + n_easy, m
    extra = [[m + 1 + k] for k in range(n_easy)] + [[0]]
    barred = np.zeros(n_r, np.uint8)
    barred[m + 1:] = 1
    full = np.zeros(n_easy + 1, np.uint8)
    full[:n_easy] = 1
    return n_r, n_c, real, extra, barred, full


def _random_case(rng):
    n_r, n_c = (int(v) for v in rng.integers(10, 60, 2))
    n_x = int(rng.integers(1, 8))
    real = {(int(r), int(c)) for r, c in zip(rng.integers(0, n_r, 2 * n_r),
                                             rng.integers(0, n_c, 2 * n_r))}
    extra = [sorted(set(rng.integers(0, n_r, int(rng.integers(1, 6))).tolist()))
             for _ in range(n_x)]
    barred = (rng.random(n_r) < 0.4).astype(np.uint8)
    full = (rng.random(n_x) < 0.5).astype(np.uint8)
    return n_r, n_c, real, extra, barred, full


@pytest.mark.parametrize("mode", ["python", "compiled"])
def test_search_that_runs_out_of_heap_is_run_again_to_the_same_matching(mode, monkeypatch):
    # the kernel never lengthens its heap: a search that finds it full returns -1 and
    # the caller calls again with a longer one (the rounds done kept, the search that
    # ran out started over); from a one-entry heap, doubled, that must end in the
    # matching and the counts of a run whose heap had room from the start (itself
    # checked against NetworkX above). In the broom cases a search runs out after a
    # round that changed the matching and the potentials.
    import netctl.graph.costmatch as cmod

    kernel = cmod._least_cost_extend
    short, late = [], []

    def counting(*args):
        status = kernel(*args)
        short.append(status < 0)
        late.append(status < 0 and args[12][1] > 0)  # state: pi_s, passes, touched
        return status

    monkeypatch.setattr(cmod, "_least_cost_extend", counting)
    rng = np.random.default_rng(11)
    runs_short = runs_late = 0
    with (_jit.always_python() if mode == "python" else _jit.always_compiled()):
        for trial in range(120):
            n_r, n_c, real, extra, barred, full = (_broom if trial % 2 else _random_case)(rng)
            n_x = len(extra)
            ptr, ind, (tptr, tind), xptr, xind = _arrays(n_r, n_c, real, extra)
            rm0, cm0 = _mwm_start(real, barred, n_r, n_c)
            live = np.ones(n_r, np.uint8)
            got = []
            for heap in (4 * (n_r + n_c + n_x + ind.size + xind.size), 1):
                rm, cm = rm0.copy(), cm0.copy()
                xm = np.full(n_x, -1, np.int64)
                short.clear()
                late.clear()
                counts = cmod._extend(tptr, tind, n_c, rm, cm, xptr, xind, xm, barred,
                                      full, live, heap_start=heap, grow=2)
                got.append((rm, cm, xm, counts, sum(short), any(late)))
            (rm1, cm1, xm1, c1, s1, _), (rm2, cm2, xm2, c2, s2, l2) = got
            assert s1 == 0, trial
            assert (rm1 == rm2).all() and (cm1 == cm2).all() and (xm1 == xm2).all(), trial
            assert c1 == c2, trial
            runs_short += s2 > 0
            runs_late += l2
    assert runs_short > 60 and runs_late > 10, (runs_short, runs_late)


def _mwm_start(real, barred, n_r, n_c):
    """A maximum matching of the real columns with as many barred rows as possible."""
    rm = np.full(n_r, -1, np.int64)
    cm = np.full(n_c, -1, np.int64)
    for r, c in _mwm(real, lambda r, c: BIG + int(barred[r])):
        rm[r], cm[c] = c, r
    return rm, cm
