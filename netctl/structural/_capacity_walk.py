"""The basis-exchange walk behind :func:`netctl.structural.node_control.control_capacity`.

The walk runs in blocks of :data:`BLOCK` steps, each with its own block of random
numbers, so its memory is O(n + BLOCK) however many steps it takes (the former kernel
drew two arrays of ``(sweeps + burn_in) * n_drivers`` random numbers up front: 7 GB for
an out-star of 10^6 states). The random numbers are the same as before, step for step:
step ``t`` picks its driver with the ``t``-th of ``steps`` numbers drawn by
``default_rng(seed).integers(0, 2**62, steps)`` and its new driver with the ``t``-th of
the next ``steps`` numbers, so the estimates do not change.

Steps that cannot change anything are skipped without a search: a driver whose row of
``A`` is empty (a state with no incoming link) has no alternating path to another
state, stays a driver for ever and keeps its place in the driver list, so a step that
picks its place moves nothing. A network whose drivers are all of that kind (an
in-star: every leaf) does not walk at all.
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import Any

import numpy as np

from netctl._jit import njit

__all__ = ["BLOCK", "alone", "credit_all", "credit_log", "places", "random_blocks", "records", "single",
           "walk"]

#: Steps of the walk per block of random numbers (common practice, no source: large
#: enough that a block's Python overhead is negligible, small enough to stay in cache).
BLOCK = 1 << 18

_HIGH = 2**62


def random_blocks(seed: int, steps: int, block: int = BLOCK
                  ) -> Iterator[tuple[np.ndarray, np.ndarray]]:
    """The two random numbers of every step, ``block`` steps at a time.

    Yields ``(rand_d, rand_v)``: consecutive pieces of ``g.integers(0, 2**62, steps)``
    and of the ``steps`` numbers ``g`` draws after them, ``g = default_rng(seed)``.

    Notes
    -----
    NumPy draws a bounded 64-bit integer by Lemire's multiply-shift [1]_: for the range
    ``2**62`` (a power of two) it takes exactly one raw 64-bit word ``x`` per number and
    returns ``x >> 2`` (the high 64 bits of ``x * 2**62``), never rejecting. So the
    second stream starts ``steps`` words on (PCG64's ``advance``) and both are the raw
    words shifted, about 10x faster than ``integers``. Should a NumPy version draw
    differently, a check on a copy of the generator notices it and both streams come
    from ``integers`` itself, block by block (the second after skipping ``steps``).

    References
    ----------
    .. [1] D. Lemire, "Fast random integer generation in an interval", ACM Trans. Model.
       Comput. Simul. 29(1):3, 2019. doi:10.1145/3230636
    """
    bits_d: Any = np.random.default_rng(seed).bit_generator
    if hasattr(bits_d, "advance") and _raw_words_agree(bits_d):
        bits_v = type(bits_d)()
        bits_v.state = bits_d.state
        bits_v.advance(steps)
        for lo in range(0, steps, block):
            m = min(block, steps - lo)
            yield ((bits_d.random_raw(m) >> np.uint64(2)).view(np.int64),
                   (bits_v.random_raw(m) >> np.uint64(2)).view(np.int64))
        return
    gen_d = np.random.default_rng(seed)  # pragma: no cover - other NumPy versions
    gen_v = np.random.default_rng(seed)  # pragma: no cover
    for lo in range(0, steps, block):  # pragma: no cover
        gen_v.integers(0, _HIGH, min(block, steps - lo))
    for lo in range(0, steps, block):  # pragma: no cover
        m = min(block, steps - lo)
        yield gen_d.integers(0, _HIGH, m), gen_v.integers(0, _HIGH, m)


def _raw_words_agree(bits: np.random.BitGenerator) -> bool:
    """Whether ``integers(0, 2**62)`` is the raw words shifted right by 2 here."""
    a = type(bits)()
    a.state = bits.state
    b = type(bits)()
    b.state = bits.state
    drawn = np.random.Generator(a).integers(0, _HIGH, 64)
    raw = (b.random_raw(64) >> np.uint64(2)).view(np.int64)
    return bool(np.array_equal(drawn, raw)) and a.state == b.state


#: How many steps' places and records :func:`walk` reads into the cache at a time
#: (common practice, no source: their cache lines, 2 x 64 bytes a step, fit in a
#: core's L2 cache; measured, see benchmarks/RESULTS.md).
AHEAD = 2048

#: Fields of a state's record in :func:`walk` (one 64-byte cache line a state, so a
#: step reads one line per state it visits instead of one per array): its row's span in
#: ``indices``, the row's first column, the last step whose search saw it, its parents
#: in that search, and :func:`single` of its row.
START, END, FIRST, STAMP, PROW, PCOL, SINGLE = range(7)

#: Fields of a place of the driver list: the driver there, the step from which its time
#: counts, and :func:`single` of its row.
DRIVER, ENTER, ONLY = range(3)


def single(indptr: np.ndarray, indices: np.ndarray) -> np.ndarray:
    """Per row: its only column if it has exactly one, -2 if it is empty, else -1."""
    deg = np.diff(indptr)
    out = np.full(deg.size, -1, np.int64)
    out[deg == 0] = -2
    one = deg == 1
    out[one] = indices[indptr[:-1][one]]
    return out


def records(indptr: np.ndarray, indices: np.ndarray, only: np.ndarray) -> np.ndarray:
    """The per-state records of :func:`walk` (fields :data:`START` ...)."""
    n = indptr.size - 1
    rec = np.full((n, 8), -1, np.int64)
    rec[:, START] = indptr[:-1]
    rec[:, END] = indptr[1:]
    has = indptr[1:] > indptr[:-1]
    rec[has, FIRST] = indices[indptr[:-1][has]]
    rec[:, SINGLE] = only
    return rec


def alone(col_match: np.ndarray, only: np.ndarray) -> np.ndarray:
    """Per column ``j``: whether its matched row holds ``j`` alone."""
    matched = col_match >= 0
    out = np.zeros(col_match.size, np.bool_)
    out[matched] = only[col_match[matched]] == np.flatnonzero(matched)
    return out


def places(drivers: np.ndarray, only: np.ndarray, burn: int) -> np.ndarray:
    """The driver list of :func:`walk` (fields :data:`DRIVER`, :data:`ENTER`,
    :data:`ONLY`), every driver's time counting from ``burn``."""
    pl = np.zeros((drivers.size, 4), np.int64)
    pl[:, DRIVER] = drivers
    pl[:, ENTER] = burn
    pl[:, ONLY] = only[drivers]
    return pl


@njit(cache=True)
def walk(rec, indices, col_match, col_alone, pl, log, queue, first, rand_d, rand_v,
         burn):  # pragma: no cover - compiled
    """Run steps ``first .. first + rand_d.size - 1`` of the walk (state in place).

    ``rec``: the states' records (:func:`records`); ``col_alone``: :func:`alone`, kept
    up to date; ``pl``: the driver list (:func:`places`; a step replaces the driver it picked in
    its place); ``col_match``: the row matched to each column (the walk needs no other
    side of the matching). Returns how many rows of ``log`` it filled: ``(v, t0, t1)``,
    state ``v`` was a driver from step ``t0`` to ``t1 - 1`` (after burn-in); the caller
    credits them with :func:`credit_log` (apart, so that their scattered reads overlap
    instead of stalling the walk).

    Two kinds of step need no search. A driver whose row is empty (``ONLY == -2``)
    reaches no other state: the step moves nothing. A driver whose row holds one column
    ``j``, matched to a row that holds ``j`` alone (the leaves of an out-star), reaches
    exactly that row: the search's queue would be ``[d, m]`` and the step picks
    ``queue[rand_v & 1]``, as the search would.
    """
    nd = pl.shape[0]
    m = rand_d.size
    c = 0
    sink = 0
    ks = np.empty(min(AHEAD, m), np.int64)
    for i in range(m):
        if i % AHEAD == 0:
            # read, in passes of independent reads whose cache misses overlap, the
            # places and records the next AHEAD steps will read first (the values are
            # not used, a step may change them: this only brings them into the cache)
            top = min(i + AHEAD, m)
            for a in range(i, top):
                ka = rand_d[a] % nd
                ks[a - i] = ka
                sink += pl[ka, ONLY] + 2  # >= 0 (ONLY >= -2)
            for a in range(i, top):
                ka = ks[a - i]
                if pl[ka, ONLY] == -1:
                    sink += rec[pl[ka, DRIVER], START]
        step = first + i
        k = ks[i % AHEAD]
        o = pl[k, ONLY]
        if o == -2:
            continue
        d = pl[k, DRIVER]
        v = d
        if o >= 0 and col_alone[o]:
            if rand_v[i] & 1 == 0:
                continue
            v = col_match[o]
            ov = o  # v held o alone
            col_match[o] = d  # and so does d: col_alone[o] stays
        else:
            # alternating BFS over rows from the driver row d; rec[r, STAMP] == step: seen
            head = 0
            tail = 1
            queue[0] = d
            rec[d, STAMP] = step
            while head < tail:
                r = queue[head]
                head += 1
                for e in range(rec[r, START], rec[r, END]):
                    j = rec[r, FIRST] if e == rec[r, START] else indices[e]
                    rr = col_match[j]
                    if rr >= 0 and rec[rr, STAMP] != step:
                        rec[rr, STAMP] = step
                        rec[rr, PROW] = r
                        rec[rr, PCOL] = j
                        queue[tail] = rr
                        tail += 1
            if tail == 1:
                continue
            if tail & (tail - 1) == 0:  # a power of two: the remainder is a mask
                v = queue[rand_v[i] & (tail - 1)]
            else:
                v = queue[rand_v[i] % tail]
            if v == d:
                continue
            ov = rec[v, SINGLE]
            # flip the alternating path d ... v: d becomes matched, v unmatched
            cur = v
            while cur != d:
                j = rec[cur, PCOL]
                cur = rec[cur, PROW]
                col_match[j] = cur
                col_alone[j] = rec[cur, SINGLE] == j
        pl[k, DRIVER] = v
        pl[k, ONLY] = ov
        if step >= burn:
            log[c, 0] = d
            log[c, 1] = pl[k, ENTER]
            log[c, 2] = step
            c += 1
            pl[k, ENTER] = step
        else:
            pl[k, ENTER] = burn
    if sink < 0:  # never (a sum of non-negative terms): keeps the reads ahead from
        # being optimized away. It was `sink == -1` over the raw ONLY values (-2, -1 or a
        # column), which a small network can sum to: the block's log was then dropped
        c = -1
    return c


@njit(cache=True)
def credit(time_in, t0, t1, burn, batch_len, n_batches, node):  # pragma: no cover
    """Add the steps ``t0 .. t1 - 1`` to ``node``'s time in the batches they fall in."""
    t = t0
    while t < t1:
        b = min((t - burn) // batch_len, n_batches - 1)
        end = t1 if b == n_batches - 1 else min(t1, burn + (b + 1) * batch_len)
        time_in[b, node] += end - t
        t = end


@njit(cache=True)
def credit_log(time_in, log, count, burn, batch_len):  # pragma: no cover
    """Credit the first ``count`` rows ``(v, t0, t1)`` of ``log`` (see :func:`walk`)."""
    n_batches = time_in.shape[0]
    sink = 0.0
    for lo in range(0, count, AHEAD):
        top = min(lo + AHEAD, count)
        for c in range(lo, top):  # into the cache first, misses overlapping (as in walk)
            sink += time_in[min((log[c, 1] - burn) // batch_len, n_batches - 1), log[c, 0]]
        for c in range(lo, top):
            credit(time_in, log[c, 1], log[c, 2], burn, batch_len, n_batches, log[c, 0])
    return sink


@njit(cache=True)
def credit_all(time_in, pl, t1, burn, batch_len):  # pragma: no cover
    """Credit every current driver's time up to step ``t1`` (the end of the walk)."""
    n_batches = time_in.shape[0]
    for k in range(pl.shape[0]):
        credit(time_in, pl[k, ENTER], t1, burn, batch_len, n_batches, pl[k, DRIVER])
