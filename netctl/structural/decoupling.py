"""Disturbance decoupling for structured systems, and the generic transfer-matrix rank.

Model ``dx/dt = A x + B u + E w``, regulated outputs ``z = H x`` (DESIGN.md, "Disturbances,
outputs and stations"). Can some feedback keep every disturbance ``w`` away from ``z``?
Two questions, answered separately:

* **state feedback** ``u = F x`` (the disturbance is not measured);
* **measured disturbance** ``u = F x + G w`` (feedforward from a measured disturbance).

Both are answered from linkings (vertex-disjoint path families, :mod:`netctl.graph.linking`)
in the digraph on inputs, disturbances, states and regulated outputs: the size and the least
total length (states on the paths) of maximum linkings ``U -> Z`` and ``U u W -> Z``.

References
----------
.. [1] C. Commault, J.-M. Dion, A. Perez, "Disturbance rejection for structured systems",
   IEEE Trans. Automatic Control 36(7):884-887, 1991. doi:10.1109/9.85067
.. [2] J. W. van der Woude, "A graph-theoretic characterization for the rank of the
   transfer matrix of a structured system", Math. Control Signals Systems 4:33-40, 1991.
   doi:10.1007/BF02551379
.. [3] W. M. Wonham, *Linear Multivariable Control: a Geometric Approach*, 3rd ed.,
   Springer, 1985, ch. 4 (the disturbance decoupling problem; ``im E`` in ``V*``).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import Pattern, coo_pattern, hstack_patterns, transpose_pattern
from netctl.graph.components import hops_from
from netctl.graph.linking import (
    Linking,
    LinkingGraph,
    extension,
    linking_graph,
    maximum_linking,
    minimum_separator,
)
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["DecouplingAnswer", "DisturbanceReach", "DecouplingFix", "DecouplingReport",
           "TransferRank", "decoupling", "transfer_rank"]

STATE_FEEDBACK = "state feedback u = F x (disturbance not measured)"
MEASURED = "measured disturbance u = F x + G w (feedforward allowed)"


def _outputs(system: StructuredSystem, outputs: str) -> tuple[Pattern, Sequence[str]]:
    """The stored CSR arrays of ``H`` or ``C`` (no scipy array is built: a small system is
    analysed without importing scipy, issue 15) and the outputs' names."""
    if outputs == "regulated":
        return system.pattern("H"), system.regulated_names
    if outputs == "measured":
        return system.pattern("C"), system.output_names
    raise ValueError(f"outputs must be 'regulated' or 'measured', found {outputs!r}.")


def _graph(system: StructuredSystem, Z: Pattern, extra_inputs: np.ndarray | None = None
           ) -> LinkingGraph:
    """Sources: the inputs, then the disturbances, then one dedicated source per state in
    ``extra_inputs`` (candidate added inputs)."""
    n = system.n_states
    S = hstack_patterns(system.pattern("B"), system.pattern("E"))
    if extra_inputs is not None and extra_inputs.size:
        k = extra_inputs.size
        S = hstack_patterns(S, coo_pattern(extra_inputs, np.arange(k), None, (n, k),
                                           count=False)[0])
    S = transpose_pattern(S)  # row j: the states source j enters (sorted)
    At = transpose_pattern(system.pattern("A"))  # row u: the successors of state u
    return linking_graph(n, S.indptr, S.indices, At.indptr, At.indices, Z.indptr, Z.indices)


@dataclass(frozen=True)
class TransferRank(ResultTables):
    """Generic rank of the transfer matrix ``C (sI - A)^{-1} B`` (or ``H (sI-A)^{-1} B``).

    ``rank`` = size of a maximum linking inputs -> outputs [2]_; ``length`` = the least
    total number of states on such a linking (the sum of the generic orders of the
    infinite zeros, van der Woude 1991). ``paths`` lists one such linking by names.
    """

    rank: int
    length: int
    outputs: str
    paths: tuple[tuple[str, ...], ...]

    _frame_rows = "summary"

    def to_dict(self) -> dict[str, Any]:
        return {"rank": self.rank, "least_total_length": self.length,
                "outputs": self.outputs, "linking": [list(p) for p in self.paths]}


