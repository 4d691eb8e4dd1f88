"""Structurally fixed modes under decentralized control (control stations).

Each control station reads only its own measured outputs and drives only its own inputs;
its feedback links run from each of its outputs to each of its inputs. A mode is *fixed*
when no such block-diagonal feedback ``u = K y`` moves it. For structured systems the
question has a graph answer [1]_ [2]_: the arrangement has no structurally fixed modes iff

(i) every state lies in a strong component of the *closed-loop* digraph (links of ``A``,
    ``B``, ``C`` and the stations' feedback links) that holds a feedback link, and
(ii) for every subset ``I`` of the stations (``J`` the others; the empty and the full
    subset included) the generic rank of ``[[A, B_I], [C_J, 0]]`` is at least ``n``, the
    diagonal of ``A`` counted where the model has self-loops.

One station holding every input and output reduces (i) to input- and output-accessibility
and (ii) to no dilation in ``[A B]`` and ``[A; C]``: structural controllability and
observability.

References
----------
.. [1] M. E. Sezer, D. D. Šiljak, "Structurally fixed modes", Systems & Control Letters
   1(1):60-64, 1981. doi:10.1016/S0167-6911(81)80014-2
.. [2] V. Pichai, M. E. Sezer, D. D. Šiljak, "A graph-theoretic characterization of
   structurally fixed modes", Automatica 20(2):247-250, 1984.
   doi:10.1016/0005-1098(84)90033-5
.. [3] S.-H. Wang, E. J. Davison, "On the stabilization of decentralized control
   systems", IEEE Trans. Automatic Control 18(5):473-478, 1973.
   doi:10.1109/TAC.1973.1100362
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl._csr import Pattern, coo_pattern
from netctl._jit import njit

from netctl.graph.components import strongly_connected_components
from netctl.stations import Station, check_stations
from netctl.system import StructuredSystem
from netctl.tables import ResultTables

__all__ = ["FixedModesReport", "StationChange", "fixed_modes", "MAX_LOOP_STATIONS"]

#: Default bound on the stations that close a loop: condition (ii) visits 2**L subsets.
MAX_LOOP_STATIONS = 20


# ------------------------------------------------------------------ condition (i)
def _coords(M: Pattern) -> tuple[np.ndarray, np.ndarray]:
    """Row and column of every stored entry (CSR order, as ``M.tocoo()``)."""
    return np.repeat(np.arange(M.shape[0], dtype=np.int64), np.diff(M.indptr)), M.indices


def _unclosed(A: Pattern, B: Pattern, C: Pattern,
              stations: Sequence[Station]) -> list[np.ndarray]:
    """State groups (strong components of the closed-loop digraph holding no feedback
    link), each sorted; groups ordered by smallest state."""
    n, m, p = A.shape[0], B.shape[1], C.shape[0]
    (a_r, a_c), (b_r, b_c), (c_r, c_c) = _coords(A), _coords(B), _coords(C)
    src = [a_c, n + b_c, c_c]
    dst = [a_r, b_r, n + m + c_r]
    for st in stations:
        if st.inputs and st.outputs:
            yy, uu = np.meshgrid(np.asarray(st.outputs), np.asarray(st.inputs))
            src.append(n + m + yy.ravel())
            dst.append(n + uu.ravel())
    s = np.concatenate(src).astype(np.int64)
    d = np.concatenate(dst).astype(np.int64)
    N = n + m + p
    G = coo_pattern(s, d, None, (N, N), count=False)[0]
    _, labels = strongly_connected_components(G.indptr, G.indices)
    closed = np.zeros(labels.max() + 1 if N else 0, bool)
    closed[labels[n:n + m]] = True  # a component holding an input holds a feedback link
    bad = np.flatnonzero(~closed[labels[:n]])
    if bad.size == 0:
        return []
    order = np.argsort(labels[bad], kind="stable")
    lab = labels[bad][order]
    cuts = np.flatnonzero(np.diff(lab)) + 1
    groups = [np.sort(g) for g in np.split(bad[order], cuts)]
    return sorted(groups, key=lambda g: int(g[0]))


# ------------------------------------------------------------------ condition (ii)
@njit(cache=True, nogil=True)
def _augment(r, ptr, idx, col_on, mate_r, mate_c, stamp, tag, stack, pos):  # pragma: no cover
    """Kuhn's augmenting search from the free row ``r`` over active columns."""
    top = 0
    stack[0] = r
    pos[0] = ptr[r]
    while top >= 0:
        v = stack[top]
        advanced = False
        while pos[top] < ptr[v + 1]:
            c = idx[pos[top]]
            pos[top] += 1
            if not col_on[c] or stamp[c] == tag:
                continue
            stamp[c] = tag
            w = mate_c[c]
            if w < 0:  # free column: flip the path
                for lv in range(top, -1, -1):  # level lv took column idx[pos[lv] - 1]
                    row = stack[lv]
                    cc = idx[pos[lv] - 1]
                    mate_r[row] = cc
                    mate_c[cc] = row
                return True
            top += 1
            stack[top] = w
            pos[top] = ptr[w]
            advanced = True
            break
        if not advanced:
            top -= 1
    return False


