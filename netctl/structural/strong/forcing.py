"""Forcing rules and compiled zero-forcing kernels for strong structural controllability.

The rules (which vertex may force, and whether it counts itself) follow from the
Popov–Belevitch–Hautus test; the derivation is in the docstring of
:mod:`netctl.structural.strong`. Kernels work on integer adjacency arrays (numba) and
trust their input; the public functions in :mod:`~netctl.structural.strong.check` and
:mod:`~netctl.structural.strong.minimum` validate it.

Orientation as everywhere in netctl: edge ``j -> i`` iff ``A[i, j] != 0``.
"""

from __future__ import annotations

import heapq
import warnings
from dataclasses import dataclass

import numpy as np

from netctl._csr import Pattern, diagonal_mask
from netctl._jit import njit
from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["DIAGONALS"]

DIAGONALS: dict[str, str] = {
    "as-given": "self-dynamics a_ii != 0 exactly where the pattern has a self-loop, "
                "a_ii = 0 elsewhere",
    "zero": "no self-dynamics: a_ii = 0 on every state; self-loops in the pattern are taken "
            "as zero",
    "nonzero": "self-dynamics on every state: a_ii != 0",
    "free": "a_ii may take any value, zero included",
}


# ---------------------------------------------------------------------- rules
@dataclass(frozen=True)
class _Rule:
    """One colour-change rule: per vertex, whether it counts itself (``closed``) and
    whether it may force while white (``white_ok``); ``lam`` is the eigenvalue used by
    the constructive witness (0 or 1)."""

    condition: str
    closed: np.ndarray
    white_ok: np.ndarray
    lam: int


def _check_diagonal(diagonal: object) -> str:
    if not isinstance(diagonal, str) or diagonal not in DIAGONALS:
        raise OptionError(f"unknown diagonal convention {diagonal!r}; choose one of "
                          f"{', '.join(repr(d) for d in DIAGONALS)} (see netctl.structural."
                          "strong.DIAGONALS).")
    return diagonal


def _loops(system: StructuredSystem, diagonal: str) -> np.ndarray:
    """Whether each state has a nonzero diagonal under ``diagonal`` (free: unused)."""
    n = system.n_states
    if diagonal == "zero":
        return np.zeros(n, bool)
    if diagonal == "nonzero":
        return np.ones(n, bool)
    return diagonal_mask(system.pattern("A"))


def _rules(loops: np.ndarray, diagonal: str, n_extra: int) -> list[_Rule]:
    """The rules for ``diagonal``; ``n_extra`` input vertices are appended (black,
    open neighbourhood, force only when black, which they always are)."""
    pad = np.zeros(n_extra, bool)
    n = loops.size
    if diagonal == "free":
        f = np.zeros(n + n_extra, bool)
        return [_Rule("all", f, f.copy(), 0)]
    closed0 = np.concatenate([loops, pad])
    ok0 = np.concatenate([np.ones(n, bool), pad])
    closed1 = np.concatenate([~loops, pad])
    return [_Rule("zero", closed0, ok0, 0), _Rule("nonzero", closed1, closed1.copy(), 1)]


@dataclass(frozen=True)
class _Graph:
    """Off-diagonal out- and in-adjacency of states (``0..n-1``) and input vertices
    (``n..n+m-1``)."""

    n: int
    m: int
    out_ptr: np.ndarray
    out_idx: np.ndarray
    in_ptr: np.ndarray
    in_idx: np.ndarray


@njit(cache=True, nogil=True)
def _in_adjacency(a_ptr, a_idx, b_ptr, b_idx, n, m):  # pragma: no cover - compiled
    """In-adjacency of states (off-diagonal entries of row i of A, then the inputs
    acting on i as vertices n + k); input vertices have none."""
    N = n + m
    ptr = np.zeros(N + 1, np.int64)
    for i in range(n):
        c = b_ptr[i + 1] - b_ptr[i]
        for p in range(a_ptr[i], a_ptr[i + 1]):
            if a_idx[p] != i:
                c += 1
        ptr[i + 1] = ptr[i] + c
    for i in range(n, N):
        ptr[i + 1] = ptr[i]
    idx = np.empty(ptr[N], np.int64)
    for i in range(n):
        q = ptr[i]
        for p in range(a_ptr[i], a_ptr[i + 1]):
            if a_idx[p] != i:
                idx[q] = a_idx[p]
                q += 1
        for p in range(b_ptr[i], b_ptr[i + 1]):
            idx[q] = n + b_idx[p]
            q += 1
    return ptr, idx


