r"""Actuator and sensor placement under real constraints: eligible sites, costs, budgets,
candidate actuators acting on several states.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a dedicated actuator at state ``i``
adds the input column ``e_i`` to ``B``; a candidate actuator adds one column of ``B``
that may act on several states. Sensors are placed on the dual system (``A^T``, ``C^T``).

Problems solved (see :func:`place_inputs` for the methods and their guarantees):

* **dedicated** -- the cheapest set of eligible states to drive, one input each, that
  makes the system structurally controllable. Exact in polynomial time (one min-cost
  assignment; Pequito, Kar & Aguiar 2016).
* **candidates** -- the cheapest subset of user-given actuator columns (each with a
  cost). NP-hard in general; exact mixed-integer programme (HiGHS through
  :func:`scipy.optimize.milp`) up to :data:`MILP_MAX_VARIABLES` variables, otherwise a
  greedy submodular cover with a proven ratio and a reported gap.
* **best effort** -- when the budget is too small for full control, the affordable
  design of largest generic controllable dimension (Hosoe 1980), exhaustive on small
  cases, otherwise a budgeted greedy with a proven ratio and a reported gap.

Results concern a linear(ized) structural model; they do not replace the operator's
procedures, applicable codes or licensed engineers (see ``netctl.cli.CAUTION``).
"""

from __future__ import annotations

import heapq
import itertools
import math
import os
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.sparse as sp
from numba import njit

from netctl.errors import NetworkFileError, OptionError
from netctl.graph.dm import alternating_reach_rows
from netctl.graph.components import reachable_from
from netctl.graph.matching import maximum_matching, transpose_csr
from netctl.structural._engine import Structure, accessible_states, stack_AB, structure_of
from netctl.system import StructuredSystem

__all__ = [
    "Candidates",
    "DIMENSION_MAX_STATES",
    "EXHAUSTIVE_MAX_CANDIDATES",
    "MILP_MAX_VARIABLES",
    "METHODS",
    "Placement",
    "Sites",
    "candidates_from_sites",
    "parse_candidates",
    "parse_sites",
    "place_inputs",
    "place_sensors",
    "read_candidates",
    "read_sites",
    "sites_from_nodes",
]

#: ``method`` choices of :func:`place_inputs` / :func:`place_sensors`.
METHODS: tuple[str, ...] = ("auto", "exact", "greedy")

#: Largest mixed-integer programme ``method="auto"`` hands to HiGHS (continuous matching
#: variables plus binary actuator variables, after the reduction described in
#: :func:`place_inputs`); larger problems use the greedy. See benchmarks/RESULTS.md.
MILP_MAX_VARIABLES: int = 200_000

#: Largest number of affordable candidates for which the best-effort (budget too small)
#: design is found by trying every affordable subset with ``method="auto"``.
EXHAUSTIVE_MAX_CANDIDATES: int = 12

#: Largest system for which a failing design's generic controllable dimension is
#: reported without being asked for (it costs one min-cost assignment).
DIMENSION_MAX_STATES: int = 20_000

_KINDS = ("actuator", "sensor")
_MAX_LISTED = 20  # infeasible source components spelled out one by one


# ====================================================================== site data
@dataclass(frozen=True)
class Sites:
    """Where actuators (or sensors) may go and what each costs.

    Attributes
    ----------
    kind : {"actuator", "sensor"}
    eligible : ndarray of bool, shape (n,)
        Whether each state may host one.
    cost : ndarray of float, shape (n,)
        Cost of a site; ``inf`` where the state is not eligible ("no site, infinite cost").
    state_names : tuple of str
    source : str
        Where the data came from (a file name, ``"node table"`` or ``"default"``).
    """

    kind: str
    eligible: np.ndarray
    cost: np.ndarray
    state_names: tuple[str, ...] = field(repr=False)
    source: str = "default"

    @property
    def n_eligible(self) -> int:
        return int(np.count_nonzero(self.eligible))

    def to_dict(self) -> dict[str, Any]:
        idx = np.flatnonzero(self.eligible)
        return {"kind": self.kind, "source": self.source, "n_eligible": int(idx.size),
                "sites": {self.state_names[int(i)]: float(self.cost[i]) for i in idx}}


def _check_kind(kind: str) -> None:
    if kind not in _KINDS:
        raise OptionError(f"kind must be one of {', '.join(map(repr, _KINDS))}, found {kind!r}.")


def _make_sites(kind: str, eligible: np.ndarray, cost: np.ndarray, names: Sequence[str],
                source: str) -> Sites:
    eligible = np.asarray(eligible, bool).copy()
    cost = np.where(eligible, np.asarray(cost, np.float64), np.inf)
    eligible.setflags(write=False)
    cost.setflags(write=False)
    return Sites(kind=kind, eligible=eligible, cost=cost, state_names=tuple(names),
                 source=source)


def sites_from_nodes(system: StructuredSystem, *, kind: str = "actuator") -> Sites:
    """Site data from the system's node table (columns ``actuator``/``actuator_cost`` or
    ``sensor``/``sensor_cost``).

    A missing eligibility column means every state is eligible; a missing cost column,
    or a missing (NaN) cost on an eligible state, means unit cost 1.0.

    Raises
    ------
    OptionError
        ``kind`` is not ``"actuator"`` or ``"sensor"``.
    InvalidSystemError
        A cost is negative or infinite on an eligible state.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.structural.placement import sites_from_nodes
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], 3,
    ...     nodes={"actuator": [True, False, True], "actuator_cost": [2.0, 1.0, float("nan")]})
    >>> sites = sites_from_nodes(s)
    >>> sites.eligible.tolist(), sites.cost.tolist()
    ([True, False, True], [2.0, inf, 1.0])
    """
    from netctl.errors import InvalidSystemError

    _check_kind(kind)
    n = system.n_states
    table = system.nodes
    if kind in table:
        col = np.asarray(table[kind])
        eligible = (col.astype(bool) if col.dtype != object else
                    np.array([bool(v) and str(v).strip().lower() not in ("0", "false", "no", "n",
                                                                           "f", "")
                              for v in col], bool))
        source = "node table"
    else:
        eligible = np.ones(n, bool)
        source = "default"
    key = f"{kind}_cost"
    if key in table:
        cost = np.asarray(table[key], np.float64).copy()
        cost[np.isnan(cost)] = 1.0
        source = "node table"
    else:
        cost = np.ones(n)
    bad = eligible & ((cost < 0) | ~np.isfinite(cost))
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise InvalidSystemError(
            f"node table column {key!r}: state {system.state_names[i]!r} has cost "
            f"{float(cost[i])!r}; costs must be finite and >= 0 (mark a state that cannot host one "
            f"with {kind}=false instead).")
    return _make_sites(kind, eligible, cost, system.state_names, source)


def parse_sites(text: str, system: StructuredSystem, *, kind: str = "actuator",
                source: str = "<sites>") -> Sites:
    """Site data from CSV text: a header ``state,cost`` (or ``state``), then one site a line.

    A state not listed cannot host one. ``#`` starts a comment; fields are separated by
    commas, tabs or semicolons. Without a cost column every listed state costs 1.0.

    Raises
    ------
    NetworkFileError
        Naming ``source`` and the line: missing header, unknown state, repeated state,
        a cost that is not a finite number >= 0, too many fields.
    """
    _check_kind(kind)
    n = system.n_states
    eligible = np.zeros(n, bool)
    cost = np.full(n, np.inf)
    header: list[str] | None = None
    seen: dict[int, int] = {}
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        f = [x.strip() for x in _split_fields(line)]
        if header is None:
            low = [x.lower() for x in f]
            if low not in (["state"], ["state", "cost"]):
                raise _err(source, lineno, f"expected the header 'state,cost' (or 'state'), "
                           f"found {line!r}. The first line names the columns; then one "
                           "eligible state a line, e.g. 'pump_3,2.5'.")
            header = low
            continue
        if len(f) != len(header):
            raise _err(source, lineno, f"expected {len(header)} field(s) "
                       f"({','.join(header)}), found {len(f)} in {raw.strip()!r}.")
        name = f[0]
        try:
            i = int(system.index_of([name])[0])
        except KeyError as exc:
            raise _err(source, lineno, f"{exc} List only states of the network.") from None
        if i in seen:
            raise _err(source, lineno, f"state {name!r} is listed twice (first on line "
                       f"{seen[i]}); give each site once.")
        seen[i] = lineno
        c = 1.0
        if len(header) == 2:
            try:
                c = float(f[1])
            except ValueError:
                raise _err(source, lineno, f"the cost {f[1]!r} of state {name!r} is not a "
                           "number; give a decimal number such as 2.5.") from None
            if not np.isfinite(c) or c < 0:
                raise _err(source, lineno, f"the cost {f[1]!r} of state {name!r} must be a "
                           "finite number >= 0; leave a state out to forbid it.")
        eligible[i] = True
        cost[i] = c
    if header is None:
        raise _err(source, None, "the file is empty; expected the header 'state,cost' and "
                   "one eligible state a line.")
    return _make_sites(kind, eligible, cost, system.state_names, str(source))