def _path_names(system: StructuredSystem, L: Linking, source_names: Sequence[str],
                sink_names: Sequence[str]) -> tuple[tuple[str, ...], ...]:
    out = []
    for p in range(L.size):
        states = L.path_states[L.path_ptr[p]:L.path_ptr[p + 1]]
        out.append((source_names[int(L.path_source[p])], *system.names_of(states),
                    sink_names[int(L.path_sink[p])]))
    return tuple(out)


def transfer_rank(system: StructuredSystem, *, outputs: str = "measured") -> TransferRank:
    """Generic rank of ``C (sI - A)^{-1} B`` (``outputs="measured"``) or of
    ``H (sI - A)^{-1} B`` (``outputs="regulated"``).

    Notes
    -----
    The generic rank equals the size of a maximum linking from the inputs to the outputs
    in the system digraph (paths sharing no input, state or output; self-loops never on a
    path) [1]_. Computed by min-cost max-flow on the node-split graph; one of possibly many
    maximum linkings is listed.

    References
    ----------
    .. [1] J. W. van der Woude, "A graph-theoretic characterization for the rank of the
       transfer matrix of a structured system", Math. Control Signals Systems 4:33-40,
       1991. doi:10.1007/BF02551379

    Examples
    --------
    >>> from netctl.system import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], inputs=[0], outputs=[2])
    >>> transfer_rank(s).rank
    1
    """
    Z, znames = _outputs(system, outputs)
    g = _graph(system, Z)
    L = maximum_linking(g, sources=np.arange(system.n_inputs))
    return TransferRank(L.size, L.length, outputs,
                        _path_names(system, L, list(system.input_names), znames))


@dataclass(frozen=True)
class DecouplingAnswer:
    """The answer to one question (``question`` says which).

    ``failing`` lists the disturbances that cannot be decoupled even on their own."""

    question: str
    solvable: bool
    failing: np.ndarray


@dataclass(frozen=True)
class DisturbanceReach:
    """How fast one disturbance and the inputs reach each regulated output it reaches:
    ``distance[i]`` / ``input_distance[i]`` = fewest states on a path to ``outputs[i]``
    from the disturbance / from any input (``-1``: no input reaches that output)."""

    disturbance: int
    outputs: np.ndarray
    distance: np.ndarray
    input_distance: np.ndarray


@dataclass(frozen=True)
class DecouplingFix:
    """One smallest change that makes the disturbances decouplable: ``kind`` is
    ``"input"`` (one more dedicated input on ``state``) or ``"measure"`` (measure the
    disturbances and feed them forward); ``solves`` names the questions it answers yes."""

    kind: str
    state: int
    solves: tuple[str, ...]


