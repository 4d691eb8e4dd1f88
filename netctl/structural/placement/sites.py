"""Eligibility and costs: which states may host an actuator (sensor) and at what cost,
from the system's node table, and the candidate columns every solver works on.

Site data read from a file comes from :func:`netctl.io.sites.read_sites` (and candidate
actuators from :func:`netctl.io.sites.read_candidates`); both return the records of
:mod:`netctl.records` that this module also builds.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a dedicated actuator at state ``i``
adds the input column ``e_i`` to ``B``.
"""

from __future__ import annotations

import numpy as np

from netctl.errors import InvalidSystemError
from netctl.records import Candidates, Sites, check_site_kind
from netctl.system import StructuredSystem

__all__ = ["candidates_from_sites", "sites_from_nodes"]


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
    check_site_kind(kind)
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
    return Sites.from_arrays(kind, eligible, cost, system.state_names, source)


def candidates_from_sites(sites: Sites) -> Candidates:
    """One dedicated candidate (a unit column) per eligible site."""
    idx = np.flatnonzero(sites.eligible).astype(np.int64)
    prefix = "u:" if sites.kind == "actuator" else "y:"
    return Candidates(names=tuple(prefix + sites.state_names[int(i)] for i in idx),
                      indptr=np.arange(idx.size + 1, dtype=np.int64), indices=idx,
                      cost=sites.cost[idx].astype(np.float64), dedicated=True)
