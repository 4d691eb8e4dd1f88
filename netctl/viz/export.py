"""Map results for other tools: GeoJSON (RFC 7946) for GIS, GraphML with role attributes.

Both carry every state and every link with what the map marks on it (driver, unreached,
dilation, proposed input, role, control path or cycle, critical link), so the result goes
back into the tools the data came from.
"""

from __future__ import annotations

import json
from typing import Any

import numpy as np

from netctl.system import StructuredSystem
from netctl.viz.marks import ROLE_NAMES, MapMarks
from netctl.viz.placement import Placement

__all__ = ["EXPORT_FORMATS", "geojson_text", "graphml_text", "link_kinds", "node_flags",
           "to_geojson"]

#: File suffixes the map command exports to (besides figures and HTML).
EXPORT_FORMATS: tuple[str, ...] = ("geojson", "graphml")


def node_flags(system: StructuredSystem, marks: MapMarks) -> dict[str, np.ndarray]:
    """Per state: boolean columns ``driver``, ``unreached``, ``dilation``,
    ``proposed_input`` and a ``role`` text column (``""`` when roles were not asked)."""
    n = system.n_states
    out: dict[str, np.ndarray] = {}
    for key, idx in (("driver", marks.drivers), ("unreached", marks.unreached),
                     ("dilation", marks.dilation), ("proposed_input", marks.suggested)):
        col = np.zeros(n, bool)
        col[np.asarray(idx, np.int64)] = True
        out[key] = col
    role = np.full(n, "", dtype=object)
    if marks.roles is not None:
        role[:] = np.asarray(ROLE_NAMES, dtype=object)[np.asarray(marks.roles, np.int64)]
    out["role"] = role
    return out