@dataclass(frozen=True)
class DecouplingReport(ResultTables):
    """Outcome of :func:`decoupling`.

    Attributes
    ----------
    state_feedback, measured : DecouplingAnswer
        The two questions, answered separately.
    input_rank, input_length : int
        Size and least total length of a maximum linking inputs -> outputs (the rank is
        the generic rank of the transfer matrix from ``u`` to ``z``).
    combined_rank, combined_length : int or None
        The same for inputs and disturbances together (``None`` when the disturbances
        open more paths and ``explain`` was false: it takes a second flow).
    reach : tuple of DisturbanceReach
        For the failing disturbances: which outputs each reaches, and how fast against
        the inputs.
    bottleneck : ndarray of int
        A minimum set of states every path from a disturbance to an output crosses.
    fixes : tuple of DecouplingFix
        Smallest changes found (empty when both questions are answered yes, or when the
        search was not asked for).
    """

    n_states: int
    n_inputs: int
    n_disturbances: int
    n_outputs: int
    outputs: str
    state_feedback: DecouplingAnswer
    measured: DecouplingAnswer
    input_rank: int
    input_length: int
    combined_rank: int | None
    combined_length: int | None
    reach: tuple[DisturbanceReach, ...]
    bottleneck: np.ndarray
    fixes: tuple[DecouplingFix, ...]
    candidates_tried: int
    state_names: Sequence[str] = field(repr=False)
    input_names: Sequence[str] = field(repr=False)
    disturbance_names: Sequence[str] = field(repr=False)
    output_names: Sequence[str] = field(repr=False)

    _frame_rows = "states"
    _frame_sets = ("bottleneck",)

    @property
    def decouplable(self) -> bool:
        """Decouplable by state feedback alone (the stronger property)."""
        return self.state_feedback.solvable

    def reasons(self) -> list[str]:
        """The failures in words."""
        out: list[str] = []
        if self.n_disturbances == 0:
            return ["the system has no disturbances: nothing to decouple."]
        if self.combined_rank is not None and self.combined_rank > self.input_rank:
            out.append(
                f"the disturbances open {self.combined_rank - self.input_rank} more "
                f"independent path(s) to the {self.outputs} outputs than the inputs can "
                f"(maximum linking {self.input_rank} from the inputs, {self.combined_rank} "
                "with the disturbances): no feedback can cancel them.")
        for r in self.reach:
            w = self.disturbance_names[r.disturbance]
            for z, d, du in zip(r.outputs, r.distance, r.input_distance):
                zn = self.output_names[int(z)]
                if du < 0:
                    out.append(f"{w} reaches {zn} through {d} state(s); no input reaches "
                               f"{zn} at all.")
                elif du > d:
                    out.append(f"{w} reaches {zn} through {d} state(s); the nearest input "
                               f"needs {du}: the disturbance arrives sooner than any "
                               "correction.")
                elif du == d:
                    out.append(f"{w} reaches {zn} through {d} state(s), as fast as the "
                               "nearest input: cancelling it needs the disturbance measured.")
                else:
                    out.append(f"{w} reaches {zn} through {d} state(s); the nearest input "
                               f"needs {du}, but its paths are needed elsewhere.")
        if self.bottleneck.size and not self.state_feedback.solvable:
            names = [self.state_names[int(i)] for i in self.bottleneck[:10]]
            more = f" (and {self.bottleneck.size - 10} more)" if self.bottleneck.size > 10 \
                else ""
            out.append("every disturbance path to the outputs crosses "
                       f"{', '.join(names)}{more} (a minimum set of bottleneck states).")
        for f in self.fixes:
            if f.kind == "input":
                out.append(f"fix: one more input on {self.state_names[f.state]} solves the "
                           f"{' and the '.join(q.split(' u =')[0] for q in f.solves)} "
                           "question(s).")
            else:
                ws = ", ".join(self.disturbance_names[int(j)]
                               for j in self.state_feedback.failing)
                out.append(f"fix: measure {ws} and feed it forward (the measured-disturbance "
                           "question is answered yes).")
        if not self.state_feedback.solvable and self.candidates_tried and \
                not any(f.kind == "input" and STATE_FEEDBACK in f.solves for f in self.fixes):
            out.append(f"no single added input solves state feedback: {self.candidates_tried} "
                       "eligible state(s) nearest the affected outputs were tried (states "
                       "marked actuator = false are not).")
        return out

    def to_dict(self) -> dict[str, Any]:
        def answer(a: DecouplingAnswer) -> dict[str, Any]:
            return {"question": a.question, "solvable": a.solvable,
                    "failing_disturbances": [self.disturbance_names[int(i)]
                                             for i in a.failing]}
        return {
            "outputs": self.outputs,
            "n_states": self.n_states, "n_inputs": self.n_inputs,
            "n_disturbances": self.n_disturbances, "n_outputs": self.n_outputs,
            "state_feedback": answer(self.state_feedback),
            "measured_disturbance": answer(self.measured),
            "input_linking": {"size": self.input_rank, "least_total_length": self.input_length},
            "combined_linking": {"size": self.combined_rank,
                                 "least_total_length": self.combined_length},
            "reach": [{"disturbance": self.disturbance_names[r.disturbance],
                       "outputs": [{"output": self.output_names[int(z)], "states": int(d),
                                    "nearest_input_states": int(du) if du >= 0 else None}
                                   for z, d, du in zip(r.outputs, r.distance,
                                                       r.input_distance)]}
                      for r in self.reach],
            "bottleneck_states": [self.state_names[int(i)] for i in self.bottleneck],
            "fixes": [{"kind": f.kind,
                       "state": self.state_names[f.state] if f.kind == "input" else None,
                       "solves": list(f.solves)} for f in self.fixes],
            "candidates_tried": self.candidates_tried,
            "reasons": self.reasons(),
        }


