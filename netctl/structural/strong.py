r"""Strong structural controllability: controllable for *every* nonzero choice of weights.

A structured pair ``(A, B)`` is *strongly* structurally controllable when every
realization with the given zero/nonzero pattern is controllable (Mayeda & Yamada [1]_),
not only almost every one. It is decided by zero forcing (colour-change) rules on the
graph [2]_, [3]_; which rule applies depends on what is assumed about the diagonal
``a_ii`` (the self-dynamics), so the convention is always explicit (:data:`DIAGONALS`).

Orientation as everywhere in netctl: edge ``j -> i`` iff ``A[i, j] != 0``.

Derivation of the forcing rules (PBH on the left eigenvector)
-------------------------------------------------------------
``(A, B)`` is uncontrollable iff some ``q != 0`` and ``lambda`` satisfy
``q^T (A - lambda I) = 0`` and ``q^T B = 0`` (Popov–Belevitch–Hautus). Column ``j`` of
the first equation reads

.. math:: \sum_{i \ne j,\ a_{ij} \ne 0} q_i a_{ij} + q_j (a_{jj} - \lambda) = 0,

and column ``k`` of the second ``sum_i q_i b_ik = 0``. Call state ``i`` *black* once
``q_i = 0`` is proven, *white* otherwise. If one such equation has exactly one term whose
``q`` is not yet known to vanish, that ``q`` must vanish (the coefficient is nonzero):
"column ``j`` forces ``i``", where ``i`` is the only white vertex in the *neighbourhood*
of ``j``. The neighbourhood holds the out-neighbours ``i != j`` of ``j`` (the states
``j`` influences), plus ``j`` itself when its diagonal coefficient ``a_jj - lambda`` is
known to be nonzero. When that coefficient can vanish, ``q_j`` drops out only if ``j``
is already black, so such a ``j`` forces only when black. An input column is a vertex
that is black from the start (it has no ``q`` entry) and forces like a black state; a
dedicated input on ``i`` therefore simply makes ``i`` black. If every state ends black,
``q = 0``: controllable for every realization. The diagonal conventions give:

``free`` (``a_ii`` any value, zero included; Monshizadeh, Zhang & Camlibel [2]_)
    ``a_jj - lambda`` can vanish for every ``lambda``: the *standard rule* (a black
    state with exactly one white out-neighbour forces it). One condition.
``nonzero`` (self-dynamics on every state, ``a_ii != 0``)
    ``lambda = 0``: coefficient ``a_jj != 0``, every vertex (white or black) forces the
    only white vertex of its out-neighbourhood *including itself* (loop rule);
    ``lambda != 0``: ``a_jj - lambda`` can vanish, standard rule. The second implies the
    first, so this coincides with ``free``.
``zero`` (no self-dynamics, ``a_ii = 0`` fixed)
    ``lambda = 0``: ``q_j`` does not appear, every vertex forces the only white
    out-neighbour ``i != j``; ``lambda != 0``: coefficient ``-lambda != 0``, every vertex
    forces the only white vertex of its out-neighbourhood including itself.
``as-given`` (``a_ii != 0`` where the pattern has a self-loop, ``a_ii = 0`` elsewhere;
    the loop-graph setting of Trefois & Delvenne [3]_)
    ``lambda = 0``: every vertex forces, looped vertices count themselves;
    ``lambda != 0``: unlooped vertices force whatever their colour and count themselves,
    looped vertices force only when black and do not.

For ``zero``, ``nonzero`` and ``as-given`` the design must pass *both* conditions.

Both conditions are also necessary (the proofs are constructive, see
:func:`strong_witness`): if the closure under one rule leaves a white set ``W``, every
column has zero or at least two white terms (or one white term and the fixed
``-lambda`` term), so weights can be chosen column by column such that
``q = 1_W`` is a left eigenvector with ``q^T B = 0`` -- an uncontrollable realization
in the class (``lambda = 0`` for the first condition, ``lambda = 1`` for the second).
Because forcing is monotone, the set a rule leaves white does not depend on the order
of forces.
"""

from __future__ import annotations

import heapq
import time
import warnings
from dataclasses import dataclass, field
from collections.abc import Sequence
from typing import Any

import numpy as np
import scipy.sparse as sp
from numba import njit

from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = [
    "DIAGONALS",
    "METHODS",
    "StrongInputDesign",
    "StrongReport",
    "StrongWitness",
    "forcing_closure",
    "is_strongly_controllable",
    "minimum_strong_inputs",
    "strong_controllability",
    "strong_witness",
]

