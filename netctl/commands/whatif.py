"""``netctl whatif FILE``: before and after a proposed change, side by side.

Exit status: with a design (``--inputs``, or the inputs the file declares), 0 when the
design is structurally controllable after the change and 1 when it is not; without one,
1 when the change raises the minimum number of inputs, else 0. 2 on bad usage or input.
"""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import load_system, parse_names
from netctl.commands._options import CAUTION, UsageError, add_inputs
from netctl.commands._words import wording

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``whatif`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_inputs(p, default="the inputs the file declares, if any; none: judge the minimum "
               "inputs", what="states with a dedicated input (the design to check)")
    p.add_argument("--add-links", metavar="FILE|LINKS", default=None,
                   help="links to add: an edge-list file (source,target a line) or "
                        "'a->b,c->d'; unknown names become new states")
    p.add_argument("--remove-links", metavar="FILE|LINKS", default=None,
                   help="links to remove: an edge-list file or 'a->b,c->d'")
    p.add_argument("--remove-nodes", metavar="NAMES|FILE", default=None,
                   help="states to remove with all their links: 'a,b' or a file (in a grid, "
                        "a bus name removes all of the bus's states)")
    p.add_argument("--remove-elements", metavar="IDS|FILE", default=None,
                   help="grid elements to take out of service by their case IDs, e.g. "
                        "'branch 12,bus 4,gen 2' or a file, one ID a line")
    p.set_defaults(func=_cmd_whatif)


def _checked(system: Any, value: str | None, what: str, *, new_ok: bool
             ) -> list[tuple[str, str]] | None:
    """Read links and check their state names: unknown names are errors for links to
    remove (with the file and line), and new states (with a warning) for links to add."""
    import difflib
    import warnings

    from netctl.errors import UnknownNameError
    from netctl.io._common import file_error
    from netctl.io.changes import read_link_changes

    if not value:
        return None
    known = set(system.state_names)
    out = []
    for change in read_link_changes(value, what):
        a, b, line = change.source, change.target, change.line
        for x in (a, b):
            if x in known:
                continue
            if x in system.disturbance_names:  # not a new state: one message, no warning
                where = f"{change.origin}:{line}: " if line is not None else f"{what}: "
                raise UsageError(
                    f"{where}{x!r} in the link {a}->{b} is a disturbance, not a state: "
                    "whatif adds and removes links between states only. To study another "
                    "disturbance path, change the file's links and compare the two files.")
            close = difflib.get_close_matches(x, list(known), n=3)
            hint = f" Did you mean {', '.join(map(repr, close))}?" if close else ""
            if new_ok:
                warnings.warn(f"{what}: {x!r} is not one of the network's {system.n_states} "
                              f"states; it is added as a new state.{hint}", stacklevel=2)
                known.add(x)
            elif line is not None:
                raise file_error(change.origin, line, f"unknown state name {x!r} in the link "
                                 f"{a!r} -> {b!r}.{hint} Links to remove must exist.")
            else:
                raise UnknownNameError(f"{what}: unknown state name {x!r} in the link "
                                       f"{a}->{b}.{hint} Links to remove must exist.")
        out.append((a, b))
    return out


def _cmd_whatif(args: argparse.Namespace) -> int:
    from netctl.io import read_state_list
    from netctl.structural.robustness import what_if

    if not (args.add_links or args.remove_links or args.remove_nodes or args.remove_elements):
        raise UsageError("whatif needs a change: --add-links, --remove-links, --remove-nodes "
                         "and/or --remove-elements.")
    system = load_system(args)
    if args.inputs is not None:
        system = system.with_inputs(parse_names(system, args.inputs))
    add = _checked(system, args.add_links, "--add-links", new_ok=True)
    rem = _checked(system, args.remove_links, "--remove-links", new_ok=False)
    if system.elements is not None and (add or rem):
        # a grid changes by whole elements: no half line, no term of the model itself
        from netctl.structural.robustness.gridlinks import grid_link_problem

        problem = grid_link_problem(system, add=add, remove=rem)
        if problem is not None:
            raise UsageError(problem)
    nodes = None
    if args.remove_nodes:
        nodes = [system.state_names[i] for i in
                 parse_names(system, args.remove_nodes, what="--remove-nodes", whole_bus=True)]
    elements: list[str] = []
    drop_inputs: set[int] = set()
    if args.remove_elements:
        from netctl.structural.robustness.outages import element_effects

        eff = element_effects(system)
        elements = read_state_list(args.remove_elements)
        src, tgt = system.edges()
        rem = list(rem or [])
        nodes = list(nodes or [])
        for eid in elements:
            links, states, inputs = eff.of(eff.table.position(eid))
            rem += [(system.state_names[int(src[p])], system.state_names[int(tgt[p])])
                    for p in links.tolist()]
            nodes += [system.state_names[int(i)] for i in states.tolist()]
            drop_inputs.update(inputs.tolist())
    # a design to judge: --inputs, or the one the file declares (as netctl check does)
    has_design = args.inputs is not None or system.n_inputs > 0
    w = what_if(system, add_links=add, remove_links=rem, remove_nodes=nodes,
                remove_inputs=[system.input_names[j] for j in sorted(drop_inputs)])
    d = w.to_dict()
    d["file"] = args.file

    def yn(x: bool | None) -> str:
        return "-" if x is None else ("yes" if x else "NO")

    lines = [f"{args.file}: model {system.model}",
             f"  change: +{len(w.added_links)} link(s), -{len(w.removed_links)} link(s), "
             f"-{len(w.removed_nodes)} state(s)"
             + (f"; new states {', '.join(w.new_states)}" if w.new_states else ""),
             f"  {'':28}{'before':>10}{'after':>10}",
             f"  {'states':28}{w.before.n_states:>10}{w.after.n_states:>10}",
             f"  {'links':28}{w.before.n_links:>10}{w.after.n_links:>10}",
             f"  {'minimum inputs':28}{w.n_inputs_before:>10}{w.n_inputs_after:>10}"]
    if has_design:
        lines.append(f"  {'design controllable':28}{yn(w.controllable_before):>10}"
                     f"{yn(w.controllable_after):>10}")
    if w.inputs_lost:
        lines.append(f"  inputs lost with their states: {', '.join(w.inputs_lost)}")
    if elements:
        lines.insert(2, f"  elements out of service ({len(elements)}): {', '.join(elements)}")

    
    word = wording(system)  # a grid's states in a planner's words
    if word.grid:  # additive: the bus of every state the result names
        d["state_buses"] = word.buses(_named(w))

    def some(names: Any) -> str:
        names = [word(x) for x in names]
        if not names:
            return "0"
        return f"{len(names)} ({', '.join(names[:10])}{', ...' if len(names) > 10 else ''})"

    lines.append(f"  drivers gained: {some(w.drivers_gained)}; lost: {some(w.drivers_lost)} "
                 "(one minimum set each)")
    if w.role_changes:
        ch = [f"{word(k)} {a}->{b}" for k, (a, b) in w.role_changes.items()]
        lines.append(f"  state roles changed ({len(ch)}): {', '.join(ch[:15])}"
                     + (" ..." if len(ch) > 15 else ""))
    if w.link_role_changes:
        lines.append(f"  link roles changed: {len(w.link_role_changes)} (--json lists them)")
    if has_design and not w.controllable_after:
        reasons = (w.report_after.reasons(**word.reasons())
                   if word.grid and w.report_after is not None else w.reasons_after)
        for r in reasons:
            lines.append(f"    - {r}")
        lines.append(f"  smallest fix after the change: add dedicated inputs at "
                     f"{', '.join(word(x) for x in w.fix_after)}")
    if w.breaks_design:
        lines.append("  the change BREAKS the given design")
    lines.append("  " + CAUTION)
    emit(args, d, word.text("\n".join(lines)))  # inputs lost etc. in bus words
    if has_design:
        return 0 if w.controllable_after else 1
    return 1 if w.n_inputs_after > w.n_inputs_before else 0


def _named(w: Any) -> list[str]:
    """Every state name a what-if's JSON names (changes, drivers, roles, fix, reasons)."""
    names = {x for link in w.added_links + w.removed_links for x in link}
    names.update(w.removed_nodes, w.drivers_before, w.drivers_after, w.role_changes,
                 w.fix_after, (x for link in w.link_role_changes for x in link))
    r = w.report_after
    if r is not None and r.dilation is not None:
        d = r.dilation
        names.update(r.names(d.states), r.names(d.region),
                     r.names(d.fed_by[d.fed_by < r.n_states]))
    if r is not None:
        names.update(r.names(r.inaccessible))
    return sorted(names)