def link_kinds(system: StructuredSystem, marks: MapMarks
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Every link ``src -> dst`` with its kind (``"link"``, ``"control path"``,
    ``"control cycle"``) and whether it is critical (in every maximum matching)."""
    n = max(system.n_states, 1)
    src, dst = system.edges()
    key = dst.astype(np.int64) * n + src
    mkey = marks.matched_targets.astype(np.int64) * n + marks.matched_sources
    order = np.argsort(mkey, kind="stable")
    pos = np.searchsorted(mkey[order], key)
    pos = np.minimum(pos, max(mkey.size - 1, 0))
    matched = (mkey.size > 0) & (mkey[order][pos] == key) if mkey.size else np.zeros(
        key.size, bool)
    on_cycle = np.zeros(key.size, bool)
    if mkey.size:
        on_cycle[matched] = marks.on_cycle[order][pos[matched]]
    kind = np.where(matched, np.where(on_cycle, "control cycle", "control path"), "link")
    critical = np.zeros(key.size, bool)
    if marks.critical_sources is not None and marks.critical_targets is not None:
        ckey = marks.critical_targets.astype(np.int64) * n + marks.critical_sources
        critical = np.isin(key, ckey)
    return src, dst, kind.astype(object), critical


def _py(v: Any) -> Any:
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not np.isfinite(v):
        return None
    return v if isinstance(v, (str, int, float, bool)) or v is None else str(v)


def to_geojson(system: StructuredSystem, marks: MapMarks, placement: Placement
               ) -> dict[str, Any]:
    r"""A GeoJSON FeatureCollection (RFC 7946) of the states (Points) and links
    (LineStrings) with their map roles.

    Notes
    -----
    RFC 7946 [1]_ positions are WGS 84 longitude, latitude. When the file gave planar
    coordinates (or none), the positions are those of the map and the collection says
    so in its ``netctl`` member (``"coordinates": "planar"``), since a GIS would
    otherwise read them as degrees. Self-loops have no line; their state carries
    ``self_loop: true``.

    References
    ----------
    .. [1] H. Butler, M. Daly, A. Doyle, S. Gillies, S. Hagen, T. Schaub, "The GeoJSON
       Format", RFC 7946, IETF, 2016. doi:10.17487/RFC7946

    Examples
    --------
    >>> from netctl.viz import map_marks
    >>> from netctl.viz.placement import map_placement
    >>> s = StructuredSystem.from_edges([0], [1], 2, nodes={"lat": [50.0, 51.0],
    ...                                                   "lon": [4.0, 5.0]})
    >>> g = to_geojson(s, map_marks(s), map_placement(s))
    >>> g["features"][0]["geometry"], g["features"][0]["properties"]["driver"]
    ({'type': 'Point', 'coordinates': [4.0, 50.0]}, True)
    >>> g["features"][2]["properties"]["kind"]
    'control path'
    """
    n = system.n_states
    xy = np.round(np.asarray(placement.xy, np.float64), 7)
    flags = node_flags(system, marks)
    src, dst, kind, critical = link_kinds(system, marks)
    loops = np.zeros(n, bool)
    loops[src[src == dst]] = True
    names = [str(s) for s in system.state_names]
    extra = {k: v for k, v in system.nodes.items() if k not in ("x", "y")}
    feats: list[dict[str, Any]] = []
    xs, ys = xy[:, 0].tolist(), xy[:, 1].tolist()
    cols = {k: v.tolist() for k, v in flags.items()}
    placed = placement.from_file.tolist()
    for i in range(n):
        props: dict[str, Any] = {"name": names[i], "feature": "state"}
        for k, col in cols.items():
            props[k] = col[i]
        props["self_loop"] = bool(loops[i])
        props["coordinates_from_file"] = placed[i]
        for k, v in extra.items():
            props.setdefault(k, _py(v[i]))
        feats.append({"type": "Feature", "id": names[i],
                      "geometry": {"type": "Point", "coordinates": [xs[i], ys[i]]},
                      "properties": props})
    keep = src != dst
    for u, v, k, c in zip(src[keep].tolist(), dst[keep].tolist(), kind[keep].tolist(),
                          critical[keep].tolist()):
        feats.append({"type": "Feature",
                      "geometry": {"type": "LineString",
                                   "coordinates": [[xs[u], ys[u]], [xs[v], ys[v]]]},
                      "properties": {"feature": "link", "source": names[u],
                                     "target": names[v], "kind": k, "critical": c}})
    return {"type": "FeatureCollection",
            "netctl": {"coordinates": "WGS 84 longitude/latitude" if placement.geographic
                       else "planar", "placement": placement.note(),
                       "design": marks.design, "controllable": marks.controllable,
                       "orientation": "a link source -> target: source influences target"},
            "features": feats}


def geojson_text(system: StructuredSystem, marks: MapMarks, placement: Placement) -> str:
    """:func:`to_geojson` as compact JSON text."""
    return json.dumps(to_geojson(system, marks, placement), ensure_ascii=False,
                      separators=(",", ":"), allow_nan=False) + "\n"


def graphml_text(system: StructuredSystem, marks: MapMarks, placement: Placement) -> str:
    """The network as GraphML (directed) with the map's marks as node and edge attributes.

    Node attributes: ``x``, ``y`` (map position; ``lon``/``lat`` when geographic), the
    flags of :func:`node_flags`, and the node table's own columns; edge attributes
    ``kind`` and ``critical``. The text networkx's ``generate_graphml(prettyprint=False)``
    gives for that graph, built without importing networkx
    (:mod:`netctl.io._graphtext`); a node-table value of another type than text,
    integer, number or boolean goes through networkx itself.

    Examples
    --------
    >>> from netctl.viz import map_marks
    >>> from netctl.viz.placement import map_placement
    >>> s = StructuredSystem.from_edges([0], [1], 2)
    >>> 'attr.name="driver"' in graphml_text(s, map_marks(s), map_placement(s))
    True
    """
    from netctl.io._graphtext import digraph_order, graphml_bytes

    n = system.n_states
    names = [str(s) for s in system.state_names]
    xy = np.asarray(placement.xy, np.float64)
    kx, ky = ("lon", "lat") if placement.geographic else ("x", "y")
    cols: dict[str, list[Any]] = {k: [_py(x) for x in v.tolist()] for k, v in
                                  system.nodes.items() if k not in (kx, ky)}
    flags = {k: v.tolist() for k, v in node_flags(system, marks).items()}
    rows: list[dict[str, Any]] = []
    for i in range(n):
        attrs: dict[str, Any] = {kx: float(xy[i, 0]), ky: float(xy[i, 1])}
        for k, col in cols.items():
            if col[i] is not None:
                attrs[k] = col[i]
        for k, col in flags.items():
            attrs[k] = col[i]
        rows.append(attrs)
    src, dst, kind, critical = link_kinds(system, marks)
    links = [{"kind": k, "critical": c} for k, c in zip(kind.tolist(), critical.tolist())]
    order = digraph_order(src, dst, n)
    if order is not None:
        data = graphml_bytes(names, rows, src[order].tolist(), dst[order].tolist(),
                             [links[k] for k in order.tolist()], pretty=False)
        if data is not None:
            return data.decode("utf-8")
    import networkx as nx

    g = nx.DiGraph()
    for name, attrs in zip(names, rows):
        g.add_node(name, **attrs)
    for u, v, link in zip(src.tolist(), dst.tolist(), links):
        g.add_edge(names[u], names[v], **link)
    return "\n".join(nx.generate_graphml(g, prettyprint=False)) + "\n"
