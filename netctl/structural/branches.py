"""Links and states of a grid in the planner's terms: which branch a link belongs to, which
bus a state belongs to, and the role of every branch (:func:`branch_roles`).

A grid read from a case file carries an :class:`~netctl.records.ElementTable`. Every link
between two different buses belongs to the branch (or branches: parallel circuits) joining
them; links inside one bus (``a:vel -> a:pos``, damping in the second-order model) belong to
no element: they are part of the model and are never contingencies.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.errors import OptionError
from netctl.records import BRANCH_KINDS
from netctl.system import StructuredSystem

__all__ = ["BRANCH_ROLES", "BranchRoles", "branch_roles", "link_elements", "state_buses",
           "state_labels", "INTERNAL"]

#: ``link_elements`` code of a link inside one bus (model-internal, never a contingency).
INTERNAL = -1
#: Roles of a branch, in report order.
BRANCH_ROLES: tuple[str, ...] = ("critical", "ordinary", "parallel")

_PART_WORDS = {"pos": "angle", "vel": "frequency"}


def state_buses(system: StructuredSystem) -> np.ndarray:
    """Bus position (in ``system.elements.node_names``) of every state, -1 where none.

    A state belongs to the bus named in the node table's ``node`` column (the
    second-order model writes it) or, without that column, to the bus of its own name.

    References
    ----------
    .. [1] None: a name look-up (common practice, no source).
    """
    table = system.elements
    if table is None:
        return np.full(system.n_states, -1, np.int64)
    pos = {name: k for k, name in enumerate(table.node_names)}
    col = system.nodes.get("node")
    labels = [str(v) for v in col] if col is not None else list(system.state_names)
    return np.array([pos.get(v, -1) for v in labels], np.int64)


def state_labels(system: StructuredSystem, states: Iterable[int]) -> list[str]:
    """States in a planner's words: ``"bus 12"`` (first-order grid), ``"bus 12
    frequency"`` / ``"bus 12 angle"`` (second-order), the state name otherwise.

    References
    ----------
    .. [1] None: wording (common practice, no source).
    """
    table = system.elements
    idx = [int(i) for i in states]
    if table is None:
        return [system.state_names[i] for i in idx]
    buses = set(table.node_names)
    node = system.nodes.get("node")
    part = system.nodes.get("part")
    out = []
    for i in idx:
        name = system.state_names[i]
        bus = str(node[i]) if node is not None else name
        if bus not in buses:
            out.append(name)
            continue
        word = _PART_WORDS.get(str(part[i])) if part is not None else None
        out.append(f"bus {bus}" + (f" {word}" if word else ""))
    return out


def link_elements(system: StructuredSystem) -> np.ndarray:
    """For every link of ``A`` (order of :meth:`StructuredSystem.edges`): the position in
    ``system.elements`` of one in-service branch joining its two buses (the first in the
    table when parallel circuits do), :data:`INTERNAL` (-1) for a link inside one bus,
    -2 for a link touching a state of no bus or joining buses no branch joins.

    Raises
    ------
    OptionError
        The system has no element table.

    References
    ----------
    .. [1] None: a look-up by bus pair (common practice, no source).
    """
    table = system.elements
    if table is None:
        raise OptionError("branch names need a grid file (.m case files or pandapower JSON); "
                          "this system has none.")
    node = state_buses(system)
    nb = max(len(table.node_names), 1)
    src, tgt = system.edges()
    nu, nv = node[src], node[tgt]
    out = np.full(src.size, -2, np.int64)
    out[(nu == nv) & (nu >= 0)] = INTERNAL
    br = np.array([k for k, t in enumerate(table.kinds) if t in BRANCH_KINDS], np.int64)
    if br.size == 0:
        return out
    keys: list[np.ndarray] = []
    owners: list[np.ndarray] = []
    ends = [table.end_a[br], table.end_b[br]]
    c = table.end_c[br]
    pairs = [(ends[0], ends[1], np.ones(br.size, bool)), (ends[0], c, c >= 0),
             (ends[1], c, c >= 0)]
    for a, b, ok in pairs:
        keys.append(np.minimum(a[ok], b[ok]) * nb + np.maximum(a[ok], b[ok]))
        owners.append(br[ok])
    key = np.concatenate(keys)
    own = np.concatenate(owners)
    order = np.lexsort((own, key))
    key, own = key[order], own[order]
    first = np.ones(key.size, bool)
    first[1:] = key[1:] != key[:-1]
    key, own = key[first], own[first]
    between = (nu >= 0) & (nv >= 0) & (nu != nv)
    lk = np.minimum(nu[between], nv[between]) * nb + np.maximum(nu[between], nv[between])
    hit = np.searchsorted(key, lk)
    found = (hit < key.size) & (key[np.minimum(hit, max(key.size - 1, 0))] == lk) \
        if key.size else np.zeros(lk.size, bool)
    vals = np.full(lk.size, -2, np.int64)
    vals[found] = own[hit[found]]
    out[between] = vals
    return out


@dataclass(frozen=True)
class BranchRoles:
    """Role of every branch of a grid (see :func:`branch_roles`).

    Attributes
    ----------
    ids, kinds : tuple of str
        Branch IDs (the case's) and kinds (line, transformer, impedance, switch).
    buses : tuple of tuple of str
        The buses each branch joins.
    role : ndarray of int8
        Index into :data:`BRANCH_ROLES` per branch.
    n_inputs : int
        Minimum number of inputs ``N_D`` of the intact grid.
    n_inputs_after : ndarray of int
        ``N_D`` after each branch is out of service (both directions of its couplings).
    n_internal_links : int
        Links inside one bus (part of the model, never a contingency; not classified).
    """

    ids: tuple[str, ...]
    kinds: tuple[str, ...]
    buses: tuple[tuple[str, ...], ...] = field(repr=False)
    role: np.ndarray = field(repr=False)
    n_inputs: int = 0
    n_inputs_after: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64),
                                       repr=False)
    n_internal_links: int = 0
    model: str = "given"

    def of_role(self, name: str) -> list[str]:
        """IDs of the branches with role ``name``."""
        r = BRANCH_ROLES.index(name)
        return [self.ids[k] for k in np.flatnonzero(self.role == r).tolist()]

    def counts(self) -> dict[str, int]:
        """Number of branches per role."""
        return {name: int(np.count_nonzero(self.role == r))
                for r, name in enumerate(BRANCH_ROLES)}

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready: ``branches`` is a list of ``{element, kind, buses, role,
        n_inputs_after}``."""
        return {"analysis": "branch_roles", "model": self.model, "n_inputs": self.n_inputs,
                "n_branches": len(self.ids), "counts": self.counts(),
                "n_internal_links": self.n_internal_links,
                "branches": [{"element": self.ids[k], "kind": self.kinds[k],
                              "buses": list(self.buses[k]),
                              "role": BRANCH_ROLES[int(self.role[k])],
                              "n_inputs_after": int(self.n_inputs_after[k])}
                             for k in range(len(self.ids))]}


def branch_roles(system: StructuredSystem) -> BranchRoles:
    r"""Role of every branch of a grid when it is out of service (both directions).

    A branch is *critical* when its outage raises the minimum number of inputs ``N_D``
    [1]_, *ordinary* when its outage changes couplings but not ``N_D``, and *parallel*
    when another in-service circuit joins the same buses (its outage changes no coupling
    of the pattern). This is the element-level counterpart of the link roles of Liu et al.
    [1]_: a line is both directions of its couplings at once, so two links that are each
    "ordinary" can still make a critical line.

    Raises
    ------
    OptionError
        The system has no element table (not read from a grid file).

    Notes
    -----
    Exact, from :func:`~netctl.structural.robustness.element_sweep` over the branches
    (one maximum matching, then local work per branch). Links inside one bus are counted,
    not classified.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    """
    from netctl.structural.robustness.elements import element_sweep

    table = system.elements
    if table is None:
        raise OptionError("branch roles need a grid file (.m case files or pandapower JSON); "
                          "this system has none. Use link roles instead.")
    sw = element_sweep(system, kinds=BRANCH_KINDS)
    role = np.where(sw.no_change, 2, np.where(sw.n_inputs_after > sw.n_inputs, 0, 1))
    n_int = int(np.count_nonzero(link_elements(system) == INTERNAL))
    return BranchRoles(ids=sw.ids, kinds=sw.kinds, buses=sw.buses,
                       role=role.astype(np.int8), n_inputs=sw.n_inputs,
                       n_inputs_after=np.asarray(sw.n_inputs_after, np.int64),
                       n_internal_links=n_int, model=system.model)
