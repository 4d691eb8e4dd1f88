"""Degree-preserving null models on integer edge arrays (seeded, array code only).

Both models keep every state's in-degree and out-degree exactly. They work on the
plain ``sources``/``targets`` arrays of a network (edge ``u -> v`` means "u influences
v", ``A[v, u] != 0``) so that an ensemble of millions of links never builds Python
objects per link.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from netctl._jit import njit

from netctl.errors import InvalidSystemError, OptionError
from netctl.graph.matching import maximum_matching

__all__ = [
    "NULL_MODELS",
    "configuration_model",
    "degree_preserving_swaps",
    "degree_sequences",
    "n_unmatched",
    "random_links",
    "undirected_null",
]

#: null model name -> what it keeps and what it randomizes (closed set for ``compare``)
NULL_MODELS: dict[str, str] = {
    "degree": "configuration model: random stub matching that keeps every state's in- and "
              "out-degree exactly; the few repeated links and self-loops it makes are kept",
    "swap": "degree-preserving link swaps of the observed links (10 attempts per link): "
            "keeps every in- and out-degree exactly and never creates repeated links or "
            "self-loops",
    "erdos-renyi": "Erdős–Rényi: the same number of states and links, each link joining "
                   "two distinct states drawn uniformly at random (keeps only the mean "
                   "degree; repeated links are rare and merged)",
}


def _degrees(values: Any, what: str) -> np.ndarray:
    arr = np.asarray(values)
    if arr.ndim != 1:
        raise InvalidSystemError(f"{what} must be one-dimensional, found shape {arr.shape}.")
    if arr.size and not np.issubdtype(arr.dtype, np.integer):
        if not (np.issubdtype(arr.dtype, np.floating) and np.all(arr == np.round(arr))):
            raise InvalidSystemError(f"{what} must hold whole numbers, found dtype "
                                     f"{arr.dtype}.")
    arr = arr.astype(np.int64)
    if arr.size and arr.min() < 0:
        raise InvalidSystemError(f"{what} holds the negative degree {int(arr.min())}; "
                                 "degrees are counts of links (>= 0).")
    return arr


def degree_sequences(sources: Any, targets: Any, n_states: int) -> tuple[np.ndarray, np.ndarray]:
    """Out-degree and in-degree of every state, counting each link once.

    Examples
    --------
    >>> out_deg, in_deg = degree_sequences([0, 0, 1], [1, 2, 2], 3)
    >>> out_deg.tolist(), in_deg.tolist()
    ([2, 1, 0], [0, 1, 2])
    """
    s = np.asarray(sources, np.int64)
    t = np.asarray(targets, np.int64)
    return (np.bincount(s, minlength=n_states).astype(np.int64),
            np.bincount(t, minlength=n_states).astype(np.int64))


def configuration_model(out_degree: Any, in_degree: Any, *,
                        seed: Any = None) -> tuple[np.ndarray, np.ndarray]:
    r"""Directed configuration model: random stub matching with given degree sequences.

    Parameters
    ----------
    out_degree, in_degree : array_like of int, length ``n``
        Wanted out- and in-degree of every state; the two must add up to the same number
        of links ``L``.
    seed : None, int, numpy.random.SeedSequence or numpy.random.Generator
        Randomness; the same seed gives the same links in the same order.

    Returns
    -------
    sources, targets : ndarray of int64, length ``L``
        Link ``sources[k] -> targets[k]``. ``np.bincount(sources)`` equals
        ``out_degree`` and ``np.bincount(targets)`` equals ``in_degree`` exactly.

    Raises
    ------
    InvalidSystemError
        Negative degrees, unequal lengths, or unequal sums.

    Notes
    -----
    Every state ``u`` gets ``out_degree[u]`` out-stubs and ``in_degree[u]`` in-stubs; a
    uniformly random permutation pairs the out-stubs with the in-stubs [1]_, [2]_. All
    pairings are equally likely, so the links form a multigraph: a few repeated links
    and self-loops appear (their expected number stays bounded as ``n`` grows for
    bounded-variance degrees). They are kept, so the degree sequences hold exactly; this
    is the ensemble the cavity prediction of Liu, Slotine & Barabási describes [3]_.
    O(L) time and memory, no Python loop over links.

    References
    ----------
    .. [1] B. Bollobás, "A probabilistic proof of an asymptotic formula for the number
       of labelled regular graphs", Eur. J. Combin. 1(4):311-316, 1980
       (details from memory).
    .. [2] M. E. J. Newman, S. H. Strogatz, D. J. Watts, "Random graphs with arbitrary
       degree distributions and their applications", Phys. Rev. E 64:026118, 2001.
       doi:10.1103/PhysRevE.64.026118 (details from memory)
    .. [3] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    >>> import numpy as np
    >>> s, t = configuration_model([2, 1, 0], [0, 1, 2], seed=7)
    >>> np.bincount(s, minlength=3).tolist(), np.bincount(t, minlength=3).tolist()
    ([2, 1, 0], [0, 1, 2])
    """
    out_d = _degrees(out_degree, "out_degree")
    in_d = _degrees(in_degree, "in_degree")
    if out_d.size != in_d.size:
        raise InvalidSystemError(f"out_degree and in_degree must have one value per state, "
                                 f"found lengths {out_d.size} and {in_d.size}.")
    if int(out_d.sum()) != int(in_d.sum()):
        raise InvalidSystemError(f"the out-degrees add up to {int(out_d.sum())} links but the "
                                 f"in-degrees to {int(in_d.sum())}; every link has one source "
                                 "and one target, so the sums must be equal.")
    rng = np.random.default_rng(seed)
    states = np.arange(out_d.size, dtype=np.int64)
    sources = np.repeat(states, out_d)
    targets = np.repeat(states, in_d)
    rng.shuffle(targets)
    return sources, targets


def random_links(n_states: int, n_links: int, *,
                 seed: Any = None) -> tuple[np.ndarray, np.ndarray]:
    r"""Directed Erdős–Rényi null: ``n_links`` links between uniformly random states.

    Each link picks its source and its target uniformly and independently among the
    ``n_states`` states, redrawing the target of a would-be self-loop, so in- and
    out-degrees are Poisson-like with mean ``n_links / n_states`` (the multigraph
    version of G(n, m) [1]_; repeated links are allowed, of expected number
    ``L^2 / (2 n^2)``, bounded for sparse networks). O(L).

    References
    ----------
    .. [1] P. Erdős, A. Rényi, "On random graphs I", Publ. Math. Debrecen 6:290-297
       (1959).

    Examples
    --------
    >>> s, t = random_links(5, 8, seed=1)
    >>> len(s), bool((s != t).all())
    (8, True)
    """
    if isinstance(n_links, bool) or n_links < 0 or n_states < 0:
        raise InvalidSystemError(f"n_states and n_links must be >= 0, found {n_states!r} "
                                 f"and {n_links!r}.")
    if n_links and n_states < 2:
        raise InvalidSystemError(f"links between distinct states need at least 2 states, "
                                 f"found {n_states}.")
    rng = np.random.default_rng(seed)
    src = rng.integers(0, n_states, n_links).astype(np.int64)
    # uniform over the other n - 1 states: shift past the source
    dst = rng.integers(0, max(n_states - 1, 1), n_links).astype(np.int64)
    dst += dst >= src
    return src, dst


def undirected_null(null: str, first: Any, second: Any, n_states: int, *,
                    seed: Any = None) -> tuple[np.ndarray, np.ndarray]:
    r"""Randomize undirected links as undirected; returns each new link both ways.

    Parameters
    ----------
    null : {"degree", "swap", "erdos-renyi"}
        ``degree``: undirected configuration model [1]_ (every state's degree exact:
        its link ends are paired uniformly at random; the few self-loops and repeated
        links made are kept, as in the directed one). ``swap``: degree-preserving double
        link swaps that keep the network simple (igraph's ``Graph.rewire``, 10 attempts
        per link [2]_). ``erdos-renyi``: as many links between uniformly random distinct
        states.
    first, second : array_like of int
        The undirected links, each once (``first[k] -- second[k]``), no self-loops.
    n_states : int
    seed : None, int, numpy.random.SeedSequence or numpy.random.Generator

    Returns
    -------
    sources, targets : ndarray of int64
        Every new link ``u -- v`` as ``u -> v`` and ``v -> u`` (a self-loop once).

    References
    ----------
    .. [1] M. E. J. Newman, S. H. Strogatz, D. J. Watts, "Random graphs with arbitrary
       degree distributions and their applications", Phys. Rev. E 64:026118, 2001.
    .. [2] S. Maslov, K. Sneppen, "Specificity and stability in topology of protein
       networks", Science 296:910-913, 2002.

    Examples
    --------
    >>> s, t = undirected_null("degree", [0, 1, 2], [1, 2, 3], 4, seed=1)
    >>> np.bincount(s, minlength=4).tolist()   # degrees 1, 2, 2, 1 kept (both ways)
    [1, 2, 2, 1]
    """
    a = np.asarray(first, np.int64)
    b = np.asarray(second, np.int64)
    rng = np.random.default_rng(seed)
    if null == "degree":
        stubs = np.concatenate([a, b])
        rng.shuffle(stubs)
        a, b = stubs[0::2], stubs[1::2]
    elif null == "erdos-renyi":
        a, b = random_links(n_states, a.size, seed=rng)
    elif null == "swap":
        import random

        import igraph

        g = igraph.Graph(n=n_states, edges=np.column_stack([a, b]).tolist())
        igraph.set_random_number_generator(random.Random(int(rng.integers(2**62))))
        try:
            g.rewire(n=10 * a.size)
        finally:
            igraph.set_random_number_generator(random)
        e = np.array(g.get_edgelist(), np.int64).reshape(-1, 2)
        a, b = e[:, 0], e[:, 1]
    else:
        raise OptionError(f"unknown null model {null!r}; choose one of "
                          f"{', '.join(NULL_MODELS)}.")
    loop = a == b
    return (np.concatenate([a, b[~loop]]), np.concatenate([b, a[~loop]]))


def degree_preserving_swaps(sources: Any, targets: Any, n_states: int, *,
                            n_swaps: int | None = None,
                            seed: Any = None) -> tuple[np.ndarray, np.ndarray, int]:
    r"""Randomize links by swapping targets of link pairs, keeping all degrees.

    A swap takes links ``a -> b`` and ``c -> d`` and makes them ``a -> d`` and ``c -> b``:
    every out-degree and in-degree is unchanged. A swap is refused when it would create
    a self-loop or a link that already exists, so a network without repeated links or
    self-loops stays so.

    Parameters
    ----------
    sources, targets : array_like of int
        The links, ``sources[k] -> targets[k]``.
    n_states : int
    n_swaps : int, optional
        Swap attempts; default ``10 * L``.
    seed : None, int, numpy.random.SeedSequence or numpy.random.Generator

    Returns
    -------
    sources, targets : ndarray of int64
        The randomized links (``sources`` is returned unchanged; targets move).
    n_accepted : int
        Swaps carried out.

    Notes
    -----
    The Markov chain of Maslov & Sneppen [1]_: each attempt picks two links uniformly at
    random, one at a time, in a compiled loop; an open-addressing hash set of the links
    answers "does this link exist" in O(1), so the cost is O(attempts + L). How many
    attempts make the result close to uniform is common practice (about 10 per link),
    no proof here. When the input already repeats links, swaps run instead in parallel
    rounds of array code (a random pairing of all links, one proposal per pair, refused
    when a new link exists before the round or is proposed twice in it; O(L log L) a
    round), which never adds a repeat.

    References
    ----------
    .. [1] S. Maslov, K. Sneppen, "Specificity and stability in topology of protein
       networks", Science 296(5569):910-913, 2002. doi:10.1126/science.1065103

    Examples
    --------
    >>> import numpy as np
    >>> s, t, k = degree_preserving_swaps([0, 1, 2, 3], [1, 2, 3, 0], 4, seed=1)
    >>> np.bincount(t, minlength=4).tolist()
    [1, 1, 1, 1]
    """
    src = np.array(sources, dtype=np.int64)
    dst = np.array(targets, dtype=np.int64)
    if src.shape != dst.shape or src.ndim != 1:
        raise InvalidSystemError(f"sources and targets must be one-dimensional and equally "
                                 f"long, found shapes {src.shape} and {dst.shape}.")
    links = src.size
    if n_swaps is None:
        n_swaps = 10 * links
    if not isinstance(n_swaps, (int, np.integer)) or isinstance(n_swaps, bool) or n_swaps < 0:
        raise OptionError(f"n_swaps must be a whole number >= 0, found {n_swaps!r}.")
    rng = np.random.default_rng(seed)
    if links < 2 or n_swaps == 0:
        return src, dst, 0
    n = np.int64(n_states)
    if np.unique(src * n + dst).size < links:
        return _swap_rounds(src, dst, n, int(n_swaps), rng)
    bits = max(4, int(math.ceil(math.log2(4 * links))))
    accepted = 0
    left = int(n_swaps)
    block = max(links, 1 << 20)
    while left > 0:
        k = min(left, block)
        pick_i = rng.integers(0, links, k)
        pick_j = rng.integers(0, links, k)
        done = 0
        while done < k:  # a fresh table whenever tombstones have filled the last one
            table = _build_table(src * n + dst, bits)
            got, done = _swap_block(src, dst, n, table, bits, pick_i, pick_j, done)
            accepted += int(got)
        left -= k
    return src, dst, accepted


def _swap_rounds(src: np.ndarray, dst: np.ndarray, n: np.int64, n_swaps: int,
                 rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray, int]:
    """Swaps in parallel rounds (array code); used when the input repeats links."""
    links = src.size
    pairs = links // 2
    rounds = math.ceil(n_swaps / pairs)
    accepted = 0
    for _ in range(rounds):  # a handful of rounds; each round is array code over all links
        keys = np.sort(src * n + dst)
        perm = rng.permutation(links)[: 2 * pairs]
        e1, e2 = perm[:pairs], perm[pairs:]
        a, b, c, d = src[e1], dst[e1], src[e2], dst[e2]
        new1 = a * n + d
        new2 = c * n + b
        ok = (a != d) & (c != b) & (b != d) & (a != c)
        ok &= ~_member(new1, keys) & ~_member(new2, keys)
        cand = np.concatenate([new1[ok], new2[ok]])
        if cand.size:
            u, counts = np.unique(cand, return_counts=True)
            twice = u[counts > 1]
            if twice.size:
                ok &= ~_member(new1, twice) & ~_member(new2, twice)
        dst[e1[ok]] = d[ok]
        dst[e2[ok]] = b[ok]
        accepted += int(np.count_nonzero(ok))
    return src, dst, accepted


_EMPTY = -1
_TOMB = -2
_GOLD = -7046029254386353131  # 0x9E3779B97F4A7C15 as a signed 64-bit integer


@njit(cache=True, nogil=True)
def _slot(key, bits):  # pragma: no cover - compiled
    # int(key): the Python body (small inputs, see netctl._jit) multiplies exact
    # integers, where NumPy's int64 would warn of the wrap-around; the bits kept here
    # (64 - bits .. 63) are those of numba's wrapped 64-bit product either way
    return ((int(key) * _GOLD) >> (64 - bits)) & ((1 << bits) - 1)


@njit(cache=True, nogil=True)
def _build_table(keys, bits):  # pragma: no cover - compiled
    """Open-addressing hash set (linear probing) of non-negative int64 keys."""
    size = 1 << bits
    table = np.full(size, _EMPTY, np.int64)
    mask = size - 1
    for key in keys:
        h = _slot(key, bits)
        while table[h] != _EMPTY:
            h = (h + 1) & mask
        table[h] = key
    return table


@njit(cache=True, nogil=True)
def _find(table, key, bits):  # pragma: no cover - compiled
    """Slot holding ``key``, or -1."""
    mask = table.size - 1
    h = _slot(key, bits)
    while table[h] != _EMPTY:
        if table[h] == key:
            return h
        h = (h + 1) & mask
    return -1


@njit(cache=True, nogil=True)
def _insert(table, key, bits):  # pragma: no cover - compiled
    """Insert an absent ``key``, reusing the first tombstone on its probe path; returns
    1 when it took an empty slot instead (one fewer left), else 0."""
    mask = table.size - 1
    h = _slot(key, bits)
    while table[h] >= 0:
        h = (h + 1) & mask
    took = 1 if table[h] == _EMPTY else 0
    table[h] = key
    return took


@njit(cache=True, nogil=True)
def _swap_block(src, dst, n, table, bits, pick_i, pick_j, first):  # pragma: no cover
    """One Maslov-Sneppen attempt per pick from ``first`` on: a->b, c->d become a->d,
    c->b when legal. Returns ``(accepted, next)``: it stops before pick ``next`` when
    no more than a quarter of the table's slots are still empty.

    A swap leaves two tombstones and its two inserts take an empty slot unless a
    tombstone lies on their probe path, so empty slots run out after about as many
    swaps as the table has slots; a search for an absent key then never meets an empty
    slot and probes for ever (seen: ``compare --null swap`` on 8 links hung). The caller
    rebuilds the table (its keys are the links, at most a quarter of the slots) and
    goes on from ``next`` with the same picks, so the swaps are those of a table that
    never filled."""
    accepted = 0
    empty = 0
    for h in range(table.size):
        empty += table[h] == _EMPTY
    low = table.size // 4
    for t in range(first, pick_i.size):
        if empty <= low:
            return accepted, t
        i = pick_i[t]
        j = pick_j[t]
        a = src[i]
        b = dst[i]
        c = src[j]
        d = dst[j]
        if a == c or b == d or a == d or c == b:
            continue  # no-op, or a self-loop would appear
        k1 = a * n + d
        k2 = c * n + b
        if _find(table, k1, bits) >= 0 or _find(table, k2, bits) >= 0:
            continue  # the link exists already
        table[_find(table, a * n + b, bits)] = _TOMB
        table[_find(table, c * n + d, bits)] = _TOMB
        empty -= _insert(table, k1, bits)
        empty -= _insert(table, k2, bits)
        dst[i] = d
        dst[j] = b
        accepted += 1
    return accepted, pick_i.size


def _member(values: np.ndarray, sorted_keys: np.ndarray) -> np.ndarray:
    """Boolean mask: which ``values`` occur in the sorted array ``sorted_keys``."""
    if sorted_keys.size == 0:
        return np.zeros(values.shape, bool)
    pos = np.searchsorted(sorted_keys, values)
    pos[pos == sorted_keys.size] = 0
    return sorted_keys[pos] == values


def n_unmatched(sources: Any, targets: Any, n_states: int) -> int:
    r"""States left unmatched by a maximum matching of the links, ``n - |M*|``.

    The minimum number of inputs is ``max(n - |M*|, 1)`` for ``n > 0`` (Liu, Slotine &
    Barabási 2011). Repeated links count once; a self-loop may match its own state.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    >>> n_unmatched([0, 0, 0], [1, 2, 3], 4)   # out-star: hub and two leaves unmatched
    3
    """
    s = np.asarray(sources, np.int64)
    t = np.asarray(targets, np.int64)
    if n_states == 0:
        return 0
    keys = np.unique(t * np.int64(n_states) + s)  # row = target (in-neighbours), col = source
    rows = keys // n_states
    cols = keys - rows * n_states
    indptr = np.zeros(n_states + 1, np.int64)
    np.cumsum(np.bincount(rows, minlength=n_states), out=indptr[1:])
    row_match, _ = maximum_matching(indptr, cols.astype(np.int64), n_states)
    return int(n_states - np.count_nonzero(row_match >= 0))
