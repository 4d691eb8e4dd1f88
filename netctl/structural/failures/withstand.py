"""How many actuator (sensor) failures a design withstands: :func:`fewest_failures`.

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``; ``B[i, k] != 0``: input ``k`` acts on
state ``i``; sensors are the inputs of the dual system (see :mod:`netctl`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl.errors import OptionError
from netctl.structural.failures._core import is_controlling, source_components
from netctl.structural.failures.audit import _column_states, _work_system, audit_design
from netctl.system import StructuredSystem

if TYPE_CHECKING:  # imported where used (a small audit needs no scipy)
    import scipy.sparse as sp

__all__ = ["FailureCount", "fewest_failures", "FEWEST_MAX_VARIABLES"]

#: Largest integer programme (variables) :func:`fewest_failures` hands to HiGHS; beyond
#: it only the bounds are reported.
FEWEST_MAX_VARIABLES: int = 300_000


@dataclass(frozen=True)
class FailureCount:
    """Fewest simultaneous failures that break a design (see :func:`fewest_failures`).

    Attributes
    ----------
    exact : bool
        ``lower == upper`` proven.
    lower, upper : int
        Proven bounds on the fewest failures (equal when exact). ``upper`` is ``None``
        when no set of failures breaks the design (e.g. a system without states).
    witness : tuple of str
        Names of elements whose joint loss breaks the design (``upper`` of them).
    cause : str
        What the witness breaks, in words.
    method : str
    """

    kind: str
    n_elements: int
    works: bool
    exact: bool
    lower: int
    upper: int | None
    witness: tuple[str, ...]
    cause: str
    method: str
    guarantee: str
    model: str = "given"
    element_names: tuple[str, ...] = field(default=(), repr=False)

    @property
    def value(self) -> int | None:
        """The fewest failures when proven, else ``None``."""
        return self.lower if self.exact else None

    def to_dict(self) -> dict[str, Any]:
        return {"analysis": "fewest_failures", "kind": self.kind, "model": self.model,
                "n_elements": self.n_elements, "works": self.works, "exact": self.exact,
                "value": self.value, "lower_bound": self.lower, "upper_bound": self.upper,
                "witness": list(self.witness), "cause": self.cause, "method": self.method,
                "guarantee": self.guarantee}


def fewest_failures(system: StructuredSystem, *, kind: str = "inputs",
                    time_limit: float = 60.0) -> FailureCount:
    r"""Smallest number of actuators (sensors) whose joint loss breaks the design.

    Parameters
    ----------
    system : StructuredSystem
        Carries the design: its input columns (``kind="inputs"``) or output rows.
    kind : {"inputs", "sensors"}
    time_limit : float, default 60
        Seconds the integer programme may use; when reached, proven bounds are
        reported (``exact=False``), labelled as such.

    Returns
    -------
    FailureCount
        0 when the intact design already fails.

    Notes
    -----
    NP-hard in general (Zhang, Xia & Liu [1]_). A working design fails after losing a
    set ``F`` iff (i) ``F`` holds every element touching some source component of ``A``
    -- the fewest such is the smallest number of elements touching one source
    component, found by counting -- or (ii) the generic rank of ``[A B]`` drops below
    ``n``. For (ii), by König's theorem the matching of ``[A, B_{P \ F}]`` is below ``n``
    iff its bipartite graph has a vertex cover of at most ``n - 1`` vertices, so the
    fewest ``F`` solves the integer programme: binary ``r_i`` (row ``i`` in the cover),
    ``a_j`` (state column), ``b_k`` (input column in the cover), ``f_k`` (input lost);
    ``r_i + a_j >= 1`` for every link, ``r_i + b_k + f_k >= 1`` for every input entry,
    ``sum r + sum a + sum b <= n - 1``; minimize ``sum f``. Solved by HiGHS through
    :func:`scipy.optimize.milp`. A critical element (:func:`audit_design`) settles the
    answer at 1 without the programme. Bounds otherwise: lower 2 (no element is
    critical) or HiGHS's dual bound; upper the component count or the incumbent.

    References
    ----------
    .. [1] Y. Zhang, Y. Xia, K. Liu, "Observability robustness under sensor failures: a
       computational perspective", IEEE TAC, 2023 (details from memory).
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.

    Examples
    --------
    Two actuators on the head of a path: losing both breaks it.

    >>> from netctl import StructuredSystem
    >>> s = StructuredSystem.from_edges([0, 1], [1, 2], 3).with_inputs({"u": [0], "v": [0]})
    >>> r = fewest_failures(s)
    >>> r.value, r.witness
    (2, ('u', 'v'))
    """
    if isinstance(time_limit, bool) or not isinstance(time_limit, (int, float)) or \
            not math.isfinite(time_limit) or time_limit <= 0:
        raise OptionError(f"time_limit must be a positive number of seconds, found "
                          f"{time_limit!r}.")
    work = _work_system(system, kind)
    names = tuple(work.input_names)
    m = work.n_inputs
    au = audit_design(system, kind=kind, max_trials=1)
    base = dict(kind=kind, n_elements=m, model=system.model, element_names=names)
    if not au.works:
        return FailureCount(works=False, exact=True, lower=0, upper=0, witness=(),
                            cause="the intact design already fails: "
                            + "; ".join(au.intact_reasons()), method="audit",
                            guarantee="exact", **base)  # type: ignore[arg-type]
    crit = au.critical
    if crit.size:
        k = int(crit[0])
        return FailureCount(works=True, exact=True, lower=1, upper=1, witness=(names[k],),
                            cause="; ".join(au.reasons(k)), method="audit",
                            guarantee="exact (a single point of failure exists)",
                            **base)  # type: ignore[arg-type]
    A, B = work.A, work.B
    n = work.n_states
    # (i) every element touching one source component
    cptr, members = source_components(A)
    comp_of = np.full(n, -1, np.int64)
    comp_of[members] = np.repeat(np.arange(cptr.size - 1), np.diff(cptr))
    users: dict[int, set[int]] = {}
    for k, st in enumerate(_column_states(B)):
        for c in set(comp_of[st][comp_of[st] >= 0].tolist()):
            users.setdefault(c, set()).add(k)
    best: tuple[int, ...] | None = None
    cause = ""
    if users:
        c = min(users, key=lambda c: (len(users[c]), c))
        best = tuple(sorted(users[c]))
        comp = members[cptr[c]:cptr[c + 1]]
        cause = (f"every {'sensor' if kind == 'sensors' else 'actuator'} of the source "
                 f"component {{{', '.join(system.state_names[int(i)] for i in comp[:8])}"
                 f"{', ...' if comp.size > 8 else ''}}} lost: it is "
                 f"{'seen' if kind == 'sensors' else 'reached'} no more")
    lower = 2
    # (ii) the rank: integer programme
    n_var = 2 * n + 2 * m
    method, guarantee = "count", "exact"
    if n_var > FEWEST_MAX_VARIABLES:
        exact = False
        guarantee = (f"bounds only: the integer programme ({n_var} variables) exceeds "
                     f"{FEWEST_MAX_VARIABLES}; lower bound 2 (no single point of failure)")
        method = "bounds"
    else:
        res = _rank_milp(A, B, best, time_limit)
        method = "milp"
        if res is not None and res[0] is not None and (best is None or len(res[0]) < len(best)):
            best = res[0]
            cause = ("the generic rank of [A B] falls below the number of states "
                     "(a dilation)")
        exact = res is not None and res[1]
        if res is not None and not exact:
            lower = max(lower, res[2])
            guarantee = (f"integer programme stopped at {time_limit:g} s: lower bound from "
                         "HiGHS's dual bound, upper bound from the best failure set found")
        elif exact:
            guarantee = "exact (integer programme solved to optimality by HiGHS)"
    upper = None if best is None else len(best)
    if exact and upper is not None:
        lower = upper
    if upper is not None and lower >= upper:
        exact, lower = True, upper
    return FailureCount(works=True, exact=bool(exact), lower=int(lower), upper=upper,
                        witness=tuple(names[k] for k in best) if best else (),
                        cause=cause, method=method, guarantee=guarantee,
                        **base)  # type: ignore[arg-type]


def _rank_milp(A: sp.csr_array, B: sp.csr_array, incumbent: tuple[int, ...] | None,
               time_limit: float) -> tuple[tuple[int, ...] | None, bool, int] | None:
    """Fewest input columns whose loss lowers the term rank of ``[A B]`` below ``n``.

    Returns ``(witness or None, proven optimal, lower bound)``; the programme is bounded
    by the incumbent (a cheaper answer is all that matters)."""
    import scipy.sparse as sp
    from scipy.optimize import Bounds, LinearConstraint, milp

    n, m = B.shape
    Ac, Bc = A.tocoo(), B.tocoo()
    # variable layout: r (n), a (n), b (m), f (m)
    ra, ca = Ac.row.astype(np.int64), Ac.col.astype(np.int64)
    rb, cb = Bc.row.astype(np.int64), Bc.col.astype(np.int64)
    e1, e2 = ra.size, rb.size
    rows = np.concatenate([np.arange(e1), np.arange(e1), e1 + np.arange(e2), e1 + np.arange(e2),
                           e1 + np.arange(e2), np.full(2 * n + m, e1 + e2)])
    cols = np.concatenate([ra, n + ca, rb, 2 * n + cb, 2 * n + m + cb, np.arange(2 * n + m)])
    con = sp.csr_array((np.ones(rows.size), (rows, cols)), shape=(e1 + e2 + 1, 2 * n + 2 * m))
    lb = np.concatenate([np.ones(e1 + e2), [-np.inf]])
    ub = np.concatenate([np.full(e1 + e2, np.inf), [n - 1]])
    cons = [LinearConstraint(con, lb, ub)]
    if incumbent is not None:
        row = np.zeros(2 * n + 2 * m)
        row[2 * n + m:] = 1
        cons.append(LinearConstraint(row[None, :], -np.inf, len(incumbent) - 1))
    c = np.concatenate([np.zeros(2 * n + m), np.ones(m)])
    res = milp(c, integrality=np.ones(2 * n + 2 * m), bounds=Bounds(0, 1), constraints=cons,
               options={"time_limit": float(time_limit), "mip_rel_gap": 0.0})
    if res.status == 2:  # infeasible: nothing cheaper than the incumbent breaks the rank
        return None, True, len(incumbent) if incumbent is not None else 0
    if res.x is None:
        dual = getattr(res, "mip_dual_bound", None)
        lb_ = int(math.ceil(dual - 1e-9)) if dual is not None and np.isfinite(dual) else 2
        return None, False, lb_
    F = tuple(np.flatnonzero(res.x[2 * n + m:] > 0.5).tolist())
    if res.status == 0:
        return F, True, len(F)
    dual = getattr(res, "mip_dual_bound", None)
    lb_ = int(math.ceil(dual - 1e-9)) if dual is not None and np.isfinite(dual) else 2
    return F, False, lb_
