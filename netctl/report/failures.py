"""Report sections on what the plant suffers and what a failure costs: disturbances, and
the single points of failure of the design (the N-1 audit).

Builders take the shared :class:`~netctl.report.sections.ReportContext` and return a
:class:`~netctl.report.document.Section` (or ``None``), like those of
:mod:`netctl.report.sections`.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from netctl.report.document import Section, note, para, table

__all__ = ["CLASSIFY_LIMIT", "LINES_LIMIT", "disturbances_section", "failures_section"]

#: Up to this many links the report also loses every line in turn (a line of several
#: links that breaks nothing alone costs one matching).
LINES_LIMIT = 20_000
#: Up to this many states actuators and sensors are also sorted into useful / useless
#: (a bounded number of rank tests each); above, only the single points are found.
CLASSIFY_LIMIT = 20_000
_ROWS = 200


def _states(system: Any, idx: Any, limit: int = 8) -> str:
    names = system.names_of(np.asarray(idx, np.int64)[:limit])
    more = len(idx) - len(names)
    return ", ".join(names) + (f" and {more} more" if more > 0 else "")


def disturbances_section(ctx: Any) -> Section | None:
    """Disturbances (``E``) and regulated outputs (``H``), apart from the states."""
    system = ctx.system
    if not system.n_disturbances and not system.n_regulated:
        return None
    E = system.E.tocsc()
    acts = {w: system.names_of(E.indices[E.indptr[j]:E.indptr[j + 1]])
            for j, w in enumerate(system.disturbance_names)}
    H = system.H.tocsr()
    reads = {z: system.names_of(H.indices[H.indptr[r]:H.indptr[r + 1]])
             for r, z in enumerate(system.regulated_names)}
    blocks = [para(f"{system.n_disturbances} disturbance(s): signals the plant suffers and "
                   "nobody commands (weather, feeds, demands, utilities). They are not "
                   "states: no input or sensor is ever placed on one, and they are not "
                   "counted in the minimum inputs or sensors above.")]
    if acts:
        blocks.append(table(("disturbance", "acts directly on"),
                            [(w, _states(system, E.indices[E.indptr[j]:E.indptr[j + 1]]))
                             for j, w in enumerate(system.disturbance_names)],
                            limit=_ROWS))
    if reads:
        blocks.append(para(f"{system.n_regulated} regulated output(s): what the "
                           "disturbances must be kept from."))
        blocks.append(table(("regulated output", "reads"),
                            [(z, ", ".join(on[:8]) + (" ..." if len(on) > 8 else ""))
                             for z, on in reads.items()], limit=_ROWS))
    blocks.append(note("On the map, a dotted circle marks each state a disturbance acts "
                       "on directly."))
    return Section("disturbances", "Disturbances and regulated outputs", tuple(blocks),
                   data={"n_disturbances": system.n_disturbances, "disturbances": acts,
                         "n_regulated": system.n_regulated, "regulated": reads},
                   verdict=f"{system.n_disturbances} disturbance(s), "
                           f"{system.n_regulated} regulated output(s)")


def failures_section(ctx: Any) -> Section | None:
    """Single points of failure of the design: actuators, sensors and lines whose loss
    alone breaks it (Commault, Dion & Trinh 2008; the N-1 criterion)."""
    from netctl.structural.failures import audit_design, audit_links

    system = ctx.system
    actuated = ctx.actuated()
    if system.n_states == 0:
        return None
    full = system.n_states <= CLASSIFY_LIMIT
    acts = ctx.cached("audit_inputs", lambda: audit_design(actuated, kind="inputs",
                                                           classify=full))
    sens = (ctx.cached("audit_sensors", lambda: audit_design(system, kind="sensors",
                                                             classify=full))
            if system.n_outputs else None)
    lines = None
    if acts.works and system.n_links <= LINES_LIMIT:
        lines = ctx.cached("audit_lines", lambda: audit_links(actuated, kind="inputs"))
    elif acts.works:
        ctx.missing.append(f"single line losses (over {LINES_LIMIT} links; run netctl "
                           "secure)")
    rows: list[tuple[str, str, str, str]] = []
    data: dict[str, Any] = {"actuators": acts.to_dict()}
    blocks = [para("Each actuator, sensor and line is lost in turn, alone (the N-1 "
                   "criterion): a single point of failure is one whose loss alone leaves "
                   "the system not structurally controllable (observable). Classes after "
                   "Commault, Dion & Trinh (2008): critical (a single point of failure), "
                   "useful but replaceable, useless for this purpose.")]
    if ctx.design_kind == "minimum":
        blocks.append(note("The design audited is a minimum one: it has no spare, so every "
                           "actuator is a single point of failure by definition. netctl "
                           "secure finds the fewest actuators that survive any one loss."))
    n_bad = 0
    for word, au in (("actuator", acts), ("sensor", sens)):
        if au is None:
            continue
        what = "controllable" if word == "actuator" else "observable"
        c = au.counts()
        if not au.works:
            blocks.append(para(f"The {word}s were not audited: the intact design is not "
                               f"structurally {what} (" + "; ".join(au.intact_reasons())
                               + ")."))
            continue
        blocks.append(para(f"{au.n_elements} {word}(s): {c['critical']} critical, "
                           f"{c['useful']} useful, {c['useless']} useless"
                           + (f", {c['replaceable']} replaceable (not decided further)"
                              if c["replaceable"] else "") + "."))
        n_bad += au.critical.size
        for k in au.critical[:max(_ROWS - len(rows), 0)].tolist():  # the rows shown
            rows.append((f"{word} {au.element_names[k]}", _states(system, au.element_states[k]),
                         ", ".join(system.names_of(au.lost_states(k)[:8])) or "-",
                         "; ".join(au.reasons(k)) or "-"))
    if sens is not None:
        data["sensors"] = sens.to_dict()
    if lines is not None:
        br = np.flatnonzero(lines.breaking)
        blocks.append(para(f"{lines.n_lines} line(s) (both directions of a coupling are "
                           f"one line; self-loops never fail): {br.size} break the design "
                           "when lost alone."))
        n_bad += br.size
        for k in br[:max(_ROWS - len(rows), 0)].tolist():  # the rows shown
            rows.append((f"line {lines.labels[k]}", "-",
                         ", ".join(system.names_of(lines.unreached.first(k, 8))) or "-",
                         "; ".join(lines.reasons(k)) or "-"))
        data["lines"] = lines.to_dict()
    if rows:  # the first _ROWS single points; their reasons are built for those only
        blocks.append(table(("single point of failure", "where", "states lost",
                             "why the design fails without it"), rows, total=n_bad))
        blocks.append(note("On the map, a violet octagon ring marks the site of each "
                           "critical actuator and sensor."))
    if not acts.works:
        status, badge = "info", "not assessed"
        verdict = "the design already fails (see above), so single losses were not assessed"
    elif n_bad:
        status, badge = "warning", f"{n_bad} single point(s)"
        verdict = f"{n_bad} single point(s) of failure: the design does not meet N-1"
    else:
        status, badge = "ok", "N-1 secure"
        verdict = "no single actuator, sensor or line loss breaks the design"
    data["n_single_points"] = n_bad
    return Section("failures", "Single points of failure", tuple(blocks), data=data,
                   status=status, verdict=verdict, badge=badge)
