"""What each element of a grid removes when it is out of service: :func:`element_effects`.

An *element* (:class:`~netctl.records.ElementTable`) is what is taken out of service: a
branch removes the couplings between its two buses in both directions (under the
system's model: ``a -> b`` and ``b -> a`` for first-order, ``a:pos -> b:vel`` and
``b:pos -> a:vel`` for second-order) -- unless a parallel circuit joins the same buses,
which keeps the coupling (no structural change); a bus removes all of its states; a
generator removes the inputs acting on its bus when it is the bus's only generating unit.
Links inside one bus of a second-order model (``a:vel -> a:pos``, damping) are part of
the model and never contingencies.

The answer is held as ragged arrays (group ``k`` is ``flat[ptr[k]:ptr[k + 1]]``); the
operations the loss analyses apply to them (take some groups, join two per group) live
here too. What the losses do is computed in :mod:`netctl.structural.robustness.elements`
(one element at a time) and :mod:`netctl.structural.robustness.element_sets` (several
at once).

Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from netctl.errors import OptionError
from netctl.records import BRANCH_KINDS, ElementTable
from netctl.system import StructuredSystem

__all__ = ["ElementEffects", "element_effects", "state_nodes"]


def state_nodes(system: StructuredSystem, table: ElementTable) -> np.ndarray:
    """Bus position (in ``table.node_names``) of every state, -1 where none.

    A state belongs to the bus named in the node table's ``node`` column (the
    second-order model writes it) or, without that column, to the bus of its own name.

    References
    ----------
    .. [1] None: a name look-up (common practice, no source).
    """
    pos = {name: k for k, name in enumerate(table.node_names)}
    col = system.nodes.get("node")
    labels = [str(v) for v in col] if col is not None else list(system.state_names)
    return np.array([pos.get(v, -1) for v in labels], np.int64)


@dataclass(frozen=True)
class ElementEffects:
    """What each element removes, as CSR-like ragged arrays (element ``k``'s links are
    ``links[link_ptr[k]:link_ptr[k + 1]]``, positions in the CSR order of ``A``, the
    order of :meth:`StructuredSystem.edges`)."""

    table: ElementTable
    link_ptr: np.ndarray
    links: np.ndarray
    state_ptr: np.ndarray
    states: np.ndarray
    input_ptr: np.ndarray
    inputs: np.ndarray
    parallel: np.ndarray  # branches: circuits joining the same two buses
    input_bus: np.ndarray  # per input: the bus it acts on (-1 several, -2 none)

    def of(self, k: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(links, states, inputs) that element ``k`` removes."""
        return (self.links[self.link_ptr[k]:self.link_ptr[k + 1]],
                self.states[self.state_ptr[k]:self.state_ptr[k + 1]],
                self.inputs[self.input_ptr[k]:self.input_ptr[k + 1]])