def read_sites(path: str | os.PathLike[str], system: StructuredSystem, *,
               kind: str = "actuator") -> Sites:
    """Read site data from a CSV file (see :func:`parse_sites`)."""
    from netctl.io._common import read_text

    return parse_sites(read_text(path), system, kind=kind, source=str(path))


def _split_fields(line: str) -> list[str]:
    for sep in (",", "\t", ";"):
        if sep in line:
            return line.split(sep)
    return [line]


def _err(source: object, line: int | None, msg: str) -> NetworkFileError:
    where = f"{source}:{line}" if line is not None else f"{source}"
    return NetworkFileError(f"{where}: {msg}", path=source, line=line)


# ====================================================================== candidates
@dataclass(frozen=True)
class Candidates:
    """Candidate actuators (sensors): each one column of ``B`` (row of ``C``) with a cost.

    Attributes
    ----------
    names : tuple of str
    indptr, indices : ndarray of int64
        CSR of the ``K x n`` incidence: candidate ``k`` acts on (reads) the states
        ``indices[indptr[k]:indptr[k+1]]`` (sorted, unique).
    cost : ndarray of float, shape (K,)
    """

    names: tuple[str, ...]
    indptr: np.ndarray
    indices: np.ndarray
    cost: np.ndarray
    dedicated: bool = False

    @property
    def n_candidates(self) -> int:
        return len(self.names)

    def states_of(self, k: int) -> np.ndarray:
        return self.indices[self.indptr[k]:self.indptr[k + 1]]

    def matrix(self, chosen: np.ndarray, n: int) -> sp.csr_array:
        """The ``n x len(chosen)`` input matrix of the chosen candidates."""
        cols = [self.states_of(int(k)) for k in chosen]
        rows = np.concatenate(cols) if cols else np.zeros(0, np.int64)
        cidx = np.repeat(np.arange(len(cols)), [c.size for c in cols])
        return sp.csr_array((np.ones(rows.size), (rows, cidx)), shape=(n, len(cols)))

    @classmethod
    def from_lists(cls, names: Sequence[str], states: Sequence[Any],
                   cost: Sequence[float], *, dedicated: bool = False) -> Candidates:
        cols = [np.unique(np.asarray(s, np.int64)) for s in states]
        indptr = np.zeros(len(cols) + 1, np.int64)
        np.cumsum([c.size for c in cols], out=indptr[1:])
        indices = np.concatenate(cols) if cols else np.zeros(0, np.int64)
        return cls(names=tuple(str(x) for x in names), indptr=indptr, indices=indices,
                   cost=np.asarray(cost, np.float64), dedicated=dedicated)


def candidates_from_sites(sites: Sites) -> Candidates:
    """One dedicated candidate (a unit column) per eligible site."""
    idx = np.flatnonzero(sites.eligible).astype(np.int64)
    prefix = "u:" if sites.kind == "actuator" else "y:"
    return Candidates(names=tuple(prefix + sites.state_names[int(i)] for i in idx),
                      indptr=np.arange(idx.size + 1, dtype=np.int64), indices=idx,
                      cost=sites.cost[idx].astype(np.float64), dedicated=True)


def parse_candidates(text: str, system: StructuredSystem, *,
                     source: str = "<candidates>") -> Candidates:
    """Candidate actuators from CSV text: header ``name,cost,states``, then one candidate
    a line; ``states`` lists the states it acts on separated by spaces or ``;``,
    e.g. ``valve_2,3.5,t1 t2 t4``.

    Raises
    ------
    NetworkFileError
        Naming ``source`` and the line: missing header, unknown state, repeated name,
        bad cost, a candidate acting on no state.
    """
    names: list[str] = []
    states: list[np.ndarray] = []
    costs: list[float] = []
    header_seen = False
    where: dict[str, int] = {}
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        f = [x.strip() for x in line.split(",")]
        if not header_seen:
            if [x.lower() for x in f] != ["name", "cost", "states"]:
                raise _err(source, lineno, f"expected the header 'name,cost,states', found "
                           f"{line!r}. Then one candidate a line, e.g. 'valve_2,3.5,t1 t2 t4' "
                           "(the states it acts on, separated by spaces or ';').")
            header_seen = True
            continue
        if len(f) != 3:
            raise _err(source, lineno, f"expected 3 fields (name,cost,states), found {len(f)} "
                       f"in {raw.strip()!r}; separate the states with spaces or ';', not ','.")
        name, c_txt, s_txt = f
        if not name:
            raise _err(source, lineno, "the candidate has no name; give one in the first field.")
        if name in where:
            raise _err(source, lineno, f"the candidate name {name!r} is used twice (first on "
                       f"line {where[name]}); names must be unique.")
        try:
            c = float(c_txt)
        except ValueError:
            raise _err(source, lineno, f"the cost {c_txt!r} of {name!r} is not a number; give "
                       "a decimal number such as 3.5.") from None
        if not np.isfinite(c) or c < 0:
            raise _err(source, lineno, f"the cost {c_txt!r} of {name!r} must be a finite "
                       "number >= 0.")
        st_names = [x for x in s_txt.replace(";", " ").split() if x]
        if not st_names:
            raise _err(source, lineno, f"candidate {name!r} acts on no state; list the states "
                       "it acts on in the third field.")
        try:
            idx = system.index_of(st_names)
        except KeyError as exc:
            raise _err(source, lineno, f"candidate {name!r}: {exc}") from None
        where[name] = lineno
        names.append(name)
        states.append(idx)
        costs.append(c)
    if not header_seen:
        raise _err(source, None, "the file is empty; expected the header 'name,cost,states'.")
    if not names:
        raise _err(source, None, "the file lists no candidate; add lines 'name,cost,states'.")
    return Candidates.from_lists(names, states, costs)


def read_candidates(path: str | os.PathLike[str], system: StructuredSystem) -> Candidates:
    """Read candidate actuators (or sensors) from a CSV file (see :func:`parse_candidates`)."""
    from netctl.io._common import read_text

    return parse_candidates(read_text(path), system, source=str(path))