def _graph(A: Pattern, B: Pattern | None) -> _Graph:
    """Adjacency arrays from canonical CSR patterns (sorted, no duplicates; a system's
    stored :meth:`~netctl.system.StructuredSystem.pattern`), O(n + E)."""
    from netctl.graph import transpose_csr

    n = A.shape[0]
    m = 0 if B is None else B.shape[1]
    if B is None or m == 0:
        b_ptr = np.zeros(n + 1, np.int64)
        b_idx = np.zeros(0, np.int64)
    else:
        b_ptr, b_idx = B.indptr, B.indices
    in_ptr, in_idx = _in_adjacency(A.indptr, A.indices, b_ptr, b_idx, n, m)
    out_ptr, out_idx = transpose_csr(in_ptr, in_idx, n + m)
    return _Graph(n=n, m=m, out_ptr=out_ptr.astype(np.int64, copy=False),
                  out_idx=out_idx, in_ptr=in_ptr, in_idx=in_idx)


def _white_counts(g: _Graph, rule: _Rule, black: np.ndarray) -> np.ndarray:
    """Number of white vertices in each vertex's neighbourhood (vectorised)."""
    N = g.n + g.m
    src = np.repeat(np.arange(N, dtype=np.int64), np.diff(g.out_ptr))
    w = np.bincount(src, weights=~black[g.out_idx], minlength=N).astype(np.int64)
    w += (rule.closed & ~black).astype(np.int64)
    return w


# ---------------------------------------------------------------------- kernels
@njit(cache=True, nogil=True)
def _blacken(v, out_ptr, in_ptr, in_idx, closed, white_ok, black, w, queue, tail,
             heap, use_heap):  # pragma: no cover - compiled
    black[v] = True
    for p in range(in_ptr[v], in_ptr[v + 1]):
        j = in_idx[p]
        w[j] -= 1
        if white_ok[j] or black[j]:
            if w[j] == 1:
                queue[tail] = j
                tail += 1
            elif use_heap and w[j] >= 2:
                heapq.heappush(heap, (w[j], j))
    if closed[v]:
        w[v] -= 1
    if w[v] == 1:
        queue[tail] = v
        tail += 1
    elif use_heap and w[v] >= 2 and not white_ok[v]:
        heapq.heappush(heap, (w[v], v))
    return tail


@njit(cache=True, nogil=True)
def _drain(out_ptr, out_idx, in_ptr, in_idx, closed, white_ok, black, w, forcer, queue,
           head, tail, heap, use_heap):  # pragma: no cover - compiled
    n_forced = 0
    while head < tail:
        j = queue[head]
        head += 1
        if w[j] != 1 or not (white_ok[j] or black[j]):
            continue
        t = -1
        if closed[j] and not black[j]:
            t = j
        else:
            for p in range(out_ptr[j], out_ptr[j + 1]):
                if not black[out_idx[p]]:
                    t = out_idx[p]
                    break
        forcer[t] = j
        n_forced += 1
        tail = _blacken(t, out_ptr, in_ptr, in_idx, closed, white_ok, black, w, queue,
                        tail, heap, use_heap)
    return head, tail, n_forced


@njit(cache=True, nogil=True)
def _closure_kernel(out_ptr, out_idx, in_ptr, in_idx, closed, white_ok, black, w,
                    forcer):  # pragma: no cover - compiled
    N = black.size
    queue = np.empty(3 * N + 1, np.int64)
    tail = 0
    for j in range(N):
        if w[j] == 1 and (white_ok[j] or black[j]):
            queue[tail] = j
            tail += 1
    heap = [(np.int64(0), np.int64(0))]
    heap.pop()
    _drain(out_ptr, out_idx, in_ptr, in_idx, closed, white_ok, black, w, forcer, queue,
           0, tail, heap, False)