def _answer(g: LinkingGraph, m: int, q: int, sources: np.ndarray | None = None
            ) -> tuple[Linking, bool, bool, bool, int]:
    """(linking from the inputs, grows, state feedback ok, measured ok, saving)."""
    srcs = np.arange(m) if sources is None else sources
    L = maximum_linking(g, sources=srcs, paths=False)
    grows, saving = extension(g, L, np.arange(m, m + q))
    return L, grows, (not grows and saving < 0), (not grows and saving <= 0), saving


def _distances(system: StructuredSystem, Z: Pattern, entry: np.ndarray) -> np.ndarray:
    """Fewest states on a path from the states ``entry`` to each output (-1: none)."""
    r = Z.shape[0]
    if entry.size == 0 or r == 0:
        return np.full(r, -1, np.int64)
    At = transpose_pattern(system.pattern("A"))  # row u: the successors of state u
    hops = hops_from(At.indptr, At.indices, entry)
    d = np.where(hops >= 0, hops + 1, -1)  # an entry state is a path of 1 state
    out = np.full(r, -1, np.int64)
    for t in range(r):
        reads = d[Z.indices[Z.indptr[t]:Z.indptr[t + 1]]]
        reads = reads[reads >= 0]
        if reads.size:
            out[t] = int(reads.min())
    return out