@njit(cache=True, nogil=True)
def _scan(ptr, idx, n, row_on, col_on, in_ptr, in_idx, out_ptr, out_idx, stop_below,
          ):  # pragma: no cover - compiled
    """Generic rank of [[A, B_I], [C_J, 0]] for every subset I of the L loop stations, in
    Gray-code order with the matching kept between steps. Rows are the n states then the
    outputs; columns the n states then the inputs; ``row_on``/``col_on`` start with every
    loop station in J. Returns (least rank, its subset as a bit mask, subsets visited);
    stops at the first rank below ``stop_below`` when ``stop_below`` > 0."""
    n_rows = ptr.size - 1
    n_cols = col_on.size
    L = in_ptr.size - 1
    mate_r = np.full(n_rows, -1, np.int64)
    mate_c = np.full(n_cols, -1, np.int64)
    stamp = np.zeros(n_cols, np.int64)
    stack = np.empty(n_rows + 1, np.int64)
    pos = np.empty(n_rows + 1, np.int64)
    tag = 0
    size = 0
    for r in range(n_rows):
        if row_on[r]:
            tag += 1
            if _augment(r, ptr, idx, col_on, mate_r, mate_c, stamp, tag, stack, pos):
                size += 1
    best = size
    best_mask = 0
    visited = 1
    mask = 0
    if stop_below > 0 and size < stop_below:
        return best, best_mask, visited
    total = 1 << L
    for t in range(1, total):
        b = 0
        while ((t >> b) & 1) == 0:
            b += 1
        mask ^= (1 << b)
        into_i = (mask >> b) & 1
        if into_i == 1:  # outputs off, inputs on
            for e in range(out_ptr[b], out_ptr[b + 1]):
                r = n + out_idx[e]
                row_on[r] = False
                if mate_r[r] >= 0:
                    mate_c[mate_r[r]] = -1
                    mate_r[r] = -1
                    size -= 1
            for e in range(in_ptr[b], in_ptr[b + 1]):
                col_on[n + in_idx[e]] = True
        else:  # inputs off, outputs on
            for e in range(in_ptr[b], in_ptr[b + 1]):
                c = n + in_idx[e]
                col_on[c] = False
                if mate_c[c] >= 0:
                    mate_r[mate_c[c]] = -1
                    mate_c[c] = -1
                    size -= 1
            for e in range(out_ptr[b], out_ptr[b + 1]):
                row_on[n + out_idx[e]] = True
        for r in range(n_rows):
            if row_on[r] and mate_r[r] < 0:
                tag += 1
                if _augment(r, ptr, idx, col_on, mate_r, mate_c, stamp, tag, stack, pos):
                    size += 1
        visited += 1
        if size < best:
            best = size
            best_mask = mask
            if stop_below > 0 and size < stop_below:
                break
    return best, best_mask, visited