# ====================================================================== result
@dataclass(frozen=True)
class Placement:
    """A placement of actuators (or sensors) and how good it is.

    Attributes
    ----------
    kind : {"inputs", "sensors"}
    problem : {"dedicated", "candidates", "target"}
    method : str
        Which algorithm produced the design: ``"assignment"`` (exact min-cost
        assignment), ``"milp"`` (HiGHS), ``"greedy"``, ``"exhaustive"``,
        ``"target-greedy"`` (Gao et al. 2014).
    feasible : bool
        Some design within the site / candidate constraints meets the goal (full
        controllability, or control of the targets), whatever its cost.
    goal_met : bool
        The returned design meets the goal and the budget.
    best_effort : bool
        The budget was too small: the design maximizes the generic controllable
        dimension among affordable designs instead.
    sites : ndarray of int
        States acted on (read) by the chosen actuators (sensors), sorted.
    chosen : ndarray of int
        Indices of the chosen candidates (for dedicated problems, one per site).
    cost : float
    lower_bound : float or None
        Proven lower bound on the minimum cost (cost problems).
    upper_bound : float or None
        Proven upper bound on the best achievable dimension (best-effort problems).
    optimal : bool
        Proven optimal (``gap == 0``).
    gap : float
        Relative optimality gap: ``(cost - lower_bound) / cost`` for cost problems,
        ``(upper_bound - dimension) / upper_bound`` for best effort; 0 when optimal;
        ``inf`` when infeasible (``null`` in :meth:`to_dict`).
    dimension : int or None
        Generic controllable (observable) dimension of the design (Hosoe); for target
        problems the generic rank of ``C_T [B AB ...]``. ``None`` when the design fails
        and the system has more than :data:`DIMENSION_MAX_STATES` states (the
        dimension is then too costly to report by default).
    goal_dimension : int
        ``n``, or the number of targets.
    verified : bool or None
        Independent check of the design (:func:`netctl.structural.controllability` on the
        system with the design installed; target rank for target problems); ``None``
        when skipped.
    inaccessible : ndarray of int
        States no chosen input reaches (no chosen sensor sees), by that check.
    reasons : tuple of str
        Why the goal cannot be met (infeasible or budget too small).
    guarantee : str
        What the method guarantees.
    """

    kind: str
    problem: str
    method: str
    feasible: bool
    goal_met: bool
    best_effort: bool
    sites: np.ndarray
    chosen: np.ndarray
    cost: float
    lower_bound: float | None
    upper_bound: float | None
    optimal: bool
    gap: float
    dimension: int | None
    goal_dimension: int
    verified: bool | None
    inaccessible: np.ndarray
    reasons: tuple[str, ...]
    guarantee: str
    budget: float | None
    candidates: Candidates = field(repr=False)
    state_names: tuple[str, ...] = field(repr=False)
    targets: np.ndarray | None = None
    model: str = "given"

    def names(self, indices: Any) -> list[str]:
        """State names for state indices."""
        return [self.state_names[int(i)] for i in indices]

    @property
    def site_names(self) -> list[str]:
        return self.names(self.sites)

    def design(self) -> sp.csr_array:
        """The chosen input matrix ``B`` (``n x k``; for sensors the transpose of ``C``)."""
        return self.candidates.matrix(self.chosen, len(self.state_names))

    def apply(self, system: StructuredSystem) -> StructuredSystem:
        """``system`` with the chosen actuators (sensors) added to its existing ones."""
        M = self.design()
        names = [self.candidates.names[int(k)] for k in self.chosen]
        if self.kind == "inputs":
            B = sp.hstack([system.B, M], format="csr") if system.n_inputs else M
            return system.with_inputs(B, names=list(system.input_names) + names)
        C = sp.vstack([system.C, M.T], format="csr") if system.n_outputs else M.T
        return system.with_outputs(C, names=list(system.output_names) + names)

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        word = "actuators" if self.kind == "inputs" else "sensors"
        return {
            "analysis": "placement",
            "kind": self.kind,
            "problem": self.problem,
            "method": self.method,
            "model": self.model,
            "n_states": len(self.state_names),
            "feasible": self.feasible,
            "goal_met": self.goal_met,
            "best_effort": self.best_effort,
            "sites": self.site_names,
            word: [{"name": self.candidates.names[int(k)],
                    "states": self.names(self.candidates.states_of(int(k))),
                    "cost": float(self.candidates.cost[int(k)])} for k in self.chosen],
            "cost": float(self.cost),
            "budget": self.budget,
            "optimal": self.optimal,
            "gap": float(self.gap) if math.isfinite(self.gap) else None,
            "lower_bound": self.lower_bound,
            "upper_bound": self.upper_bound,
            "dimension": self.dimension,
            "goal_dimension": int(self.goal_dimension),
            "targets": None if self.targets is None else self.names(self.targets),
            "verified": self.verified,
            "inaccessible": self.names(self.inaccessible),
            "reasons": list(self.reasons),
            "guarantee": self.guarantee,
        }


# ====================================================================== public entry points
def place_inputs(
    system: StructuredSystem,
    *,
    sites: Sites | None = None,
    candidates: Candidates | None = None,
    budget: float | None = None,
    method: str = "auto",
    time_limit: float = 60.0,
    verify: bool = True,
) -> Placement:
    r"""Cheapest actuator design that makes ``system`` structurally controllable.

    Existing inputs of ``system`` are kept and cost nothing; the design adds to them.

    Parameters
    ----------
    system : StructuredSystem
    sites : Sites, optional
        Eligible states and their costs for dedicated actuators (one input each).
        Default: :func:`sites_from_nodes` (every state eligible at unit cost when the
        node table says nothing).
    candidates : Candidates, optional
        Candidate actuators, each one column of ``B`` acting on one or several states,
        with a cost. When given, ``sites`` is ignored.
    budget : float, optional
        Largest total cost allowed. When the cheapest controlling design costs more, the
        result is the affordable design with the largest generic controllable dimension
        (``best_effort=True``, ``goal_met=False``).
    method : {"auto", "exact", "greedy"}
        ``"auto"``: exact where the problem allows (always for dedicated actuators; the
        MILP up to :data:`MILP_MAX_VARIABLES`; exhaustive best effort up to
        :data:`EXHAUSTIVE_MAX_CANDIDATES`), greedy beyond. ``"exact"`` forces the exact
        method whatever the size (it may take long); ``"greedy"`` forces the greedy.
    time_limit : float, default 60
        Seconds HiGHS may spend on the MILP; when reached, its best design is returned
        with the proven gap.
    verify : bool, default True
        Check the design independently with
        :func:`netctl.structural.controllability`.

    Returns
    -------
    Placement
        ``feasible=False`` (with ``reasons`` naming the states and why) when no design
        within the sites / candidates works at any cost.

    Raises
    ------
    OptionError
        Unknown ``method``; negative or non-finite ``budget``; sites of the wrong kind or
        size.

    Notes
    -----
    **Dedicated actuators (exact, polynomial).** A set ``S`` of driven states works iff
    every source component not already reached holds a state of ``S``, and the rows
    outside ``S`` can be matched into the columns of ``[A B]`` (Lin's theorem). Any
    minimal ``S`` is the unmatched set ``U`` of some maximum matching of ``[A B]`` plus
    one state for each source component ``U`` misses, and ``U`` lies in the
    over-determined Dulmage--Mendelsohn block ``D`` (rows some maximum matching leaves
    unmatched). So netctl solves one min-cost assignment on ``D`` only: rows ``D``;
    columns the in-neighbours of ``D`` (cost 0), one private column per eligible
    state (cost ``c_i``: the state is driven) and one column ``s_k`` per unreached
    source component (cost ``c_i - min_{j in N_k} c_j`` from its eligible states: the
    state is driven and also serves the component), plus the constant
    ``sum_k min_{j in N_k} c_j``. This is the min-cost-flow construction of Pequito, Kar &
    Aguiar [1]_ (REFERENCES.md section 3) restricted to ``D``; it is solved by
    :func:`scipy.sparse.csgraph.min_weight_full_bipartite_matching` (LAPJVsp). A
    forbidden site has no column (infinite cost). Infeasible exactly when an unreached
    source component has no eligible state, or the matching of ``[A B]`` plus all
    eligible sites is not row-perfect (a dilation no eligible site can fix; the witness
    set is reported).

    **Candidate actuators (NP-hard in general).** Exact MILP: binary ``y_k`` per
    candidate; continuous ``x_e in [0, 1]`` per edge of the bipartite graph with rows
    ``D`` and columns their in-neighbours, existing inputs and candidates; every row of
    ``D`` matched once (``sum x = 1``), every state column at most once, candidate
    ``k`` at most ``y_k`` times (rank condition; integral for fixed ``y``, the bipartite
    matching polytope); every unreached source component touched by a chosen candidate
    (accessibility, a set cover); minimize ``sum c_k y_k``. Greedy: the function
    ``g(S)`` = term rank of ``[A B B_S]`` + number of source components touched is
    monotone submodular (a transversal-matroid rank plus a coverage function), and the
    design works iff ``g(S) = n + beta``; cost-effectiveness greedy for submodular set
    cover costs at most ``H(max_k g({k}) - g(empty))`` times the optimum (Wolsey [3]_),
    ``H`` the harmonic number. The reported lower bound is the largest of ``cost / H``,
    the cheapest set of candidates restoring the term rank alone (exact: the columns
    raising the rank form a matroid, whose cheapest basis the greedy in cost order
    finds, Edmonds [6]_) and the cheapest candidate touching each unreached source
    component.

    **Best effort under a budget.** For generic weights the controllable subspace of a
    set of input columns is the sum of their Krylov subspaces, so its dimension --
    generically Hosoe's dimension [2]_ -- is monotone submodular in the set of chosen
    columns. Exhaustive search below :data:`EXHAUSTIVE_MAX_CANDIDATES` affordable
    candidates; otherwise cost-effectiveness greedy plus the best single candidate,
    which reaches ``(1 - 1/e)/2`` of the optimum under a knapsack budget (Khuller, Moss
    & Naor [4]_; from memory) and ``1 - 1/e`` for equal costs (Nemhauser, Wolsey & Fisher
    [5]_). The reported upper bound is the design's dimension plus the best fractional
    knapsack of single-candidate gains (valid by submodularity), capped by the
    dimension with every candidate.

    One optimum of possibly many; ties are broken by state and candidate order.

    References
    ----------
    .. [1] S. Pequito, S. Kar, A. P. Aguiar, "Minimum cost input/output design for
       large-scale linear structural systems", Automatica 68:384-391, 2016.
       arXiv:1407.3327
    .. [2] S. Hosoe, "Determination of generic dimensions of controllable subspaces and
       its application", IEEE TAC 25(6):1192-1196, 1980.
    .. [3] L. A. Wolsey, "An analysis of the greedy algorithm for the submodular set
       covering problem", Combinatorica 2(4):385-393, 1982.
    .. [4] S. Khuller, A. Moss, J. Naor, "The budgeted maximum coverage problem",
       Information Processing Letters 70(1):39-45, 1999.
    .. [5] G. L. Nemhauser, L. A. Wolsey, M. L. Fisher, "An analysis of approximations
       for maximizing submodular set functions I", Math. Programming 14:265-294, 1978.
    .. [6] J. Edmonds, "Matroids and the greedy algorithm", Math. Programming
       1:127-136, 1971.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.structural.placement import place_inputs, parse_sites
    >>> s = StructuredSystem.from_edges([0, 0], [1, 2], 3, state_names=["a", "b", "c"])
    >>> p = place_inputs(s, sites=parse_sites("state,cost\na,5\nb,2\nc,1", s))
    >>> p.site_names, p.cost, p.optimal        # a feeds both; a and one leaf must be driven
    (['a', 'c'], 6.0, True)
    """
    return _place(system, "inputs", sites, candidates, budget, method, time_limit, verify)