DIAGONALS: dict[str, str] = {
    "as-given": "self-dynamics a_ii != 0 exactly where the pattern has a self-loop, "
                "a_ii = 0 elsewhere",
    "zero": "no self-dynamics: a_ii = 0 on every state; self-loops in the pattern are taken "
            "as zero",
    "nonzero": "self-dynamics on every state: a_ii != 0",
    "free": "a_ii may take any value, zero included",
}

METHODS: dict[str, str] = {
    "auto": "exact when the network is small enough, greedy with a lower bound otherwise",
    "exact": "branch and bound over minimal forts; fort-cover integer program bound "
             "(HiGHS via scipy) when the time limit runs out",
    "greedy": "greedy forcing with a matching-based lower bound",
}

#: states up to which method="auto" runs the exact search
EXACT_AUTO_LIMIT = 100

_CONDITION_LABEL = {"all": "every eigenvalue", "zero": "eigenvalue 0",
                    "nonzero": "nonzero eigenvalues"}


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
    return system.A.diagonal() != 0


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


def _graph(A: sp.csr_array, B: sp.csr_array | None) -> _Graph:
    """Adjacency arrays from canonical CSR patterns (sorted, no duplicates), O(n + E)."""
    from netctl.graph import transpose_csr

    n = A.shape[0]
    m = 0 if B is None else B.shape[1]
    if B is None or m == 0:
        b_ptr = np.zeros(n + 1, np.int64)
        b_idx = np.zeros(0, np.int64)
    else:
        B = sp.csr_array(B)
        B.sum_duplicates()
        b_ptr, b_idx = B.indptr, B.indices
    A = sp.csr_array(A)
    A.sum_duplicates()
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
                   n_states):  # pragma: no cover - compiled
    """Greedy forcing: whenever forcing stalls, blacken one white vertex next to an
    eligible vertex with the fewest white neighbours (ties: lowest index), so that it
    comes closest to forcing; if none exists, the lowest-index white state."""
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
            for p in range(out_ptr[j], out_ptr[j + 1]):
                if not black[out_idx[p]]:
                    t = out_idx[p]
                    break
            if t < 0 and closed[j] and not black[j]:
                t = j
            if t >= 0:
                break
        if t < 0:
            while black[scan]:
                scan += 1
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


def _greedy(g: _Graph, rule: _Rule, black0: np.ndarray) -> np.ndarray:
    black = black0.copy()
    if black.size == 0:
        return np.zeros(0, np.int64)
    w = _white_counts(g, rule, black)
    forcer = np.full(black.size, -1, np.int64)
    return _greedy_kernel(g.out_ptr, g.out_idx, g.in_ptr, g.in_idx, rule.closed,
                          rule.white_ok, black, w, forcer, g.n)


def forcing_closure(system: StructuredSystem, black: Any, *,
                    diagonal: str = "as-given") -> dict[str, np.ndarray]:
    """States each forcing condition turns black, starting from ``black`` (and the
    system's inputs).

    Parameters
    ----------
    system : StructuredSystem
    black : array_like of int
        Initially black states (dedicated inputs on them).
    diagonal : {"as-given", "zero", "nonzero", "free"}

    Returns
    -------
    dict
        Condition name (``"all"``, or ``"zero"`` and ``"nonzero"`` for the eigenvalue 0 /
        nonzero eigenvalue conditions) to a boolean mask over the states.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> path = StructuredSystem.from_edges([0, 1], [1, 2])   # 0 -> 1 -> 2
    >>> forcing_closure(path, [2], diagonal="free")["all"].tolist()
    [False, False, True]
    """
    diagonal = _check_diagonal(diagonal)
    n = system.n_states
    g = _graph(system.A, system.B)
    idx = np.asarray(black, dtype=np.int64).reshape(-1)
    if idx.size and (idx.min() < 0 or idx.max() >= n):
        raise OptionError(f"black states must be indices 0..{n - 1}, found "
                          f"{int(idx.min() if idx.min() < 0 else idx.max())}; use "
                          "system.index_of(names) to turn names into indices.")
    b0 = np.zeros(n + g.m, bool)
    b0[idx] = True
    b0[n:] = True
    out = {}
    for rule in _rules(_loops(system, diagonal), diagonal, g.m):
        out[rule.condition] = _closure(g, rule, b0)[0][:n]
    return out


