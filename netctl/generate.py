"""Seeded synthetic networks: Erdős–Rényi, scale-free, grid-like and small-world.

Every generator is array code (no per-link Python), takes a ``seed`` and returns a
:class:`~netctl.system.StructuredSystem` (first-order pattern, no inputs) whose states are
named ``"0" .. "n-1"``. The same arguments and seed give the same network, bit for bit.
Sizes run from ten nodes to about 10^7 links. Self-loops and duplicate links are never
generated. Edge ``u -> v`` means "u influences v" (``A[v, u] != 0``).
"""

from __future__ import annotations

import numpy as np

from netctl._csr import coo_pattern
from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["GENERATORS", "generate", "erdos_renyi", "scale_free", "grid", "small_world",
           "static_fitness"]

#: kind -> one-line description (the ``netctl generate`` choices)
GENERATORS: dict[str, str] = {
    "erdos-renyi": "directed G(n, m): m = n * mean_degree / 2 links drawn uniformly",
    "scale-free": "directed static model (Goh, Kahng & Kim 2001) with the finite-size "
                  "correction of Cho et al. 2009: P(k) ~ k^-exponent for in- and "
                  "out-degrees (separate exponents possible)",
    "grid": "rows x cols lattice, links both ways between neighbours, coordinates x, y",
    "small-world": "Watts-Strogatz ring: k nearest neighbours, each link rewired with "
                   "probability rewire; links both ways",
}

_MAX_LINKS = 200_000_000


def _check(value: float, name: str, low: float, high: float | None = None) -> None:
    if not (value >= low and (high is None or value <= high)) or value != value:
        rng = f">= {low}" if high is None else f"in [{low}, {high}]"
        raise OptionError(f"{name} must be {rng}, found {value!r}.")


def _system(src: np.ndarray, dst: np.ndarray, n: int, *, nodes: dict | None = None,
            model: str = "first-order") -> StructuredSystem:
    A = coo_pattern(np.asarray(dst, np.int64), np.asarray(src, np.int64), None, (n, n),
                    count=False)[0]
    return StructuredSystem(A=A, B=None, C=None, state_names=tuple(map(str, range(n))),
                            input_names=(), output_names=(), nodes=nodes or {},
                            weighted=False, model=model)


def _sorted_unique(a: np.ndarray) -> np.ndarray:
    """Sorted distinct values (sort-based; faster than the hash path of np.unique here)."""
    a = np.sort(a)
    if a.size:
        a = a[np.concatenate([[True], a[1:] != a[:-1]])]
    return a


def _in_sorted(values: np.ndarray, sorted_pool: np.ndarray) -> np.ndarray:
    """Membership of ``values`` in the sorted array ``sorted_pool``."""
    if sorted_pool.size == 0:
        return np.zeros(values.size, bool)
    pos = np.minimum(np.searchsorted(sorted_pool, values), sorted_pool.size - 1)
    return sorted_pool[pos] == values