def place_sensors(
    system: StructuredSystem,
    *,
    sites: Sites | None = None,
    candidates: Candidates | None = None,
    budget: float | None = None,
    method: str = "auto",
    time_limit: float = 60.0,
    verify: bool = True,
) -> Placement:
    """Cheapest sensor design that makes ``system`` structurally observable.

    The dual of :func:`place_inputs`, computed on ``system.dual()`` (edges reversed, so
    *sink* components each need a sensor). ``sites`` default to the node table's
    ``sensor`` / ``sensor_cost`` columns; ``candidates`` are sensors reading several
    states (rows of ``C``). The check uses :func:`netctl.structural.observability`.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.structural.placement import place_sensors
    >>> p = place_sensors(StructuredSystem.from_edges([0, 1], [1, 2], 3))   # path
    >>> p.site_names, p.goal_met
    (['x2'], True)
    """
    return _place(system, "sensors", sites, candidates, budget, method, time_limit, verify)


# ====================================================================== dispatcher
def _validate(method: str, budget: float | None, time_limit: float) -> None:
    if method not in METHODS:
        raise OptionError(f"unknown method {method!r}; choose one of "
                          f"{', '.join(map(repr, METHODS))}.")
    if budget is not None:
        if isinstance(budget, bool) or not isinstance(budget, (int, float, np.number)) or \
                not np.isfinite(budget) or budget < 0:
            raise OptionError(f"budget must be a finite number >= 0, found {budget!r}; omit it "
                              "for no budget.")
    if not isinstance(time_limit, (int, float)) or not time_limit > 0:
        raise OptionError(f"time_limit must be a number of seconds > 0, found {time_limit!r}.")


def _resolve_candidates(system: StructuredSystem, kind: str, sites: Sites | None,
                        candidates: Candidates | None) -> Candidates:
    site_kind = "actuator" if kind == "inputs" else "sensor"
    n = system.n_states
    if candidates is not None:
        if not isinstance(candidates, Candidates):
            raise OptionError(f"candidates must be a Candidates object (see read_candidates), "
                              f"found {type(candidates).__name__}.")
        c = np.asarray(candidates.cost, np.float64)
        if c.shape != (candidates.n_candidates,) or not np.all(np.isfinite(c)) or np.any(c < 0):
            raise OptionError(f"candidate costs must be one finite number >= 0 per candidate "
                              f"({candidates.n_candidates}), found {c.tolist()[:5]!r}.")
        if candidates.indices.size and int(candidates.indices.max()) >= n:
            raise OptionError(f"candidates refer to state index {int(candidates.indices.max())}"
                              f" but the system has {n} states; build them for this system.")
        return candidates
    if sites is None:
        sites = sites_from_nodes(system, kind=site_kind)
    if not isinstance(sites, Sites):
        raise OptionError(f"sites must be a Sites object (see read_sites / sites_from_nodes), "
                          f"found {type(sites).__name__}.")
    if sites.kind != site_kind:
        raise OptionError(f"these are {sites.kind} sites but {kind} are being placed; pass "
                          f"{site_kind} sites (kind={site_kind!r}).")
    if sites.eligible.shape != (n,):
        raise OptionError(f"sites cover {sites.eligible.size} states but the system has {n}; "
                          "build them for this system.")
    return candidates_from_sites(sites)


def _place(system: StructuredSystem, kind: str, sites: Sites | None,
           candidates: Candidates | None, budget: float | None, method: str,
           time_limit: float, verify: bool) -> Placement:
    _validate(method, budget, time_limit)
    cands = _resolve_candidates(system, kind, sites, candidates)
    work = system if kind == "inputs" else system.dual()
    out = _solve(work, cands, budget, method, float(time_limit))
    return _finish(system, work, kind, cands, out, budget, verify)


@dataclass
class _Outcome:
    problem: str
    method: str
    feasible: bool
    best_effort: bool
    chosen: np.ndarray
    cost: float
    lower_bound: float | None
    upper_bound: float | None
    dimension: int | None
    reasons: list[str]
    guarantee: str


def _solve(work: StructuredSystem, cands: Candidates, budget: float | None, method: str,
           time_limit: float) -> _Outcome:
    A, B = work.A, work.B
    n = work.n_states
    st = structure_of(A)
    prob = _reduce(A, B, st, cands)
    problem = "dedicated" if cands.dedicated else "candidates"
    reasons = _infeasibility(work, prob, cands)
    if reasons:
        out = _Outcome(problem, "none", False, False, np.zeros(0, np.int64), 0.0, None, None,
                       None, reasons, "no design within the given sites or candidates makes "
                       "the system structurally controllable")
        if budget is not None:
            be = _best_effort(work, cands, prob, budget, method)
            be.feasible = False
            be.reasons = reasons
            return be
        return out
    if cands.dedicated and method != "greedy":
        out = _dedicated_assignment(prob, cands)
    elif method == "greedy" or (method == "auto" and prob.milp_size() > MILP_MAX_VARIABLES):
        out = _greedy_cover(prob, cands)
    else:
        out = _milp(prob, cands, time_limit)
    out.problem = problem
    if budget is not None and out.cost > budget * (1 + 1e-12) + 1e-12:
        lb = out.lower_bound if out.lower_bound is not None else 0.0
        be = _best_effort(work, cands, prob, budget, method)
        proven = lb > budget * (1 + 1e-12) + 1e-12
        be.reasons = [
            f"the budget {budget:g} is below the cheapest controlling design found "
            f"(cost {out.cost:g}"
            + (", proven minimal)" if proven and lb >= out.cost * (1 - 1e-9)
               else f"; proven lower bound {lb:g})" if proven
               else f"; a cheaper one may exist: proven lower bound {lb:g})")
            + f"; the design shown reaches generic dimension {be.dimension} of {n}."]
        if not proven:
            be.reasons.append("the budget may suffice for a design the heuristic did not find; "
                              "retry with method='exact'.")
        return be
    return out


# ====================================================================== reduced problem
@dataclass
class _Reduced:
    """The part of the problem where choices matter (see place_inputs Notes)."""

    n: int
    D: np.ndarray               # rows (states) some maximum matching of [A B] leaves unmatched
    deficiency: int             # n - term rank [A B]
    sub_indptr: np.ndarray      # CSR of D rows over the local real columns
    sub_indices: np.ndarray
    n_real: int                 # local real columns (in-neighbours of D in [A B])
    unreached: np.ndarray       # labels of source components no existing input reaches
    comp_slot: np.ndarray       # per component: slot in `unreached`, or -1
    scc: np.ndarray
    cand_D: sp.csr_array        # K x |D| incidence (candidate acts on D row)
    cand_comp: sp.csr_array     # K x len(unreached) incidence
    useful: np.ndarray          # bool per candidate: touches D or an unreached source

    def milp_size(self) -> int:
        return int(self.sub_indices.size + self.cand_D.nnz + self.useful.sum())