# ---------------------------------------------------------------------- check
@dataclass(frozen=True)
class StrongReport:
    """Outcome of :func:`strong_controllability`.

    Attributes
    ----------
    strongly_controllable : bool
        Controllable for every realization of the pattern under ``diagonal``.
    diagonal : str
        The diagonal convention (a key of :data:`DIAGONALS`).
    unforced : ndarray of int
        States some condition leaves white (sorted; empty when strongly controllable).
    unforced_by_condition : dict
        Condition (``"all"``; or ``"zero"`` / ``"nonzero"`` eigenvalues) to the sorted
        states that condition leaves white.
    forced_by : ndarray of int
        For the first condition, the vertex that forced each state (``-1``: black from the
        start or never forced; values ``>= n_states`` are input columns).
    """

    strongly_controllable: bool
    diagonal: str
    n_states: int
    n_inputs: int
    unforced: np.ndarray
    unforced_by_condition: dict[str, np.ndarray]
    forced_by: np.ndarray
    state_names: Sequence[str] = field(repr=False)
    input_names: Sequence[str] = field(repr=False)
    model: str = "given"

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    @property
    def unforced_names(self) -> list[str]:
        return self.names(self.unforced)

    def reasons(self) -> list[str]:
        """Plain-language reasons the property fails (empty when it holds)."""
        out = []
        for cond, states in self.unforced_by_condition.items():
            if states.size:
                shown = ", ".join(self.names(states[:20]))
                more = f" and {states.size - 20} more" if states.size > 20 else ""
                out.append(f"{states.size} state(s) left unforced for {_CONDITION_LABEL[cond]}"
                           f": {shown}{more}; weights exist that make them uncontrollable")
        return out

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "strong_controllability",
            "strongly_controllable": self.strongly_controllable,
            "diagonal": self.diagonal,
            "diagonal_meaning": DIAGONALS[self.diagonal],
            "n_states": self.n_states,
            "n_inputs": self.n_inputs,
            "inputs": list(self.input_names),
            "model": self.model,
            "unforced": self.unforced_names,
            "unforced_by_condition": {_CONDITION_LABEL[c]: self.names(s)
                                      for c, s in self.unforced_by_condition.items()},
        }


def _prepare(system: StructuredSystem, diagonal: object) -> str:
    if not isinstance(system, StructuredSystem):
        raise OptionError(f"expected a StructuredSystem, found {type(system).__name__}; build "
                          "one with StructuredSystem.from_edges or netctl.io.read.")
    diagonal = _check_diagonal(diagonal)
    if diagonal == "zero" and system.n_self_loops:
        loops = np.flatnonzero(system.A.diagonal() != 0)
        shown = ", ".join(system.state_names[i] for i in loops[:5])
        warnings.warn(f"diagonal='zero' treats the {loops.size} self-loop(s) in the pattern "
                      f"({shown}{', ...' if loops.size > 5 else ''}) as a_ii = 0; use "
                      "diagonal='as-given' to keep them as self-dynamics.", UserWarning,
                      stacklevel=3)
    return diagonal


def strong_controllability(system: StructuredSystem, *,
                           diagonal: str = "as-given") -> StrongReport:
    r"""Is ``(A, B)`` controllable for every nonzero choice of its free weights?

    Parameters
    ----------
    system : StructuredSystem
        Its inputs ``B`` are the design checked (shared input columns allowed; use
        :meth:`StructuredSystem.with_inputs` to install dedicated ones). Weights are not
        used: the answer covers every nonzero value of every entry of the pattern.
    diagonal : {"as-given", "zero", "nonzero", "free"}, default "as-given"
        What is assumed about the self-dynamics ``a_ii`` (see :data:`DIAGONALS` and the
        module docstring for the forcing rule of each).

    Returns
    -------
    StrongReport

    Raises
    ------
    OptionError
        For an unknown ``diagonal``.

    Warns
    -----
    UserWarning
        With ``diagonal="zero"`` when the pattern has self-loops (they are taken as zero).

    Notes
    -----
    The design is strongly structurally controllable iff the driven states (with the
    input columns as black vertices) are a zero forcing set under every rule of the
    convention [1]_, [2]_, [3]_; the derivation from the Popov–Belevitch–Hautus test is in
    the module docstring. When it fails, :attr:`StrongReport.unforced` lists the states
    left white, and :func:`strong_witness` builds weights that make the design
    uncontrollable. Strong implies generic (weak) structural controllability of the
    pattern with the same diagonal.

    Queue-based forcing: each vertex scans its out-neighbours at most once after its
    white count drops to one, so the cost is O(n + m + E) per condition (numba).

    References
    ----------
    .. [1] H. Mayeda, T. Yamada, "Strong structural controllability", SIAM J. Control
       Optim. 17(1):123-138, 1979. doi:10.1137/0317010
    .. [2] N. Monshizadeh, S. Zhang, M. K. Camlibel, "Zero forcing sets and
       controllability of dynamical systems defined on graphs", IEEE Trans. Automat.
       Control 59(9):2562-2567, 2014. doi:10.1109/TAC.2014.2308619
    .. [3] M. Trefois, J.-C. Delvenne, "Zero forcing number, constrained matchings and
       strong structural controllability", Linear Algebra Appl. 484:199-218, 2015.
       arXiv:1405.6222

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> path = StructuredSystem.from_edges([0, 1], [1, 2])   # 0 -> 1 -> 2
    >>> strong_controllability(path.with_inputs([0]), diagonal="free").strongly_controllable
    True
    >>> rep = strong_controllability(path.with_inputs([2]), diagonal="free")
    >>> rep.strongly_controllable, rep.unforced.tolist()
    (False, [0, 1])
    """
    diagonal = _prepare(system, diagonal)
    n = system.n_states
    g = _graph(system.A, system.B)
    b0 = np.zeros(n + g.m, bool)
    b0[n:] = True
    by_cond: dict[str, np.ndarray] = {}
    forced_by = np.full(n, -1, np.int64)
    white_any = np.zeros(n, bool)
    for k, rule in enumerate(_rules(_loops(system, diagonal), diagonal, g.m)):
        black, forcer = _closure(g, rule, b0)
        by_cond[rule.condition] = np.flatnonzero(~black[:n]).astype(np.int64)
        white_any |= ~black[:n]
        if k == 0:
            forced_by = forcer[:n]
    unforced = np.flatnonzero(white_any).astype(np.int64)
    return StrongReport(strongly_controllable=unforced.size == 0, diagonal=diagonal,
                        n_states=n, n_inputs=system.n_inputs, unforced=unforced,
                        unforced_by_condition=by_cond, forced_by=forced_by,
                        state_names=system.state_names, input_names=system.input_names,
                        model=system.model)


