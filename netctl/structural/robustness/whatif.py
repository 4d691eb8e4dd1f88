"""Before and after a proposed change (links added or removed, states removed):
:func:`apply_change` builds the changed system, :func:`what_if` compares the two."""

from __future__ import annotations

import warnings
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import coo_pattern, padded, take
from netctl.errors import InvalidSystemError, UnknownNameError
from netctl.structural.controllability import ControllabilityReport, controllability
from netctl.structural.inputs import minimum_inputs
from netctl.structural.roles import LINK_ROLES, NODE_ROLES, link_roles, node_roles
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["WhatIf", "apply_change", "what_if"]


# ---------------------------------------------------------------------- what-if
@dataclass(frozen=True)
class WhatIf(ResultTables):
    """Before and after a proposed change (see :func:`what_if`).

    ``before`` / ``after`` are the two systems. ``controllable_before`` /
    ``controllable_after`` concern the system's input design (``None`` without inputs).
    ``drivers_before`` / ``drivers_after`` are one deterministic minimum driver set each
    (state names); ``role_changes`` maps state name -> (role before, role after) for the
    states present in both; ``link_role_changes`` the same for links. In a notebook it
    shows its findings and a small map of both networks together: the added and removed
    links and states, and the driver nodes before and after.
    """

    _map_system_field = "before"

    before: StructuredSystem = field(repr=False)
    after: StructuredSystem = field(repr=False)
    added_links: tuple[tuple[str, str], ...]
    removed_links: tuple[tuple[str, str], ...]
    removed_nodes: tuple[str, ...]
    new_states: tuple[str, ...]
    inputs_lost: tuple[str, ...]
    controllable_before: bool | None
    controllable_after: bool | None
    n_inputs_before: int
    n_inputs_after: int
    drivers_before: tuple[str, ...]
    drivers_after: tuple[str, ...]
    role_changes: dict[str, tuple[str, str]]
    link_role_changes: dict[tuple[str, str], tuple[str, str]]
    reasons_after: tuple[str, ...]
    fix_after: tuple[str, ...]
    #: Lin's test of the design after the change (``None`` without inputs): its
    #: ``reasons(word=...)`` words the reasons another way (e.g. a grid's buses).
    report_after: ControllabilityReport | None = field(default=None, repr=False,
                                                        compare=False)

    @property
    def breaks_design(self) -> bool:
        """The design was controllable before and is not after."""
        return bool(self.controllable_before) and self.controllable_after is False

    @property
    def drivers_gained(self) -> list[str]:
        b = set(self.drivers_before)
        return [x for x in self.drivers_after if x not in b]

    @property
    def drivers_lost(self) -> list[str]:
        a = set(self.drivers_after)
        return [x for x in self.drivers_before if x not in a]

    def to_dict(self) -> dict[str, Any]:
        return {
            "analysis": "what_if",
            "change": {"added_links": [list(e) for e in self.added_links],
                       "removed_links": [list(e) for e in self.removed_links],
                       "removed_nodes": list(self.removed_nodes),
                       "new_states": list(self.new_states),
                       "inputs_lost": list(self.inputs_lost)},
            "before": {"n_states": self.before.n_states, "n_links": self.before.n_links,
                       "controllable": self.controllable_before,
                       "n_inputs": self.n_inputs_before,
                       "drivers": list(self.drivers_before)},
            "after": {"n_states": self.after.n_states, "n_links": self.after.n_links,
                      "controllable": self.controllable_after,
                      "n_inputs": self.n_inputs_after,
                      "drivers": list(self.drivers_after),
                      "reasons": list(self.reasons_after), "fix": list(self.fix_after)},
            "breaks_design": self.breaks_design,
            "drivers_gained": self.drivers_gained,
            "drivers_lost": self.drivers_lost,
            "role_changes": {k: {"before": a, "after": b}
                             for k, (a, b) in self.role_changes.items()},
            "link_role_changes": [{"source": s, "target": t, "before": a, "after": b}
                                  for (s, t), (a, b) in self.link_role_changes.items()],
        }


def _pairs(links: Iterable[Sequence[object]] | None, what: str) -> list[tuple[str, str]]:
    out = []
    for e in links or ():
        e = tuple(e)
        if len(e) != 2:
            raise InvalidSystemError(f"{what}: expected (source, target) pairs, found {e!r}.")
        out.append((str(e[0]), str(e[1])))
    return out


