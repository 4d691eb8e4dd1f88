"""The fast control-capacity walk equals a straightforward one, step for step.

:func:`control_capacity` runs Jia & Barabási's random sampling of minimum driver sets
(Sci. Rep. 3:2354, 2013) as a basis-exchange walk in blocks, with shortcuts for steps
that need no search (drivers with empty rows, out-star leaves) and the drivers' time
credited apart. ``_straightforward`` below is the walk as first written: two arrays of
``default_rng(seed).integers(0, 2**62, steps)`` drawn up front, one alternating
breadth-first search per step, one uniform pick among the states it reaches, time
credited at once. Both start from the same maximum matching (netctl's), so the estimates
must be equal to the last bit, on random small graphs (hypothesis), stars, chains and
mixtures. The published values themselves are checked in ``test_node_control.py``
(exhaustive enumeration of minimum driver sets).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

from netctl import StructuredSystem
from netctl._jit import always_compiled, always_python
from netctl.graph.matching import maximum_matching
from netctl.structural._capacity_walk import random_blocks
from netctl.structural.node_control import control_capacity


def _credit(time_in, t0, t1, burn, batch_len, node):
    n_batches = time_in.shape[0]
    t = t0
    while t < t1:
        b = min((t - burn) // batch_len, n_batches - 1)
        end = t1 if b == n_batches - 1 else min(t1, burn + (b + 1) * batch_len)
        time_in[b, node] += end - t
        t = end


def _straightforward(system, sweeps, burn_in, seed):
    """Capacity and standard error by the plain walk (see the module docstring)."""
    A = system.pattern("A")
    indptr = np.asarray(A.indptr, np.int64)
    indices = np.asarray(A.indices, np.int64)
    n = system.n_states
    row_match, col_match = maximum_matching(indptr, indices, n)
    row_match, col_match = row_match.copy(), col_match.copy()
    drivers = [int(d) for d in np.flatnonzero(row_match < 0)]
    nd = len(drivers)
    if not nd:
        return np.zeros(n), np.zeros(n)
    burn = burn_in * nd
    steps = burn + sweeps * nd
    rng = np.random.default_rng(seed)
    rand_d = rng.integers(0, 2**62, steps)
    rand_v = rng.integers(0, 2**62, steps)
    n_batches = 20 if sweeps * nd >= 20 else 1
    batch_len = max((steps - burn) // n_batches, 1)
    time_in = np.zeros((n_batches, n))
    enter = {d: burn for d in drivers}
    for step in range(steps):
        k = int(rand_d[step]) % nd
        d = drivers[k]
        queue, parent = [d], {d: None}
        for r in queue:  # grows while it is read: breadth first
            for j in indices[indptr[r]:indptr[r + 1]]:
                rr = int(col_match[j])
                if rr >= 0 and rr not in parent:
                    parent[rr] = (r, int(j))
                    queue.append(rr)
        v = queue[int(rand_v[step]) % len(queue)]
        if v == d:
            continue
        row_match[v] = -1
        cur = v
        while cur != d:
            r, j = parent[cur]
            col_match[j] = r
            row_match[r] = j
            cur = r
        drivers[k] = v
        if step >= burn:
            _credit(time_in, enter.pop(d), step, burn, batch_len, d)
            enter[v] = step
        else:
            enter.pop(d)
            enter[v] = burn
    for d in drivers:
        _credit(time_in, enter[d], steps, burn, batch_len, d)
    total = steps - burn
    cap = time_in.sum(axis=0) / total
    se = np.zeros(n)
    if n_batches > 1:
        lengths = np.full(n_batches, float(batch_len))
        lengths[-1] = total - batch_len * (n_batches - 1)
        means = time_in / lengths[:, None]
        se = means.std(axis=0, ddof=1) / np.sqrt(n_batches)
    return cap, se


def _same(system, sweeps=30, burn_in=5, seed=0):
    want_cap, want_se = _straightforward(system, sweeps, burn_in, seed)
    for mode in (always_python, always_compiled):
        with mode():
            got = control_capacity(system, sweeps=sweeps, burn_in=burn_in, seed=seed)
        assert np.array_equal(got.capacity, want_cap), mode.__name__
        assert np.array_equal(got.standard_error, want_se), mode.__name__


def _edges(src, dst, n):
    return StructuredSystem.from_edges(np.asarray(src, np.int64), np.asarray(dst, np.int64), n)


@pytest.mark.parametrize("n", [2, 3, 9, 64])
@pytest.mark.parametrize("shape", ["out-star", "in-star", "chain", "out-star+loop"])
def test_stars_and_chains(shape, n):
    leaves = np.arange(1, n)
    hub = np.zeros(n - 1, np.int64)
    if shape == "out-star":
        s = _edges(hub, leaves, n)
    elif shape == "in-star":
        s = _edges(leaves, hub, n)
    elif shape == "chain":
        s = _edges(np.arange(n - 1), np.arange(1, n), n)
    else:  # a self-loop on a leaf: that row holds two columns, the search runs
        s = _edges(np.r_[hub, 1], np.r_[leaves, 1], n)
    _same(s, seed=n)


def test_two_out_stars_sharing_leaves_and_a_chain():
    # hubs 0 and 1 both point at leaves 2..9 (rows of two columns: searched), hub 10
    # points at 11..20 (rows of one column: the shortcut), chain 21 -> 22 -> 23
    src = [0] * 8 + [1] * 8 + [10] * 10 + [21, 22]
    dst = list(range(2, 10)) * 2 + list(range(11, 21)) + [22, 23]
    _same(_edges(src, dst, 24), sweeps=50, seed=3)


@settings(max_examples=60, deadline=None)
@given(st.integers(1, 12).flatmap(lambda n: st.tuples(
    st.just(n),
    st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)), max_size=3 * n,
             unique=True),
    st.integers(0, 2**32), st.integers(1, 40), st.integers(0, 6))))
# found by this test: the walk's cache-warming sum over the drivers' ONLY fields (-2, 0, -2,
# 1) came to -1, the value the kernel took for "never", and the block's log was dropped
@example((6, [(0, 1), (0, 3), (1, 1), (1, 2), (1, 5)], 1, 1, 0))
def test_random_small_graphs(case):
    n, edges, seed, sweeps, burn_in = case
    src = [u for u, _ in edges]
    dst = [v for _, v in edges]
    _same(_edges(src, dst, n), sweeps=sweeps, burn_in=burn_in, seed=seed)


@pytest.mark.parametrize("steps,block", [(1, 4), (10, 3), (1000, 64), (4096, 4096)])
@pytest.mark.parametrize("seed", [0, 7, 2**40])
def test_random_blocks_are_the_integers_drawn_up_front(seed, steps, block):
    rng = np.random.default_rng(seed)
    want_d = rng.integers(0, 2**62, steps)
    want_v = rng.integers(0, 2**62, steps)
    got = list(random_blocks(seed, steps, block))
    assert np.array_equal(np.concatenate([d for d, _ in got]), want_d)
    assert np.array_equal(np.concatenate([v for _, v in got]), want_v)
    assert all(d.size <= block for d, _ in got)