def is_strongly_controllable(system: StructuredSystem, *, diagonal: str = "as-given") -> bool:
    """``strong_controllability(system, diagonal=diagonal).strongly_controllable``.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> cycle = StructuredSystem.from_edges([0, 1, 2], [1, 2, 0])
    >>> is_strongly_controllable(cycle.with_inputs([0]), diagonal="zero")
    True
    """
    return strong_controllability(system, diagonal=diagonal).strongly_controllable


# ---------------------------------------------------------------------- witness
@dataclass(frozen=True)
class StrongWitness:
    """An uncontrollable realization: ``q^T (A - eigenvalue I) = 0`` and ``q^T B = 0``
    with ``q != 0`` (integer weights on exactly the pattern of the convention)."""

    A: sp.csr_array
    B: sp.csr_array
    eigenvalue: int
    left_vector: np.ndarray
    condition: str


def strong_witness(system: StructuredSystem, *,
                   diagonal: str = "as-given") -> StrongWitness | None:
    """Weights that make the design uncontrollable, or ``None`` if it is strongly
    structurally controllable.

    The construction follows the necessity proof (module docstring): with ``W`` the
    states some condition leaves white and ``q = 1_W``, weights are set column by column
    so that every column equation of ``q^T [A - lambda I, B] = 0`` holds; integers only,
    ``lambda`` is 0 or 1. The diagonal obeys the convention (``zero``: all 0; ``nonzero``:
    all nonzero; ``as-given``: nonzero exactly on self-loops; ``free``: anything).
    Vectorised, O(n + m + E).

    Examples
    --------
    >>> import numpy as np
    >>> from netctl import StructuredSystem
    >>> star = StructuredSystem.from_edges([0, 0], [1, 2]).with_inputs([0])
    >>> wit = strong_witness(star, diagonal="free")
    >>> q = wit.left_vector
    >>> A = wit.A.toarray()
    >>> bool(np.allclose(q @ A, wit.eigenvalue * q)), bool(np.allclose(q @ wit.B.toarray(), 0))
    (True, True)
    """
    diagonal = _prepare(system, diagonal)
    n = system.n_states
    loops = _loops(system, diagonal)
    g = _graph(system.A, system.B)
    b0 = np.zeros(n + g.m, bool)
    b0[n:] = True
    for rule in _rules(loops, diagonal, g.m):
        black = _closure(g, rule, b0)[0]
        if black[:n].all():
            continue
        return _build_witness(system, g, rule, black, loops, diagonal)
    return None