def _unique_pairs(src: np.ndarray, dst: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    keep = src != dst
    key = _sorted_unique(src[keep] * np.int64(n) + dst[keep])
    return key // n, key % n


def _draw_links(m: int, n: int, rng: np.random.Generator,
                draw: object) -> tuple[np.ndarray, np.ndarray]:
    """``m`` distinct non-loop links from ``draw(k) -> (src, dst)``, in random order."""
    src = np.zeros(0, np.int64)
    dst = np.zeros(0, np.int64)
    while src.size < m:
        k = int((m - src.size) * 1.1) + 16
        s, d = draw(k)  # type: ignore[operator]
        src, dst = _unique_pairs(np.concatenate([src, s]), np.concatenate([dst, d]), n)
    pick = np.sort(rng.choice(src.size, size=m, replace=False)) if src.size > m else slice(None)
    return src[pick], dst[pick]


def erdos_renyi(n: int, *, mean_degree: float = 2.0, seed: int = 0) -> StructuredSystem:
    r"""Directed Erdős–Rényi network G(n, m) with m = round(n * mean_degree / 2) links.

    ``mean_degree`` is the mean total degree <k> = <k_in> + <k_out> = 2m/n, the
    convention of Liu, Slotine & Barabási [2]_.

    References
    ----------
    .. [1] P. Erdős, A. Rényi, "On random graphs I", Publ. Math. Debrecen 6:290-297 (1959).
    .. [2] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173 (2011). doi:10.1038/nature10011

    Examples
    --------
    >>> g = erdos_renyi(1000, mean_degree=4, seed=1)
    >>> g.n_states, g.n_links
    (1000, 2000)
    """
    _check(n, "n", 1)
    m = int(round(n * mean_degree / 2))
    _check(mean_degree, "mean_degree", 0, 2.0 * (n - 1))
    if m > _MAX_LINKS:
        raise OptionError(f"{m} links is more than netctl generates ({_MAX_LINKS}).")
    rng = np.random.default_rng(seed)
    src, dst = _draw_links(m, n, rng, lambda k: (rng.integers(0, n, k), rng.integers(0, n, k)))
    return _system(src, dst, n)


def static_fitness(n: int, exponent: float) -> np.ndarray:
    r"""Fitness of the static model with Cho et al.'s finite-size correction.

    :math:`w_i = (i + i_0)^{-\alpha}` for ``i = 0 .. n-1``, :math:`\alpha = 1/(\gamma - 1)`
    [1]_. For :math:`2 < \gamma < 3` the offset
    :math:`i_0 = n^{1 - 1/(2\alpha)} (10 \sqrt{2} (1 - \alpha))^{1/\alpha}` [2]_ caps the
    largest expected degree at the order of :math:`\sqrt{\langle k \rangle n}` (the
    structural cut-off), so that hubs do not force repeated links and degree
    correlations; ``i_0 = 1`` for :math:`\gamma \ge 3`, where the natural cut-off
    :math:`n^{1/(\gamma-1)}` is already below it.

    References
    ----------
    .. [1] K.-I. Goh, B. Kahng, D. Kim, "Universal behavior of load distribution in
       scale-free networks", Phys. Rev. Lett. 87:278701 (2001).
       doi:10.1103/PhysRevLett.87.278701
    .. [2] Y. S. Cho, J. S. Kim, J. Park, B. Kahng, D. Kim, "Percolation transitions in
       scale-free networks under the Achlioptas process", Phys. Rev. Lett. 103:135702
       (2009). doi:10.1103/PhysRevLett.103.135702 (authors from memory)

    Examples
    --------
    >>> w = static_fitness(10**5, 2.2)
    >>> bool(w[0] > w[1] > w[-1])
    True
    """
    alpha = 1.0 / (exponent - 1.0)
    i0 = 1.0
    if exponent < 3:
        i0 = max(1.0, n ** (1.0 - 1.0 / (2.0 * alpha))
                 * (10.0 * np.sqrt(2.0) * (1.0 - alpha)) ** (1.0 / alpha))
    return np.asarray((np.arange(n) + i0) ** (-alpha), np.float64)


def scale_free(n: int, *, mean_degree: float = 4.0, exponent: float = 2.5,
               exponent_in: float | None = None, exponent_out: float | None = None,
               seed: int = 0) -> StructuredSystem:
    r"""Directed scale-free network from the static model with finite-size correction.

    Every node gets an out-fitness and an in-fitness from :func:`static_fitness` (Goh,
    Kahng & Kim's static model [1]_ with the offset of Cho et al. [2]_), with the degree
    exponents ``exponent_out`` and ``exponent_in`` (both default to ``exponent``). Each
    of the m = n <k>/2 links picks its source with probability proportional to
    out-fitness and, independently, its target proportional to in-fitness, so
    :math:`P(k_{out}) \sim k^{-\gamma_{out}}` and :math:`P(k_{in}) \sim k^{-\gamma_{in}}`,
    with the largest degrees of the order of :math:`\sqrt{\langle k \rangle n}` for
    exponents below 3. A node's in- and out-fitness ranks are independent random
    permutations (no in/out-degree correlation). Self-loops and repeated links are
    redrawn.

    References
    ----------
    .. [1] K.-I. Goh, B. Kahng, D. Kim, "Universal behavior of load distribution in
       scale-free networks", Phys. Rev. Lett. 87:278701 (2001).
       doi:10.1103/PhysRevLett.87.278701
    .. [2] Y. S. Cho, J. S. Kim, J. Park, B. Kahng, D. Kim, "Percolation transitions in
       scale-free networks under the Achlioptas process", Phys. Rev. Lett. 103:135702
       (2009). doi:10.1103/PhysRevLett.103.135702 (authors from memory)
    .. [3] M. Catanzaro, R. Pastor-Satorras, "Analytic solution of a static scale-free
       network model", Eur. Phys. J. B 44:241-248 (2005).

    Examples
    --------
    >>> g = scale_free(2000, mean_degree=6, exponent=2.2, seed=3)
    >>> g.n_links
    6000
    """
    _check(n, "n", 2)
    g_out = exponent if exponent_out is None else exponent_out
    g_in = exponent if exponent_in is None else exponent_in
    _check(exponent, "exponent", 2.0 + 1e-9)
    _check(g_out, "exponent_out", 2.0 + 1e-9)
    _check(g_in, "exponent_in", 2.0 + 1e-9)
    m = int(round(n * mean_degree / 2))
    _check(mean_degree, "mean_degree", 0, 0.5 * (n - 1))
    if m > _MAX_LINKS:
        raise OptionError(f"{m} links is more than netctl generates ({_MAX_LINKS}).")
    rng = np.random.default_rng(seed)
    cdfs = []
    for gamma in (g_out, g_in):
        cdf = np.cumsum(static_fitness(n, gamma))
        cdf /= cdf[-1]
        cdfs.append(cdf)

    # in-fitness rank i belongs to node perm_in[i]: independent of the out-fitness rank
    perm_in = rng.permutation(n).astype(np.int64)

    def draw(k: int) -> tuple[np.ndarray, np.ndarray]:
        s = np.minimum(np.searchsorted(cdfs[0], rng.random(k), side="right"), n - 1)
        d = np.minimum(np.searchsorted(cdfs[1], rng.random(k), side="right"), n - 1)
        return s.astype(np.int64), perm_in[d]

    src, dst = _draw_links(m, n, rng, draw)
    # node labels shuffled so that the index carries no information about the degree
    perm = rng.permutation(n).astype(np.int64)
    return _system(perm[src], perm[dst], n)


def grid(rows: int, cols: int, *, periodic: bool = False) -> StructuredSystem:
    """A rows x cols lattice: links both ways between horizontal and vertical neighbours.

    State ``r * cols + c`` sits at ``x = c``, ``y = r`` (node table). ``periodic=True``
    wraps both directions (a torus; needs at least 3 rows and 3 columns).

    Examples
    --------
    >>> g = grid(3, 4)
    >>> g.n_states, g.n_links
    (12, 34)
    """
    _check(rows, "rows", 1)
    _check(cols, "cols", 1)
    if periodic and (rows < 3 or cols < 3):
        raise OptionError(f"a periodic grid needs at least 3 rows and 3 columns, found "
                          f"{rows} x {cols}.")
    idx = np.arange(rows * cols, dtype=np.int64).reshape(rows, cols)
    if periodic:
        h = (idx, np.roll(idx, -1, axis=1))
        v = (idx, np.roll(idx, -1, axis=0))
    else:
        h = (idx[:, :-1], idx[:, 1:])
        v = (idx[:-1, :], idx[1:, :])
    a = np.concatenate([h[0].ravel(), v[0].ravel()])
    b = np.concatenate([h[1].ravel(), v[1].ravel()])
    nodes = {"x": (idx % cols).ravel().astype(float), "y": (idx // cols).ravel().astype(float)}
    return _system(np.concatenate([a, b]), np.concatenate([b, a]), rows * cols, nodes=nodes)


def small_world(n: int, *, k: int = 4, rewire: float = 0.1, seed: int = 0) -> StructuredSystem:
    """Watts–Strogatz small world: a ring where each node links to its ``k`` nearest
    neighbours (``k/2`` on each side), then each link's far end is moved to a uniformly
    random node with probability ``rewire`` [1]_. Links act both ways. Rewirings that
    would create a self-loop or repeat a link are redrawn. Nodes sit on a unit circle
    (node table ``x``, ``y``).

    References
    ----------
    .. [1] D. J. Watts, S. H. Strogatz, "Collective dynamics of 'small-world' networks",
       Nature 393:440-442 (1998). doi:10.1038/30918

    Examples
    --------
    >>> g = small_world(100, k=4, rewire=0.0)
    >>> g.n_links  # 200 undirected links, both ways
    400
    """
    _check(n, "n", 3)
    if k % 2 or k < 2 or k >= n:
        raise OptionError(f"k must be an even number in [2, n - 1], found {k!r}.")
    _check(rewire, "rewire", 0.0, 1.0)
    rng = np.random.default_rng(seed)
    base = np.arange(n, dtype=np.int64)
    a = np.repeat(base, k // 2)
    off = np.tile(np.arange(1, k // 2 + 1, dtype=np.int64), n)
    b = (a + off) % n
    move = rng.random(a.size) < rewire
    key_fixed = np.minimum(a[~move], b[~move]) * n + np.maximum(a[~move], b[~move])
    taken = _sorted_unique(key_fixed)
    new_b = b.copy()
    todo = np.flatnonzero(move)
    while todo.size:
        cand = rng.integers(0, n, todo.size)
        key = np.minimum(a[todo], cand) * n + np.maximum(a[todo], cand)
        ok = (cand != a[todo]) & ~_in_sorted(key, taken)
        # keep the first of equal new keys in this round
        tagged = np.where(ok, key, -1 - np.arange(key.size))
        order = np.argsort(tagged, kind="stable")
        first_mask = np.zeros(key.size, bool)
        st = tagged[order]
        first_mask[order[np.concatenate([[True], st[1:] != st[:-1]])]] = True
        ok &= first_mask
        new_b[todo[ok]] = cand[ok]
        taken = _sorted_unique(np.concatenate([taken, key[ok]]))
        todo = todo[~ok]
    b = new_b
    theta = 2 * np.pi * base / n
    nodes = {"x": np.cos(theta), "y": np.sin(theta)}
    return _system(np.concatenate([a, b]), np.concatenate([b, a]), n, nodes=nodes)


def generate(kind: str, n: int, *, mean_degree: float = 4.0, exponent: float = 2.5,
             exponent_in: float | None = None, exponent_out: float | None = None,
             k: int = 4, rewire: float = 0.1, seed: int = 0) -> StructuredSystem:
    """One of :data:`GENERATORS` by name (``grid`` makes a near-square lattice of ``n``
    nodes: ``rows = floor(sqrt(n))``, ``cols = ceil(n / rows)``, trimmed to ``n``)."""
    if kind not in GENERATORS:
        raise OptionError(f"unknown network kind {kind!r}; choose one of "
                          f"{', '.join(GENERATORS)}.")
    if kind == "erdos-renyi":
        return erdos_renyi(n, mean_degree=mean_degree, seed=seed)
    if kind == "scale-free":
        return scale_free(n, mean_degree=mean_degree, exponent=exponent,
                          exponent_in=exponent_in, exponent_out=exponent_out, seed=seed)
    if kind == "small-world":
        return small_world(n, k=k, rewire=rewire, seed=seed)
    _check(n, "n", 1)
    rows = max(1, int(np.floor(np.sqrt(n))))
    cols = int(np.ceil(n / rows))
    g = grid(rows, cols)
    if rows * cols == n:
        return g
    keep = np.arange(n)
    A = g.A[keep][:, keep]
    return StructuredSystem(A=A, B=None, C=None, state_names=tuple(map(str, range(n))),
                            input_names=(), output_names=(),
                            nodes={c: v[:n] for c, v in g.nodes.items()}, weighted=False,
                            model=g.model)
