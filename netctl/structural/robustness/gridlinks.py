"""Link-level changes on a grid, checked against the elements a planner changes.

A grid's state graph is built from whole elements: a line (or transformer) between buses
``p`` and ``q`` couples them both ways (``p -> q`` and ``q -> p`` in the first-order
model, ``p angle -> q frequency`` and ``q angle -> p frequency`` in the swing model), and
the links inside one bus (angle to frequency, damping) are the model's own terms, not
equipment. Removing only some of the links between two buses takes half a line out;
adding ``p -> q`` without its mirror adds half a line; changing a link inside a bus
changes the physics. The answer would be right for the graph and wrong for the grid, so
:func:`grid_link_problem` says which change is not a whole element and what to give
instead (``--remove-elements`` for an outage, the mirror link for a new line).
"""

from __future__ import annotations

from collections.abc import Sequence

from netctl.records import BRANCH_KINDS
from netctl.structural.robustness.outages import state_nodes
from netctl.system import StructuredSystem

__all__ = ["grid_link_problem"]


def grid_link_problem(system: StructuredSystem, *,
                      add: Sequence[tuple[str, str]] | None = None,
                      remove: Sequence[tuple[str, str]] | None = None,
                      words: tuple[str, str, str] = ("--add-links", "--remove-links",
                                                     "--remove-elements")) -> str | None:
    """Why a change of links does not fit a grid's elements, or ``None`` when it does.

    Parameters
    ----------
    system : StructuredSystem
        A grid (with an element table); any other system is never objected to.
    add, remove : sequences of (source, target) state names
        The links to add and to remove (states that exist; new states are not judged).
    words : (str, str, str)
        How the message names the links to add, the links to remove and the element
        outage (the command line's options by default).

    Returns
    -------
    str or None
        The first problem, naming the link, the buses, and the fix: a removal must take
        every link between its two buses (a whole line, or all its parallel circuits;
        ``--remove-elements 'branch ID'`` does it), an added link between two buses
        needs its mirror (the other bus's same quantities), and links inside one bus
        are neither removed nor added.

    References
    ----------
    .. [1] P. Kundur, "Power System Stability and Control", McGraw-Hill, 1994 (the
       swing model: a line's coupling enters both buses' equations; from memory).
    """
    table = system.elements
    if table is None or not (add or remove):
        return None
    add_w, remove_w, element_w = words
    node = state_nodes(system, table)
    part = system.nodes.get("part")
    names = system.state_names
    pos = {name: i for i, name in enumerate(names)}
    bus = table.node_names

    def where(i: int) -> int:
        return int(node[i])

    # the state of each (bus, quantity): the mirror of a link swaps the buses
    quantity = [str(part[i]) if part is not None else "" for i in range(len(names))]
    state_at = {(where(i), quantity[i]): i for i in range(len(names)) if where(i) >= 0}
    src, tgt = system.edges()
    existing = set(zip(src.tolist(), tgt.tolist()))

    removed = {(pos[a], pos[b]) for a, b in remove or () if a in pos and b in pos}
    for a, b in remove or ():
        if a not in pos or b not in pos:
            continue
        p, q = where(pos[a]), where(pos[b])
        if p < 0 or q < 0:
            continue
        if p == q:
            return (f"{remove_w}: {a}->{b} lies inside bus {bus[p]} (the model's own "
                    "angle-frequency or damping term, not equipment); take the bus out of "
                    f"service with {element_w} 'bus {bus[p]}'.")
        pair = {p, q}
        between = sorted((s, t) for s, t in existing
                         if {where(s), where(t)} == pair and where(s) != where(t))
        left = [(s, t) for s, t in between if (s, t) not in removed]
        if left:
            ids = [table.ids[k] for k in range(len(table)) if table.kinds[k] in BRANCH_KINDS
                   and {int(table.end_a[k]), int(table.end_b[k])} == pair]
            fix = (f"take it out with {element_w} '{','.join(ids)}'" if ids else
                   "remove every link between the two buses")
            return (f"{remove_w}: {a}->{b} is one of the {len(between)} links between "
                    f"bus {bus[p]} and bus {bus[q]}, and "
                    f"{', '.join(f'{names[s]}->{names[t]}' for s, t in left)} would stay: "
                    "that takes half a line out (a line couples its two buses both ways); "
                    f"{fix}, or list all {len(between)} links.")
    added = {(pos[a], pos[b]) for a, b in add or () if a in pos and b in pos}
    for u, v in sorted(added):
        p, q = where(u), where(v)
        if p < 0 or q < 0:
            continue
        a, b = names[u], names[v]
        if p == q:
            return (f"{add_w}: {a}->{b} lies inside bus {bus[p]}: the model's own terms "
                    "(angle-frequency, damping) come from --model, not from links; to "
                    "study a new line, add the links between two buses.")
        mu, mv = state_at.get((q, quantity[u])), state_at.get((p, quantity[v]))
        if mu is None or mv is None or (mu, mv) in existing or (mu, mv) in added:
            continue
        return (f"{add_w}: {a}->{b} alone adds half a line between bus {bus[p]} and "
                f"bus {bus[q]} (a line couples its two buses both ways); add "
                f"{names[mu]}->{names[mv]} as well.")
    return None
