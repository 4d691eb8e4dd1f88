"""Where each state sits on a map: the file's coordinates, or a seeded layout."""

from __future__ import annotations

import random
import warnings

import numpy as np

from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["LAYOUTS", "SMALL_LAYOUT", "node_positions", "weak_labels"]

#: Layout choices accepted by :func:`node_positions`.
LAYOUTS: tuple[str, ...] = ("auto", "coordinates", "fr", "fr-grid", "circle")

#: Above this many states ``auto`` uses the grid variant of Fruchterman–Reingold.
_GRID_ABOVE = 2000


def node_positions(system: StructuredSystem, *, layout: str = "auto",
                   seed: int = 0, quick: bool = False) -> tuple[np.ndarray, str]:
    r"""Map positions of the states, shape ``(n, 2)``, and how they were obtained.

    Parameters
    ----------
    system : StructuredSystem
    layout : {"auto", "coordinates", "fr", "fr-grid", "circle"}
        ``auto``: the node table's ``x`` and ``y`` when present, otherwise
        Fruchterman–Reingold [1]_ (its grid variant above 2000 states, whose cost per
        iteration is near-linear). ``coordinates`` insists on the node table.
    seed : int
        Seed of the layout (the same seed gives the same picture).
    quick : bool
        At most 50 iterations of the force-directed layout, its grid variant from 1000
        states (for previews such as the notebook map: well under a second for 2000
        states instead of seconds; rougher). Components of up to
        :data:`SMALL_LAYOUT` states get all their iterations (they are cheap).

    Returns
    -------
    positions : ndarray of float, shape (n, 2)
    how : str
        ``"coordinates"``, ``"coordinates+fr"`` (some states had no coordinates and were
        placed by the layout, with a warning), ``"fr"``, ``"fr-grid"`` or ``"circle"``.

    Raises
    ------
    OptionError
        Unknown ``layout``, or ``coordinates`` asked for a system without them.

    Notes
    -----
    Coordinates are taken as given (no projection); states whose ``x`` or ``y`` is NaN
    are placed by the layout, scaled into the box of the known coordinates, and a
    warning says how many. The grid variant runs fewer iterations on large networks
    (at least 50), so a map of :math:`10^5` states is laid out in seconds; it shows
    clusters and components, not fine structure. Components of up to
    :data:`SMALL_LAYOUT` states are laid out by a NumPy implementation of the same
    method, larger ones by igraph's (whose import costs more than a small map).

    References
    ----------
    .. [1] T. M. J. Fruchterman, E. M. Reingold, "Graph drawing by force-directed
       placement", Software: Practice and Experience 21(11):1129-1164, 1991.
       doi:10.1002/spe.4380211102

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], 3,
    ...                                  nodes={"x": [0.0, 1.0, 2.0], "y": [0.0, 0.5, 0.0]})
    >>> pos, how = node_positions(s)
    >>> how, pos[1].tolist()
    ('coordinates', [1.0, 0.5])
    """
    if layout not in LAYOUTS:
        raise OptionError(f"unknown layout {layout!r}; choose one of {', '.join(LAYOUTS)}.")
    n = system.n_states
    xy = _table_coordinates(system)
    if layout == "coordinates" and xy is None:
        raise OptionError("layout 'coordinates' needs x and y columns in the node table; "
                          "this system has none. Use layout 'auto' or add coordinates.")
    if layout in ("auto", "coordinates") and xy is not None:
        known = np.isfinite(xy).all(axis=1)
        if known.all():
            return xy, "coordinates"
        missing = int(np.count_nonzero(~known))
        warnings.warn(f"{missing} of {n} states have no x/y coordinates; they are placed by "
                      "a force-directed layout inside the box of the known coordinates.",
                      UserWarning, stacklevel=2)
        auto = _layout(system, seed, grid=n > _GRID_ABOVE, quick=quick)
        lo, hi = xy[known].min(axis=0), xy[known].max(axis=0)
        span = np.where(hi - lo > 0, hi - lo, 1.0)
        alo, ahi = auto.min(axis=0), auto.max(axis=0)
        aspan = np.where(ahi - alo > 0, ahi - alo, 1.0)
        out = xy.copy()
        out[~known] = lo + (auto[~known] - alo) / aspan * span
        return out, "coordinates+fr"
    if layout == "circle" or n <= 2:
        t = 2 * np.pi * np.arange(n) / max(n, 1)
        return np.column_stack([np.cos(t), np.sin(t)]), "circle"
    grid = layout == "fr-grid" or (layout == "auto" and n > _GRID_ABOVE)
    return _layout(system, seed, grid=grid, quick=quick), "fr-grid" if grid else "fr"