def _build_witness(system: StructuredSystem, g: _Graph, rule: _Rule, black: np.ndarray,
                   loops: np.ndarray, diagonal: str) -> StrongWitness:
    n, m = g.n, g.m
    N = n + m
    lam = rule.lam
    white = ~black
    white[n:] = False
    # columns: every vertex; entries (row i, column j) from the out-adjacency
    col = np.repeat(np.arange(N, dtype=np.int64), np.diff(g.out_ptr))
    row = g.out_idx
    vals = np.ones(row.size, np.int64)
    wt = white[row]
    # position of each white entry among the white terms of its column
    cum = np.cumsum(wt) - wt
    first = np.zeros(N, np.int64)
    starts = g.out_ptr[:-1]
    nonempty = np.diff(g.out_ptr) > 0
    first[nonempty] = cum[starts[nonempty]]
    pos = cum - first[col]
    k_off = np.bincount(col, weights=wt, minlength=N).astype(np.int64)
    is_state = np.arange(N) < n
    wj = white & is_state
    loops_all = np.concatenate([loops, np.zeros(m, bool)])
    if diagonal == "free":
        free_diag = is_state.copy()
    else:
        free_diag = is_state & loops_all & (lam != 0)
    diag_term = is_state & wj & (lam == 0) & loops_all & (diagonal != "free")
    c = np.where(is_state & wj & ~loops_all & (lam != 0) & (diagonal != "free"), lam, 0)
    K = k_off + diag_term
    case_i = free_diag & wj
    # case (ii): white terms sum to c; first K-1 terms 1, the last c - (K-1) (nonzero)
    last = c - (K - 1)
    bump = (~case_i) & (K >= 2) & (last == 0)
    last = np.where(bump, c - K, last)
    first_val = np.where(bump, 2, 1)

    def term_value(p: np.ndarray, j: np.ndarray) -> np.ndarray:
        v = np.where(p == 0, first_val[j], 1)
        return np.where(p == K[j] - 1, np.where(K[j] == 1, c[j], last[j]), v)

    sel = wt & ~case_i[col]
    vals[sel] = term_value(pos[sel], col[sel])
    # case (i): off-diagonal white terms 1 (first 2 when K == lam == 1); diagonal balances
    bump_i = case_i & (K == lam) & (lam != 0)
    sel_i = wt & case_i[col]
    vals[sel_i] = np.where((pos[sel_i] == 0) & bump_i[col[sel_i]], 2, 1)
    sums = np.bincount(col[sel_i], weights=vals[sel_i], minlength=N).astype(np.int64)
    diag = np.zeros(n, np.int64)
    if diagonal in ("nonzero", "as-given", "free"):
        diag[:] = np.where(loops_all[:n] | (diagonal == "free"), 1, 0)
    if diagonal == "nonzero":
        diag[:] = 1
    ci = np.flatnonzero(case_i[:n])
    diag[ci] = lam - sums[ci]
    dt = np.flatnonzero(diag_term[:n])
    diag[dt] = term_value(K[dt] - 1, dt)
    st = row < n
    A_rows = np.concatenate([row[col < n], np.arange(n)])
    A_cols = np.concatenate([col[col < n], np.arange(n)])
    A_vals = np.concatenate([vals[col < n], diag]).astype(float)
    A = sp.csr_array((A_vals, (A_rows, A_cols)), shape=(n, n))
    A.eliminate_zeros()
    bsel = (col >= n) & st
    B = sp.csr_array((vals[bsel].astype(float), (row[bsel], col[bsel] - n)), shape=(n, m))
    q = white[:n].astype(float)
    return StrongWitness(A=A, B=B, eigenvalue=lam, left_vector=q, condition=rule.condition)


# ---------------------------------------------------------------------- minimum
@dataclass(frozen=True)
class StrongInputDesign:
    """A smallest (or best-found) set of dedicated inputs for strong structural
    controllability.

    Attributes
    ----------
    n_inputs : int
        Size of the set found.
    drivers : ndarray of int
        The states that get a dedicated input, sorted.
    method : str
        ``"exact"`` (branch and bound over forts) or ``"greedy"``.
    optimal : bool
        Whether ``n_inputs`` is proven minimum (``lower_bound == n_inputs``).
    lower_bound : int
        A proven lower bound on the minimum.
    lower_bound_source : str
        Where the bound comes from.
    gap : int
        ``n_inputs - lower_bound`` (0 when optimal).
    """

    n_states: int
    n_inputs: int
    drivers: np.ndarray
    diagonal: str
    method: str
    optimal: bool
    lower_bound: int
    lower_bound_source: str
    iterations: int
    seconds: float
    state_names: Sequence[str] = field(repr=False)
    model: str = "given"

    @property
    def gap(self) -> int:
        return self.n_inputs - self.lower_bound

    def names(self, indices: Any) -> list[str]:
        return [self.state_names[int(i)] for i in indices]

    @property
    def driver_names(self) -> list[str]:
        return self.names(self.drivers)

    def apply(self, system: StructuredSystem) -> StructuredSystem:
        """``system`` with one dedicated input on each driver (replacing its inputs)."""
        return system.with_inputs(self.drivers)

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "minimum_strong_inputs",
            "n_states": self.n_states,
            "n_inputs": self.n_inputs,
            "drivers": self.driver_names,
            "diagonal": self.diagonal,
            "diagonal_meaning": DIAGONALS[self.diagonal],
            "model": self.model,
            "method": self.method,
            "method_meaning": METHODS[self.method],
            "optimal": self.optimal,
            "lower_bound": self.lower_bound,
            "lower_bound_source": self.lower_bound_source,
            "gap": self.gap,
            "iterations": self.iterations,
        }


