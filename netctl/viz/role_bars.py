"""The shares of node and link roles as a small inline SVG bar chart (no matplotlib).

:func:`role_bars_svg` draws what :func:`netctl.viz.plot_role_composition` draws, one
stacked horizontal bar of shares per row, in the role marks of the maps
(:mod:`netctl.viz.style`: dark solid, dotted, white), with the share written on every
segment of at least 6 % and a legend with the counts under each bar. A report shows it
inline, so drawing it loads no plotting library.

The SVG is self-contained (no script, no external reference) and well-formed XML. Its
only element id is the dot pattern of the middle role, named after a hash of what the
chart draws (charts on one page never clash; identical charts share an identical
definition). Every name is escaped and shown as text.
"""

from __future__ import annotations

import hashlib
import html
import re
from collections.abc import Mapping, Sequence

import numpy as np

from netctl.errors import OptionError
from netctl.viz.style import INK, MARKS, PAPER

__all__ = ["role_bars_svg"]

#: Width of the chart (px), as the small map.
_WIDTH = 440.0
#: Left edge of the bars (room for the row names) and their right margin.
_LEFT, _RIGHT = 64.0, 12.0
_BAR_H = 20.0
#: Height of one row: the bar, the legend under it, a gap.
_ROW_H = 50.0
#: Segments narrower than this share carry no written share (as the PNG chart).
_WRITE_FROM = 0.06
_STYLES = ("role_critical", "role_intermittent", "role_redundant")
#: Stands for the pattern's id until the chart is drawn; escaped text never holds it
#: (``_text`` replaces NUL), so a name cannot turn into the id.
_SLOT = "\x00dots\x00"
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


def _text(value: object) -> str:
    """``value`` as XML-safe escaped text."""
    return html.escape(_NOT_XML.sub("\ufffd", str(value)), quote=True)


def role_bars_svg(rows: Mapping[str, tuple[Sequence[str], Sequence[int]]]) -> str:
    """Stacked bars of role shares, one row per entry, as an ``<svg>`` element.

    Parameters
    ----------
    rows : mapping of str to (role names, counts)
        Row name (e.g. ``"states"``, ``"links"``) -> the names of its three roles, in the
        order dark, dotted, white (e.g. ``("critical", "intermittent", "redundant")``),
        and one non-negative count per role.

    Returns
    -------
    str
        An ``<svg>`` element: per row a ``<g class="row">`` with one ``<rect>`` per
        segment (class ``share <style>``, width proportional to the share, a ``<title>``
        with the count), the shares written on segments of at least 6 %, and the legend
        (``<g class="legend">``) with the counts.

    Raises
    ------
    OptionError
        No rows, a row without three roles and three counts, or a negative count.

    Examples
    --------
    >>> svg = role_bars_svg({"states": (("critical", "intermittent", "redundant"),
    ...                                 (2, 5, 13))})
    >>> svg.startswith("<svg") and "25%" in svg and "65%" in svg
    True
    """
    if not rows:
        raise OptionError("role_bars_svg needs at least one row.")
    checked = []
    for name, (roles, counts) in rows.items():
        c = np.asarray(counts, dtype=np.float64)
        if len(roles) != len(_STYLES) or c.shape != (len(_STYLES),):
            raise OptionError(f"row {name!r} needs {len(_STYLES)} role names and "
                              f"{len(_STYLES)} counts, found {list(roles)!r} and "
                              f"{list(np.atleast_1d(c))!r}.")
        if np.any(c < 0) or not np.all(np.isfinite(c)):
            raise OptionError(f"role counts must be non-negative, found {c.tolist()!r} "
                              f"for {name!r}.")
        checked.append((str(name), [str(r) for r in roles], c))
    span = _WIDTH - _LEFT - _RIGHT
    body: list[str] = []
    for k, (name, roles, c) in enumerate(checked):
        y = 8.0 + k * _ROW_H
        total = float(c.sum())
        shares = c / total if total > 0 else np.zeros_like(c)
        cells = [f'<text x="{_LEFT - 6:.1f}" y="{y + _BAR_H / 2 + 4:.1f}" '
                 f'text-anchor="end" font-size="11">{_text(name)}</text>',
                 f'<rect class="frame" x="{_LEFT:.1f}" y="{y:.1f}" width="{span:.1f}" '
                 f'height="{_BAR_H:.1f}" fill="none" stroke="#BDBDBD" stroke-width="0.8"/>']
        left = _LEFT
        for j, (role, share) in enumerate(zip(roles, shares.tolist())):
            mk = MARKS[_STYLES[j]]
            width = share * span
            fill = f"url(#{_SLOT})" if mk.hatch else mk.face
            if width > 0:
                cells.append(
                    f'<rect class="share {_STYLES[j]}" x="{left:.2f}" y="{y:.1f}" '
                    f'width="{width:.2f}" height="{_BAR_H:.1f}" fill="{fill}" '
                    f'stroke="{mk.edge}" stroke-width="0.8"><title>{_text(name)}: '
                    f"{_text(role)} {int(c[j]):,} of {int(total):,} ({share:.0%})"
                    "</title></rect>")
            if share >= _WRITE_FROM:
                dark = j == 0
                cx = left + width / 2
                if not dark:  # a white box keeps the number readable over the dots
                    cells.append(f'<rect x="{cx - 15:.1f}" y="{y + 4:.1f}" width="30" '
                                 f'height="12" fill="{PAPER}"/>')
                cells.append(f'<text class="written" x="{cx:.1f}" y="{y + 14:.1f}" '
                             f'text-anchor="middle" font-size="10" '
                             f'fill="{PAPER if dark else INK}">{share:.0%}</text>')
            left += width
        if total == 0:
            cells.append(f'<text x="{_LEFT + span / 2:.1f}" y="{y + 14:.1f}" '
                         f'text-anchor="middle" font-size="10">none</text>')
        legend = []
        lx = _LEFT
        for j, role in enumerate(roles):
            mk = MARKS[_STYLES[j]]
            fill = f"url(#{_SLOT})" if mk.hatch else mk.face
            legend.append(f'<rect x="{lx:.1f}" y="{y + _BAR_H + 6:.1f}" width="12" '
                          f'height="10" fill="{fill}" stroke="{mk.edge}" '
                          'stroke-width="0.8"/>'
                          f'<text x="{lx + 16:.1f}" y="{y + _BAR_H + 15:.1f}">'
                          f"{_text(role)} ({int(c[j]):,})</text>")
            lx += span / 3
        cells.append(f'<g class="legend" font-size="10">{"".join(legend)}</g>')
        body.append(f'<g class="row">{"".join(cells)}</g>')
    drawn = "".join(body)
    dots = "netctl-dots-" + hashlib.sha1(drawn.encode("utf-8")).hexdigest()[:12]
    drawn = drawn.replace(_SLOT, dots)
    mk = MARKS["role_intermittent"]
    defs = (f'<defs><pattern id="{dots}" width="4" height="4" patternUnits="userSpaceOnUse">'
            f'<rect width="4" height="4" fill="{mk.face}"/>'
            f'<circle cx="2" cy="2" r="0.8" fill="{mk.edge}"/></pattern></defs>')
    height = 8.0 + len(checked) * _ROW_H
    return (f'<svg xmlns="http://www.w3.org/2000/svg" class="netctl-role-bars" '
            f'width="{_WIDTH:.0f}" height="{height:.0f}" '
            f'viewBox="0 0 {_WIDTH:.0f} {height:.0f}" role="img" '
            f'style="background:{PAPER}"><title>shares of roles</title>{defs}'
            f'<g font-family="sans-serif" fill="{INK}">{drawn}</g></svg>')