@njit(cache=True, nogil=True)
def _greedy_kernel(out_ptr, out_idx, in_ptr, in_idx, closed, white_ok, black, w, forcer,
                   n_states, allowed):  # pragma: no cover - compiled
    """Greedy forcing: whenever forcing stalls, blacken one ``allowed`` white vertex next
    to a vertex allowed to force with the fewest white neighbours (ties: lowest index),
    so that it comes closest to forcing; if none exists, the lowest-index allowed white
    state. Stops early (states left white) when no allowed white state remains."""
    N = black.size
    queue = np.empty(3 * N + 1, np.int64)
    tail = 0
    heap = [(np.int64(0), np.int64(0))]
    heap.pop()
    for j in range(N):
        if white_ok[j] or black[j]:
            if w[j] == 1:
                queue[tail] = j
                tail += 1
            elif w[j] >= 2:
                heap.append((w[j], np.int64(j)))
    heapq.heapify(heap)
    n_white = 0
    for v in range(n_states):
        if not black[v]:
            n_white += 1
    chosen = np.empty(n_states, np.int64)
    n_chosen = 0
    head = 0
    scan = 0
    first = out_ptr[:-1].copy()  # per vertex: where the search for a white target resumes
    while True:
        # queue positions are reused: pushes since the last drain start at 0
        head, tail, nf = _drain(out_ptr, out_idx, in_ptr, in_idx, closed, white_ok, black,
                                w, forcer, queue, head, tail, heap, True)
        n_white -= nf
        head = 0
        tail = 0
        if n_white <= 0:
            break
        t = -1
        while len(heap) > 0:
            k, j = heapq.heappop(heap)
            if w[j] != k or k < 2 or not (white_ok[j] or black[j]):
                continue
            # its first allowed white out-neighbour: states only turn black, so the
            # scan resumes where it stopped last time (a hub is not read again from its
            # start for every leaf: an out-star was quadratic)
            p = first[j]
            end = out_ptr[j + 1]
            while p < end and (black[out_idx[p]] or not allowed[out_idx[p]]):
                p += 1
            first[j] = p
            if p < end:
                t = out_idx[p]
            if t < 0 and closed[j] and not black[j] and allowed[j]:
                t = j
            if t >= 0:
                break
        if t < 0:
            while scan < n_states and (black[scan] or not allowed[scan]):
                scan += 1
            if scan >= n_states:
                break  # no allowed white state left: the caller reports the rest
            t = scan
        chosen[n_chosen] = t
        n_chosen += 1
        n_white -= 1
        tail = _blacken(t, out_ptr, in_ptr, in_idx, closed, white_ok, black, w, queue,
                        tail, heap, True)
    return chosen[:n_chosen]


@njit(cache=True, nogil=True)
def _close_nb(out_ptr, out_idx, in_ptr, in_idx, closed, white_ok,
              black0):  # pragma: no cover - compiled
    """Final colouring from ``black0`` (white counts computed here)."""
    N = black0.size
    black = black0.copy()
    w = np.zeros(N, np.int64)
    for j in range(N):
        c = 0
        for p in range(out_ptr[j], out_ptr[j + 1]):
            if not black[out_idx[p]]:
                c += 1
        if closed[j] and not black[j]:
            c += 1
        w[j] = c
    forcer = np.full(N, -1, np.int64)
    _closure_kernel(out_ptr, out_idx, in_ptr, in_idx, closed, white_ok, black, w, forcer)
    return black


@njit(cache=True, nogil=True)
def _smallest_white(out_ptr, out_idx, in_ptr, in_idx, closed2, ok2, black0,
                    n):  # pragma: no cover - compiled
    """The smallest set of states some rule leaves white (empty: every rule forces)."""
    best = np.zeros(n, np.bool_)
    best_size = n + 1
    for r in range(closed2.shape[0]):
        black = _close_nb(out_ptr, out_idx, in_ptr, in_idx, closed2[r], ok2[r], black0)
        k = 0
        for v in range(n):
            if not black[v]:
                k += 1
        if 0 < k < best_size:
            best_size = k
            for v in range(n):
                best[v] = not black[v]
    return best, (best_size if best_size <= n else 0)