def _table_coordinates(system: StructuredSystem) -> np.ndarray | None:
    nodes = system.nodes
    if "x" not in nodes or "y" not in nodes:
        return None
    try:
        x = np.asarray(nodes["x"], dtype=np.float64)
        y = np.asarray(nodes["y"], dtype=np.float64)
    except (TypeError, ValueError):
        warnings.warn("the node table's x/y columns are not numbers; using a layout instead.",
                      UserWarning, stacklevel=3)
        return None
    if not np.isfinite(x).any() and not np.isfinite(y).any():
        return None
    return np.column_stack([x, y])


def _layout(system: StructuredSystem, seed: int, *, grid: bool,
            quick: bool = False) -> np.ndarray:
    """Force-directed positions; above ``_GRID_ABOVE`` states, by place when states share one.

    The node table's ``node`` column (the second-order model writes it: ``b:pos`` and
    ``b:vel`` belong to bus ``b``) names the place of each state. A large map lays out
    the places (half the states of a swing model, so about half the time) and draws each
    place's states side by side on a small ring, a fifth of the median link length
    across; small maps lay out every state, so that the links inside a place stay
    visible.
    """
    n = system.n_states
    src, dst = system.edges()
    col = system.nodes.get("node")
    if col is None or n <= _GRID_ABOVE:
        return _force_layout(n, src, dst, seed, grid=grid, quick=quick)
    labels = np.asarray(col).astype(str)
    _, first, inv = np.unique(labels, return_index=True, return_inverse=True)
    k = first.size
    if k == n:
        return _force_layout(n, src, dst, seed, grid=grid, quick=quick)
    rank = np.empty(k, np.int64)
    rank[np.argsort(first, kind="stable")] = np.arange(k)  # places in order of appearance
    place = rank[inv.ravel()]
    ps, pd = place[src], place[dst]
    between = ps != pd
    at = _force_layout(k, ps[between], pd[between], seed, grid=grid and k > _GRID_ABOVE,
                       quick=quick)
    # each state's slot within its place (states in index order) and the place's size
    order = np.argsort(place, kind="stable")
    size = np.bincount(place, minlength=k)
    start = np.concatenate([[0], np.cumsum(size)[:-1]])
    slot = np.empty(n, np.int64)
    slot[order] = np.arange(n) - start[place[order]]
    if between.any():
        lengths = np.hypot(*(at[ps[between]] - at[pd[between]]).T)
        step = float(np.median(lengths[lengths > 0])) if (lengths > 0).any() else 1.0
    else:
        step = 1.0
    theta = 2 * np.pi * slot / np.maximum(size[place], 1) + np.pi
    rad = np.where(size[place] > 1, 0.1 * step, 0.0)
    return at[place] + np.column_stack([rad * np.cos(theta), rad * np.sin(theta)])


