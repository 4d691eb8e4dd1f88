"""Where each state sits on a map: the file's coordinates, or a seeded layout."""

from __future__ import annotations

import random
import warnings

import numpy as np

from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["LAYOUTS", "node_positions"]

#: Layout choices accepted by :func:`node_positions`.
LAYOUTS: tuple[str, ...] = ("auto", "coordinates", "fr", "fr-grid", "circle")

#: Above this many states ``auto`` uses the grid variant of Fruchterman–Reingold.
_GRID_ABOVE = 2000


def node_positions(system: StructuredSystem, *, layout: str = "auto",
                   seed: int = 0) -> tuple[np.ndarray, str]:
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
    clusters and components, not fine structure.

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
        auto = _force_layout(system, seed, grid=n > _GRID_ABOVE)
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
    return _force_layout(system, seed, grid=grid), "fr-grid" if grid else "fr"


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


def _force_layout(system: StructuredSystem, seed: int, *, grid: bool) -> np.ndarray:
    import igraph

    n = system.n_states
    src, dst = system.edges()
    keep = src != dst
    g = igraph.Graph(n=n, edges=np.column_stack([src[keep], dst[keep]]).tolist(),
                     directed=False)
    g.simplify()
    rng = np.random.default_rng(seed)
    start = (rng.random((n, 2)) * np.sqrt(max(n, 1))).tolist()
    niter = 500 if not grid else int(np.clip(3e7 / max(n + g.ecount(), 1), 50, 500))
    igraph.set_random_number_generator(random.Random(seed))
    try:
        lay = g.layout_fruchterman_reingold(seed=start, niter=niter, grid=grid)
    finally:
        igraph.set_random_number_generator(random)
    return np.asarray(lay.coords, dtype=np.float64).reshape(n, 2)