def _rank_condition(A: Pattern, B: Pattern, C: Pattern,
                    stations: Sequence[Station], *, first_failure: bool, max_loop: int
                    ) -> tuple[int, list[int], list[int], int]:
    """(least rank, stations in I, stations in J, subsets visited) over loop stations."""
    n, m, p = A.shape[0], B.shape[1], C.shape[0]
    if m or p:  # [[A, B], [C, 0]], canonical
        (a_r, a_c), (b_r, b_c), (c_r, c_c) = _coords(A), _coords(B), _coords(C)
        M = coo_pattern(np.concatenate([a_r, b_r, n + c_r]),
                        np.concatenate([a_c, n + b_c, c_c]),
                        np.concatenate([A.data, B.data, C.data]), (n + p, n + m),
                        count=False)[0]
    else:
        M = A
    loop = [i for i, st in enumerate(stations) if st.inputs and st.outputs]
    if len(loop) > max_loop:
        raise ValueError(
            f"{len(loop)} stations close a loop; the rank condition visits 2**{len(loop)} "
            f"subsets of them, more than the bound 2**{max_loop}. Merge stations, or raise "
            "max_loop_stations knowingly (the work doubles with each station).")
    row_on = np.zeros(n + p, np.bool_)
    row_on[:n] = True
    col_on = np.zeros(n + m, np.bool_)
    col_on[:n] = True
    for i in loop:  # start: every loop station in J (outputs on, inputs off)
        row_on[n + np.asarray(stations[i].outputs, np.int64)] = True
    in_ptr = np.zeros(len(loop) + 1, np.int64)
    out_ptr = np.zeros(len(loop) + 1, np.int64)
    in_ptr[1:] = np.cumsum([len(stations[i].inputs) for i in loop])
    out_ptr[1:] = np.cumsum([len(stations[i].outputs) for i in loop])
    in_idx = np.array([k for i in loop for k in stations[i].inputs], np.int64)
    out_idx = np.array([k for i in loop for k in stations[i].outputs], np.int64)
    best, mask, visited = _scan(M.indptr.astype(np.int64), M.indices.astype(np.int64), n,
                                row_on, col_on, in_ptr, in_idx, out_ptr, out_idx,
                                n if first_failure else 0)
    in_I = [loop[b] for b in range(len(loop)) if (mask >> b) & 1]
    in_J = [i for i in range(len(stations)) if i not in in_I]
    return int(best), in_I, in_J, int(visited)


# ------------------------------------------------------------------ result
@dataclass(frozen=True)
class StationChange:
    """One change of the arrangement that removes every structurally fixed mode.

    ``kind``: ``"move-output"`` / ``"move-input"`` (``item`` from station ``source`` to
    ``target``), ``"merge"`` (stations ``source`` and ``target``), or ``"add-sensor"``
    (a new measured output on state ``item`` read by station ``target``)."""

    kind: str
    item: int
    source: int
    target: int


