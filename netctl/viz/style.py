"""The visual language of netctl maps and charts.

Every mark is told apart by *shape and fill* first and by colour second, so a map keeps
its meaning in grey print and for readers with any common colour-vision deficiency. The
colours are our own assignment; they were chosen so that, after simulating protanopia,
deuteranopia and tritanopia (Machado, Oliveira & Fernandes 2009), every pair that can sit
next to each other on a map stays apart in CIELAB, and so that their lightness spreads
across the grey scale (tests/viz/test_style.py checks both).

=====================  ==========================  =========================================
mark                   shape / fill                meaning
=====================  ==========================  =========================================
``state``              small circle, light fill    a state with nothing to report
``driver``             large upward triangle,      an input acts on this state
                       solid fill
``suggested``          upward triangle, hollow,    add a dedicated input here (smallest fix)
                       dashed outline
``unreached``          square, cross-hatched       no input reaches this state
``dilation``           diamond, hollow, heavy      these states are fed by fewer
                       outline                     states/inputs than they number
``chain``              heavy solid line            matched link on a control path (stem)
``cycle``              heavy dashed line           matched link on a control cycle
``link``               thin light line             any other link
``critical_link``      dark casing around a link   link in every maximum matching
``fragile``            octagon ring, hollow,       single point of failure: losing this
                       heavy violet outline        actuator (sensor) alone breaks the design
``disturbed``          circle, hollow, dotted      a disturbance acts on this state
                       outline
``role_critical``      circle, dark solid fill     driver in every minimum driver set
``role_intermittent``  circle, dotted hatch        driver in some minimum driver sets
``role_redundant``     circle, white fill          driver in no minimum driver set
``sensor``             large downward triangle,    an output reads this state
                       solid fill
``suggested_sensor``   downward triangle, hollow,  add a dedicated output here (smallest
                       dashed outline              fix of observability)
``candidate``          small upward triangle,      an actuator could go here (a placement's
                       hollow, thin solid outline  candidate site, not chosen)
``candidate_sensor``   small downward triangle,    a sensor could go here (not chosen)
                       hollow, thin solid outline
``bottleneck``         hexagon, hollow, heavy      every disturbance path to the outputs
                       outline                     crosses these states (decoupling)
``former_driver``      upward triangle, pale fill  a driver node before a change, not after
``removed_state``      heavy cross                 a state a change removes
``costly``             pentagon, hollow, dashed    its loss alone raises the minimum number
                       outline                     of inputs (does not break the design)
``added_link``         heavy solid line            link a change adds
``removed_link``       heavy dotted line           link a change removes
``fragile_link``       heavy solid violet line     its loss alone breaks the design
``costly_link``        dash-dot violet line        its loss alone raises the minimum inputs
=====================  ==========================  =========================================
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

__all__ = ["INK", "MARKS", "Mark", "PAPER", "SERIES"]

#: Text, outlines and axes.
INK = "#262626"
#: Figure background.
PAPER = "#FFFFFF"


@dataclass(frozen=True)
class Mark:
    """How one kind of map element is drawn.

    ``marker`` is a matplotlib marker code for point marks (``None`` for line marks);
    ``face`` the fill colour (``"none"`` for hollow), ``edge`` the outline colour,
    ``hatch`` a matplotlib hatch pattern or ``""``, ``linestyle`` and ``linewidth`` the
    outline (point marks) or the line (line marks); ``size`` a relative marker area
    (1 = the size of a plain state); ``label`` the legend text.
    """

    label: str
    marker: str | None
    face: str
    edge: str
    hatch: str = ""
    linestyle: str = "solid"
    linewidth: float = 1.0
    size: float = 1.0
    zorder: float = 3.0


_VERMILION = "#C44E0E"   # drivers (warm, dark enough to read on white and in grey)
_BLUE = "#2464A8"        # control chains
_AMBER = "#D99A1E"       # control cycles (light: kept apart from the blue in grey)
_PLUM = "#7B3F8C"        # unreached states
_TEAL = "#13806A"        # dilation sets
_VIOLET = "#4A148C"      # single points of failure (apart from every other colour,
                         # also under simulated colour-vision deficiency)
_WINE = "#6E1F45"        # disturbances (also on the interactive map)
_STATE = "#CFCFCF"
_LINK = "#8A8A8A"

MARKS: dict[str, Mark] = {
    "state": Mark("state", "o", _STATE, "#5C5C5C", linewidth=0.6, size=1.0, zorder=3),
    "driver": Mark("driver node: an input acts here", "^", _VERMILION, INK,
                   linewidth=0.8, size=3.2, zorder=6),
    "suggested": Mark("add a dedicated input here (smallest fix)", "^", "none", _VERMILION,
                      linestyle="dashed", linewidth=1.6, size=5.0, zorder=6.5),
    "unreached": Mark("no input reaches this state", "s", "#EBDDF0", _PLUM, hatch="xxxx",
                      linewidth=1.2, size=2.2, zorder=4),
    "dilation": Mark("dilation: fed by fewer states than they number", "D", "none", _TEAL,
                     linewidth=2.0, size=3.0, zorder=5),
    "fragile": Mark("single point of failure: its loss alone breaks the design", "8",
                    "none", _VIOLET, linewidth=2.4, size=6.5, zorder=5.8),
    "disturbed": Mark("a disturbance acts here (not commanded)", "o", "none", _WINE,
                      linestyle="dotted", linewidth=1.8, size=4.6, zorder=4.5),
    "chain": Mark("control path (matched link)", None, _BLUE, _BLUE, linewidth=2.4, zorder=2.2),
    "cycle": Mark("control cycle (matched link)", None, _AMBER, _AMBER, linestyle="dashed",
                  linewidth=1.8, zorder=2.3),
    "link": Mark("other link", None, _LINK, _LINK, linewidth=0.7, zorder=1.0),
    "critical_link": Mark("critical link (in every maximum matching)", None, INK, INK,
                          linewidth=5.2, zorder=2.0),
    "role_critical": Mark("critical: a driver in every minimum set", "o", "#333333", INK,
                          linewidth=0.8, size=1.2, zorder=3.4),
    "role_intermittent": Mark("intermittent: a driver in some minimum sets", "o", "#F2F2F2",
                              INK, hatch="....", linewidth=0.8, size=1.2, zorder=3.3),
    "role_redundant": Mark("redundant: a driver in no minimum set", "o", "#FFFFFF", INK,
                           linewidth=0.8, size=1.2, zorder=3.2),
    # sensors mirror the driver marks: the triangle points down (shape carries it in grey)
    "sensor": Mark("sensor site: an output reads here", "v", _BLUE, INK,
                   linewidth=0.8, size=3.2, zorder=6),
    "suggested_sensor": Mark("add a dedicated output here (smallest fix)", "v", "none", _BLUE,
                             linestyle="dashed", linewidth=1.6, size=5.0, zorder=6.5),
    # placements: where an actuator (sensor) could go; the chosen ones are drivers (sensors)
    "candidate": Mark("candidate site (could take an actuator; not chosen)", "^", "none",
                      _VERMILION, linewidth=0.9, size=1.8, zorder=5.5),
    "candidate_sensor": Mark("candidate site (could take a sensor; not chosen)", "v", "none",
                             _BLUE, linewidth=0.9, size=1.8, zorder=5.5),
    # decoupling: the states every disturbance path to the outputs crosses
    "bottleneck": Mark("bottleneck: every disturbance path to the outputs crosses it", "h",
                       "none", _WINE, linewidth=2.2, size=4.0, zorder=5.2),
    # changes (what-if) and single losses (contingency sweeps)
    "former_driver": Mark("driver node before the change only", "^", "#F2F2F2", _VERMILION,
                          linewidth=1.2, size=3.2, zorder=5.9),
    "removed_state": Mark("state removed by the change", "X", "none", INK, linewidth=1.6,
                          size=3.0, zorder=5.7),
    "costly": Mark("its loss alone raises the minimum number of inputs", "p", "none",
                   _VIOLET, linestyle="dashed", linewidth=1.6, size=4.0, zorder=5.6),
    "added_link": Mark("link added by the change", None, _TEAL, _TEAL, linewidth=2.2,
                       zorder=2.4),
    "removed_link": Mark("link removed by the change", None, _VERMILION, _VERMILION,
                         linestyle="dotted", linewidth=2.2, zorder=2.4),
    "fragile_link": Mark("its loss alone breaks the design", None, _VIOLET, _VIOLET,
                         linewidth=3.0, zorder=2.5),
    "costly_link": Mark("its loss alone raises the minimum number of inputs", None, _VIOLET,
                        _VIOLET, linestyle="dashdot", linewidth=2.0, zorder=2.4),
}

#: Colours for data series in charts (line charts also vary marker and line style).
SERIES: tuple[tuple[str, str, Any], ...] = (
    (_BLUE, "o", "solid"),
    (_VERMILION, "s", "dashed"),
    (_TEAL, "^", "dashdot"),
    (_PLUM, "D", "dotted"),
    (INK, "v", (0, (5, 1, 1, 1))),
    (_AMBER, "P", (0, (1, 1))),
)
