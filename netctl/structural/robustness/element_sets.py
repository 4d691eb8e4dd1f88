"""Several grid elements out of service at once (N-2 and beyond): :func:`element_set_losses`.

Every set of ``k`` elements when there are few enough sets (exact), else a reproducible
random sample of distinct sets (labelled as sampled, with the number of sets examined and
the number there are). Each element removes what :func:`element_effects` says (a branch:
both directions of its couplings unless a parallel circuit outside the set stays -- both
circuits of a parallel pair in one set remove the coupling; a three-winding transformer:
its three couplings; a bus: all its states; a generating unit: its input when
no other unit feeds the bus); links inside one bus are part of the model, never lost.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.sparse as sp

from netctl.errors import OptionError
from netctl.graph.matching import maximum_matching
from netctl.records import ELEMENT_KINDS
from netctl.structural._engine import stack_AB
from netctl.structural.robustness._rematch import matching_sizes_after
from netctl.structural.robustness.elements import _reached
from netctl.structural.robustness.outages import (
    _concat_ragged,
    _ragged,
    element_effects,
    state_nodes,
)
from netctl.system import StructuredSystem

__all__ = ["ElementSetLosses", "element_set_losses"]


@dataclass(frozen=True)
class ElementSetLosses:
    """Sets of ``k`` grid elements lost at once (see :func:`element_set_losses`).

    Attributes
    ----------
    k : int
        Elements per set.
    ids : tuple of str
        The element IDs the sets draw from.
    sets : ndarray of int, shape (n_sets, k)
        Positions into ``ids`` of each set examined (sorted within a set).
    exact : bool
        Every set was examined (``n_sets == n_possible``); otherwise a random sample.
    n_possible : int
        Number of distinct sets there are.
    seed : int
        Random start of the sample (also recorded when exact).
    n_inputs, n_inputs_after : int, ndarray of int
        Minimum number of inputs before and after each set is lost.
    has_design, controllable_before, controllable_after
        The system's input design before and after each set is lost.
    single_breaking : ndarray of bool
        Per element of ``ids``: its loss alone breaks the design.
    """

    k: int
    ids: tuple[str, ...]
    sets: np.ndarray
    exact: bool
    n_possible: int
    seed: int
    n_states: int
    n_inputs: int
    n_inputs_after: np.ndarray
    has_design: bool
    controllable_before: bool | None
    controllable_after: np.ndarray
    rank_lost: np.ndarray
    unreached: np.ndarray
    single_breaking: np.ndarray = field(repr=False)
    model: str = "given"

    @property
    def n_sets(self) -> int:
        return int(self.sets.shape[0])

    def labels(self, s: int) -> list[str]:
        """Element IDs of set ``s``."""
        return [self.ids[int(i)] for i in self.sets[s]]

    @property
    def costly(self) -> np.ndarray:
        """Sets whose loss raises the minimum number of inputs."""
        return np.flatnonzero(self.n_inputs_after > self.n_inputs)

    @property
    def breaking(self) -> np.ndarray:
        """Sets whose loss breaks the design (empty without a working design)."""
        if not (self.has_design and self.controllable_before):
            return np.zeros(0, np.int64)
        return np.flatnonzero(~self.controllable_after)

    @property
    def breaking_jointly(self) -> np.ndarray:
        """Breaking sets in which no element alone breaks the design."""
        br = self.breaking
        if br.size == 0:
            return br
        alone = self.single_breaking[self.sets[br]].any(axis=1)
        return br[~alone]

    def to_dict(self, *, rows: bool = True) -> dict[str, Any]:
        d: dict[str, Any] = {
            "analysis": "element_set_losses", "model": self.model, "k": self.k,
            "n_elements": len(self.ids), "n_sets": self.n_sets,
            "n_possible_sets": self.n_possible, "sampled": not self.exact,
            "seed": self.seed, "n_inputs": self.n_inputs,
            "n_costly": int(self.costly.size), "has_design": self.has_design,
            "controllable_before": self.controllable_before,
            "n_breaking": int(self.breaking.size),
            "n_breaking_jointly": int(self.breaking_jointly.size),
            "breaking_jointly": [self.labels(s) for s in self.breaking_jointly.tolist()]}
        if rows:
            d["sets"] = [{"elements": self.labels(s),
                          "n_inputs_after": int(self.n_inputs_after[s]),
                          **({"controllable_after": bool(self.controllable_after[s])}
                             if self.has_design else {})}
                         for s in range(self.n_sets)]
        return d


def _draw(n: int, k: int, samples: int, seed: int) -> tuple[np.ndarray, bool, int]:
    total = math.comb(n, k)
    if total <= samples:
        sets = np.array(list(itertools.combinations(range(n), k)), np.int64).reshape(-1, k)
        return sets, True, total
    rng = np.random.default_rng(seed)
    seen: set[tuple[int, ...]] = set()
    out: list[tuple[int, ...]] = []
    while len(out) < samples:  # total > samples: distinct sets exist
        t = tuple(sorted(rng.choice(n, size=k, replace=False).tolist()))
        if t not in seen:
            seen.add(t)
            out.append(t)
    return np.array(out, np.int64).reshape(-1, k), False, total


def element_set_losses(system: StructuredSystem, *, k: int = 2, samples: int = 100,
                       seed: int = 0, kinds: Sequence[str] | None = None
                       ) -> ElementSetLosses:
    r"""Lose ``k`` grid elements at once: every set when there are at most ``samples``
    (exact), else ``samples`` distinct sets drawn at random (reproducible with ``seed``).

    Parameters
    ----------
    system : StructuredSystem
        Read from a grid file (it has :attr:`~StructuredSystem.elements`); its inputs,
        if any, are the design to check.
    k : int, default 2
        Elements lost at once (2: N-2).
    samples : int, default 100
        Most sets examined.
    seed : int, default 0
        Random start of the sample.
    kinds : sequence of str, optional
        Element kinds to draw from (default: every kind).

    Returns
    -------
    ElementSetLosses

    Raises
    ------
    OptionError
        No element table; ``k`` or ``samples`` below 1; ``k`` above the number of
        elements; an unknown kind.

    Notes
    -----
    Per set: the minimum number of inputs ``max(n - |M*|, 1)`` [1]_ and the design's
    structural controllability by Lin's conditions [2]_ (generic rank of ``[A B]`` from a
    maximum matching warm-started from the intact one, accessibility by one search).
    O(sets · (n + E)) at worst.

    References
    ----------
    .. [1] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    """
    if k < 1:
        raise OptionError(f"k must be at least 1, found {k!r}.")
    if samples < 1:
        raise OptionError(f"samples must be at least 1, found {samples!r}.")
    eff = element_effects(system)
    table = eff.table
    want = set(kinds) if kinds is not None else set(ELEMENT_KINDS)
    bad = sorted(want - set(ELEMENT_KINDS))
    if bad:
        raise OptionError(f"unknown element kinds {bad}; choose from {', '.join(ELEMENT_KINDS)}.")
    sel = np.array([j for j, t in enumerate(table.kinds) if t in want], np.int64)
    if k > sel.size:
        raise OptionError(f"k = {k} exceeds the number of elements ({sel.size}).")
    sets, exact, total = _draw(int(sel.size), k, samples, seed)
    # couplings by bus pair: lost when every circuit joining the pair is in the set
    node = state_nodes(system, table)
    nb = max(len(table.node_names), 1)
    src, tgt = system.edges()
    nu, nv = node[src], node[tgt]
    lpos = np.flatnonzero((nu >= 0) & (nv >= 0) & (nu != nv))
    lkey = np.minimum(nu[lpos], nv[lpos]) * nb + np.maximum(nu[lpos], nv[lpos])
    order = np.argsort(lkey, kind="stable")
    lkey, lpos = lkey[order], lpos[order]
    circuits = table.pair_counts()

    def branch_links(members: list[int]) -> np.ndarray:
        hit: dict[tuple[int, int], int] = {}
        for j in members:
            for u, v in table.legs(j):
                key = (min(u, v), max(u, v))
                hit[key] = hit.get(key, 0) + 1
        out = []
        for (u, v), c in hit.items():
            if c >= circuits[(u, v)]:
                lo, hi = np.searchsorted(lkey, [u * nb + v, u * nb + v + 1])
                out.append(lpos[lo:hi])
        return np.concatenate(out) if out else np.zeros(0, np.int64)
    A, B = system.A, system.B
    n, m = system.n_states, system.n_inputs
    a_ptr, a_idx = A.indptr.astype(np.int64), A.indices.astype(np.int64)
    rmA, cmA = maximum_matching(a_ptr, a_idx, n)
    has = m > 0
    ab_ptr, ab_idx, n_ab = stack_AB(A, B)
    ab_ptr, ab_idx = ab_ptr.astype(np.int64), ab_idx.astype(np.int64)
    rmAB, cmAB = maximum_matching(ab_ptr, ab_idx, n_ab)
    nb_row = np.diff(B.indptr) if B.nnz else np.zeros(n, np.int64)
    shift = np.repeat(np.concatenate([[0], np.cumsum(nb_row)[:-1]]), np.diff(A.indptr))
    a_in_ab = np.arange(A.nnz, dtype=np.int64) + shift
    Bcsc = B.tocsc()
    At = sp.csr_array((np.arange(A.nnz, dtype=np.float64), A.indices, A.indptr),
                      shape=A.shape).T.tocsr()
    out_ptr, out_idx = At.indptr.astype(np.int64), At.indices.astype(np.int64)
    out_pos = At.data.astype(np.int64)
    link_dead = np.zeros(A.nnz, np.bool_)
    state_dead = np.zeros(n, np.bool_)
    empty = np.zeros(0, np.int64)

    def lost_by(members: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The couplings, states and inputs a set of elements takes out."""
        parts = [eff.of(int(sel[j])) for j in members.tolist()]
        links = np.unique(branch_links([int(sel[j]) for j in members.tolist()]))
        states = np.unique(np.concatenate([p[1] for p in parts] + [empty]))
        inputs = np.unique(np.concatenate([p[2] for p in parts] + [empty]))
        return links.astype(np.int64), states.astype(np.int64), inputs.astype(np.int64)

    def outcomes(groups: list[np.ndarray]
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Per set: minimum inputs, controllable, rank lost, states unreached. The
        matching sizes of every set come from one compiled call for A and one for
        [A B] (a few alternating searches per set from the intact matchings)."""
        g = len(groups)
        lost = [lost_by(members) for members in groups]
        lp, lf = _ragged([x[0] for x in lost])
        sp_, sf = _ragged([x[1] for x in lost])
        n_left = n - np.diff(sp_)
        size_a = matching_sizes_after(a_ptr, a_idx, n, rmA, cmA, lp, lf, sp_, sf, sp_, sf)
        n_d = np.where(n_left > 0, np.maximum(n_left - size_a, 1), 0)  # as _n_d
        ctrl = np.ones(g, bool)
        rank_lost = np.zeros(g, bool)
        unreached = np.zeros(g, np.int64)
        if not has:
            return n_d, ctrl, rank_lost, unreached
        ip, inf = _ragged([x[2] for x in lost])
        dcp, dcf = _concat_ragged(sp_, sf, ip, n + inf)
        size_ab = matching_sizes_after(ab_ptr, ab_idx, n_ab, rmAB, cmAB, lp, a_in_ab[lf],
                                       sp_, sf, dcp, dcf)
        rank_lost[:] = size_ab < n_left
        for i, (links, states, inputs) in enumerate(lost):
            link_dead[links] = True
            state_dead[states] = True
            live = np.setdiff1d(np.arange(m), inputs)
            start = np.unique(np.concatenate(
                [Bcsc.indices[Bcsc.indptr[j]:Bcsc.indptr[j + 1]] for j in live.tolist()]
                or [empty])).astype(np.int64)
            reached = _reached(out_ptr, out_idx, out_pos, link_dead, state_dead, start)
            link_dead[links] = False
            state_dead[states] = False
            unreached[i] = n_left[i] - reached
            ctrl[i] = (not rank_lost[i]) and reached == n_left[i]
        return n_d, ctrl, rank_lost, unreached

    b_nd, b_ctrl, _, _ = outcomes([np.zeros(0, np.int64)])
    base = (int(b_nd[0]), bool(b_ctrl[0]))
    ok_before = base[1] if has else None
    single = np.zeros(sel.size, bool)
    if has and ok_before:
        ones = np.unique(sets)
        single[ones] = ~outcomes([np.array([j], np.int64) for j in ones.tolist()])[1]
    after, ctrl, rank_lost, unreached = outcomes(list(sets))
    return ElementSetLosses(k=k, ids=tuple(table.ids[j] for j in sel.tolist()), sets=sets,
                            exact=exact, n_possible=total, seed=seed, n_states=n,
                            n_inputs=base[0], n_inputs_after=after, has_design=has,
                            controllable_before=ok_before, controllable_after=ctrl,
                            rank_lost=rank_lost, unreached=unreached,
                            single_breaking=single, model=system.model)