@dataclass(frozen=True)
class FixedModesReport(ResultTables):
    """Outcome of :func:`fixed_modes`.

    Attributes
    ----------
    has_fixed_modes : bool
    unclosed : tuple of ndarray
        Condition (i): state groups (strong components of the closed-loop digraph) that
        no station's loop passes through.
    rank_ok : bool
        Condition (ii) holds for every subset of stations.
    least_rank, rank_subset_inputs, rank_subset_outputs
        The least generic rank of ``[[A, B_I], [C_J, 0]]`` found and its subset: the
        stations that contribute their inputs (``I``) and those that contribute their
        outputs (``J``).
    subsets_visited : int
    fixes : tuple of StationChange
    """

    n_states: int
    stations: tuple[Station, ...]
    unclosed: tuple[np.ndarray, ...]
    rank_ok: bool
    least_rank: int
    rank_subset_inputs: tuple[int, ...]
    rank_subset_outputs: tuple[int, ...]
    subsets_visited: int
    unassigned_inputs: np.ndarray
    unassigned_outputs: np.ndarray
    fixes: tuple[StationChange, ...]
    candidates_tried: int
    state_names: Sequence[str] = field(repr=False)
    input_names: Sequence[str] = field(repr=False)
    output_names: Sequence[str] = field(repr=False)

    _frame_rows = "states"
    _frame_sets = ("unclosed_states",)

    @property
    def unclosed_states(self) -> np.ndarray:
        """Every state of the :attr:`unclosed` groups (on no station's loop), sorted."""
        if not self.unclosed:
            return np.zeros(0, np.int64)
        return np.sort(np.concatenate(self.unclosed)).astype(np.int64)

    @property
    def has_fixed_modes(self) -> bool:
        return bool(self.unclosed) or not self.rank_ok

    def _st(self, i: int) -> str:
        return self.stations[i].name

    def describe(self, f: StationChange) -> str:
        """One change in words."""
        if f.kind == "move-output":
            return (f"move the sensor {self.output_names[f.item]} from station "
                    f"{self._st(f.source)} to station {self._st(f.target)}")
        if f.kind == "move-input":
            return (f"move the input {self.input_names[f.item]} from station "
                    f"{self._st(f.source)} to station {self._st(f.target)}")
        if f.kind == "merge":
            return f"merge stations {self._st(f.source)} and {self._st(f.target)}"
        return (f"add a sensor on {self.state_names[f.item]} read by station "
                f"{self._st(f.target)} (one more loop)")

    def reasons(self) -> list[str]:
        out = []
        for g in self.unclosed:
            names = [self.state_names[int(i)] for i in g[:8]]
            more = f" and {g.size - 8} more" if g.size > 8 else ""
            out.append(f"condition (i) fails: no station's loop passes through "
                       f"{', '.join(names)}{more} (a strong component of the closed-loop "
                       "graph without a feedback link): its modes are fixed.")
        if not self.rank_ok:
            ins = ", ".join(self._st(i) for i in self.rank_subset_inputs) or "none"
            outs = ", ".join(self._st(i) for i in self.rank_subset_outputs) or "none"
            out.append(f"condition (ii) fails: with the inputs of stations [{ins}] and the "
                       f"outputs of stations [{outs}], [[A, B_I], [C_J, 0]] has generic rank "
                       f"{self.least_rank} < {self.n_states}: a fixed mode at zero.")
        for f in self.fixes:
            out.append("fix: " + self.describe(f) + ".")
        return out

    def to_dict(self) -> dict[str, Any]:
        return {
            "has_fixed_modes": self.has_fixed_modes,
            "stations": [{"name": s.name, "inputs": [self.input_names[i] for i in s.inputs],
                          "outputs": [self.output_names[i] for i in s.outputs]}
                         for s in self.stations],
            "condition_i": {"holds": not self.unclosed,
                            "unclosed_groups": [[self.state_names[int(i)] for i in g]
                                                for g in self.unclosed]},
            "condition_ii": {"holds": self.rank_ok, "least_rank": self.least_rank,
                             "n_states": self.n_states,
                             "inputs_of": [self._st(i) for i in self.rank_subset_inputs],
                             "outputs_of": [self._st(i) for i in self.rank_subset_outputs],
                             "subsets_visited": self.subsets_visited},
            "unassigned_inputs": [self.input_names[int(i)] for i in self.unassigned_inputs],
            "unassigned_outputs": [self.output_names[int(i)] for i in self.unassigned_outputs],
            "fixes": [{"kind": f.kind, "change": self.describe(f)} for f in self.fixes],
            "candidates_tried": self.candidates_tried,
            "reasons": self.reasons(),
        }


def _holds(A, B, C, stations, max_loop) -> bool:
    if _unclosed(A, B, C, stations):
        return False
    return _rank_condition(A, B, C, stations, first_failure=True,
                           max_loop=max_loop)[0] >= A.shape[0]


def _candidates(system: StructuredSystem, stations: tuple[Station, ...]):
    """Changes in order of size: move one sensor, move one input, merge two stations,
    add one sensor (a new loop)."""
    N = len(stations)
    for s, st in enumerate(stations):
        for y in st.outputs:
            for t in range(N):
                if t != s:
                    yield StationChange("move-output", y, s, t)
    for s, st in enumerate(stations):
        for u in st.inputs:
            for t in range(N):
                if t != s:
                    yield StationChange("move-input", u, s, t)
    for s in range(N):
        for t in range(s + 1, N):
            yield StationChange("merge", -1, s, t)
    elig = system.nodes.get("sensor")
    for x in range(system.n_states):
        if elig is not None and not bool(elig[x]):
            continue
        for t in range(N):
            if stations[t].inputs:
                yield StationChange("add-sensor", x, -1, t)


def _apply(system: StructuredSystem, stations: tuple[Station, ...], f: StationChange
           ) -> tuple[Pattern, list[Station]]:
    C = system.pattern("C")
    st = list(stations)
    if f.kind == "move-output":
        st[f.source] = Station(st[f.source].name, st[f.source].inputs,
                               tuple(y for y in st[f.source].outputs if y != f.item))
        st[f.target] = Station(st[f.target].name, st[f.target].inputs,
                               st[f.target].outputs + (f.item,))
    elif f.kind == "move-input":
        st[f.source] = Station(st[f.source].name,
                               tuple(u for u in st[f.source].inputs if u != f.item),
                               st[f.source].outputs)
        st[f.target] = Station(st[f.target].name, st[f.target].inputs + (f.item,),
                               st[f.target].outputs)
    elif f.kind == "merge":
        a, b = st[f.source], st[f.target]
        st[f.source] = Station(a.name + "+" + b.name, a.inputs + b.inputs,
                               a.outputs + b.outputs)
        del st[f.target]
    else:
        p = C.shape[0]
        rows, cols = _coords(C)  # a new last row reading state f.item
        C = coo_pattern(np.append(rows, p), np.append(cols, int(f.item)),
                        np.append(C.data, 1.0), (p + 1, system.n_states), count=False)[0]
        st[f.target] = Station(st[f.target].name, st[f.target].inputs,
                               st[f.target].outputs + (p,))
    return C, st