def _ragged(groups: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    ptr = np.zeros(len(groups) + 1, np.int64)
    np.cumsum([g.size for g in groups], out=ptr[1:])
    flat = np.concatenate(groups).astype(np.int64) if groups else np.zeros(0, np.int64)
    return ptr, flat


def element_effects(system: StructuredSystem) -> ElementEffects:
    """Map every element of ``system.elements`` to the links, states and inputs it removes.

    Raises
    ------
    OptionError
        The system has no element table (it was not read from a grid file).

    Notes
    -----
    A branch outage removes the couplings between its buses in both directions; with a
    parallel circuit left the coupling stays (its susceptance shrinks, its pattern does
    not). A generator removes the inputs acting only on its bus when no other unit
    feeds that bus. O(E log E + elements).

    References
    ----------
    .. [1] N-1 security criterion: the loss of any single element (ENTSO-E Operation
       Handbook, Policy 3; from memory). The mapping to state-graph links follows the
       swing model of P. Kundur, "Power System Stability and Control", McGraw-Hill,
       1994 (from memory).
    """
    table = system.elements
    if table is None:
        raise OptionError("element-level contingencies need a grid file (buses, branches, "
                          "generators with their IDs: .m case files or pandapower JSON); "
                          "this system has none. Use link or state losses instead.")
    node = state_nodes(system, table)
    nb = max(len(table.node_names), 1)
    src, tgt = system.edges()
    nu, nv = node[src], node[tgt]
    inter = (nu >= 0) & (nv >= 0) & (nu != nv)
    lpos = np.flatnonzero(inter)
    lkey = np.minimum(nu[lpos], nv[lpos]) * nb + np.maximum(nu[lpos], nv[lpos])
    order = np.argsort(lkey, kind="stable")
    lkey, lpos = lkey[order], lpos[order]
    par = table.parallel_group()
    by_node = np.argsort(node, kind="stable")
    node_sorted = node[by_node]
    Bc = system.B.tocsc()
    in_node = np.full(system.n_inputs, -2, np.int64)  # bus an input acts on (-1: several)
    for j in range(system.n_inputs):
        rows = Bc.indices[Bc.indptr[j]:Bc.indptr[j + 1]]
        nodes_j = np.unique(node[rows])
        in_node[j] = nodes_j[0] if nodes_j.size == 1 else (-2 if nodes_j.size == 0 else -1)
    gens_at = np.bincount(table.end_a[np.array([t == "generator" for t in table.kinds], bool)],
                          minlength=nb) if len(table) else np.zeros(nb, np.int64)
    links: list[np.ndarray] = []
    states: list[np.ndarray] = []
    inputs: list[np.ndarray] = []
    empty = np.zeros(0, np.int64)
    pairs: dict[tuple[int, int], int] | None = None
    for k, kind in enumerate(table.kinds):
        a, b = int(table.end_a[k]), int(table.end_b[k])
        if kind in BRANCH_KINDS and table.end_c[k] >= 0:  # three-winding: all its legs
            if pairs is None:
                pairs = table.pair_counts()
            legs = []
            for u, v in table.legs(k):
                if pairs[(min(u, v), max(u, v))] <= 1:
                    lo, hi = np.searchsorted(lkey, [min(u, v) * nb + max(u, v),
                                                    min(u, v) * nb + max(u, v) + 1])
                    legs.append(lpos[lo:hi])
            links.append(np.sort(np.concatenate(legs)) if legs else empty)
            states.append(empty)
            inputs.append(empty)
        elif kind in BRANCH_KINDS:
            key = min(a, b) * nb + max(a, b)
            lo, hi = np.searchsorted(lkey, [key, key + 1])
            links.append(lpos[lo:hi] if par[k] <= 1 else empty)
            states.append(empty)
            inputs.append(empty)
        elif kind == "bus":
            lo, hi = np.searchsorted(node_sorted, [a, a + 1])
            links.append(empty)
            states.append(np.sort(by_node[lo:hi]))
            inputs.append(empty)
        else:  # generator: its actuator, if no other unit feeds the bus
            links.append(empty)
            states.append(empty)
            inputs.append(np.flatnonzero(in_node == a) if gens_at[a] <= 1 else empty)
    lp, lf = _ragged(links)
    sp_, sf = _ragged(states)
    ip, inf = _ragged(inputs)
    return ElementEffects(table=table, link_ptr=lp, links=lf, state_ptr=sp_, states=sf,
                          input_ptr=ip, inputs=inf, parallel=par, input_bus=in_node)


def _take(ptr: np.ndarray, flat: np.ndarray, sel: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Groups ``sel`` of a ragged array (``flat[ptr[k]:ptr[k + 1]]`` is group ``k``)."""
    lens = ptr[sel + 1] - ptr[sel]
    out_ptr = np.zeros(sel.size + 1, np.int64)
    np.cumsum(lens, out=out_ptr[1:])
    offs = np.repeat(ptr[sel] - out_ptr[:-1], lens)
    return out_ptr, flat[np.arange(int(out_ptr[-1]), dtype=np.int64) + offs]


def _concat_ragged(p1: np.ndarray, f1: np.ndarray, p2: np.ndarray,
                   f2: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Group ``k`` of the result: group ``k`` of the first, then of the second."""
    l1, l2 = np.diff(p1), np.diff(p2)
    ptr = np.zeros(p1.size, np.int64)
    np.cumsum(l1 + l2, out=ptr[1:])
    out = np.empty(int(ptr[-1]), np.int64)
    first = np.arange(f1.size, dtype=np.int64) + np.repeat(ptr[:-1] - p1[:-1], l1)
    second = np.arange(f2.size, dtype=np.int64) + np.repeat(ptr[:-1] + l1 - p2[:-1], l2)
    out[first] = f1
    out[second] = f2
    return ptr, out
