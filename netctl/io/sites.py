"""Readers of placement data: eligible sites with their costs, and candidate actuators
(sensors) acting on (reading) several states.

Both formats are small CSV files with a header; errors name the file, the line, what was
expected and the fix. The readers return the typed records of :mod:`netctl.records`
(:class:`~netctl.records.Sites`, :class:`~netctl.records.Candidates`), which the
placement analyses (:mod:`netctl.structural.placement`) take.

Convention: edge ``u -> v`` iff ``A[v, u] != 0``; a candidate actuator is one column of
``B`` acting on the states it lists.
"""

from __future__ import annotations

import os

import numpy as np

from netctl.io._cells import csv_records
from netctl.io._common import file_error as _err
from netctl.io._common import read_text, unprotect_name
from netctl.records import Candidates, Sites, check_site_kind
from netctl.system import StructuredSystem

__all__ = ["parse_candidates", "parse_sites", "read_candidates", "read_sites"]


def _node_state(system: StructuredSystem, name: str, kind: str) -> int | None:
    """A plain node (bus) name of a second-order model as a site: its velocity
    (frequency) state for an actuator, its position (angle) state for a sensor, as on the
    command line (README, grid section); ``None`` when ``name`` is no such node."""
    if "part" not in system.nodes:
        return None
    try:
        idx = system.index_of([f"{name}:pos", f"{name}:vel"])
    except KeyError:
        return None
    return int(idx[1] if kind == "actuator" else idx[0])


def parse_sites(text: str, system: StructuredSystem, *, kind: str = "actuator",
                source: str = "<sites>") -> Sites:
    """Site data from CSV text: a header ``state,cost`` (or ``state``), then one site a line.

    A state not listed cannot host one. In a second-order model a node (bus) may be
    listed by its name: an actuator site is its velocity (frequency) state, a sensor
    site its position (angle) state. ``#`` starts a comment; fields are separated by
    commas, tabs or semicolons. Without a cost column every listed state costs 1.0.
    Cells are read as netctl's CSV writers write them (:mod:`netctl.io._cells`): a name
    in double quotes keeps its separators, ``#`` and spaces, and the spreadsheet quoting
    is removed (``'=x`` is the state ``=x``), so a CSV netctl wrote reads back exactly.

    Raises
    ------
    NetworkFileError
        Naming ``source`` and the line: missing header, unknown state, repeated state,
        a cost that is not a finite number >= 0, too many fields.
    """
    check_site_kind(kind)
    n = system.n_states
    eligible = np.zeros(n, bool)
    cost = np.full(n, np.inf)
    header: list[str] | None = None
    seen: dict[int, int] = {}
    for lineno, raw, f in csv_records(text, source):
        line = raw.strip()
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
        name = unprotect_name(f[0])
        try:
            i = int(system.index_of([name])[0])
        except KeyError as exc:
            j = _node_state(system, name, kind)
            if j is None:
                raise _err(source, lineno, f"{exc} List only states of the network"
                           + (" (or a node's name, e.g. a bus number)" if "part" in system.nodes
                              else "") + ".") from None
            i = j
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
    return Sites.from_arrays(kind, eligible, cost, system.state_names, str(source))


def read_sites(path: str | os.PathLike[str], system: StructuredSystem, *,
               kind: str = "actuator") -> Sites:
    """Read site data from a CSV file (see :func:`parse_sites`)."""
    return parse_sites(read_text(path), system, kind=kind, source=str(path))


def parse_candidates(text: str, system: StructuredSystem, *,
                     source: str = "<candidates>") -> Candidates:
    """Candidate actuators from CSV text: header ``name,cost,states``, then one candidate
    a line; ``states`` lists the states it acts on separated by spaces or ``;``,
    e.g. ``valve_2,3.5,t1 t2 t4``. Cells are read as in :func:`parse_sites` (double
    quotes, spreadsheet quoting removed from the name and from each state); a state whose
    name holds a space or ``;`` cannot be listed here.

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
    for lineno, raw, f in csv_records(text, source, seps=","):
        line = raw.strip()
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
        name, c_txt, s_txt = unprotect_name(f[0]), f[1], f[2]
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
        st_names = [unprotect_name(x) for x in s_txt.replace(";", " ").split() if x]
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
    return parse_candidates(read_text(path), system, source=str(path))
