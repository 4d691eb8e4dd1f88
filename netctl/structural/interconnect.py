"""Interconnected subsystems: compose them with ties and check the composite.

A *tie* joins two subsystems. A ``state`` tie ``(S, a) -> (T, b)`` is a link: state ``a``
of ``S`` influences state ``b`` of ``T``. A ``signal`` tie ``(S, y) -> (T, u)`` feeds output
``y`` of ``S`` into input ``u`` of ``T`` (``u = y``): every state ``y`` reads then
influences every state ``u`` acts on, and ``u`` is no longer an external input.

Composite names are ``"<subsystem><separator><name>"`` (separator ``"."`` by default).
Orientation: edge ``u -> v`` iff ``A[v, u] != 0`` (see :mod:`netctl`).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import Pattern, coo_pattern, take, transpose_pattern
from netctl.errors import InvalidSystemError, OptionError, UnknownNameError
from netctl.records import TIE_KINDS, Tie
from netctl.structural.controllability import ControllabilityReport, controllability
from netctl.structural.inputs import minimum_inputs
from netctl.system import StructuredSystem

__all__ = ["TIE_KINDS", "Tie", "Composite", "InterconnectionReport", "compose",
           "interconnection"]

@dataclass(frozen=True)
class Composite:
    """The composed system and where its states and inputs came from."""

    system: StructuredSystem
    subsystem_of_state: np.ndarray  # index into ``subsystems`` per composite state
    subsystems: tuple[str, ...]
    offsets: np.ndarray  # first composite state of each subsystem
    consumed_inputs: tuple[str, ...]  # composite input names fed by signal ties
    approximate: tuple[str, ...]  # labels of signal ties treated as independent links


def _as_tie(t: Tie | Sequence[str]) -> Tie:
    if isinstance(t, Tie):
        tie = t
    else:
        parts = tuple(str(x) for x in t)
        if len(parts) not in (4, 5):
            raise InvalidSystemError(f"a tie needs (from_system, from, to_system, to[, kind]), "
                                     f"found {t!r}.")
        tie = Tie(*parts)
    if tie.kind not in TIE_KINDS:
        raise OptionError(f"tie kind must be one of {', '.join(map(repr, TIE_KINDS))}, found "
                          f"{tie.kind!r} in {tie.label()}.")
    return tie


def _lookup(sys_: StructuredSystem, sysname: str, name: str, kind: str, tie: Tie) -> int:
    try:
        return int(sys_.index_of([name], kind=kind)[0])
    except UnknownNameError as exc:
        raise UnknownNameError(f"tie {tie.label()}: subsystem {sysname!r}: {exc}") from None


def compose(systems: Mapping[str, StructuredSystem], ties: Sequence[Tie | Sequence[str]], *,
            separator: str = ".") -> Composite:
    """Compose named subsystems with ties into one block system.

    Parameters
    ----------
    systems : mapping of name -> StructuredSystem
        Subsystems in order; their states, inputs and outputs are kept, renamed
        ``name<separator>item``.
    ties : sequence of Tie or tuples ``(from_system, from, to_system, to[, kind])``
    separator : str

    Returns
    -------
    Composite

    Notes
    -----
    A signal tie whose output reads one state and whose input acts on one state is one
    link, exactly. Otherwise the coupling block ``b c^T`` is a product of free
    parameters, rank one; it is entered as a full block of independent links, which can
    make the structural verdict optimistic, and the tie is listed in
    ``Composite.approximate``.
    """
    names = list(systems)
    if not names:
        raise InvalidSystemError("compose needs at least one subsystem.")
    for nm in names:
        if separator in nm:
            raise InvalidSystemError(f"subsystem name {nm!r} contains the separator "
                                     f"{separator!r}; rename the subsystem.")
    ts = [_as_tie(t) for t in ties]
    sizes = np.array([systems[nm].n_states for nm in names], np.int64)
    offsets = np.concatenate([[0], np.cumsum(sizes)])
    N = int(offsets[-1])
    pos = {nm: i for i, nm in enumerate(names)}
    # external inputs: every subsystem input not fed by a signal tie
    in_offsets = np.concatenate([[0], np.cumsum([systems[nm].n_inputs for nm in names])])
    consumed = np.zeros(int(in_offsets[-1]), bool)
    rows: list[np.ndarray] = []
    cols: list[np.ndarray] = []
    approx: list[str] = []
    for t in ts:
        for s in (t.from_system, t.to_system):
            if s not in pos:
                raise UnknownNameError(f"tie {t.label()}: no subsystem named {s!r}; the "
                                       f"subsystems are {', '.join(map(repr, names))}.")
        S, T = systems[t.from_system], systems[t.to_system]
        oS, oT = int(offsets[pos[t.from_system]]), int(offsets[pos[t.to_system]])
        if t.kind == "state":
            a = _lookup(S, t.from_system, t.from_name, "state", t)
            b = _lookup(T, t.to_system, t.to_name, "state", t)
            rows.append(np.array([oT + b]))
            cols.append(np.array([oS + a]))
        else:
            y = _lookup(S, t.from_system, t.from_name, "output", t)
            u = _lookup(T, t.to_system, t.to_name, "input", t)
            SC = S.pattern("C")
            read = SC.indices[SC.indptr[y]:SC.indptr[y + 1]].astype(np.int64)
            Bc = transpose_pattern(T.pattern("B"))  # row u: the states input u acts on
            acted = Bc.indices[Bc.indptr[u]:Bc.indptr[u + 1]].astype(np.int64)
            if read.size == 0 or acted.size == 0:
                raise InvalidSystemError(f"tie {t.label()}: the output reads no state or the "
                                         "input acts on no state; nothing to connect.")
            if read.size > 1 or acted.size > 1:
                approx.append(t.label())
            rr, cc = np.meshgrid(oT + acted, oS + read, indexing="ij")
            rows.append(rr.ravel())
            cols.append(cc.ravel())
            consumed[in_offsets[pos[t.to_system]] + u] = True
    blocks_A = _block_diag([systems[nm].pattern("A") for nm in names])
    if rows:
        r = np.concatenate(rows)
        c = np.concatenate(cols)
        extra = coo_pattern(r, c, None, (N, N), count=False)[0]  # each tie link once
        a_rows = np.repeat(np.arange(N, dtype=np.int64), np.diff(blocks_A.indptr))
        e_rows = np.repeat(np.arange(N, dtype=np.int64), np.diff(extra.indptr))
        n_present = int(np.count_nonzero(np.isin(e_rows * max(N, 1) + extra.indices,
                                                 a_rows * max(N, 1) + blocks_A.indices)))
        if n_present:
            raise InvalidSystemError(f"{n_present} tie link(s) duplicate a link already "
                                     "inside a subsystem; list each link once.")
        A = coo_pattern(np.concatenate([a_rows, e_rows]),
                        np.concatenate([blocks_A.indices, extra.indices]),
                        np.concatenate([blocks_A.data, np.ones(extra.nnz)]), (N, N),
                        count=False)[0]
    else:
        A = blocks_A
    Bfull = _block_diag([systems[nm].pattern("B") for nm in names])
    B = take(Bfull, cols=np.flatnonzero(~consumed)) if consumed.any() else Bfull
    Cfull = _block_diag([systems[nm].pattern("C") for nm in names])
    state_names = [f"{nm}{separator}{x}" for nm in names for x in systems[nm].state_names]
    input_names = [f"{nm}{separator}{x}" for nm in names for x in systems[nm].input_names]
    output_names = [f"{nm}{separator}{x}" for nm in names for x in systems[nm].output_names]
    kept_inputs = [x for x, c in zip(input_names, consumed) if not c]
    models = {systems[nm].model for nm in names}
    # disturbances and regulated outputs stay with their subsystem (block diagonal)
    Efull = _block_diag([systems[nm].pattern("E") for nm in names])
    Hfull = _block_diag([systems[nm].pattern("H") for nm in names])
    composite = StructuredSystem(
        A=A, B=B, C=Cfull, state_names=tuple(state_names),
        input_names=tuple(kept_inputs), output_names=tuple(output_names),
        nodes=_stack_nodes([systems[nm] for nm in names]),
        weighted=all(systems[nm].weighted for nm in names),
        model=models.pop() if len(models) == 1 else "mixed", E=Efull, H=Hfull,
        disturbance_names=tuple(f"{nm}{separator}{w}" for nm in names
                                for w in systems[nm].disturbance_names),
        regulated_names=tuple(f"{nm}{separator}{z}" for nm in names
                              for z in systems[nm].regulated_names),
        disturbance_nodes=_stack_tables([systems[nm].disturbance_nodes for nm in names],
                                        [systems[nm].n_disturbances for nm in names]))
    owner = np.repeat(np.arange(len(names), dtype=np.int64), sizes)
    return Composite(system=composite, subsystem_of_state=owner, subsystems=tuple(names),
                     offsets=offsets, consumed_inputs=tuple(x for x, c in
                                                           zip(input_names, consumed) if c),
                     approximate=tuple(approx))


def _block_diag(parts: list[Pattern]) -> Pattern:
    """The block-diagonal matrix of canonical patterns (scipy's ``block_diag``),
    canonical and read-only: each row lies in one block, its columns shifted by the
    widths of the blocks before."""
    data, indices, indptr = [], [], [np.zeros(1, np.int64)]
    n_rows = n_cols = nnz = 0
    for p in parts:
        data.append(p.data)
        indices.append(p.indices + n_cols)
        indptr.append(p.indptr[1:] + nnz)
        n_rows += p.shape[0]
        n_cols += p.shape[1]
        nnz += p.nnz
    return Pattern(np.concatenate(data) if data else np.zeros(0),
                   np.concatenate(indices) if indices else np.zeros(0, np.int64),
                   np.concatenate(indptr), (n_rows, n_cols)).frozen()


def _stack_nodes(parts: list[StructuredSystem]) -> dict[str, np.ndarray]:
    return _stack_tables([p.nodes for p in parts], [p.n_states for p in parts])


def _stack_tables(tables: list[Any], sizes: list[int]) -> dict[str, np.ndarray]:
    """Node tables of the parts one after the other (``None`` where a part lacks a
    column)."""
    cols: list[str] = []
    for t in tables:
        for c in t:
            if c not in cols:
                cols.append(c)
    out = {}
    for c in cols:
        arrs = []
        for t, size in zip(tables, sizes):
            if c in t:
                arrs.append(np.asarray(t[c], dtype=object))
            else:
                arrs.append(np.full(size, None, dtype=object))
        merged = np.concatenate(arrs) if arrs else np.zeros(0, object)
        if all(c in t and t[c].dtype != object for t in tables):
            merged = np.concatenate([t[c] for t in tables])
        out[c] = merged
    return out


@dataclass(frozen=True)
class SubsystemFinding:
    """What the composite does to one subsystem's states (local state names)."""

    name: str
    n_states: int
    n_inputs_own: int
    controllable_alone: bool | None
    n_inputs_min_alone: int
    unreachable: tuple[str, ...]
    in_dilation: tuple[str, ...]
    fix: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        return dict(self.__dict__, unreachable=list(self.unreachable),
                    in_dilation=list(self.in_dilation), fix=list(self.fix))


@dataclass(frozen=True)
class InterconnectionReport:
    """Outcome of :func:`interconnection`."""

    composite: Composite = field(repr=False)
    report: ControllabilityReport | None
    n_inputs_composite: int
    n_inputs_parts: int
    findings: tuple[SubsystemFinding, ...]
    ties: tuple[Tie, ...]

    @property
    def has_inputs(self) -> bool:
        return self.composite.system.n_inputs > 0

    @property
    def controllable(self) -> bool | None:
        """Composite controllable with its external inputs (``None`` without inputs)."""
        return None if self.report is None else self.report.controllable

    def to_dict(self) -> dict[str, Any]:
        s = self.composite.system
        return {
            "analysis": "interconnection",
            "subsystems": list(self.composite.subsystems),
            "n_states": s.n_states,
            "n_links": s.n_links,
            "ties": [{"from_system": t.from_system, "from": t.from_name,
                      "to_system": t.to_system, "to": t.to_name, "kind": t.kind}
                     for t in self.ties],
            "external_inputs": list(s.input_names),
            "consumed_inputs": list(self.composite.consumed_inputs),
            "approximate_ties": list(self.composite.approximate),
            "controllable": self.controllable,
            "n_inputs_composite": self.n_inputs_composite,
            "n_inputs_parts": self.n_inputs_parts,
            "composite_report": None if self.report is None else self.report.to_dict(),
            "by_subsystem": [f.to_dict() for f in self.findings],
        }


def interconnection(systems: Mapping[str, StructuredSystem],
                    ties: Sequence[Tie | Sequence[str]], *, inputs: Sequence[str] | None = None,
                    separator: str = ".") -> InterconnectionReport:
    r"""Compose subsystems and say what the interconnection does to controllability.

    Parameters
    ----------
    systems : mapping of name -> StructuredSystem
        Each subsystem with its own inputs and outputs (if any).
    ties : sequence of Tie or tuples ``(from_system, from, to_system, to[, kind])``
    inputs : sequence of str, optional
        Composite state names (``"sub.state"``) given a dedicated input each; they
        *replace* the subsystems' own external inputs.
    separator : str

    Returns
    -------
    InterconnectionReport
        The composite's structural controllability with its external inputs (Lin [1]_),
        for each subsystem the states no input reaches and the states in the dilation
        region of the composite, the smallest fix (dedicated inputs, by subsystem), and the
        minimum number of inputs of the composite against the sum over the parts
        (Liu et al. [2]_).

    Notes
    -----
    Subsystem states can become unreachable when a signal tie consumes the input that
    reached them, and can fall into a dilation when ties add states that compete for the
    same feeders. Cost: that of :func:`controllability` on the composite plus one
    :func:`minimum_inputs` per subsystem.

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    .. [2] Y.-Y. Liu, J.-J. Slotine, A.-L. Barabási, "Controllability of complex
       networks", Nature 473:167-173, 2011. doi:10.1038/nature10011

    Examples
    --------
    Two paths; the second loses its input to a signal tie from the first's output:

    >>> from netctl import StructuredSystem
    >>> p = StructuredSystem.from_edges([0], [1], inputs=[0]).with_outputs([1])
    >>> r = interconnection({"a": p, "b": p}, [("a", "y:x1", "b", "u:x0", "signal")])
    >>> r.controllable, r.composite.system.input_names
    (True, ('a.u:x0',))
    """
    comp = compose(systems, ties, separator=separator)
    s = comp.system
    if inputs is not None:
        s = s.with_inputs(list(inputs))
        comp = Composite(system=s, subsystem_of_state=comp.subsystem_of_state,
                         subsystems=comp.subsystems, offsets=comp.offsets,
                         consumed_inputs=comp.consumed_inputs, approximate=comp.approximate)
    rep = controllability(s, dimension=False) if s.n_inputs else None
    nd = minimum_inputs(s).n_inputs
    parts = 0
    findings = []
    unreach = np.zeros(s.n_states, bool)
    dil = np.zeros(s.n_states, bool)
    fix = np.zeros(s.n_states, bool)
    if rep is not None:
        unreach[rep.inaccessible] = True
        if rep.dilation is not None:
            dil[rep.dilation.region] = True
        fix[rep.fix] = True
    for i, nm in enumerate(comp.subsystems):
        sub = systems[nm]
        nmin = minimum_inputs(sub).n_inputs
        parts += nmin
        lo, hi = int(comp.offsets[i]), int(comp.offsets[i + 1])
        local = sub.state_names
        findings.append(SubsystemFinding(
            name=nm, n_states=sub.n_states, n_inputs_own=sub.n_inputs,
            controllable_alone=controllability(sub, dimension=False).controllable
            if sub.n_inputs else None,
            n_inputs_min_alone=nmin,
            unreachable=tuple(local[j - lo] for j in np.flatnonzero(unreach[lo:hi]) + lo),
            in_dilation=tuple(local[j - lo] for j in np.flatnonzero(dil[lo:hi]) + lo),
            fix=tuple(local[j - lo] for j in np.flatnonzero(fix[lo:hi]) + lo)))
    return InterconnectionReport(composite=comp, report=rep, n_inputs_composite=nd,
                                 n_inputs_parts=parts, findings=tuple(findings),
                                 ties=tuple(_as_tie(t) for t in ties))
