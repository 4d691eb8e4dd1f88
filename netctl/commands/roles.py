"""``netctl roles FILE``: critical / intermittent / redundant states and critical /
ordinary / redundant links (see :mod:`netctl.structural.roles`)."""

from __future__ import annotations

import argparse
from typing import Any

import numpy as np

from netctl.commands._emit import emit, safe_write
from netctl.commands._load import load_system
from netctl.commands._options import add_terms, analysis_step, caution, links_text, terms
from netctl.commands._words import wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``roles`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_terms(p)
    p.add_argument("--csv", metavar="FILE", default=None,
                   help="also write the roles as CSV: element,source,target,role (one row a "
                        "state with an empty target, one row a link)")
    p.set_defaults(func=_cmd_roles)


def write_roles_csv(path: str, nodes: Any, links: Any) -> None:
    """Write node and link roles to ``path`` atomically."""
    with safe_write(path) as fh:
        _write_rows(fh, nodes, links)


def _write_rows(fh: Any, nodes: Any, links: Any) -> None:
    from netctl.structural.roles import LINK_ROLES

    from netctl.io._common import SpreadsheetSafeWriter

    w = SpreadsheetSafeWriter(fh)  # no formula injection
    w.writerow(["element", "source", "target", "role"])
    for name, role in nodes.to_dict()["nodes"].items():
        w.writerow(["state", name, "", role])
    names = links.state_names
    for u, v, r in zip(links.sources.tolist(), links.targets.tolist(), links.role.tolist()):
        w.writerow(["link", names[u], names[v], LINK_ROLES[r]])


def _cmd_roles(args: argparse.Namespace) -> int:
    from netctl.structural.roles import _link_roles, _node_roles, _roles_facts

    system = load_system(args)
    with analysis_step(args, system, "node roles"):
        facts = _roles_facts(system)  # one matching of A for both tables
        nr = _node_roles(system, facts)
    with analysis_step(args, system, "link roles"):
        lr = _link_roles(system, facts)
    d = {"analysis": "roles", "file": args.file, "n_states": nr.n_states,
         "n_links": lr.n_links, "model": system.model, "n_inputs": nr.n_inputs,
         "structural_rank_A": nr.matching_size, "perfect_matching": nr.perfect_matching,
         "node_basis": nr.basis, "counts": {"nodes": nr.counts(), "links": lr.counts()}}
    if args.json or args.out:  # the full tables only when they are printed or written
        d["nodes"] = nr.to_dict()["nodes"]
        d["links"] = lr.to_dict()["links"]
    nc, lc = nr.counts(), lr.counts()
    t = terms(args)
    lines = [f"{args.file}: {t.of(nr.n_states)}, {links_text(lr.n_links)}, model {system.model}",
             f"  {t.inputs}: {nr.n_inputs} (structural rank of A {nr.matching_size} of "
             f"{nr.n_states})",
             f"  {t.states}: {nc['critical']} critical, {nc['intermittent']} intermittent, "
             f"{nc['redundant']} redundant"]
    if nr.perfect_matching:
        lines.append(f"  (A has a perfect matching: one input suffices; it must act on one "
                     f"{t.state} of every source component, so those {t.states} are the "
                     "candidates)")
    if system.elements is not None:
        lines += _grid_lines(system, nr, lr, d, bool(args.json or args.out))
    else:
        lines.append(f"  critical {t.states} (in every minimum driver set): "
                     f"{_short(nr.names(nr.critical[:21]), nr.critical.size)}")
        lines.append(f"  links: {lc['critical']} critical, {lc['ordinary']} ordinary, "
                     f"{lc['redundant']} redundant")
        # names only for the links shown (millions of critical links at 10^7 links)
        crit = [f"{a} -> {b}" for a, b in lr.link_names(lr.critical[:21])]
        lines.append(f"  critical links (losing one costs structural rank): "
                     f"{_short(crit, lr.critical.size)}")
    lines.append("  " + str(caution(args)))
    if args.csv:
        write_roles_csv(args.csv, nr, lr)
    emit(args, d, wording(system).text("\n".join(lines)))  # a grid: bus words
    return 0


def _grid_lines(system: Any, nr: Any, lr: Any, d: dict[str, Any], full: bool) -> list[str]:
    """Roles of a grid in its own terms: buses by number, branches by case ID; links
    inside a bus (part of the model) never listed as contingencies. Adds ``branches`` to
    ``d`` and the branch ID of every link (``element``, ``None`` inside a bus)."""
    from netctl.structural.branches import INTERNAL, branch_roles, link_elements, state_labels

    br = branch_roles(system)
    owner = link_elements(system)
    ids = system.elements.ids
    bc = br.counts()
    d["branches"] = br.to_dict()
    if full:
        for row, k in zip(d["links"], owner.tolist()):
            row["element"] = ids[k] if k >= 0 else None
    crit_states = state_labels(system, nr.critical.tolist())
    crit = [f"{e} ({'-'.join(b)})" for e, b, r in zip(br.ids, br.buses, br.role.tolist())
            if r == 0]
    internal_crit = int(np.count_nonzero(owner[lr.critical] == INTERNAL))
    out = [f"  buses in every minimum driver set: {_short(crit_states)}",
           f"  branches ({len(br.ids)}): {bc['critical']} critical (an outage raises the "
           f"minimum inputs above {br.n_inputs}), {bc['ordinary']} ordinary, "
           f"{bc['parallel']} with a parallel circuit (an outage changes no coupling)",
           f"  critical branches: {_short(crit)}"]
    if br.n_internal_links:
        out.append(f"  ({br.n_internal_links} links inside buses, {internal_crit} of them "
                   "critical, belong to the model (angle-frequency, damping), not to any "
                   "element: they are never contingencies)")
    return out


def _short(items: list[str], total: int | None = None, limit: int = 20) -> str:
    """The first ``limit`` of ``total`` items (default: all of ``items``), then a count."""
    total = len(items) if total is None else int(total)
    if not total:
        return "none"
    if total <= limit:
        return ", ".join(items)
    return ", ".join(items[:limit]) + f", ... ({total - limit} more; --json lists all)"