def apply_change(system: StructuredSystem, *, add_links: Iterable[Sequence[object]] | None = None,
                 remove_links: Iterable[Sequence[object]] | None = None,
                 remove_nodes: Iterable[object] | None = None,
                 remove_inputs: Iterable[object] | None = None,
                 ) -> tuple[StructuredSystem, tuple[str, ...], tuple[str, ...]]:
    """The changed system, the names of new states, and the inputs lost (left acting on
    nothing, or named in ``remove_inputs``: an actuator out of service).

    Links are ``(source, target)`` state-name pairs; a name in ``add_links`` that the
    system lacks becomes a new state (appended); when every existing state has
    self-dynamics (a self-loop, as under the ``self-loops`` model) the new states get one
    too. Added links get weight 1.0 in a weighted system. Removing a state removes its
    links and its input connections; inputs left acting on no state are dropped.
    Disturbances and regulated outputs are kept (with their names and node table): new
    states are reached by no disturbance and read by no regulated output, and a removed
    state takes its entries of ``E`` and ``H`` with it.
    """
    add = _pairs(add_links, "add_links")
    rem = _pairs(remove_links, "remove_links")
    rnodes = [str(x) for x in (remove_nodes or ())]
    n0 = system.n_states

    def known(x: str) -> int | None:
        try:
            return int(system.index_of([x])[0])
        except UnknownNameError:
            return None

    rnode_idx = system.index_of(rnodes) if rnodes else np.zeros(0, np.int64)
    src, tgt = system.edges()
    keys = tgt * max(n0, 1) + src  # CSR order: sorted by target, then source
    keep_link = np.ones(src.size, bool)

    def find(a: int, b: int) -> int | None:
        if a >= n0 or b >= n0:
            return None
        kk = b * max(n0, 1) + a
        pos = int(np.searchsorted(keys, kk))
        return pos if pos < keys.size and keys[pos] == kk else None

    for u, v in rem:
        iu, iv = (int(i) for i in system.index_of([u, v]))
        k = find(iu, iv)
        if k is None:
            raise UnknownNameError(f"remove_links: there is no link {u!r} -> {v!r} to remove; "
                                   "links are 'source -> target' (source influences target).")
        keep_link[k] = False
    new: list[str] = []
    where: dict[str, int] = {}
    for u, v in add:
        for x in (u, v):
            if x not in where:
                i = known(x)
                if i is None:
                    i = n0 + len(new)
                    new.append(x)
                where[x] = i
    add_src = np.array([where[u] for u, _ in add], np.int64)
    add_tgt = np.array([where[v] for _, v in add], np.int64)
    for (u, v), a, b in zip(add, add_src.tolist(), add_tgt.tolist()):
        k = find(a, b)
        if k is not None and keep_link[k]:
            raise InvalidSystemError(f"add_links: the link {u!r} -> {v!r} is already there; "
                                     "list only new links.")
    all_names: Sequence[str] = (tuple(system.state_names) + tuple(new)) if new else \
        system.state_names
    N = n0 + len(new)
    loops = np.arange(n0, N, dtype=np.int64) if (
        new and n0 and system.n_self_loops == n0) else np.zeros(0, np.int64)
    s2 = np.concatenate([src[keep_link], add_src, loops])
    t2 = np.concatenate([tgt[keep_link], add_tgt, loops])
    w2 = np.concatenate([_edge_weights(system)[keep_link], np.ones(add_src.size + loops.size)])
    A = coo_pattern(t2, s2, w2, (N, N), count=False)[0]
    # new states: no input acts on them, no output, disturbance or regulated output
    # reads or reaches them (empty rows of B and E, empty columns of C and H)
    B = padded(system.pattern("B"), (N, system.n_inputs))
    C = padded(system.pattern("C"), (system.n_outputs, N))
    E = padded(system.pattern("E"), (N, system.n_disturbances))
    H = padded(system.pattern("H"), (system.n_regulated, N))
    nodes = _extend_nodes(system.nodes, len(new))
    grown = StructuredSystem(A=A, B=B, C=C, state_names=all_names,
                             input_names=system.input_names, output_names=system.output_names,
                             nodes=nodes, weighted=system.weighted, model=system.model,
                             E=E, H=H, disturbance_names=system.disturbance_names,
                             regulated_names=system.regulated_names,
                             disturbance_nodes=system.disturbance_nodes)
    gone = [str(x) for x in (remove_inputs or ())]
    if gone:
        unknown = [x for x in gone if x not in set(grown.input_names)]
        if unknown:
            raise UnknownNameError(f"remove_inputs: no input {unknown[0]!r}; the inputs are "
                                   f"{', '.join(grown.input_names[:8])}.")
        keep_in = [j for j, x in enumerate(grown.input_names) if x not in set(gone)]
        grown = grown._replace(B=take(grown.pattern("B"), cols=np.asarray(keep_in, np.int64)),
                               input_names=tuple(grown.input_names[j] for j in keep_in))
    if not rnodes:
        return grown, tuple(new), tuple(gone)
    keep = np.ones(N, bool)
    keep[rnode_idx] = False
    kept = np.flatnonzero(keep)
    B0 = grown.pattern("B")
    Bk = take(B0, rows=kept)
    used = np.bincount(Bk.indices, minlength=B0.shape[1]) > 0
    had = np.bincount(B0.indices, minlength=B0.shape[1]) > 0
    lost_inputs = tuple(grown.input_names[int(j)] for j in np.flatnonzero(had & ~used))
    out = StructuredSystem(
        A=take(grown.pattern("A"), kept, kept), B=take(Bk, cols=np.flatnonzero(used)),
        C=take(grown.pattern("C"), cols=kept),
        state_names=tuple(all_names[int(i)] for i in kept),
        input_names=tuple(x for x, u in zip(grown.input_names, used) if u),
        output_names=grown.output_names,
        nodes={c: v[keep] for c, v in grown.nodes.items()}, weighted=system.weighted,
        model=system.model, E=take(grown.pattern("E"), rows=kept),
        H=take(grown.pattern("H"), cols=kept),
        disturbance_names=grown.disturbance_names, regulated_names=grown.regulated_names,
        disturbance_nodes=grown.disturbance_nodes)
    return out, tuple(new), tuple(gone) + lost_inputs