def _force_layout(n: int, src: np.ndarray, dst: np.ndarray, seed: int, *,
                  grid: bool, quick: bool = False) -> np.ndarray:
    """Fruchterman–Reingold per large weak component, small components packed apart.

    A force-directed layout of a graph with many components pushes the small ones to
    the edge and squeezes the large one into a blob; so components of at least
    ``_BIG`` states (at most ``_MAX_BIG`` of them) are laid out one by one, each
    scaled to an area proportional to its size and placed in a row, and all smaller
    components (isolated states, pairs, ...) are drawn as small rings on a grid below
    them (vectorized; no per-component loop). ``src -> dst`` are the links (any
    orientation; self-loops and repeats are ignored).
    """
    k, lab = weak_labels(n, src, dst)
    sizes = np.bincount(lab, minlength=k)
    order = np.lexsort((np.arange(k), -sizes))  # largest first, ties by label
    big = order[sizes[order] >= _BIG][:_MAX_BIG]
    if big.size == 0 and k:
        big = order[:1]
    pos = np.zeros((n, 2))
    x_cursor = 0.0
    height = 0.0
    for c in big.tolist():
        members = np.flatnonzero(lab == c)
        local = np.full(n, -1, np.int64)
        local[members] = np.arange(members.size)
        keep = (lab[src] == c) & (src != dst)
        sub = _fr(members.size, local[src[keep]], local[dst[keep]], seed,
                  grid=grid and members.size > _GRID_ABOVE, quick=quick)
        side = np.sqrt(members.size)
        # a short run of the grid variant can leave a few states far out: scale to the
        # central 99% and pull the stragglers onto a margin around it
        if members.size > 1000:
            sub = _pull_in(sub, local[src[keep]], local[dst[keep]], seed)
        lo, hi = sub.min(axis=0), sub.max(axis=0)
        span = np.where(hi - lo > 0, hi - lo, 1.0)
        sub = (sub - lo) / span.max() * side
        pos[members] = sub + np.array([x_cursor, 0.0])
        x_cursor += float(sub[:, 0].max()) + 0.15 * side + 1.0
        height = max(height, float(sub[:, 1].max()))
    small = np.setdiff1d(order, big, assume_unique=True)
    if small.size:
        # rings of radius ~ sqrt(size) on a grid of cells, below the large components
        rank = np.zeros(k, np.int64)
        rank[small] = np.arange(small.size)
        in_small = np.isin(lab, small)
        idx = np.flatnonzero(in_small)
        comp = lab[idx]
        first = np.zeros(k, np.int64)
        sort = np.argsort(comp, kind="stable")
        sc = comp[sort]
        starts = np.r_[0, np.flatnonzero(np.diff(sc)) + 1]
        first[sc[starts]] = starts
        within = np.empty(idx.size, np.int64)
        within[sort] = np.arange(idx.size) - first[sc]
        cell = 2.0 * np.sqrt(float(sizes[small].max())) / np.pi + 1.0
        width = max(x_cursor - 1.0, np.sqrt(small.size) * cell, cell)
        per_row = max(int(width // cell), 1)
        r = rank[comp]
        cx = (r % per_row) * cell + cell / 2
        cy = -(r // per_row) * cell - cell / 2 - (0.1 * height + 1.0 if big.size else 0.0)
        sz = sizes[comp]
        theta = 2 * np.pi * within / np.maximum(sz, 1)
        rad = np.where(sz > 1, 0.35 * cell * np.sqrt(sz / sizes[small].max()), 0.0)
        pos[idx, 0] = cx + rad * np.cos(theta)
        pos[idx, 1] = cy + rad * np.sin(theta)
    return pos


def _pull_in(xy: np.ndarray, src: np.ndarray, dst: np.ndarray, seed: int) -> np.ndarray:
    """Move states outside the central 99% box next to their neighbours (vectorized)."""
    import scipy.sparse as sp

    n = xy.shape[0]
    lo, hi = np.percentile(xy, 0.5, axis=0), np.percentile(xy, 99.5, axis=0)
    out = np.any((xy < lo) | (xy > hi), axis=1)
    if not out.any():
        return xy
    adj = sp.csr_array((np.ones(src.size), (src, dst)), shape=(n, n))
    adj = (adj + adj.T).tocsr()
    deg = np.maximum(np.asarray(adj.sum(axis=1)).ravel(), 1.0)
    rng = np.random.default_rng(seed)
    jitter = rng.normal(scale=0.01 * float(np.max(hi - lo)), size=(int(out.sum()), 2))
    xy = xy.copy()
    for _ in range(4):
        mean = (adj @ xy) / deg[:, None]
        xy[out] = mean[out] + jitter
    return np.clip(xy, lo, hi)


#: Weak components with at least this many states get a force-directed layout.
_BIG = 12
#: At most this many components get their own force-directed layout.
_MAX_BIG = 24


def weak_labels(n: int, src: np.ndarray, dst: np.ndarray) -> tuple[int, np.ndarray]:
    """Weakly connected components of the links ``src -> dst`` on ``n`` states:
    ``(count, labels)``, labels numbered in order of each component's smallest state.

    Up to :data:`SMALL_LAYOUT` states by netctl's union-find (no scipy import: on a
    small map scipy.sparse and csgraph cost more than the rest of the run); above, by
    scipy's compiled routine, as before. Both number components the same way.
    """
    if n <= SMALL_LAYOUT:
        from netctl._csr import coo_pattern
        from netctl.graph.components import weak_component_labels

        p, _ = coo_pattern(np.asarray(dst, np.int64), np.asarray(src, np.int64), None,
                           (n, n), count=False)
        return weak_component_labels(p.indptr, p.indices)
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    A = sp.csr_array((np.ones(src.size, np.int8), (dst, src)), shape=(n, n))
    k, lab = connected_components(A, directed=True, connection="weak")
    return int(k), lab


#: Up to this many states a component is laid out by :func:`_fr_small` (NumPy) and the
#: components are found without scipy; above, by igraph's compiled layout. igraph's
#: import brings matplotlib.pyplot with it (about 0.3 s), more than a small map costs
#: (benchmarks/RESULTS.md, small maps).
SMALL_LAYOUT = 100


def _fr_small(n: int, src: np.ndarray, dst: np.ndarray, seed: int, niter: int
              ) -> np.ndarray:
    r"""Fruchterman-Reingold on one connected component of ``n`` states, with NumPy.

    The published method [1]_: every pair of states repels with force :math:`k^2/d`,
    linked states attract with :math:`d^2/k`, and each step moves a state along its
    net force by at most the temperature, which falls linearly to zero over ``niter``
    steps; here :math:`k = 1` in a square of area ``n``, starting positions uniform in
    that square from ``numpy.random.default_rng(seed)`` (the same seed, the same
    picture). :math:`O(n^2)` per step, so only for small components
    (:data:`SMALL_LAYOUT`).
    """
    side = np.sqrt(n)
    pos = np.random.default_rng(seed).uniform(-side / 2, side / 2, size=(n, 2))
    keep = src != dst
    a, b = np.minimum(src[keep], dst[keep]), np.maximum(src[keep], dst[keep])
    if a.size:
        pairs = np.unique(a.astype(np.int64) * n + b)
        a, b = pairs // n, pairs % n
    z = pos[:, 0] + 1j * pos[:, 1]  # positions as complex numbers: half the array work
    diag = np.arange(n)
    t0 = side / 10.0
    for it in range(niter):
        dz = z[:, None] - z[None, :]
        d2 = dz.real * dz.real + dz.imag * dz.imag
        d2[diag, diag] = np.inf
        np.maximum(d2, 1e-9, out=d2)
        disp = (dz / d2).sum(axis=1)  # k^2/d along dz/d, k = 1
        if a.size:
            e = z[a] - z[b]
            f = e * np.abs(e)  # d^2/k along e/d
            disp += (np.bincount(b, f.real, n) - np.bincount(a, f.real, n)
                     + 1j * (np.bincount(b, f.imag, n) - np.bincount(a, f.imag, n)))
        length = np.maximum(np.abs(disp), 1e-12)
        temp = t0 * (1.0 - it / niter)
        z = z + disp * (np.minimum(length, temp) / length)
    return np.column_stack([z.real, z.imag])


def _fr(n: int, src: np.ndarray, dst: np.ndarray, seed: int, *, grid: bool,
        quick: bool = False) -> np.ndarray:
    if n <= 2:
        return np.column_stack([np.arange(n, dtype=float), np.zeros(n)])
    if n <= SMALL_LAYOUT:  # cheap here, so all 500 steps even for a preview (50 leave
        return _fr_small(n, src, dst, seed, 500)  # a lattice's stress four times higher)
    import igraph

    g = igraph.Graph(n=n, edges=np.column_stack([src, dst]).tolist(), directed=False)
    g.simplify()
    niter = 500 if not grid else int(np.clip(3e7 / max(n + g.ecount(), 1), 50, 500))
    if quick:  # a preview: few iterations, and the grid variant from 1000 states
        niter = min(niter, 50)
        grid = grid or n > 1000
    # igraph draws the start positions from its generator: a seeded one makes the
    # layout reproducible (giving start positions instead slows the grid variant badly)
    igraph.set_random_number_generator(random.Random(seed))
    try:
        lay = g.layout_fruchterman_reingold(niter=niter, grid=grid)
    finally:
        igraph.set_random_number_generator(random)
    return np.asarray(lay.coords, dtype=np.float64).reshape(n, 2)
