"""Network maps: the states where they sit, the driver nodes, the control paths and
the trouble spots, with a legend that explains every mark."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any, cast

import numpy as np

from netctl.system import StructuredSystem
from netctl.viz.marks import MapMarks, map_marks
from netctl.viz.style import INK, MARKS, Mark

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

__all__ = ["GID_PREFIX", "draw_map", "legend_entries", "map_figure"]

#: Every artist of a map carries the gid ``GID_PREFIX + mark name`` (e.g.
#: ``"netctl:driver"``), so programs and tests can find what was drawn.
GID_PREFIX = "netctl:"

#: Up to this many links, each link is an arrow; above, links are line segments.
_ARROWS_UP_TO = 400
#: Up to this many states, names are written next to the states.
_LABELS_UP_TO = 60
#: Above this many states the map is an overview: links thin and see-through.
_OVERVIEW_ABOVE = 20000
#: Above this many links (of one kind), links are rasterized in vector output.
_RASTER_ABOVE = 2000
#: Above this many plain links the map draws them as their density (an image: each link
#: spread over the pixels it crosses) instead of one line each: Agg drew 10^6 see-through
#: segments in about 18-29 s, the image takes about 1 s (our choice, no source).
_DENSITY_ABOVE = 200_000
#: Marker area (points^2) of a driver mark on every map, small or huge; the other
#: flagged marks scale with their relative size in :data:`netctl.viz.style.MARKS`.
_FLAG_AREA = 190.0


def _roles_tell(marks: MapMarks) -> bool:
    """Roles are drawn only when states differ in role (one role everywhere says
    nothing per state; the legend says it once)."""
    return marks.roles is not None and np.unique(marks.roles).size > 1


def draw_map(system: StructuredSystem, marks: MapMarks | None = None, *,
             positions: np.ndarray | None = None, ax: Axes | None = None,
             labels: bool | None = None, legend: bool = True, title: str | None = None,
             seed: int = 0) -> Axes:
    r"""Draw a map of ``system`` with its driver nodes and control paths.

    Parameters
    ----------
    system : StructuredSystem
    marks : MapMarks, optional
        What to mark (default: :func:`~netctl.viz.map_marks` of ``system``).
    positions : ndarray, shape (n, 2), optional
        Where to draw each state (default: :func:`~netctl.viz.node_positions`: the node
        table's coordinates, else a seeded layout).
    ax : matplotlib Axes, optional
        Draw into this axes (default: a new figure).
    labels : bool, optional
        Write state names (default: only up to 60 states).
    legend : bool
        Add the legend (outside the map, on the right).
    title : str, optional
        Title; by default the sizes, the design and the verdict.
    seed : int
        Layout seed when ``positions`` is not given.

    Returns
    -------
    matplotlib.axes.Axes

    Notes
    -----
    Marks follow :mod:`netctl.viz.style`: shape and fill carry the meaning, colour
    repeats it. Every artist has a gid ``"netctl:<mark>"`` (``driver``, ``suggested``,
    ``unreached``, ``dilation``, ``fragile`` (single points of failure), ``disturbed``
    (states a disturbance acts on), ``state``, ``chain``, ``cycle``, ``link``,
    ``critical_link``, ``role_*``, ``label``). Up to 400 links each link is an arrow;
    above that links are straight segments (one collection, rasterized in vector output
    above 2000 links, made more transparent the denser the map), marker sizes shrink
    with the number of states, and names are not written. Cost: linear in states and
    links; a map of :math:`10^5` states draws in seconds.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1, 1], [1, 2, 3], 4)
    >>> ax = draw_map(s)
    >>> sorted(a.get_gid() for a in ax.collections)
    ['netctl:driver', 'netctl:state']
    >>> import matplotlib.pyplot as plt; plt.close(ax.figure)
    """
    from netctl.viz.layout import node_positions

    n = system.n_states
    marks = marks if marks is not None else map_marks(system)
    how = "given"
    if positions is None:
        positions, how = node_positions(system, seed=seed)
    pos = np.asarray(positions, dtype=np.float64).reshape(n, 2)
    own = ax is None
    if ax is None:
        import matplotlib.pyplot as plt

        fig, ax = plt.subplots(figsize=_figure_size(pos), layout="constrained")
    assert ax is not None
    _draw(system, marks, pos, how, ax, own=own, labels=labels, legend=legend, title=title)
    return ax


def map_figure(system: StructuredSystem, marks: MapMarks, *, positions: np.ndarray,
               labels: bool | None = None, title: str | None = None) -> Figure:
    """The map of :func:`draw_map` on a new figure that pyplot does not manage.

    For files and reports: the figure is a :class:`matplotlib.figure.Figure` on the Agg
    canvas (:func:`netctl.viz.output.new_figure`), so neither pyplot nor a GUI backend
    is imported (pyplot's import costs about as much as a small map; issue 15), and
    nothing needs closing. The drawing is the one :func:`draw_map` makes on its own
    figure, legend beside the map.
    """
    from netctl.viz.output import new_figure

    pos = np.asarray(positions, dtype=np.float64).reshape(system.n_states, 2)
    fig = new_figure(_figure_size(pos))
    _draw(system, marks, pos, "given", fig.add_subplot(), own=True, labels=labels,
          legend=True, title=title)
    return fig


def _draw(system: StructuredSystem, marks: MapMarks, pos: np.ndarray, how: str, ax: Axes,
          *, own: bool, labels: bool | None, legend: bool, title: str | None) -> None:
    """Draw the map into ``ax`` (``own``: the figure is the map's, legend outside)."""
    from matplotlib.collections import LineCollection

    n = system.n_states
    ax.set_aspect("equal", adjustable="box")
    ax.set_axis_off()

    src, dst = system.edges()
    loops = src == dst
    area = _base_area(n)
    radius_pt = np.sqrt(area * MARKS["driver"].size) / 2 + 1.0
    n_links = int(np.count_nonzero(~loops))
    arrows = n_links <= _ARROWS_UP_TO
    scale = 1.0 if n <= 2000 else 0.4

    # links: plain ones first, then matched ones on top (chains and cycles)
    m_src, m_dst = marks.matched_sources, marks.matched_targets
    is_matched = _edge_mask(src, dst, m_src, m_dst, n)
    plain = ~is_matched & ~loops
    layers = [("link", plain, None)]
    cyc_key = np.zeros(n, bool)
    cyc_key[m_dst[marks.on_cycle]] = True  # matched link into v is on a cycle
    layers.append(("chain", is_matched & ~loops & ~cyc_key[dst], None))
    layers.append(("cycle", is_matched & ~loops & cyc_key[dst], None))
    if marks.critical_sources is not None and marks.critical_targets is not None:
        crit = _edge_mask(src, dst, marks.critical_sources, marks.critical_targets, n) & ~loops
        layers.insert(1, ("critical_link", crit, None))
    density = not arrows and int(np.count_nonzero(plain)) > _DENSITY_ABOVE
    alpha_plain = float(np.clip(12.0 / np.sqrt(max(n_links, 1)), 0.12, 0.9))
    for key, mask, _ in layers:
        if not mask.any():
            continue
        mk = MARKS[key]
        lw = mk.linewidth * scale
        alpha = alpha_plain if key == "link" else 0.8 if key == "cycle" else 0.95
        if n > _OVERVIEW_ABOVE:  # overview: matched links thin and see-through too
            lw = mk.linewidth * 0.15
            alpha = min(alpha, 0.05) if key == "link" else 0.3
        if arrows:
            _draw_arrows(ax, pos, src[mask], dst[mask], mk, lw, alpha, radius_pt,
                         head=key != "critical_link")
        elif key == "link" and density:
            _draw_density(ax, pos, src[mask], dst[mask], mk)
        else:
            segs = np.stack([pos[src[mask]], pos[dst[mask]]], axis=1)
            lc = LineCollection(cast(Any, segs), colors=mk.edge, linewidths=lw,
                                linestyles=mk.linestyle, alpha=alpha, zorder=mk.zorder,
                                capstyle="round", antialiaseds=n <= _OVERVIEW_ABOVE)
            lc.set_gid(GID_PREFIX + key)
            if mask.sum() > _RASTER_ABOVE:
                lc.set_rasterized(True)
            ax.add_collection(lc)

    # self-loops: a small ring beside the state (shown up to a few hundred states)
    loop_states = src[loops]
    if loop_states.size and n <= 500:
        on_cyc_loop = np.isin(loop_states, m_dst[marks.on_cycle & (m_src == m_dst)])
        for key, sel in (("link", ~on_cyc_loop), ("cycle", on_cyc_loop)):
            if sel.any():
                mk = MARKS[key]
                sc = ax.scatter(pos[loop_states[sel], 0], pos[loop_states[sel], 1],
                                s=area * 4.0, marker="o", facecolors="none", edgecolors=mk.edge,
                                linewidths=max(mk.linewidth * 0.8, 0.8),
                                linestyles=mk.linestyle, zorder=1.5)
                sc.set_gid(GID_PREFIX + ("self_loop" if key == "link" else "cycle_loop"))

    # states: roles (when asked) replace the plain circle, then the point marks on top
    if not _roles_tell(marks) and n > _OVERVIEW_ABOVE:
        # overview: every state as a dot (one marker path, drawn much faster)
        (dots,) = ax.plot(pos[:, 0], pos[:, 1], linestyle="none", marker=".",
                          markersize=1.2, markeredgewidth=0, color=MARKS["state"].edge,
                          zorder=MARKS["state"].zorder, rasterized=True)
        dots.set_gid(GID_PREFIX + "state")
    elif not _roles_tell(marks):
        _points(ax, pos, np.arange(n), MARKS["state"], area)
    _points(ax, pos, marks.disturbed, MARKS["disturbed"], area)
    _points(ax, pos, marks.unreached, MARKS["unreached"], area)
    _points(ax, pos, marks.dilation, MARKS["dilation"], area)
    _points(ax, pos, marks.fragile, MARKS["fragile"], area)  # a ring around the site
    _points(ax, pos, marks.drivers, MARKS["driver"], area)
    _points(ax, pos, marks.suggested, MARKS["suggested"], area)
    if _roles_tell(marks):
        # the role sits inside every other mark, so a driver's role stays visible
        for k, key in enumerate(("role_critical", "role_intermittent", "role_redundant")):
            _points(ax, pos, np.flatnonzero(marks.roles == k), MARKS[key], area, zorder=7.0)

    with_labels = labels if labels is not None else n <= _LABELS_UP_TO
    if with_labels:
        _labels(ax, pos, system.state_names, radius_pt)
    if n:
        lo, hi, pad = _box(pos)
        top = pad[1] * (2.5 if with_labels else 1.0)  # room for the slanted names
        ax.set_xlim(lo[0] - pad[0], hi[0] + pad[0] * (2.0 if with_labels else 1.0))
        ax.set_ylim(lo[1] - pad[1], hi[1] + top)
    ax.set_title(title if title is not None else _default_title(system, marks, how),
                 loc="left", fontsize=10, color=INK)
    if legend:
        _legend(ax, system, marks, area, n_loops=int(loop_states.size),
                loops_drawn=n <= 500, arrows=arrows, outside=own,
                density=density)


def _box(pos: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The states' bounding box ``lo``, ``hi`` and the margin ``pad`` the map keeps
    around it (6 % a side; a little where all states share a coordinate)."""
    lo, hi = pos.min(axis=0), pos.max(axis=0)
    return lo, hi, np.maximum((hi - lo) * 0.06, 1e-9 + 0.5 * (hi - lo == 0))


def _draw_density(ax: Axes, pos: np.ndarray, s: np.ndarray, t: np.ndarray,
                  mk: Mark, *, bins: int = 500, samples: int = 32) -> np.ndarray:
    """Draw links ``s -> t`` as their density: an image in the link colour whose
    opacity grows with the logarithm of the number of link samples in each pixel
    (``samples`` evenly spaced points a link, both ends included), over the box the
    map's limits will show. Returns the counts (rows: y, columns: x)."""
    lo, hi, pad = _box(pos)
    lo, hi = lo - pad, hi + pad
    counts = np.zeros((bins, bins))
    f = np.linspace(0.0, 1.0, samples)[None, :]
    for a in range(0, s.size, 50_000):  # about 10 MB of points a chunk
        p, q = pos[s[a:a + 50_000]], pos[t[a:a + 50_000]]
        x = (p[:, :1] + (q[:, :1] - p[:, :1]) * f).ravel()
        y = (p[:, 1:] + (q[:, 1:] - p[:, 1:]) * f).ravel()
        h, _, _ = np.histogram2d(y, x, bins=bins, range=[[lo[1], hi[1]], [lo[0], hi[0]]])
        counts += h
    from matplotlib.colors import to_rgb

    rgba = np.zeros((bins, bins, 4))
    rgba[..., :3] = to_rgb(mk.edge)
    top = float(np.log1p(counts.max())) or 1.0
    rgba[..., 3] = 0.85 * np.log1p(counts) / top
    im = ax.imshow(rgba, origin="lower", extent=(lo[0], hi[0], lo[1], hi[1]),
                   interpolation="antialiased", zorder=mk.zorder, aspect="auto")
    im.set_gid(GID_PREFIX + "link_density")
    return counts


def _figure_size(pos: np.ndarray) -> tuple[float, float]:
    """Figure size (inches) that fits the map's aspect, plus room for the legend."""
    width = 8.0
    if pos.shape[0] >= 2:
        span = np.ptp(pos, axis=0)
        aspect = float(span[1] / span[0]) if span[0] > 0 else 1.0
    else:
        aspect = 1.0
    return width + 4.2, float(np.clip(width * aspect, 4.5, 9.0)) + 0.9


def _base_area(n: int) -> float:
    """Marker area (points^2) of a plain state: large on small maps, tiny on huge ones."""
    return float(np.clip(2400.0 / max(n, 1), 1.0, 90.0))


def _edge_mask(src: np.ndarray, dst: np.ndarray, s: np.ndarray, t: np.ndarray,
               n: int) -> np.ndarray:
    """Which links ``src[i] -> dst[i]`` are among the links ``s -> t`` (vectorized)."""
    if s.size == 0 or src.size == 0:
        return np.zeros(src.size, bool)
    key = dst.astype(np.int64) * max(n, 1) + src
    want = np.unique(t.astype(np.int64) * max(n, 1) + s)
    return np.isin(key, want, assume_unique=False)


def _points(ax: Axes, pos: np.ndarray, idx: np.ndarray, mk: Mark, area: float,
            zorder: float | None = None) -> None:
    if idx.size == 0:
        return
    assert mk.marker is not None
    size = area * mk.size
    flagged = mk.size > 2.0
    if flagged:  # drivers and trouble spots: a fixed size in points, whatever the map
        size = _FLAG_AREA * mk.size / 3.2
    sc = ax.scatter(pos[idx, 0], pos[idx, 1], s=size, marker=mk.marker,
                    facecolors=mk.face, edgecolors=mk.edge,
                    linewidths=(0.0 if idx.size > _OVERVIEW_ABOVE
                                else mk.linewidth * (1.0 if area >= 20 else 0.5)),
                    linestyles=mk.linestyle, hatch=mk.hatch or None,
                    zorder=mk.zorder if zorder is None else zorder)
    sc.set_gid(GID_PREFIX + _mark_key(mk))
    if flagged and idx.size <= _OVERVIEW_ABOVE:  # a white halo keeps the mark readable
        # over any link; not on an overview, whose marks touch (and a path effect draws
        # each marker on its own: 10^5 drivers took 46 s of a report's 90 s)
        import matplotlib.patheffects as pe

        sc.set_path_effects([pe.Stroke(linewidth=3.5, foreground="white"), pe.Normal()])
    if idx.size > 20000:
        sc.set_rasterized(True)


def _draw_arrows(ax: Axes, pos: np.ndarray, s: np.ndarray, t: np.ndarray, mk: Mark,
                 lw: float, alpha: float, shrink: float, *, head: bool) -> None:
    # only for small maps (at most _ARROWS_UP_TO links): one patch per link
    from matplotlib.patches import FancyArrowPatch

    style = "-|>" if head else "-"
    for u, v in zip(s.tolist(), t.tolist()):
        p = FancyArrowPatch(pos[u], pos[v], arrowstyle=style, mutation_scale=11,
                            color=mk.edge, linewidth=lw, linestyle=mk.linestyle, alpha=alpha,
                            shrinkA=shrink, shrinkB=shrink, zorder=mk.zorder,
                            connectionstyle="arc3,rad=0.08", capstyle="round")
        p.set_gid(GID_PREFIX + _mark_key(mk))
        ax.add_patch(p)


def _mark_key(mk: Mark) -> str:
    return next(k for k, v in MARKS.items() if v is mk)


def _labels(ax: Axes, pos: np.ndarray, names: Sequence[str], radius_pt: float) -> None:
    import matplotlib.patheffects as pe

    halo: list[pe.AbstractPathEffect] = [pe.withStroke(linewidth=2.6, foreground="white")]
    for i, name in enumerate(names):
        text = name if len(name) <= 24 else name[:23] + "…"
        t = ax.annotate(text, pos[i], xytext=(radius_pt * 0.7, radius_pt * 0.7),
                        textcoords="offset points", fontsize=7.5, color=INK,
                        ha="left", va="bottom", zorder=8, parse_math=False,
                        rotation=25, rotation_mode="anchor")
        t.set_path_effects(halo)
        t.set_gid(GID_PREFIX + "label")


def _default_title(system: StructuredSystem, marks: MapMarks, how: str,
                   width: int = 88) -> str:
    n = system.n_states
    design = {"minimum": "a minimum input design (one of possibly many)",
              "given": "the inputs in the file", "chosen": "the chosen inputs"}[marks.design]
    verdict = ("structurally controllable" if marks.controllable
               else f"NOT structurally controllable: {marks.suggested.size} more "
                    "dedicated input(s) needed")
    placed = {"coordinates": "states at their coordinates",
              "coordinates+fr": "states at their coordinates (some placed by layout)",
              "fr": "force-directed layout", "fr-grid": "force-directed layout (grid)",
              "circle": "circular layout", "given": "given positions"}.get(how, how)
    import textwrap

    first = (f"{n} states, {system.n_links} link{'' if system.n_links == 1 else 's'}, model {marks.model}: {marks.n_inputs} "
             f"input(s) on {marks.drivers.size} driver node(s) from {design}")
    # wrapped to the map's width, so a long title never runs under the legend
    return "\n".join(textwrap.wrap(first, width)
                     + textwrap.wrap(f"{verdict}; {placed}", width))


def legend_entries(system: StructuredSystem, marks: MapMarks, *, n_loops: int,
                   loops_drawn: bool) -> list[tuple[str, str]]:
    """The rows of a map's legend, in order: ``(mark, text with its count)``.

    ``mark`` is a key of :data:`netctl.viz.style.MARKS`, or ``"self_loop"``. The
    matplotlib map (:func:`draw_map`) and netctl's own SVG map of ``netctl map``
    (:func:`netctl.viz.map_svg.map_svg`) both write these rows, so their legends say
    the same.
    """
    def count(key: str, n: int) -> tuple[str, str]:
        return key, f"{MARKS[key].label} ({n})"

    items: list[tuple[str, str]] = [count("driver", marks.drivers.size)]
    for key, idx in (("suggested", marks.suggested), ("unreached", marks.unreached),
                     ("dilation", marks.dilation), ("fragile", marks.fragile),
                     ("disturbed", marks.disturbed)):
        if idx.size:
            items.append(count(key, idx.size))
    if _roles_tell(marks):
        assert marks.roles is not None
        for k, key in enumerate(("role_critical", "role_intermittent", "role_redundant")):
            n = int(np.count_nonzero(marks.roles == k))
            if n:  # a role no state has is left out of the legend
                items.append(count(key, n))
    else:
        text = f"state ({system.n_states})"
        if marks.roles is not None and system.n_states:
            only = MARKS[("role_critical", "role_intermittent",
                          "role_redundant")[int(marks.roles[0])]].label.split(":")[0]
            text = f"state: every one is {only} ({system.n_states})"
        items.append(("state", text))
    n_cyc = int(np.count_nonzero(marks.on_cycle))
    if marks.on_cycle.size - n_cyc or not n_cyc:
        items.append(count("chain", marks.on_cycle.size - n_cyc))
    if n_cyc:
        items.append(count("cycle", n_cyc))
    items.append(count("link", system.n_links - marks.on_cycle.size - n_loops
                       + int(np.count_nonzero(marks.on_cycle & (marks.matched_sources
                                                                == marks.matched_targets)))))
    if marks.critical_sources is not None:
        if getattr(marks, "grid", False):
            items.append(("critical_link",
                          f"critical branches ({len(marks.critical_elements)})"))
        else:
            items.append(count("critical_link", marks.critical_sources.size))
    if n_loops:
        items.append(("self_loop", f"self-loop (self-dynamics) ({n_loops})" if loops_drawn
                      else f"self-loops: {n_loops}, not drawn at this size"))
    return items


def _legend(ax: Axes, system: StructuredSystem, marks: MapMarks, area: float, *,
            n_loops: int, loops_drawn: bool, arrows: bool, outside: bool,
            density: bool = False) -> None:
    from matplotlib.lines import Line2D

    def point(key: str) -> Any:
        mk = MARKS[key]
        # a scatter made and removed at once is a legend handle that keeps the hatch
        h = ax.scatter([], [], s=60.0 * min(mk.size, 2.6) / 1.6, marker=mk.marker,
                       facecolors=mk.face, edgecolors=mk.edge, linewidths=mk.linewidth,
                       linestyles=mk.linestyle, hatch=mk.hatch or None)
        h.remove()
        return h

    def line(key: str) -> Any:
        mk = MARKS[key]
        return Line2D([], [], color=mk.edge, linewidth=mk.linewidth,
                      linestyle=cast(Any, mk.linestyle))

    items: list[tuple[Any, str]] = []
    for key, text in legend_entries(system, marks, n_loops=n_loops, loops_drawn=loops_drawn):
        if key == "critical_link":
            casing = Line2D([], [], color=MARKS["critical_link"].edge,
                            linewidth=MARKS["critical_link"].linewidth)
            inner = Line2D([], [], color="white", linewidth=MARKS["chain"].linewidth * 0.8)
            items.append(((casing, inner), text))
        elif key == "self_loop":
            items.append((Line2D([], [], marker="o", markerfacecolor="none",
                                 linestyle="none", markeredgecolor=MARKS["link"].edge,
                                 markersize=9), text))
        else:
            items.append((point(key) if MARKS[key].marker is not None else line(key), text))
    handles, texts = zip(*items)
    kw: dict[str, Any] = {}
    if marks.critical_sources is not None:
        from matplotlib.legend_handler import HandlerTuple

        kw["handler_map"] = {tuple: HandlerTuple(ndivide=1)}
    note = ("links point from the influencing state to the influenced one" if arrows
            else "links too many to draw one by one: drawn as their density, no "
            "arrowheads" if density
            else "overview: links thin and see-through, no arrowheads"
            if system.n_states > _OVERVIEW_ABOVE else "links drawn without arrowheads")
    common = dict(frameon=False, fontsize=8, title=f"Marks\n({note})", title_fontsize=8,
                  alignment="left", scatterpoints=1, handlelength=2.6, labelspacing=0.9,
                  **kw)
    if outside:  # our own figure: the layout engine makes room beside the map
        leg = ax.figure.legend(handles, texts, loc="outside right upper", **common)
    else:
        leg = ax.legend(handles, texts, loc="upper left", bbox_to_anchor=(1.01, 1.0),
                        borderaxespad=0.0, **common)
    leg.set_gid(GID_PREFIX + "legend")