def _all_forced(g: _Graph, rules: list[_Rule], S: np.ndarray) -> list[np.ndarray]:
    """White sets (forts) left by each rule from the black set ``S`` (only failures)."""
    b0 = np.zeros(g.n + g.m, bool)
    b0[S] = True
    b0[g.n:] = True
    forts = []
    for rule in rules:
        black = _closure(g, rule, b0)[0]
        if not black[:g.n].all():
            forts.append(np.flatnonzero(~black[:g.n]))
    return forts


def _greedy_set(g: _Graph, rules: list[_Rule], prune: bool) -> np.ndarray:
    """Greedy set forcing under every rule: rules in each order, keep the smaller, then
    (when ``prune``) drop members whose removal keeps every rule forcing."""
    n = g.n
    best: np.ndarray | None = None
    orders = [rules] if len(rules) == 1 else [rules, rules[::-1]]
    for order in orders:
        b0 = np.zeros(n + g.m, bool)
        b0[n:] = True
        chosen: list[np.ndarray] = []
        for rule in order:
            add = _greedy(g, rule, b0)
            b0[add] = True
            chosen.append(add)
        S = np.concatenate(chosen)
        if best is None or S.size < best.size:
            best = S
    assert best is not None
    if prune:
        keep = list(best)
        for s in best[::-1]:
            trial = [v for v in keep if v != s]
            if not _all_forced(g, rules, np.asarray(trial, np.int64)):
                keep = trial
        best = np.asarray(keep, np.int64)
    return np.sort(best).astype(np.int64)


def _generic_bound(system: StructuredSystem, diagonal: str) -> int:
    """Fewest dedicated inputs for (weak) structural controllability of the pattern
    every realization class contains: strong implies weak."""
    from netctl.structural._engine import completion, structure_of

    n = system.n_states
    A = system.A
    if diagonal in ("zero", "free"):
        A = sp.csr_array(A - sp.dia_array((A.diagonal()[None, :], [0]), shape=(n, n)))
        A.eliminate_zeros()
    elif diagonal == "nonzero":
        A = system.with_self_loops().A
    comp = completion(A, sp.csr_array((n, 0)), structure_of(A))
    return int(comp.states.size)


def _degree_bound(g: _Graph, rules: list[_Rule]) -> int:
    """Under a rule where every state forces only when black and counts only its
    out-neighbours, the first force needs a black state with all but one of its d >= 1
    out-neighbours black: at least min d states (or all of them if none can force)."""
    n = g.n
    for rule in rules:
        if not rule.white_ok[:n].any() and not rule.closed[:n].any():
            d = np.diff(g.out_ptr)[:n]
            d = d[d >= 1]
            return int(min(n, d.min())) if d.size else n
    return 0


def _lower_bound(system: StructuredSystem, g: _Graph, rules: list[_Rule],
                 diagonal: str) -> tuple[int, str]:
    gen = _generic_bound(system, diagonal)
    deg = _degree_bound(g, rules)
    if deg > gen:
        return deg, "minimum out-degree (first force)"
    return gen, "generic minimum dedicated inputs (strong implies structural)"


class _OutOfTime(Exception):
    pass


