"""Where each state sits on an interactive map or an export: the file's planar (x/y) or
geographic (lat/lon) coordinates, else a layout; states without coordinates are placed
next to their placed neighbours."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["CoordinateError", "Placement", "map_placement"]

#: Node-table columns read as geographic coordinates (latitude, longitude), in order of
#: preference.
GEO_COLUMNS: tuple[tuple[str, str], ...] = (("lat", "lon"), ("latitude", "longitude"),
                                            ("lat", "lng"))


class CoordinateError(OptionError):
    """A coordinate in the node table is not a number (or is out of range)."""


@dataclass(frozen=True)
class Placement:
    """Positions of the states and how they were obtained.

    Attributes
    ----------
    xy : ndarray of float, shape (n, 2)
        ``x, y`` (planar) or ``lon, lat`` (geographic, degrees).
    how : str
        ``"coordinates"``, ``"geographic"``, a layout name (``"fr"``, ``"fr-grid"``,
        ``"circle"``), or one of the first two with ``"+layout"`` when some states had
        none.
    geographic : bool
        Whether ``xy`` holds longitude and latitude (WGS 84 degrees, as GeoJSON).
    from_file : ndarray of bool
        Per state: whether its position came from the file.
    """

    xy: np.ndarray
    how: str
    geographic: bool
    from_file: np.ndarray

    @property
    def n_laid_out(self) -> int:
        """States placed by the layout (no coordinates in the file)."""
        return int(np.count_nonzero(~self.from_file))

    def note(self) -> str:
        """One sentence on where the positions come from (for legends and summaries)."""
        n = self.from_file.size
        kind = "longitude/latitude" if self.geographic else "x/y"
        if self.how in ("coordinates", "geographic"):
            return f"states at their {kind} coordinates from the file"
        if self.how.endswith("+layout"):
            return (f"{self.n_laid_out} of {n} states have no {kind} coordinates in the "
                    "file; they are placed beside their placed neighbours (or laid out "
                    "below the map when none of their neighbours has coordinates)")
        return ("no coordinates in the file: states placed by a seeded force-directed "
                "layout (positions carry no meaning)")


def map_placement(system: StructuredSystem, *, seed: int = 0) -> Placement:
    r"""Positions for a map of ``system``: the file's coordinates, else a layout.

    Parameters
    ----------
    system : StructuredSystem
    seed : int
        Seed of the layout (same seed, same picture).

    Returns
    -------
    Placement

    Raises
    ------
    CoordinateError
        A coordinate is not a number (the message names the state and the value), or a
        latitude/longitude is out of range.

    Notes
    -----
    Planar ``x``/``y`` columns win over geographic ``lat``/``lon`` ones (pandapower
    geodata arrive as ``x``/``y``). States without coordinates are put at the mean
    position of their placed neighbours (links in either direction, repeated so chains
    of unplaced states follow), with a small seeded offset; states in parts of the
    network where nothing is placed are laid out by
    :func:`netctl.viz.node_positions` in a strip below the placed ones. With no
    coordinates at all, :func:`netctl.viz.node_positions` lays out the whole network
    (Fruchterman-Reingold; its grid variant lays out :math:`10^5` states in seconds).

    Examples
    --------
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], 3, nodes={"lat": [50.0, 50.5, None],
    ...                                                          "lon": [4.0, 4.5, None]})
    >>> p = map_placement(s)
    >>> p.how, p.geographic, p.n_laid_out
    ('geographic+layout', True, 1)
    """
    from netctl.viz.layout import node_positions

    n = system.n_states
    xy, geographic = _file_coordinates(system)
    if xy is None:
        pos, how = node_positions(system, seed=seed)
        return Placement(np.asarray(pos, np.float64), how, False, np.zeros(n, bool))
    known = np.isfinite(xy).all(axis=1)
    base = "geographic" if geographic else "coordinates"
    if known.all():
        return Placement(xy, base, geographic, known)
    if not known.any():
        pos, how = node_positions(system, seed=seed)
        return Placement(np.asarray(pos, np.float64), how, False, known)
    return Placement(_fill_missing(system, xy, known, seed), base + "+layout", geographic,
                     known)


def _file_coordinates(system: StructuredSystem) -> tuple[np.ndarray | None, bool]:
    nodes = system.nodes
    if "x" in nodes and "y" in nodes:
        return np.column_stack([_numbers(system, "x"), _numbers(system, "y")]), False
    for lat_key, lon_key in GEO_COLUMNS:
        if lat_key in nodes and lon_key in nodes:
            lat, lon = _numbers(system, lat_key), _numbers(system, lon_key)
            for key, vals, lim in ((lat_key, lat, 90.0), (lon_key, lon, 180.0)):
                bad = np.flatnonzero(np.abs(vals) > lim)
                if bad.size:
                    i = int(bad[0])
                    raise CoordinateError(
                        f"node {system.state_names[i]!r}: {key} must lie in "
                        f"[-{lim:g}, {lim:g}] degrees, found {float(vals[i])!r}. Give "
                        "WGS 84 degrees, or planar coordinates as x and y.")
            return np.column_stack([lon, lat]), True
    return None, False


def _numbers(system: StructuredSystem, key: str) -> np.ndarray:
    """Column ``key`` as floats (NaN where missing); CoordinateError names the node."""
    col = system.nodes[key]
    if col.dtype.kind in "fiu":
        return col.astype(np.float64)
    out = np.full(col.size, np.nan)
    for i, v in enumerate(col.tolist()):
        if v is None or (isinstance(v, str) and not v.strip()):
            continue
        try:
            f = float(v)
        except (TypeError, ValueError):
            f = np.inf
        if isinstance(v, bool) or not (np.isfinite(f) or np.isnan(f)) or (
                np.isnan(f) and not isinstance(v, float)):
            raise CoordinateError(
                f"node {system.state_names[i]!r}: coordinate {key!r} must be a number, "
                f"found {v!r}. Fix the value in the file or remove it (a state without "
                "coordinates is placed by the layout).") from None
        out[i] = f
    return out


def _fill_missing(system: StructuredSystem, xy: np.ndarray, known: np.ndarray,
                  seed: int) -> np.ndarray:
    """Unplaced states at the mean of their placed neighbours (vectorized sweeps)."""
    import scipy.sparse as sp

    n = system.n_states
    src, dst = system.edges()
    keep = src != dst
    adj = sp.csr_array((np.ones(int(keep.sum())), (src[keep], dst[keep])), shape=(n, n))
    adj = (adj + adj.T).tocsr()
    adj.data[:] = 1.0
    out = np.where(known[:, None], xy, 0.0)
    have = known.copy()
    lo, hi = xy[known].min(axis=0), xy[known].max(axis=0)
    span = float(np.max(hi - lo)) or 1.0
    rng = np.random.default_rng(seed)
    for _ in range(_SWEEPS):  # each sweep places the next ring of unplaced states
        cnt = adj @ have.astype(np.float64)
        ready = ~have & (cnt > 0)
        if not ready.any():
            break
        mean = (adj @ (out * have[:, None])) / np.maximum(cnt, 1.0)[:, None]
        out[ready] = mean[ready] + rng.normal(scale=0.01 * span, size=(int(ready.sum()), 2))
        have |= ready
    rest = np.flatnonzero(~have)
    if rest.size:  # parts of the network with no coordinates: laid out below the map
        from netctl.viz.layout import node_positions

        sub = system_subgraph(system, rest)
        pos, _ = node_positions(sub, seed=seed)
        plo, phi = pos.min(axis=0), pos.max(axis=0)
        pspan = float(np.max(phi - plo)) or 1.0
        width = max(float(hi[0] - lo[0]), span * 0.3)
        pos = (pos - plo) / pspan * width * 0.5
        out[rest] = pos + np.array([lo[0], lo[1] - 0.1 * span - pos[:, 1].max()])
    return out


def system_subgraph(system: StructuredSystem, idx: np.ndarray) -> StructuredSystem:
    """The links among the states ``idx`` (renumbered 0..k-1), for a layout."""
    src, dst = system.edges()
    local = np.full(system.n_states, -1, np.int64)
    local[idx] = np.arange(idx.size)
    keep = (local[src] >= 0) & (local[dst] >= 0)
    return StructuredSystem.from_edges(local[src[keep]], local[dst[keep]], int(idx.size))


#: At most this many neighbour sweeps place states without coordinates; states further
#: than this many links from any placed state are laid out below the map instead.
_SWEEPS = 200
