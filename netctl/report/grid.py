"""Report sections of a grid in its own terms: branches by case ID, buses by number.

Used by :mod:`netctl.report.sections` when the system carries an element table (it was
read from a grid file): single losses are element outages (N-1 over branches,
transformers, buses and generating units), never one direction of a coupling, and links
inside one bus (angle-frequency, damping: part of the model) are never contingencies.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

from netctl.report.document import Block, Section, items, note, para, table
from netctl.system import StructuredSystem

if TYPE_CHECKING:
    from netctl.report.sections import ReportContext

__all__ = ["grid_caution_block", "grid_facts_block", "grid_robustness_section",
           "grid_roles_blocks"]

LIST_LIMIT = 200


def grid_caution_block() -> Block:
    """The grid caution as a report note."""
    from netctl._meta import GRID_CAUTION

    return note("Grid: " + GRID_CAUTION + ".")


def grid_facts_block(system: StructuredSystem) -> Block:
    """The grid in words: buses, branches by kind, units, and where the swing
    parameters came from (the case, or the stated defaults)."""
    from netctl.models import SWING_DEFAULTS
    from netctl.records import BRANCH_KINDS, kinds_text

    table = system.elements
    assert table is not None
    counts = table.counts()
    nbr = sum(c for k, c in counts.items() if k in BRANCH_KINDS)
    text = (f"A grid: {len(table.node_names)} buses, {nbr} branches ("
            f"{kinds_text({k: c for k, c in counts.items() if k in BRANCH_KINDS})}), "
            f"{counts.get('generator', 0)} generating unit(s).")
    if system.model == "second-order":
        given = [int(np.count_nonzero(np.isfinite(np.asarray(system.nodes[k], float))))
                 // 2 if k in system.nodes else 0 for k in ("inertia", "damping")]
        text += (" Swing model: two states a bus, angle (pos) and frequency (vel); inputs "
                 f"act on frequencies. Inertia M = 2H from the case at {given[0]} bus(es), "
                 f"damping D at {given[1]}; elsewhere the defaults M = "
                 f"{SWING_DEFAULTS['inertia']:g} s and D = {SWING_DEFAULTS['damping']:g} per "
                 "unit (optional generator columns inertia_s, damping_pu).")
    return para(text)


def grid_robustness_section(ctx: ReportContext) -> Section:
    """N-1 over the grid's elements against the report's design, by element ID."""
    from netctl.records import kinds_text
    from netctl.structural.robustness.elements import element_sweep

    system = ctx.actuated()
    sw = ctx.cached("element_sweep", lambda: element_sweep(system))
    breaking = sw.breaking
    kinds = kinds_text(sw.counts())
    blocks: list[Block] = [para(
        f"N-1 over the {sw.n_elements} grid elements ({kinds}), each out of service in "
        f"turn (a branch: both directions of its couplings; a bus: all its states; a "
        f"generating unit: its input): {breaking.size} outage(s) break "
        f"{ctx.design_words()}, and {sw.costly.size} raise the minimum number of inputs "
        f"(now {sw.n_inputs}); {int(sw.no_change.sum())} change nothing structurally (one "
        "circuit of a parallel pair, a unit sharing its bus). Links inside a bus belong "
        "to the model and are not contingencies.")]
    if breaking.size:
        rows = [(sw.ids[k], "-".join(sw.buses[k]) if sw.buses else "",
                 "; ".join(sw.reasons(k)) or "-") for k in breaking[:LIST_LIMIT].tolist()]
        blocks.append(table(("element out", "buses", "why the design fails then"), rows,
                            total=int(breaking.size)))
    if sw.costly.size:
        blocks.append(para(f"Outages raising the minimum inputs ({sw.costly.size}):"))
        blocks.append(items([sw.ids[k] for k in sw.costly[:LIST_LIMIT].tolist()],
                            total=int(sw.costly.size)))
    blocks.append(grid_caution_block())
    if sw.has_design and not sw.controllable_before:
        status, badge = "info", "not assessed"
        verdict = ("the design already fails (see above), so element outages were not "
                   "assessed against it")
    elif breaking.size:
        status, badge = "warning", f"{breaking.size} fragile"
        verdict = f"{breaking.size} single element outage(s) break the design"
    else:
        status, badge = "ok", "robust"
        verdict = "no single element outage breaks the design"
    return Section("robustness", "Robustness to element outages (N-1)", tuple(blocks),
                   data={"elements": sw.to_dict(rows=False)}, status=status,
                   verdict=verdict, badge=badge)


def grid_roles_blocks(ctx: ReportContext) -> tuple[list[Block], dict[str, Any]]:
    """Branch roles by ID (in place of link roles) and the count of links inside buses."""
    from netctl.structural.branches import branch_roles

    br = ctx.cached("branch_roles", lambda: branch_roles(ctx.system))
    bc = br.counts()
    crit = [f"{e} ({'-'.join(b)})" for e, b, r in zip(br.ids, br.buses, br.role.tolist())
            if r == 0]
    blocks: list[Block] = [
        para(f"Branches ({len(br.ids)}), each out of service in turn (both directions): "
             f"{bc['critical']} critical (the outage raises the minimum number of inputs "
             f"above {br.n_inputs}), {bc['ordinary']} ordinary, {bc['parallel']} with a "
             f"parallel circuit (no coupling changes). The {br.n_internal_links} links "
             "inside buses (angle-frequency, damping) belong to the model, not to any "
             "element, and are not listed."),
        items(crit[:LIST_LIMIT], total=len(crit))]
    return blocks, br.to_dict()