@njit(cache=True, nogil=True)
def _minimal_fort(out_ptr, out_idx, in_ptr, in_idx, closed2, ok2, S, n,
                  N):  # pragma: no cover - compiled
    """A minimal fort disjoint from ``S`` (n-mask), or an empty mask when ``S`` forces
    under every rule: the white set left by ``S``, shrunk by blackening everything
    outside it plus one member and keeping what some rule still leaves white."""
    black0 = np.ones(N, np.bool_)
    for v in range(n):
        black0[v] = S[v]
    F, size = _smallest_white(out_ptr, out_idx, in_ptr, in_idx, closed2, ok2, black0, n)
    if size == 0:
        return F
    k = 0
    while k < size:
        # the k-th member of F
        u = -1
        c = 0
        for v in range(n):
            if F[v]:
                if c == k:
                    u = v
                    break
                c += 1
        for v in range(n):
            black0[v] = not F[v]
        black0[u] = True
        F2, size2 = _smallest_white(out_ptr, out_idx, in_ptr, in_idx, closed2, ok2, black0,
                                    n)
        if size2 > 0:
            F = F2
            size = size2
            k = 0
        else:
            k += 1
    return F


@njit(cache=True, nogil=True)
def _packing(pool, order, S, forb, n):  # pragma: no cover - compiled
    """Greedy number of pairwise disjoint forts of the pool (in ``order``, smallest
    first) that ``S`` does not meet, after removing forbidden vertices; -1 when one of
    them is left empty."""
    used = np.zeros(n, np.bool_)
    count = 0
    for f in order:
        hit = False
        empty = True
        clash = False
        for v in range(n):
            if pool[f, v]:
                if S[v]:
                    hit = True
                    break
                if not forb[v]:
                    empty = False
                    if used[v]:
                        clash = True
        if hit:
            continue
        if empty:
            return -1
        if clash:
            continue
        for v in range(n):
            if pool[f, v] and not forb[v]:
                used[v] = True
        count += 1
    return count


def _closure(g: _Graph, rule: _Rule, black0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Final colouring and forcer of each forced vertex (-1 when not forced)."""
    black = black0.copy()
    w = _white_counts(g, rule, black)
    forcer = np.full(black.size, -1, np.int64)
    if black.size:
        _closure_kernel(g.out_ptr, g.out_idx, g.in_ptr, g.in_idx, rule.closed,
                        rule.white_ok, black, w, forcer)
    return black, forcer


def _greedy(g: _Graph, rule: _Rule, black0: np.ndarray,
            allowed: np.ndarray | None = None) -> np.ndarray:
    """Greedy forcing set added to ``black0``, its members drawn from ``allowed`` (every
    state when None)."""
    black = black0.copy()
    if black.size == 0:
        return np.zeros(0, np.int64)
    ok = np.ones(g.n, np.bool_) if allowed is None else np.asarray(allowed, np.bool_)
    w = _white_counts(g, rule, black)
    forcer = np.full(black.size, -1, np.int64)
    return _greedy_kernel(g.out_ptr, g.out_idx, g.in_ptr, g.in_idx, rule.closed,
                          rule.white_ok, black, w, forcer, g.n, ok)


def _prepare(system: StructuredSystem, diagonal: object) -> str:
    if not isinstance(system, StructuredSystem):
        raise OptionError(f"expected a StructuredSystem, found {type(system).__name__}; build "
                          "one with StructuredSystem.from_edges or netctl.io.read.")
    diagonal = _check_diagonal(diagonal)
    if diagonal == "zero" and system.n_self_loops:
        loops = np.flatnonzero(diagonal_mask(system.pattern("A")))
        shown = ", ".join(system.state_names[i] for i in loops[:5])
        warnings.warn(f"diagonal='zero' treats the {loops.size} self-loop(s) in the pattern "
                      f"({shown}{', ...' if loops.size > 5 else ''}) as a_ii = 0; use "
                      "diagonal='as-given' to keep them as self-dynamics.", UserWarning,
                      stacklevel=3)
    return diagonal