def fixed_modes(system: StructuredSystem, stations: Sequence[Station], *,
                fixes: bool = True, max_candidates: int = 2000,
                max_loop_stations: int = MAX_LOOP_STATIONS) -> FixedModesReport:
    """Does the station arrangement have structurally fixed modes, and what removes them?

    Parameters
    ----------
    system : StructuredSystem
        ``A`` with its self-loops as modelled (the diagonal counts), ``B``, ``C``.
    stations : sequence of Station
        Inputs and measured outputs of each station (see
        :func:`netctl.stations.make_stations`). Inputs and outputs in no station are used by
        no controller (listed in the result).
    fixes : bool
        When fixed modes exist, try the smallest changes in this order and re-check each:
        move one sensor to another station, move one input, merge two stations, add one
        sensor on a state read by a station with inputs (at most ``max_candidates``; the
        first five that work are kept).
    max_loop_stations : int
        Condition (ii) visits every subset of the stations that have both inputs and
        outputs (a station with only inputs or only outputs closes no loop and cannot
        change the rank's minimum): ``2**L`` subsets, each a few augmenting searches on the
        kept matching. The default 20 bounds this at about 10^6 subsets; more raises
        ``ValueError``.

    Notes
    -----
    Conditions (i) and (ii) of Sezer & Šiljak (1981) in the graph form of Pichai, Sezer &
    Šiljak (1984) (module docstring). Checked against the numeric test of Wang & Davison
    (1973) on random systems (tests/structural/test_fixed_modes.py). Condition (i) is
    linear (strong components, Tarjan); condition (ii) is exponential in the number of
    loop-closing stations.

    References
    ----------
    .. [1] M. E. Sezer, D. D. Šiljak, "Structurally fixed modes", Systems & Control
       Letters 1(1):60-64, 1981.
    .. [2] V. Pichai, M. E. Sezer, D. D. Šiljak, "A graph-theoretic characterization of
       structurally fixed modes", Automatica 20(2):247-250, 1984.
    .. [3] S.-H. Wang, E. J. Davison, "On the stabilization of decentralized control
       systems", IEEE Trans. Automatic Control 18(5):473-478, 1973.

    Examples
    --------
    >>> from netctl.stations import Station
    >>> from netctl.system import StructuredSystem
    >>> s = StructuredSystem.from_edges([0], [1], inputs=[0], outputs=[1])
    >>> fixed_modes(s, [Station("one", (0,), (0,))]).has_fixed_modes
    False
    >>> fixed_modes(s, [Station("a", (0,), ()), Station("b", (), (0,))]).has_fixed_modes
    True
    """
    stations = tuple(stations)
    check_stations(system, stations)
    A, B, C = system.pattern("A"), system.pattern("B"), system.pattern("C")
    unclosed = _unclosed(A, B, C, stations)
    least, in_I, in_J, visited = _rank_condition(A, B, C, stations, first_failure=False,
                                                 max_loop=max_loop_stations)
    rank_ok = least >= system.n_states
    used_u = {u for st in stations for u in st.inputs}
    used_y = {y for st in stations for y in st.outputs}
    found: list[StationChange] = []
    tried = 0
    if fixes and (unclosed or not rank_ok):
        for f in _candidates(system, stations):
            if tried >= max_candidates or len(found) >= 5:
                break
            tried += 1
            C2, st2 = _apply(system, stations, f)
            try:
                if _holds(A, B, C2, st2, max_loop_stations):
                    found.append(f)
            except ValueError:
                continue
    return FixedModesReport(
        system.n_states, stations, tuple(unclosed), rank_ok, least, tuple(in_I),
        tuple(in_J), visited,
        np.array(sorted(set(range(system.n_inputs)) - used_u), np.int64),
        np.array(sorted(set(range(system.n_outputs)) - used_y), np.int64),
        tuple(found), tried, system.state_names, system.input_names, system.output_names)