def _exact(g: _Graph, rules: list[_Rule], upper: np.ndarray, lower: int,
           time_limit: float, t0: float) -> tuple[np.ndarray, int, bool, int]:
    """Branch and bound over forts, then (if time ran out) an integer-program bound.

    Every forcing set meets every fort, so at a node with partial set ``S`` a minimal
    fort ``F`` disjoint from ``S`` is found and the search branches on its members, the
    i-th branch excluding the members before it (no set is visited twice). Nodes are
    pruned by ``|S|`` plus a packing of pairwise disjoint forts from the pool that ``S``
    misses. Returns (best set, proven lower bound, optimal, nodes explored)."""
    n, N = g.n, g.n + g.m
    closed2 = np.ascontiguousarray(np.stack([r.closed for r in rules]))
    ok2 = np.ascontiguousarray(np.stack([r.white_ok for r in rules]))
    state: dict[str, Any] = {"best": np.sort(upper).astype(np.int64),
                             "pool": np.zeros((64, n), bool), "n_pool": 0, "nodes": 0,
                             "order": np.zeros(0, np.int64), "sizes": np.zeros(64, np.int64)}
    seen: set[bytes] = set()
    deadline = t0 + 0.8 * time_limit

    def add(mask: np.ndarray) -> None:
        key = np.packbits(mask).tobytes()
        if key in seen:
            return
        seen.add(key)
        pool = state["pool"]
        k = state["n_pool"]
        if k == pool.shape[0]:
            pool = np.concatenate([pool, np.zeros_like(pool)])
            state["pool"] = pool
            state["sizes"] = np.concatenate([state["sizes"], np.zeros_like(state["sizes"])])
        pool[k] = mask
        state["sizes"][k] = int(mask.sum())
        state["n_pool"] = k + 1
        # smallest forts first (re-sorted now and then; new ones appended meanwhile)
        if (k + 1) & k == 0 or (k + 1) % 256 == 0:
            state["order"] = np.argsort(state["sizes"][:k + 1], kind="stable")
        else:
            state["order"] = np.append(state["order"], k)

    def rec(S: np.ndarray, size: int, forb: np.ndarray) -> None:
        state["nodes"] += 1
        if time.perf_counter() > deadline:
            raise _OutOfTime
        best = state["best"]
        pk = _packing(state["pool"], state["order"], S, forb, n)
        if pk < 0 or size + pk >= best.size:
            return
        F = _minimal_fort(g.out_ptr, g.out_idx, g.in_ptr, g.in_idx, closed2, ok2, S, n, N)
        if not F.any():
            state["best"] = np.flatnonzero(S).astype(np.int64)
            return
        add(F)
        if size + 1 >= best.size:
            return
        fb = forb.copy()
        for v in np.flatnonzero(F & ~forb):
            S[v] = True
            rec(S, size + 1, fb)
            S[v] = False
            fb = fb.copy()
            fb[v] = True

    try:
        rec(np.zeros(n, bool), 0, np.zeros(n, bool))
    except _OutOfTime:
        pass
    else:
        best = state["best"]
        return best, int(best.size), True, state["nodes"]
    best = state["best"]
    lb = max(lower, _packing(state["pool"], state["order"], np.zeros(n, bool),
                             np.zeros(n, bool), n))
    lb = max(lb, _fort_cover_bound(state["pool"][:state["n_pool"]],
                                   max(0.05, time_limit - (time.perf_counter() - t0))))
    return best, lb, best.size <= lb, state["nodes"]


def _fort_cover_bound(pool: np.ndarray, seconds: float) -> int:
    """Lower bound: the fewest states meeting every fort of ``pool`` (HiGHS; its dual
    bound when the time runs out)."""
    from scipy.optimize import Bounds, LinearConstraint, milp

    if pool.shape[0] == 0:
        return 0
    n = pool.shape[1]
    res = milp(np.ones(n), constraints=LinearConstraint(sp.csr_array(pool.astype(float)),
                                                        lb=1, ub=np.inf),
               integrality=np.ones(n), bounds=Bounds(0, 1),
               options={"time_limit": seconds, "disp": False})
    if res.status == 0 and res.x is not None:
        return int(round(res.fun))
    bound = getattr(res, "mip_dual_bound", None)
    if bound is not None and np.isfinite(bound):
        return int(np.ceil(bound - 1e-6))
    return 0