def decoupling(system: StructuredSystem, *, outputs: str = "regulated", explain: bool = True,
               fixes: bool = True, max_candidates: int = 200) -> DecouplingReport:
    """Can feedback keep every disturbance from reaching the outputs (generically)?

    Parameters
    ----------
    system : StructuredSystem
    outputs : {"regulated", "measured"}
        Decouple from the regulated outputs ``z = H x`` (default) or from ``y = C x``.
    explain : bool
        Name the failing disturbances, how fast they reach which outputs against the
        inputs, and a minimum bottleneck set of states.
    fixes : bool
        Search the smallest fix when a question is answered no: one more dedicated input
        on a state (up to ``max_candidates`` states nearest the outputs the failing
        disturbances reach, each re-checked), or measuring the disturbances.

    Notes
    -----
    Let ``rho`` / ``ell`` be the size / least total length (states on the paths) of maximum
    linkings in the digraph on inputs, disturbances, states and outputs (paths share no
    vertex; self-loops are never on a path). Generically [1]_:

    * measured disturbance (``u = F x + G w``) is solvable iff
      ``rho(U -> Z) = rho(U+W -> Z)`` and ``ell(U -> Z) = ell(U+W -> Z)``;
    * state feedback (``u = F x``) is solvable iff the same holds with every path that
      starts at a disturbance counted one state shorter: the inputs must reach the outputs
      strictly faster than the disturbances.

    Equal sizes alone are not enough: in ``u -> x0 -> x1 -> z`` with ``w -> x1`` both sizes
    are 1 but the disturbance arrives first. Both rules were checked against Wonham's
    geometric test (``im E`` in ``V*`` resp. ``V* + im B``) on thousands of random systems
    (tests/structural/test_decoupling.py). Cost: one min-cost max-flow from the inputs
    (primal-dual, unit capacities) and one Dijkstra for the disturbances, plus one Dijkstra
    per disturbance to name the failing ones; one breadth-first search per failing
    disturbance (and one from the inputs) for how fast each reaches the outputs.

    References
    ----------
    .. [1] C. Commault, J.-M. Dion, A. Perez, "Disturbance rejection for structured
       systems", IEEE Trans. Automatic Control 36(7):884-887, 1991. doi:10.1109/9.85067
    .. [2] W. M. Wonham, *Linear Multivariable Control: a Geometric Approach*, Springer,
       1985, ch. 4.

    Examples
    --------
    >>> from netctl.system import StructuredSystem
    >>> s = StructuredSystem.from_edges([0], [1], inputs=[0])   # u -> x0 -> x1
    >>> s = s.with_disturbances({"w": [1]}).with_regulated({"z": [1]})
    >>> r = decoupling(s)
    >>> r.state_feedback.solvable, r.measured.solvable
    (False, False)
    """
    if not isinstance(max_candidates, (int, np.integer)) or max_candidates < 0:
        raise ValueError(f"max_candidates must be an integer >= 0, found {max_candidates!r}.")
    Z, znames = _outputs(system, outputs)
    n, m, q = system.n_states, system.n_inputs, system.n_disturbances
    g = _graph(system, Z)
    L, grows, sf_ok, md_ok, saving = _answer(g, m, q)
    c_rank: int | None
    c_len: int | None
    if grows and explain:
        Lc = maximum_linking(g, paths=False)
        c_rank, c_len = Lc.size, Lc.length
    elif grows:  # a second flow only to explain; the answers do not need it
        c_rank, c_len = None, None
    elif saving > 0:
        c_rank, c_len = L.size, L.length - saving
    else:
        c_rank, c_len = L.size, L.length
    sf_fail: list[int] = []
    md_fail: list[int] = []
    if not (sf_ok and md_ok):
        for j in range(q):
            gr, sv = extension(g, L, np.array([m + j]))
            if gr or sv >= 0:
                sf_fail.append(j)
            if gr or sv > 0:
                md_fail.append(j)
    reach: list[DisturbanceReach] = []
    bottleneck = np.zeros(0, np.int64)
    if explain and sf_fail:
        d_in = _distances(system, Z, system.driven_states())
        Et = transpose_pattern(system.pattern("E"))  # row j: the states disturbance j enters
        for j in sf_fail[:20]:
            entry = Et.indices[Et.indptr[j]:Et.indptr[j + 1]].astype(np.int64)
            d_w = _distances(system, Z, entry)
            hit = np.flatnonzero(d_w >= 0)
            reach.append(DisturbanceReach(j, hit, d_w[hit], d_in[hit]))
        bottleneck = minimum_separator(g, sources=m + np.asarray(sf_fail))
    found: list[DecouplingFix] = []
    tried = 0
    if fixes and not sf_ok:
        if md_ok:
            found.append(DecouplingFix("measure", -1, (MEASURED,)))
        cand = _candidates(system, Z, reach, sf_fail, max_candidates)
        tried = int(cand.size)
        if cand.size:
            gx = _graph(system, Z, cand)
            for c in range(cand.size):
                srcs = np.concatenate([np.arange(m), [m + q + c]])
                _, _, sf_c, md_c, _ = _answer(gx, m, q, srcs)
                solves = tuple(qq for qq, ok in ((STATE_FEEDBACK, sf_c), (MEASURED, md_c))
                               if ok)
                if sf_c or (md_c and not md_ok):
                    found.append(DecouplingFix("input", int(cand[c]), solves))
                if len(found) >= 5:
                    break
    return DecouplingReport(
        n, m, q, Z.shape[0], outputs,
        DecouplingAnswer(STATE_FEEDBACK, sf_ok, np.asarray(sf_fail, np.int64)),
        DecouplingAnswer(MEASURED, md_ok, np.asarray(md_fail, np.int64)),
        L.size, L.length, c_rank, c_len, tuple(reach), bottleneck, tuple(found), tried,
        system.state_names, system.input_names, system.disturbance_names, znames)


def _candidates(system: StructuredSystem, Z: Pattern, reach: list[DisturbanceReach],
                failing: list[int], limit: int) -> np.ndarray:
    """States where one added input might help: those that reach an output some failing
    disturbance reaches, nearest first (ties by index); states marked ``actuator = false``
    in the node table are left out."""
    n = system.n_states
    if limit == 0 or n == 0:
        return np.zeros(0, np.int64)
    outs = np.unique(np.concatenate([r.outputs for r in reach])) if reach else \
        np.arange(Z.shape[0])
    reads = np.unique(np.concatenate([Z.indices[Z.indptr[t]:Z.indptr[t + 1]] for t in outs])
                      ) if outs.size else np.zeros(0, np.int64)
    if reads.size == 0:
        return np.zeros(0, np.int64)
    A = system.pattern("A")  # row v: the states with an edge into v (walk backwards)
    d = hops_from(A.indptr, A.indices, reads.astype(np.int64))
    ok = d >= 0
    elig = system.nodes.get("actuator")
    if elig is not None:
        ok &= np.asarray(elig, bool)
    idx = np.flatnonzero(ok)
    order = np.lexsort((idx, d[idx]))
    return idx[order][:limit].astype(np.int64)