def _edge_weights(system: StructuredSystem) -> np.ndarray:
    """Weights in :meth:`StructuredSystem.edges` order (CSR order of ``A``)."""
    return np.asarray(system.pattern("A").data, np.float64).copy()


def _extend_nodes(nodes: Any, extra: int) -> dict[str, np.ndarray]:
    out = {}
    for c, v in dict(nodes).items():
        if extra == 0:
            out[c] = v
            continue
        if v.dtype == bool:
            pad = np.ones(extra, bool)
        elif np.issubdtype(v.dtype, np.floating):
            pad = np.full(extra, np.nan)
        else:
            pad = np.empty(extra, dtype=object)
        out[c] = np.concatenate([v.astype(object) if pad.dtype == object else v, pad])
    return out


def what_if(system: StructuredSystem, *, add_links: Iterable[Sequence[object]] | None = None,
            remove_links: Iterable[Sequence[object]] | None = None,
            remove_nodes: Iterable[object] | None = None,
            remove_inputs: Iterable[object] | None = None) -> WhatIf:
    """Before and after a proposed change to the network, side by side.

    Parameters
    ----------
    system : StructuredSystem
        Its inputs, if any, are the design whose controllability is compared.
    add_links, remove_links : iterable of (source, target) state names
        Links to add (a name the system lacks becomes a new state) or remove.
    remove_nodes : iterable of state names
        States to remove with all their links (an input left acting on no state is
        dropped and listed in ``inputs_lost``).
    remove_inputs : iterable of input names
        Inputs (actuators) out of service; listed in ``inputs_lost``.

    Returns
    -------
    WhatIf
        Controllability of the design before and after (Lin's test [1]_), the minimum
        number of inputs and one minimum driver set before and after (Liu et al. [2]_),
        the drivers gained and lost, and the node (Jia et al. [3]_) and link roles that
        changed.

    Notes
    -----
    Full recomputation on both systems: a few maximum matchings. Driver sets are not
    unique; the ones compared are netctl's deterministic choices, so "gained / lost"
    describes those two sets while the role changes describe all minimum sets.

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    .. [2] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [3] T. Jia et al., "Emergence of bimodality in controlling complex networks",
       Nat. Commun. 4:2002, 2013. doi:10.1038/ncomms3002

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], inputs=[0])    # x0 -> x1 -> x2
    >>> w = what_if(s, remove_links=[("x1", "x2")])
    >>> w.controllable_before, w.controllable_after, w.breaks_design, w.drivers_gained
    (True, False, True, ['x2'])
    """
    add_links = None if add_links is None else [tuple(x) for x in add_links]
    remove_links = None if remove_links is None else [tuple(x) for x in remove_links]
    if system.elements is not None and (add_links or remove_links):
        # a grid changes by whole elements (the command line refuses anything else)
        from netctl.structural.robustness.gridlinks import grid_link_problem

        problem = grid_link_problem(
            system, add=[(str(a), str(b)) for a, b in add_links or ()],
            remove=[(str(a), str(b)) for a, b in remove_links or ()],
            words=("add_links", "remove_links", "the element outage (netctl whatif "
                   "--remove-elements)"))
        if problem is not None:
            warnings.warn(f"{problem} The answer below is for the links as given.",
                          stacklevel=2)
    after, new, lost_inputs = apply_change(system, add_links=add_links,
                                           remove_links=remove_links, remove_nodes=remove_nodes,
                                           remove_inputs=remove_inputs)
    has = system.n_inputs > 0
    cb = controllability(system, dimension=False) if has else None
    ca = controllability(after, dimension=False) if has else None
    db = minimum_inputs(system)
    da = minimum_inputs(after)
    rb = node_roles(system)
    ra = node_roles(after)
    # old state index -> new one (states kept in order, new states appended after them)
    n0 = system.n_states
    keep0 = np.ones(n0, bool)
    if remove_nodes:
        keep0[system.index_of([str(x) for x in remove_nodes])] = False
    o2n = np.where(keep0, np.cumsum(keep0) - 1, -1)
    kept = np.flatnonzero(keep0)
    moved = np.flatnonzero(rb.role[kept] != ra.role[o2n[kept]])
    changes: dict[str, tuple[str, str]] = {
        system.state_names[int(kept[i])]: (NODE_ROLES[int(rb.role[kept[i]])],
                                           NODE_ROLES[int(ra.role[o2n[kept[i]]])])
        for i in moved}
    lb = link_roles(system)
    la = link_roles(after)
    N = max(after.n_states, 1)
    s_new, t_new = o2n[lb.sources], o2n[lb.targets]
    ok = (s_new >= 0) & (t_new >= 0)
    key_before = t_new * N + s_new
    key_after = la.targets * N + la.sources  # sorted (CSR order)
    pos = np.minimum(np.searchsorted(key_after, key_before), max(key_after.size - 1, 0))
    found = ok & (key_after.size > 0)
    if key_after.size:
        found &= key_after[pos] == key_before
    diff = np.flatnonzero(found & (lb.role != la.role[pos] if key_after.size else found))
    link_changes: dict[tuple[str, str], tuple[str, str]] = {
        (system.state_names[int(lb.sources[k])], system.state_names[int(lb.targets[k])]):
        (LINK_ROLES[int(lb.role[k])], LINK_ROLES[int(la.role[pos[k]])]) for k in diff}
    return WhatIf(
        before=system, after=after, added_links=tuple(_pairs(add_links, "add_links")),
        removed_links=tuple(_pairs(remove_links, "remove_links")),
        removed_nodes=tuple(str(x) for x in (remove_nodes or ())), new_states=new,
        inputs_lost=lost_inputs,
        controllable_before=None if cb is None else cb.controllable,
        controllable_after=None if ca is None else ca.controllable,
        n_inputs_before=db.n_inputs, n_inputs_after=da.n_inputs,
        drivers_before=tuple(db.driver_names), drivers_after=tuple(da.driver_names),
        role_changes=changes, link_role_changes=link_changes,
        reasons_after=tuple(ca.reasons()) if ca is not None else (),
        fix_after=tuple(ca.names(ca.fix)) if ca is not None else (), report_after=ca)