def minimum_strong_inputs(system: StructuredSystem, *, diagonal: str = "as-given",
                          method: str = "auto", time_limit: float = 60.0) -> StrongInputDesign:
    r"""Fewest dedicated inputs that make ``system`` strongly structurally controllable.

    Existing inputs of ``system`` are ignored (as in :func:`netctl.minimum_inputs`);
    check a given design with :func:`strong_controllability`.

    Parameters
    ----------
    system : StructuredSystem
    diagonal : {"as-given", "zero", "nonzero", "free"}, default "as-given"
        See :data:`DIAGONALS`.
    method : {"auto", "exact", "greedy"}, default "auto"
        ``exact``: branch and bound over forts, proven optimal unless ``time_limit``
        runs out (then the best set found and a proven lower bound are reported).
        ``greedy``: near-linear heuristic with a lower bound. ``auto``: exact up to
        :data:`EXACT_AUTO_LIMIT` states, greedy beyond.
    time_limit : float, default 60
        Seconds for the exact method (the greedy one always finishes).

    Returns
    -------
    StrongInputDesign
        The set, the method that ran, a proven lower bound and the gap.

    Notes
    -----
    The minimum under the ``free`` (or ``nonzero``) convention is the directed zero
    forcing number; computing it is NP-hard (Aazami 2008), hence the two methods.

    *Exact*: a set of black states forces everything iff it meets every *fort* -- a
    nonempty set ``F`` such that no vertex allowed to force has exactly one member of
    ``F`` in its neighbourhood [4]_, [5]_ -- and the set a rule leaves white is a fort.
    Branch and bound: at a partial set ``S``, the white set left by ``S`` is shrunk to a
    minimal fort (blacken all outside it plus one member; what some rule still leaves
    white is a smaller fort), and the search branches on its members, the i-th branch
    excluding the earlier ones; a node is cut when ``|S|`` plus a packing of disjoint
    forts it misses reaches the best set known (the greedy one to start). A complete
    search proves the minimum. If ``time_limit`` runs out first, the best set is
    returned with the larger of the fort packing bound and the fort-cover integer
    program ``min sum x_v`` s.t. ``sum_{v in F} x_v >= 1`` over every fort met (HiGHS via
    ``scipy.optimize.milp``; a relaxation, hence a lower bound) as the proven bound. For
    the two-condition conventions the forts of both rules are used together.

    *Greedy*: forcing runs until it stalls, then the white neighbour of an eligible
    vertex with the fewest white neighbours is made black, and so on (a binary heap;
    O((n + E) log n)); for two conditions both orders are tried and the smaller union
    kept; on small cases redundant members are then dropped. The lower bound is the
    larger of the generic minimum of dedicated inputs (strong implies structural
    controllability, so it needs at least as many; Commault & Dion 2013) and, for the
    standard rule, the minimum out-degree.

    One minimum set of possibly many; ties follow state order, so a search that
    finishes (or the greedy one) gives the same set on every run. A search cut short by
    ``time_limit`` returns whatever it reached, which depends on the machine's speed.

    References
    ----------
    .. [1] H. Mayeda, T. Yamada, SIAM J. Control Optim. 17(1):123-138, 1979.
    .. [2] N. Monshizadeh, S. Zhang, M. K. Camlibel, IEEE TAC 59(9):2562-2567, 2014.
       doi:10.1109/TAC.2014.2308619
    .. [3] M. Trefois, J.-C. Delvenne, Linear Algebra Appl. 484:199-218, 2015.
    .. [4] C. C. Fast, I. V. Hicks, "Effects of vertex degrees on the zero-forcing number
       and propagation time of a graph", Discrete Appl. Math. 250:215-226, 2018.
    .. [5] B. Brimkov, C. C. Fast, I. V. Hicks, "Computational approaches for zero
       forcing and related problems", European J. Oper. Res. 273(3):889-903, 2019.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> cycle = StructuredSystem.from_edges([0, 1, 2, 3], [1, 2, 3, 0])
    >>> d = minimum_strong_inputs(cycle, diagonal="free")
    >>> d.n_inputs, d.method, d.optimal
    (1, 'exact', True)
    """
    t0 = time.perf_counter()
    diagonal = _prepare(system, diagonal)
    if not isinstance(method, str) or method not in METHODS:
        raise OptionError(f"unknown method {method!r}; choose one of "
                          f"{', '.join(repr(k) for k in METHODS)}.")
    if isinstance(time_limit, bool) or not isinstance(time_limit, (int, float)) or \
            not time_limit > 0:
        raise OptionError(f"time_limit must be a positive number of seconds, found "
                          f"{time_limit!r}; 60 is usual (the exact search then reports the "
                          "best set found and a lower bound).")
    n = system.n_states
    g = _graph(system.A, None)
    rules = _rules(_loops(system, diagonal), diagonal, 0)
    run = method
    if method == "auto":
        run = "exact" if n <= EXACT_AUTO_LIMIT else "greedy"
    lower, source = _lower_bound(system, g, rules, diagonal)
    prune = n * max(1, g.out_idx.size) <= 5e6 or run == "exact"
    S = _greedy_set(g, rules, prune) if n else np.zeros(0, np.int64)
    it = 0
    if run == "exact" and n and S.size > lower:
        S, lb, _, it = _exact(g, rules, S, lower, float(time_limit), t0)
        if lb > lower:
            lower, source = lb, ("branch and bound over forts (complete search)"
                                 if lb == S.size else "fort packing / fort cover bound")
    S = np.sort(S).astype(np.int64)
    return StrongInputDesign(n_states=n, n_inputs=int(S.size), drivers=S, diagonal=diagonal,
                             method=run, optimal=S.size == lower, lower_bound=int(lower),
                             lower_bound_source=source, iterations=it,
                             seconds=time.perf_counter() - t0,
                             state_names=system.state_names, model=system.model)