def _reduce(A: sp.csr_array, B: sp.csr_array, st: Structure, cands: Candidates) -> _Reduced:
    n = A.shape[0]
    indptr, indices, n_cols = stack_AB(A, B)
    row_match, col_match = maximum_matching(indptr, indices, n_cols)
    deficiency = int(np.count_nonzero(row_match < 0))
    if deficiency:
        D_mask, col_mask = alternating_reach_rows(indptr, indices, n_cols, col_match)
    else:
        D_mask, col_mask = np.zeros(n, bool), np.zeros(n_cols, bool)
    D = np.flatnonzero(D_mask).astype(np.int64)
    col_local = np.full(n_cols, -1, np.int64)
    col_local[col_mask] = np.arange(int(col_mask.sum()))
    lens = np.diff(indptr)[D]
    sub_indptr = np.zeros(D.size + 1, np.int64)
    np.cumsum(lens, out=sub_indptr[1:])
    take = _gather_ranges(indptr, D)
    sub_indices = col_local[indices[take]]
    # source components that no existing input reaches
    driven = np.zeros(st.n_scc, bool)
    if B.nnz:
        driven[st.scc[np.flatnonzero(np.diff(B.indptr))]] = True
    unreached = np.flatnonzero(st.source_scc & ~driven).astype(np.int64)
    comp_slot = np.full(st.n_scc, -1, np.int64)
    comp_slot[unreached] = np.arange(unreached.size)
    K = cands.n_candidates
    krow = np.repeat(np.arange(K, dtype=np.int64), np.diff(cands.indptr))
    d_local = np.full(n, -1, np.int64)
    d_local[D] = np.arange(D.size)
    loc = d_local[cands.indices]
    keep = loc >= 0
    cand_D = sp.csr_array((np.ones(int(keep.sum())), (krow[keep], loc[keep])),
                          shape=(K, D.size))
    slot = comp_slot[st.scc[cands.indices]]
    keep = slot >= 0
    cc = sp.csr_array((np.ones(int(keep.sum())), (krow[keep], slot[keep])),
                      shape=(K, unreached.size))
    cc.sum_duplicates()
    cc.data[:] = 1.0
    for M in (cand_D, cc):
        M.sum_duplicates()
        M.sort_indices()
    useful = (np.diff(cand_D.indptr) > 0) | (np.diff(cc.indptr) > 0)
    return _Reduced(n=n, D=D, deficiency=deficiency, sub_indptr=sub_indptr,
                    sub_indices=sub_indices, n_real=int(col_mask.sum()), unreached=unreached,
                    comp_slot=comp_slot, scc=st.scc, cand_D=cand_D, cand_comp=cc,
                    useful=useful)


def _gather_ranges(indptr: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """Concatenated positions ``indptr[r]:indptr[r+1]`` for the given rows (vectorized)."""
    starts = indptr[rows]
    lens = indptr[rows + 1] - starts
    total = int(lens.sum())
    if total == 0:
        return np.zeros(0, np.int64)
    offs = np.repeat(starts - np.concatenate([[0], np.cumsum(lens)[:-1]]), lens)
    return np.arange(total, dtype=np.int64) + offs


def _segment_sum(values: np.ndarray, indptr: np.ndarray) -> np.ndarray:
    cs = np.concatenate([[0], np.cumsum(values, dtype=np.float64)])
    return cs[indptr[1:]] - cs[indptr[:-1]]


# ====================================================================== infeasibility
def _infeasibility(work: StructuredSystem, prob: _Reduced, cands: Candidates) -> list[str]:
    """Reasons (naming states) why no design within the candidates works."""
    names = work.state_names
    reasons: list[str] = []
    word = "site" if cands.dedicated else "candidate actuator"
    # accessibility: an unreached source component no candidate touches
    touched = np.diff(prob.cand_comp.tocsc().indptr) > 0
    bad_slots = np.flatnonzero(~touched)
    named = np.zeros(prob.n, bool)
    if bad_slots.size:
        bad_comp = np.zeros(prob.scc.max(initial=-1) + 1, bool)
        bad_comp[prob.unreached[bad_slots]] = True
        named = bad_comp[prob.scc]
        states = np.flatnonzero(named)
        groups = np.split(states[np.argsort(prob.scc[states], kind="stable")],
                          np.flatnonzero(np.diff(np.sort(prob.scc[states])))+1)
        for members in groups[:_MAX_LISTED]:
            reasons.append(
                f"no eligible {word} {'is in' if cands.dedicated else 'acts on'} the source "
                f"component {{{_short([names[i] for i in members])}}}: nothing else influences "
                f"these states, so an actuator must act on one of them; "
                + ("make one of them eligible." if cands.dedicated else
                   "add a candidate actuator acting on one of them."))
        if len(groups) > _MAX_LISTED:
            reasons.append(f"... and {len(groups) - _MAX_LISTED} more source component(s) "
                           f"with no eligible {word} ({len(groups)} in all; the JSON "
                           "'inaccessible' list names every state no input reaches).")
    # rank: the D rows must be matchable into real columns plus all candidates
    if prob.deficiency:
        cD = prob.cand_D.tocsc()  # column r lists candidates acting on D row r
        ind, ptr = _augment_rows(prob.sub_indptr, prob.sub_indices, cD.indptr, cD.indices,
                                 prob.n_real)
        n_cols = prob.n_real + cands.n_candidates
        rm, cm = maximum_matching(ptr, ind, n_cols)
        if np.any(rm < 0) and not np.all(named[prob.D[rm < 0]]):
            rows, cols = alternating_reach_rows(ptr, ind, n_cols, cm)
            S = prob.D[np.flatnonzero(rows)]
            cl = np.flatnonzero(cols)
            n_cand = int(np.count_nonzero(cl >= prob.n_real))
            short = int(np.count_nonzero(rm < 0))
            reasons.append(
                f"dilation no eligible {word} can fix: the {S.size} state(s) "
                f"{{{_short([names[i] for i in S])}}} are influenced by only "
                f"{cl.size - n_cand} state(s)/existing input(s) and {n_cand} eligible "
                f"{word}(s) acting on them; {short} more independent "
                f"{'eligible site(s) among these states' if cands.dedicated else 'actuator(s) acting on these states'}"
                f" are needed.")
    return reasons


def _augment_rows(indptr: np.ndarray, indices: np.ndarray, ex_ptr: np.ndarray,
                  ex_ind: np.ndarray, offset: int) -> tuple[np.ndarray, np.ndarray]:
    """CSR rows = ``indices`` rows followed by ``ex_ind + offset`` (per row, vectorized)."""
    n = indptr.size - 1
    la, lb = np.diff(indptr), np.diff(ex_ptr)
    ptr = np.zeros(n + 1, np.int64)
    np.cumsum(la + lb, out=ptr[1:])
    out = np.empty(int(ptr[-1]), np.int64)
    rows_a = np.repeat(np.arange(n), la)
    pos_a = ptr[rows_a] + (np.arange(indices.size) - indptr[rows_a])
    out[pos_a] = indices
    rows_b = np.repeat(np.arange(n), lb)
    pos_b = ptr[rows_b] + la[rows_b] + (np.arange(ex_ind.size) - ex_ptr[rows_b])
    out[pos_b] = ex_ind.astype(np.int64) + offset
    return out, ptr


def _short(names: list[str], limit: int = 8) -> str:
    if len(names) <= limit:
        return ", ".join(names)
    return ", ".join(names[:limit]) + f", ... ({len(names) - limit} more)"


# ====================================================================== dedicated: exact
def _assignment_by_component(M: sp.csr_matrix) -> tuple[np.ndarray, np.ndarray]:
    """Row-perfect min-cost assignment of ``M``, solved per connected component.

    Components of the bipartite graph are independent, and LAPJVsp is superlinear, so
    the many small components of sparse networks are solved separately; a component
    with one row takes its cheapest edge (ties: the smallest column).
    """
    from scipy.sparse.csgraph import connected_components, min_weight_full_bipartite_matching

    n_rows, n_cols = M.shape
    G = sp.bmat([[None, M], [M.T, None]], format="csr")
    _, lab = connected_components(G, directed=False)
    rlab = lab[:n_rows]
    counts = np.bincount(rlab, minlength=lab.max(initial=-1) + 1)
    col_of_row = np.full(n_rows, -1, np.int64)
    single = counts[rlab] == 1
    rows1 = np.flatnonzero(single)
    if rows1.size:
        take = _gather_ranges(M.indptr.astype(np.int64), rows1)
        seg_row = np.repeat(rows1, np.diff(M.indptr)[rows1])
        order = np.lexsort((M.indices[take], M.data[take], seg_row))
        first = np.ones(order.size, bool)
        first[1:] = seg_row[order][1:] != seg_row[order][:-1]
        col_of_row[seg_row[order][first]] = M.indices[take][order][first]
    multi = np.flatnonzero(~single)
    if multi.size:
        # permute rows and columns so that each component is one contiguous block
        rows_p = multi[np.argsort(rlab[multi], kind="stable")]
        col_lab = lab[n_rows:]
        cols_p = np.argsort(col_lab, kind="stable")
        P = M[rows_p][:, cols_p].tocsr()
        P.sort_indices()
        r_bounds = np.concatenate([[0], np.flatnonzero(np.diff(rlab[rows_p])) + 1,
                                   [rows_p.size]])
        c_starts = np.searchsorted(col_lab[cols_p], np.arange(counts.size + 1))
        for r0, r1 in zip(r_bounds[:-1].tolist(), r_bounds[1:].tolist()):
            c = int(rlab[rows_p[r0]])
            c0, c1 = int(c_starts[c]), int(c_starts[c + 1])
            a, b = int(P.indptr[r0]), int(P.indptr[r1])
            sub = sp.csr_matrix((P.data[a:b], P.indices[a:b] - c0, P.indptr[r0:r1 + 1] - a),
                                shape=(r1 - r0, c1 - c0))
            r_i, c_i = min_weight_full_bipartite_matching(sub)
            col_of_row[rows_p[r0 + r_i]] = cols_p[c0 + c_i]
    return np.arange(n_rows, dtype=np.int64), col_of_row


def _dedicated_assignment(prob: _Reduced, cands: Candidates) -> _Outcome:
    site_state = cands.indices  # candidate k acts on state site_state[k]
    cost = cands.cost
    n_u = prob.unreached.size
    # cheapest eligible state of each unreached source component (ties: smallest index)
    comp_of = prob.comp_slot[prob.scc[site_state]]
    in_src = np.flatnonzero(comp_of >= 0)
    order = in_src[np.lexsort((site_state[in_src], cost[in_src], comp_of[in_src]))]
    first = np.ones(order.size, bool)
    first[1:] = comp_of[order][1:] != comp_of[order][:-1]
    rep = np.full(n_u, -1, np.int64)  # candidate index of the representative
    rep[comp_of[order[first]]] = order[first]
    minc = cost[rep] if n_u else np.zeros(0)
    chosen_rows: np.ndarray = np.zeros(0, np.int64)
    hit = np.zeros(n_u, bool)
    if prob.D.size:
        nD = prob.D.size
        d_local = np.full(prob.n, -1, np.int64)
        d_local[prob.D] = np.arange(nD)
        cand_row = d_local[site_state]
        elig = np.flatnonzero(cand_row >= 0)             # candidates on D rows
        r_real = np.repeat(np.arange(nD), np.diff(prob.sub_indptr))
        c_real = prob.sub_indices
        r_priv = cand_row[elig]
        c_priv = prob.n_real + np.arange(elig.size)
        src = elig[comp_of[elig] >= 0]
        r_src = cand_row[src]
        c_src = prob.n_real + elig.size + comp_of[src]
        rows = np.concatenate([r_real, r_priv, r_src])
        cols = np.concatenate([c_real, c_priv, c_src])
        # +1 on every edge keeps weights positive (zeros are not edges); every full
        # matching uses exactly nD edges, so the shift does not change the optimum
        w = np.concatenate([np.ones(r_real.size), 1.0 + cost[elig],
                            1.0 + cost[src] - minc[comp_of[src]]])
        n_cols = prob.n_real + elig.size + n_u
        M = sp.csr_matrix((w, (rows, cols)), shape=(nD, n_cols))
        M.sum_duplicates()
        r_ind, c_ind = _assignment_by_component(M)
        priv = (c_ind >= prob.n_real) & (c_ind < prob.n_real + elig.size)
        srcm = c_ind >= prob.n_real + elig.size
        chosen_rows = np.sort(r_ind[priv | srcm])
        hit[c_ind[srcm] - prob.n_real - elig.size] = True
        # a driven D row in an unreached source component serves it too
        cmp_rows = prob.comp_slot[prob.scc[prob.D[chosen_rows]]]
        hit[cmp_rows[cmp_rows >= 0]] = True
        cand_of_state = np.full(prob.n, -1, np.int64)
        cand_of_state[site_state] = np.arange(site_state.size)
        chosen = cand_of_state[prob.D[chosen_rows]]
    else:
        chosen = np.zeros(0, np.int64)
    chosen = np.union1d(chosen, rep[~hit]).astype(np.int64)
    total = float(cost[chosen].sum())
    return _Outcome("dedicated", "assignment", True, False, chosen, total, total, None, None,
                    [], "exact minimum cost (min-cost assignment, polynomial time)")


# ====================================================================== candidates: MILP
def _milp(prob: _Reduced, cands: Candidates, time_limit: float) -> _Outcome:
    from scipy.optimize import Bounds, LinearConstraint, milp

    K = cands.n_candidates
    cost = cands.cost
    nD = prob.D.size
    real_r = np.repeat(np.arange(nD), np.diff(prob.sub_indptr))
    real_c = prob.sub_indices
    cD = prob.cand_D.tocoo()
    cand_k, cand_r = cD.row.astype(np.int64), cD.col.astype(np.int64)
    n_x = real_r.size + cand_k.size
    n_var = n_x + K
    e_rows = np.concatenate([real_r, cand_r])
    blocks_r, blocks_c, blocks_v, lb, ub = [], [], [], [], []
    off = 0
    if nD:
        # each D row matched exactly once
        blocks_r.append(e_rows + off)
        blocks_c.append(np.arange(n_x))
        blocks_v.append(np.ones(n_x))
        lb.append(np.ones(nD))
        ub.append(np.ones(nD))
        off += nD
        # each real column at most once
        blocks_r.append(real_c + off)
        blocks_c.append(np.arange(real_r.size))
        blocks_v.append(np.ones(real_r.size))
        lb.append(np.full(prob.n_real, -np.inf))
        ub.append(np.ones(prob.n_real))
        off += prob.n_real
        # candidate column k at most y_k times
        blocks_r.append(np.concatenate([cand_k + off, np.arange(K) + off]))
        blocks_c.append(np.concatenate([real_r.size + np.arange(cand_k.size), n_x + np.arange(K)]))
        blocks_v.append(np.concatenate([np.ones(cand_k.size), -np.ones(K)]))
        lb.append(np.full(K, -np.inf))
        ub.append(np.zeros(K))
        off += K
    # every unreached source component touched by a chosen candidate
    cc = prob.cand_comp.tocoo()
    if prob.unreached.size:
        blocks_r.append(cc.col.astype(np.int64) + off)
        blocks_c.append(n_x + cc.row.astype(np.int64))
        blocks_v.append(np.ones(cc.nnz))
        lb.append(np.ones(prob.unreached.size))
        ub.append(np.full(prob.unreached.size, np.inf))
        off += prob.unreached.size
    c = np.concatenate([np.zeros(n_x), cost])
    integrality = np.concatenate([np.zeros(n_x), np.ones(K)])
    up = np.concatenate([np.ones(n_x), np.where(prob.useful, 1.0, 0.0)])
    if off == 0:
        return _Outcome("candidates", "milp", True, False, np.zeros(0, np.int64), 0.0, 0.0,
                        None, None, [], "exact minimum cost (nothing to add)")
    Acon = sp.csr_array((np.concatenate(blocks_v), (np.concatenate(blocks_r),
                                                    np.concatenate(blocks_c))),
                        shape=(off, n_var))
    res = milp(c, integrality=integrality, bounds=Bounds(np.zeros(n_var), up),
               constraints=LinearConstraint(Acon, np.concatenate(lb), np.concatenate(ub)),
               options={"time_limit": float(time_limit), "mip_rel_gap": 0.0,
                        "presolve": True})
    if res.x is None:
        # no incumbent within the time limit: fall back to the greedy, keep HiGHS's bound
        out = _greedy_cover(prob, cands)
        dual = getattr(res, "mip_dual_bound", None)
        if dual is not None and np.isfinite(dual) and out.lower_bound is not None:
            out.lower_bound = max(out.lower_bound, float(dual))
        out.guarantee += f"; the MILP found no design within {time_limit:g} s"
        return out
    y = res.x[n_x:] > 0.5
    chosen = np.flatnonzero(y).astype(np.int64)
    total = float(cost[chosen].sum())
    dual = getattr(res, "mip_dual_bound", None)
    if res.status == 0:
        lbv = total
        guarantee = "exact minimum cost (MILP solved to optimality by HiGHS)"
    else:
        lbv = float(dual) if dual is not None and np.isfinite(dual) else 0.0
        guarantee = (f"MILP stopped at the time limit ({time_limit:g} s); the lower bound is "
                     "HiGHS's proven dual bound")
    return _Outcome("candidates", "milp", True, False, chosen, total, min(lbv, total), None,
                    None, [], guarantee)


# ====================================================================== candidates: greedy
@njit(cache=True, nogil=True)
def _augment_from(k_col, start_rows, tptr, tind, rm, cm, seen, stamp, parent, queue,
                  dead, commit):  # pragma: no cover - compiled
    """Is there an augmenting path from the new column ``k_col`` (adjacent to
    ``start_rows``)? Breadth-first over rows: row -> its matched column -> that column's
    rows, until an unmatched row. With ``commit`` the path is flipped (rank + 1).

    Rows visited by a failed search cannot reach an unmatched row, and adding columns
    never gives them one again (the over-determined block only shrinks), so they are
    marked ``dead`` and skipped from then on: failed searches cost O(E) in total."""
    tail = 0
    for r in start_rows:
        if seen[r] != stamp and not dead[r]:
            seen[r] = stamp
            parent[r] = k_col
            queue[tail] = r
            tail += 1
    head = 0
    while head < tail:
        r = queue[head]
        head += 1
        c = rm[r]
        if c < 0:
            if commit:
                while True:
                    pc = parent[r]
                    prev = cm[pc]
                    rm[r] = pc
                    cm[pc] = r
                    if pc == k_col:
                        break
                    r = prev
            return True
        for p in range(tptr[c], tptr[c + 1]):
            r2 = tind[p]
            if seen[r2] != stamp and not dead[r2]:
                seen[r2] = stamp
                parent[r2] = c
                queue[tail] = r2
                tail += 1
    for i in range(tail):
        dead[queue[i]] = True
    return False


def _greedy_cover(prob: _Reduced, cands: Candidates) -> _Outcome:
    """Cost-effectiveness greedy for the submodular cover g(S) = rank + sources touched.

    Lazy evaluation (stale gains are upper bounds by submodularity); the rank gain of a
    candidate (0 or 1) is one augmenting-path search from its column, local to the part
    of the graph it can reach.
    """
    K = cands.n_candidates
    cost = cands.cost
    nD = prob.D.size
    cD = prob.cand_D
    cc = prob.cand_comp
    covered = np.zeros(prob.unreached.size, bool)
    chosen: list[int] = []
    n_real = prob.n_real
    # columns: real in-neighbours of D, then one per candidate; transpose = column -> rows
    tptr_r, tind_r = transpose_csr(prob.sub_indptr, prob.sub_indices, np.int64(n_real))
    tptr = np.concatenate([tptr_r, tptr_r[-1] + cD.indptr[1:].astype(np.int64)])
    tind = np.concatenate([tind_r, cD.indices.astype(np.int64)])
    rm = np.full(nD, -1, np.int64)
    if nD:
        rm, _ = maximum_matching(prob.sub_indptr, prob.sub_indices, n_real)
    cm = np.full(n_real + K, -1, np.int64)
    mr = np.flatnonzero(rm >= 0)
    cm[rm[mr]] = mr
    need_rank = nD - int(mr.size)
    seen = np.zeros(nD, np.int64)
    parent = np.full(nD, -1, np.int64)
    queue = np.empty(max(nD, 1), np.int64)
    dead = np.zeros(nD, np.bool_)
    stamp = 0
    single = np.diff(cD.indptr) > 0
    n_comp = np.diff(cc.indptr).astype(np.int64)
    max_gain = int((single.astype(np.int64) + n_comp).max(initial=0))
    rank_alive = single.copy()
    heap = [(-_ratio(float(single[k]) + float(n_comp[k]), float(cost[k])), k)
            for k in np.flatnonzero(prob.useful).tolist()]
    heapq.heapify(heap)
    while (need_rank > 0 or not covered.all()) and heap:
        _, k = heapq.heappop(heap)
        rows_k = cD.indices[cD.indptr[k]:cD.indptr[k + 1]].astype(np.int64)
        cov = int(np.count_nonzero(~covered[cc.indices[cc.indptr[k]:cc.indptr[k + 1]]]))
        rg = 0
        if need_rank > 0 and rank_alive[k]:
            stamp += 1
            if _augment_from(np.int64(n_real + k), rows_k, tptr, tind, rm, cm, seen,
                             np.int64(stamp), parent, queue, dead, False):
                rg = 1
            else:
                rank_alive[k] = False  # the rank gain never comes back (submodularity)
        g = rg + cov
        if g == 0:
            continue
        r = _ratio(float(g), float(cost[k]))
        if heap and r < -heap[0][0]:
            heapq.heappush(heap, (-r, k))
            continue
        chosen.append(k)
        covered[cc.indices[cc.indptr[k]:cc.indptr[k + 1]]] = True
        if rg:
            stamp += 1
            _augment_from(np.int64(n_real + k), rows_k, tptr, tind, rm, cm, seen,
                          np.int64(stamp), parent, queue, dead, True)
            need_rank -= 1
    chosen_a = np.array(sorted(chosen), np.int64)
    total = float(cost[chosen_a].sum())
    H = sum(1.0 / i for i in range(1, max(max_gain, 1) + 1))
    lb = total / H
    # the rank part alone is a matroid (columns that raise the term rank one each: the
    # transversal matroid contracted by the existing columns); its cheapest basis, found
    # exactly by the greedy in cost order (Edmonds 1971), is a lower bound
    if prob.deficiency:
        lb = max(lb, _min_cost_rank_basis(prob, cost, tptr, tind, single))
    if prob.unreached.size:
        ccs = cc.tocsc()  # feasible: every unreached source has a candidate
        per = np.minimum.reduceat(cost[ccs.indices], ccs.indptr[:-1])
        lb = max(lb, float(per.max()))
    return _Outcome("candidates", "greedy", True, False, chosen_a, total, min(lb, total), None,
                    None, [], f"greedy submodular cover: cost <= H({max_gain}) = {H:.3f} x "
                    "the optimum (Wolsey 1982)")


def _min_cost_rank_basis(prob: _Reduced, cost: np.ndarray, tptr: np.ndarray,
                         tind: np.ndarray, single: np.ndarray) -> float:
    """Cheapest set of candidates that restores the term rank (ignoring accessibility)."""
    nD, n_real = prob.D.size, prob.n_real
    cD = prob.cand_D
    rm, _ = maximum_matching(prob.sub_indptr, prob.sub_indices, n_real)
    cm = np.full(tptr.size - 1, -1, np.int64)
    mr = np.flatnonzero(rm >= 0)
    cm[rm[mr]] = mr
    need = nD - int(mr.size)
    seen = np.zeros(nD, np.int64)
    parent = np.full(nD, -1, np.int64)
    queue = np.empty(max(nD, 1), np.int64)
    dead = np.zeros(nD, np.bool_)
    total = 0.0
    order = np.flatnonzero(single)
    order = order[np.argsort(cost[order], kind="stable")]
    for stamp, k in enumerate(order.tolist(), start=1):
        if need == 0:
            break
        rows_k = cD.indices[cD.indptr[k]:cD.indptr[k + 1]].astype(np.int64)
        if _augment_from(np.int64(n_real + k), rows_k, tptr, tind, rm, cm, seen,
                         np.int64(stamp), parent, queue, dead, True):
            total += float(cost[k])
            need -= 1
    return total


# ====================================================================== best effort
class _DimensionOracle:
    """Generic controllable dimension (Hosoe 1980) of ``(A, [B, B_S])`` for many ``S``.

    The same construction as :func:`netctl.structural.controllability` (a min-cost
    assignment on the input-accessible states: real edges cost 1, a dummy edge from each
    state to its own column cost 2, so matched real edges form stems from inputs and
    cycles), without the rest of the report, and solved per connected component.
    """

    def __init__(self, work: StructuredSystem, cands: Candidates) -> None:
        self.A = work.A
        self.B = work.B
        self.n = work.n_states
        self.cands = cands
        At = work.A.T.tocsr()
        At.sort_indices()
        self.out_ptr = At.indptr.astype(np.int64)
        self.out_ind = At.indices.astype(np.int64)
        self.base_driven = np.flatnonzero(np.diff(work.B.indptr)).astype(np.int64)
        self.cache: dict[tuple[int, ...], int] = {}
        self._reach: dict[int, int] = {}

    def reach_size(self, k: int) -> int:
        """Number of states candidate ``k`` reaches (bounds its Krylov dimension)."""
        got = self._reach.get(k)
        if got is None:
            got = int(np.count_nonzero(reachable_from(self.out_ptr, self.out_ind,
                                                      self.cands.states_of(int(k)))))
            self._reach[k] = got
        return got

    def __call__(self, chosen: Any) -> int:
        key = tuple(sorted(int(k) for k in chosen))
        hit = self.cache.get(key)
        if hit is not None:
            return hit
        n = self.n
        M = self.cands.matrix(np.asarray(key, np.int64), n)
        B = sp.hstack([self.B, M], format="csr") if self.B.shape[1] else M.tocsr()
        driven = np.flatnonzero(np.diff(B.indptr))
        acc = reachable_from(self.out_ptr, self.out_ind, driven.astype(np.int64))
        R = np.flatnonzero(acc)
        r = R.size
        if r == 0:
            self.cache[key] = 0
            return 0
        AR = self.A if r == n else self.A[R][:, R]
        AB = sp.hstack([AR, B if r == n else B[R]], format="csr")
        AB.sort_indices()
        # real edges cost 1; a dummy (i, i) costs 2 unless i has a self-loop (then the
        # loop itself covers i at cost 1)
        rows_real = np.repeat(np.arange(r), np.diff(AB.indptr))
        loop = np.zeros(r, bool)
        loop[rows_real[AB.indices == rows_real]] = True
        nd = np.flatnonzero(~loop)
        cost = sp.csr_matrix(
            (np.concatenate([np.ones(AB.nnz), np.full(nd.size, 2.0)]),
             (np.concatenate([rows_real, nd]), np.concatenate([AB.indices, nd]))),
            shape=AB.shape)
        if r <= 5000:
            from scipy.sparse.csgraph import min_weight_full_bipartite_matching

            rows, cols = min_weight_full_bipartite_matching(cost)
        else:
            rows, cols = _assignment_by_component(cost)
        used = np.asarray(cost[rows, cols]).ravel()
        d = int(np.count_nonzero(used == 1.0))
        self.cache[key] = d
        return d


def _best_effort(work: StructuredSystem, cands: Candidates, prob: _Reduced, budget: float,
                 method: str) -> _Outcome:
    cost = cands.cost
    pool = np.flatnonzero((cost <= budget * (1 + 1e-12) + 1e-12)).astype(np.int64)
    problem = "dedicated" if cands.dedicated else "candidates"
    dim_of = _DimensionOracle(work, cands)
    base = dim_of([])
    if pool.size == 0:
        return _Outcome(problem, "exhaustive", True, True, np.zeros(0, np.int64), 0.0, None,
                        float(base), base, [], "no candidate is affordable")
    top = dim_of(pool)
    exhaustive = method == "exact" or (method == "auto" and pool.size <= EXHAUSTIVE_MAX_CANDIDATES)
    if exhaustive:
        best: tuple[int, float, tuple[int, ...]] = (base, 0.0, ())
        for r in range(1, pool.size + 1):
            any_affordable = False
            for S in itertools.combinations(pool.tolist(), r):
                c = float(cost[list(S)].sum())
                if c > budget * (1 + 1e-12) + 1e-12:
                    continue
                any_affordable = True
                d = dim_of(S)
                if d > best[0] or (d == best[0] and c < best[1] - 1e-12):
                    best = (d, c, S)
            if not any_affordable:
                break
        chosen = np.array(sorted(best[2]), np.int64)
        return _Outcome(problem, "exhaustive", True, True, chosen, float(best[1]), None,
                        float(best[0]), best[0], [], "exact: every affordable subset tried "
                        "(largest generic controllable dimension, then lowest cost)")
    # lazy cost-effectiveness greedy (CELF) + best single candidate. Initial gains are
    # bounded by the number of states each candidate reaches (its Krylov subspace lives
    # there); every stale value is an upper bound on the current gain (submodularity).
    oracle_reach = dim_of.reach_size
    f_S = base
    sel: list[int] = []
    spent = 0.0
    last: dict[int, float] = {}
    heap: list[tuple[float, int, int]] = []
    for k in pool.tolist():
        last[k] = float(min(oracle_reach(k), work.n_states - base))
        if last[k] > 0:
            heapq.heappush(heap, (-_ratio(last[k], cost[k]), k, -1))
    it = 0
    cap = budget * (1 + 1e-12) + 1e-12
    while heap:
        negr, k, stamp = heapq.heappop(heap)
        if spent + cost[k] > cap:
            continue
        if stamp != it:
            g = dim_of(sel + [k]) - f_S
            last[k] = float(g)
            if g > 0:
                heapq.heappush(heap, (-_ratio(g, cost[k]), k, it))
            continue
        sel.append(k)
        last.pop(k, None)
        spent += float(cost[k])
        f_S = dim_of(sel)
        it += 1
    # a-posteriori bound on the optimum: f(OPT) <= f(G) + fractional knapsack of the
    # (upper bounds on the) marginal gains at the greedy set G
    ub = f_S + _fractional_knapsack(list(last.values()), [float(cost[k]) for k in last],
                                    budget)
    ub = float(min(ub, top))
    # best single affordable candidate, lazily (reach sizes bound the single gains)
    best_k, best_g = -1, -1
    for k in sorted(pool.tolist(), key=lambda k: (-oracle_reach(k), k)):
        if oracle_reach(k) <= best_g:
            break
        g = dim_of([k]) - base
        if g > best_g:
            best_k, best_g = k, g
    if best_k >= 0 and base + best_g > f_S:
        sel, f_S, spent = [best_k], base + best_g, float(cost[best_k])
    equal = np.ptp(cost[pool]) == 0
    ratio_txt = ("1 - 1/e (equal costs; Nemhauser, Wolsey & Fisher 1978)" if equal else
                 "(1 - 1/e)/2 (knapsack budget; Khuller, Moss & Naor 1999, from memory)")
    return _Outcome(problem, "greedy", True, True, np.array(sorted(sel), np.int64), spent, None,
                    ub, f_S, [], f"budgeted greedy on the submodular generic controllable "
                    f"dimension: at least {ratio_txt} of the optimum")


def _ratio(gain: float, c: float) -> float:
    return float("inf") if c <= 0 else gain / c


def _fractional_knapsack(gains: list[float], costs: list[float], cap: float) -> float:
    total = 0.0
    items = sorted(((g, c) for g, c in zip(gains, costs) if g > 0),
                   key=lambda t: -_ratio(t[0], t[1]))
    for g, c in items:
        if c <= 0:
            total += g
        elif cap >= c:
            total += g
            cap -= c
        else:
            total += g * cap / c
            break
    return total


# ====================================================================== finishing
def _finish(system: StructuredSystem, work: StructuredSystem, kind: str, cands: Candidates,
            out: _Outcome, budget: float | None, verify: bool) -> Placement:
    from netctl.structural.controllability import controllability

    n = work.n_states
    chosen = np.asarray(out.chosen, np.int64)
    sites = np.unique(np.concatenate([cands.states_of(int(k)) for k in chosen])
                      if chosen.size else np.zeros(0, np.int64)).astype(np.int64)
    verified: bool | None = None
    dim = out.dimension
    M = cands.matrix(chosen, n)
    B = sp.hstack([work.B, M], format="csr") if work.n_inputs else M
    design = work._replace(B=B, input_names=tuple(f"u{k}" for k in range(B.shape[1])))
    claimed = out.feasible and not out.best_effort
    if claimed:
        # the independent check of a claimed design: Lin's test on the design installed
        rep = controllability(design, dimension=False)
        verified = bool(rep.controllable) if verify else None
        inacc = rep.inaccessible
        ok = bool(rep.controllable)
    else:
        # no claim to check; accessibility and rank only (near-linear, any size)
        st = structure_of(work.A)
        acc = accessible_states(st, B)
        inacc = np.flatnonzero(~acc).astype(np.int64)
        indptr, indices, n_cols = stack_AB(work.A, B)
        rm, _ = maximum_matching(indptr, indices, n_cols)
        ok = bool(acc.all() and np.all(rm >= 0))
    if dim is None:
        if ok:
            dim = n
        elif n <= DIMENSION_MAX_STATES:
            dim = controllability(design).controllable_dimension
    within = budget is None or out.cost <= budget * (1 + 1e-12) + 1e-12
    goal = bool(out.feasible and not out.best_effort and within)
    if out.best_effort:
        ub = out.upper_bound if out.upper_bound is not None else float(n)
        d0 = 0 if dim is None else dim
        gap = 0.0 if ub <= 0 else max(0.0, (ub - d0) / ub)
        lower, upper = None, float(ub)
    elif not out.feasible:
        gap, lower, upper = float("inf"), None, None
    else:
        lower = out.lower_bound if out.lower_bound is not None else 0.0
        gap = 0.0 if out.cost <= 0 else max(0.0, (out.cost - lower) / out.cost)
        if gap < 1e-12:
            gap = 0.0
        upper = None
    optimal = bool(out.feasible or out.best_effort) and gap == 0.0
    if goal and verified is False:  # never claim a design the check rejects
        goal = False
    return Placement(
        kind=kind, problem=out.problem, method=out.method, feasible=out.feasible,
        goal_met=goal, best_effort=out.best_effort, sites=sites, chosen=chosen,
        cost=float(out.cost), lower_bound=lower, upper_bound=upper, optimal=optimal,
        gap=float(gap), dimension=None if dim is None else int(dim), goal_dimension=n, verified=verified,
        inaccessible=np.asarray(inacc, np.int64), reasons=tuple(out.reasons),
        guarantee=out.guarantee, budget=None if budget is None else float(budget),
        candidates=cands, state_names=tuple(system.state_names), model=system.model)
