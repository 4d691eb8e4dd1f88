"""The system description: a TOML file naming states, couplings, inputs, outputs,
disturbances, regulated outputs, control stations, subsystems and the ties between them
(schema in docs/FORMATS.md).

``read_spec(path)`` returns a :class:`SystemSpec` (the flat system plus the subsystem
structure); ``read_system(path)`` returns just the flat
:class:`~netctl.system.StructuredSystem`, which is what ``netctl.io.read`` gives every
verb for a ``.toml`` file. Orientation: a coupling ``[u, v]`` is the edge ``u -> v``,
"u influences v" (``A[v, u] != 0``).
"""

from __future__ import annotations

import difflib
import math
import os
import warnings
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from netctl._csr import Pattern, coo_pattern
from netctl.errors import MissingFileError
from netctl.io._spec_parts import (  # noqa: F401  (re-exported for io.stations)
    OUTSIDE_ENV,
    _check_keys,
    _confine,
    _Doc,
    _name_list,
    _node_table,
    _number,
    _read_stations_table,
)
from netctl.io.system_writer import INLINE_LINKS, _MODEL_NAMES, write_system  # noqa: F401
from netctl.records import TIE_KINDS
from netctl.stations import Station, make_stations
from netctl.system import StructuredSystem

__all__ = ["SystemSpec", "read_spec", "read_system", "write_system", "INLINE_LINKS", "TIE_KINDS",
           "STATE_ATTRIBUTES", "TERMS", "declared_terms"]

#: Kinds of tie between subsystems: a ``state`` tie is a link from a state of one
#: subsystem to a state of another; a ``signal`` tie feeds an output of one subsystem
#: into an input of another (the input is then no longer external).

#: State attributes with a meaning (and a type check); any other scalar attribute is
#: kept in the node table as it is.
STATE_ATTRIBUTES: dict[str, str] = {
    "x": "number (map coordinate)",
    "y": "number (map coordinate)",
    "actuator": "true/false: may host an actuator",
    "actuator_cost": "number >= 0",
    "sensor": "true/false: may host a sensor",
    "sensor_cost": "number >= 0",
    "self": "true/false or a number: self-dynamics (damping, decay) and its weight",
    "disturbance": "true/false: the node is a disturbance (not a state); its couplings "
                   "are how it acts on states",
}

#: attribute names the reader checks or acts on (any other is kept as it is)
_MEANING = frozenset(STATE_ATTRIBUTES) | {"subsystem"}
_PLAIN = frozenset((str, bool, int, float))  # value types kept as they are

_SECTIONS = ("system", "states", "couplings", "inputs", "outputs", "disturbances", "regulated",
             "stations", "subsystems", "ties", "elements")
_SYSTEM_KEYS = ("name", "description", "weighted", "terms", "model")

#: ``[system] terms``: the words summaries use (closed set; see docs/FORMATS.md)
TERMS: tuple[str, ...] = ("engineering", "network")

#: Models a description may record for its states (the names of
#: :data:`netctl.models.MODELS`; io does not import the models layer).
_COUPLING_KEYS = ("file", "links", "undirected")
_TIE_KEYS = ("from", "to", "kind", "weight")


@dataclass(frozen=True)
class SystemSpec:
    """A system description: the flat system and its subsystem structure.

    Attributes
    ----------
    path : str
        The TOML file read.
    name, description : str
    system : StructuredSystem
        The whole system: every state, coupling, state tie and signal tie as links of
        ``A``; the inputs not consumed by a signal tie as ``B``; every output as ``C``.
    inputs, outputs : dict of str to tuple of str
        Every named input (output) and the states it acts on (reads), including inputs
        consumed by signal ties.
    subsystems : dict of str to tuple of str
        Subsystem name -> its state names, in declaration order.
    ties : tuple of tuple
        ``(from_subsystem, from_name, to_subsystem, to_name, kind)``: the ``[[ties]]``
        in file order, then every coupling between states of two different subsystems
        (a ``state`` tie, in edge order). For ``kind="state"`` the names are states, for
        ``"signal"`` an output and an input.
        This is the tuple form :func:`netctl.structural.interconnect.compose` accepts.
    tie_weights : tuple of float or None
        The weight of each tie (``None`` when not given).
    unassigned : tuple of str
        States that belong to no subsystem (empty when there are no subsystems); they
        and their links are left out of :meth:`subsystem_systems`.
    stations : dict of str to (tuple of str, tuple of str)
        Control station name -> (its input names, its output names), from ``[stations]``.
    terms : str
        ``[system] terms``: ``"engineering"`` (states, inputs, plant) or ``"network"``
        (nodes, driver nodes, n_D) for the summaries; ``""`` when the file does not say.
    """

    path: str
    name: str
    description: str
    system: StructuredSystem
    inputs: dict[str, tuple[str, ...]] = field(default_factory=dict)
    outputs: dict[str, tuple[str, ...]] = field(default_factory=dict)
    subsystems: dict[str, tuple[str, ...]] = field(default_factory=dict)
    ties: tuple[tuple[str, str, str, str, str], ...] = ()
    tie_weights: tuple[float | None, ...] = ()
    unassigned: tuple[str, ...] = ()
    stations: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = field(default_factory=dict)
    terms: str = ""

    def station_records(self) -> tuple[Station, ...]:
        """The ``[stations]`` as typed :class:`~netctl.system.Station` records (checked
        against :attr:`system`; the reader has already refused unknown or shared items)."""
        return make_stations(self.system, {k: {"inputs": v[0], "outputs": v[1]}
                                           for k, v in self.stations.items()})

    def subsystem_of(self, state: str) -> str | None:
        """The subsystem that ``state`` belongs to (``None`` when none)."""
        for name, states in self.subsystems.items():
            if state in states:
                return name
        return None

    def subsystem_systems(self) -> dict[str, StructuredSystem]:
        """Each subsystem as its own system: its states, the links among them, the
        inputs (outputs) that act on (read) only its states, and its node table.

        Together with :attr:`ties` this is what
        :func:`netctl.structural.interconnect.compose` takes.
        """
        full = self.system
        out: dict[str, StructuredSystem] = {}
        for sub, states in self.subsystems.items():
            idx = full.index_of(states)
            pos = {s: k for k, s in enumerate(states)}
            A = full.A[idx][:, idx]
            ins = {u: [pos[s] for s in v] for u, v in self.inputs.items()
                   if v and all(s in pos for s in v)}
            outs = {y: [pos[s] for s in v] for y, v in self.outputs.items()
                    if v and all(s in pos for s in v)}
            s = StructuredSystem.from_matrices(
                A, state_names=states, weighted=full.weighted, model=full.model,
                nodes={k: np.asarray(c)[idx] for k, c in full.nodes.items()})
            if ins:
                s = s.with_inputs({u: [states[i] for i in v] for u, v in ins.items()})
            if outs:
                s = s.with_outputs({y: [states[i] for i in v] for y, v in outs.items()})
            # disturbances (regulated outputs) acting on (reading) some of its states:
            # each subsystem keeps its share, under the same name
            import scipy.sparse as sp

            E = sp.csc_array(full.E[idx])
            dcols = np.flatnonzero(np.diff(E.indptr))
            if dcols.size:
                s = s.with_disturbances(
                    E[:, dcols], names=[full.disturbance_names[int(j)] for j in dcols],
                    nodes={k: np.asarray(c)[dcols] for k, c in full.disturbance_nodes.items()})
            H = sp.csr_array(full.H[:, idx])
            hrows = np.flatnonzero(np.diff(H.indptr))
            if hrows.size:
                s = s.with_regulated(H[hrows], names=[full.regulated_names[int(r)]
                                                      for r in hrows])
            out[sub] = s
        return out

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready summary (names only)."""
        return {"path": self.path, "name": self.name, "description": self.description,
                "n_states": self.system.n_states, "n_links": self.system.n_links,
                "inputs": {k: list(v) for k, v in self.inputs.items()},
                "outputs": {k: list(v) for k, v in self.outputs.items()},
                "subsystems": {k: list(v) for k, v in self.subsystems.items()},
                "ties": [list(t) for t in self.ties], "unassigned": list(self.unassigned),
                "disturbances": list(self.system.disturbance_names),
                "regulated": list(self.system.regulated_names),
                "stations": {k: {"inputs": list(v[0]), "outputs": list(v[1])}
                             for k, v in self.stations.items()}}


# ---------------------------------------------------------------------- reading
def _terms_of(doc: _Doc, system_t: Mapping[str, Any]) -> str:
    terms = system_t.get("terms", "")
    if terms != "" and terms not in TERMS:
        raise doc.error(f"[system] terms must be one of {', '.join(map(repr, TERMS))}, "
                        f"found {terms!r}; 'network' words summaries for network studies "
                        "(nodes, driver nodes, n_D), 'engineering' for plants (states, "
                        "inputs).", "terms")
    return str(terms)


#: ``[system] terms`` of the description :func:`read_spec` read last, by file identity
#: (path, inode, size, modification time): a verb reads the file, then asks for its
#: terms, and a large grid's description is not parsed twice.
_LAST_TERMS: dict[tuple[Any, ...], str] = {}


def _file_key(path: str | os.PathLike[str]) -> tuple[Any, ...] | None:
    try:
        st = os.stat(path)
    except (OSError, TypeError, ValueError):
        return None
    return (os.path.realpath(path), st.st_ino, st.st_size, st.st_mtime_ns)


def declared_terms(path: str | os.PathLike[str]) -> str:
    """The ``[system] terms`` a system description declares (``""`` when none).

    Reads only the TOML text (not the couplings file it may name); errors as
    :func:`read_spec` reports them. The description :func:`read_spec` read last is
    not parsed again while the file is unchanged.
    """
    key = _file_key(path)
    if key is not None and key in _LAST_TERMS:
        return _LAST_TERMS[key]
    doc = _Doc(path)
    system_t = doc.data.get("system", {})
    return _terms_of(doc, system_t if isinstance(system_t, dict) else {})





def read_spec(path: str | os.PathLike[str], *, model: str = "given") -> SystemSpec:
    """Read a TOML system description.

    Parameters
    ----------
    path : path-like
        The ``.toml`` file; a coupling file it names is found relative to it.
    model : str
        Recorded as the system's model name.

    Returns
    -------
    SystemSpec

    Raises
    ------
    NetworkFileError
        Not valid TOML (with line and column); an unknown section or key (with the
        closest valid one); an attribute of the wrong type; a name that is not a
        state, input, output or subsystem; a state in two subsystems; a tie inside one
        subsystem; errors in the referenced edge list (named with its own file and line).
    MissingFileError
        The TOML file, or the coupling file it names, does not exist.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "plant.toml"
    >>> _ = p.write_text('''
    ... [states]
    ... tank = { x = 0.0, y = 1.0, sensor_cost = 2.5 }
    ... pump = { actuator = true, self = true }
    ... [couplings]
    ... links = [["pump", "tank"], ["tank", "valve"]]
    ... [inputs]
    ... motor = ["pump"]
    ... [subsystems]
    ... supply = ["pump"]
    ... storage = ["tank", "valve"]
    ... ''')
    >>> spec = read_spec(p)
    >>> spec.system.state_names, spec.system.n_links, spec.system.input_names
    (('tank', 'pump', 'valve'), 3, ('motor',))
    >>> spec.ties
    (('supply', 'pump', 'storage', 'tank', 'state'),)
    """
    file_key = _file_key(path)  # before the read: a file changed meanwhile is parsed again
    doc = _Doc(path)
    data = doc.data
    _check_keys(doc, data, _SECTIONS, "the top level")
    for sec in _SECTIONS:
        if sec in data and sec != "ties" and not isinstance(data[sec], dict):
            raise doc.error(f"[{sec}] must be a table (a section), found "
                            f"{type(data[sec]).__name__}.", sec)
    system_t = data.get("system", {})
    _check_keys(doc, system_t, _SYSTEM_KEYS, "[system]")
    name = system_t.get("name", Path(path).stem)
    description = system_t.get("description", "")
    if not isinstance(name, str) or not isinstance(description, str):
        raise doc.error("[system] name and description must be strings.", "name")
    terms = _terms_of(doc, system_t)

    names: list[str] = []
    index: dict[str, int] = {}

    def state_id(s: str) -> int:
        i = index.get(s)
        if i is None:
            i = index[s] = len(names)
            names.append(s)
        return i

    # ---- states and their attributes
    states_t = data.get("states", {})
    attrs: dict[str, dict[str, Any]] = {}
    self_w: dict[str, float] = {}
    any_self_weight = False
    kinds: list[str] = []  # nodes marked disturbance = true, in file order
    for s, a in states_t.items():
        if not isinstance(a, dict):
            raise doc.error(f"state {s!r} must be a table of attributes such as "
                            f"{{ x = 1.0, actuator = true }} (or {{}}), found {a!r}.", s)
        state_id(s)
        row: dict[str, Any] = {}
        special = _MEANING.intersection(a)
        if all(type(v) in _PLAIN and (type(v) is not float or math.isfinite(v))
               for v in a.values()):  # plain values: only the meaningful keys need checks
            row = dict(a)  # same key order; checked keys below are set in place
            if not special:
                attrs[s] = row
                continue
            for drop in ("self", "disturbance"):  # not node-table attributes
                row.pop(drop, None)
            items = [(k, a[k]) for k in a if k in special]
        else:
            items = list(a.items())
        for k, v in items:
            if k not in _MEANING and (isinstance(v, (str, bool)) or _number(v)):
                row[k] = v  # an attribute without a meaning, kept as it is
                continue
            if k in ("x", "y", "actuator_cost", "sensor_cost"):
                if not _number(v) or (k.endswith("cost") and v < 0):
                    raise doc.error(f"attribute {k!r} of state {s!r} must be a "
                                    f"{STATE_ATTRIBUTES[k]}, found {v!r}.", s, k)
                row[k] = float(v)
            elif k in ("actuator", "sensor"):
                if not isinstance(v, bool):
                    raise doc.error(f"attribute {k!r} of state {s!r} must be true or false, "
                                    f"found {v!r}.", s, k)
                row[k] = v
            elif k == "self":
                if isinstance(v, bool):
                    if v:
                        self_w[s] = 1.0
                elif _number(v) and v != 0:
                    self_w[s] = float(v)
                    any_self_weight = True
                else:
                    raise doc.error(f"attribute 'self' of state {s!r} must be true, false "
                                    f"or a nonzero finite number (its weight), found {v!r}.",
                                    s, k)
            elif k == "disturbance":
                if not isinstance(v, bool):
                    raise doc.error(f"attribute 'disturbance' of {s!r} must be true or false, "
                                    f"found {v!r}.", s, k)
                if v:
                    kinds.append(s)
            elif k == "subsystem":
                raise doc.error(f"state {s!r}: put states into subsystems in the "
                                "[subsystems] section, not with a 'subsystem' attribute.", s, k)
            elif isinstance(v, (str, bool)) or _number(v):
                row[k] = v
            else:
                raise doc.error(f"attribute {k!r} of state {s!r} has the type "
                                f"{type(v).__name__} ({v!r}); node attributes must be "
                                "numbers, strings or true/false.", s, k)
        attrs[s] = row

    # ---- couplings
    coup = data.get("couplings", {})
    _check_keys(doc, coup, _COUPLING_KEYS, "[couplings]")
    undirected = coup.get("undirected", False)
    if not isinstance(undirected, bool):
        raise doc.error(f"[couplings] undirected must be true or false, found {undirected!r}.",
                        "undirected")
    src_parts: list[np.ndarray] = []
    dst_parts: list[np.ndarray] = []
    w_parts: list[np.ndarray | None] = []
    if "file" in coup:
        f = coup["file"]
        if not isinstance(f, str):
            raise doc.error(f"[couplings] file must be a path string, found {f!r}.", "file")
        fpath = Path(f) if Path(f).is_absolute() else Path(path).parent / f
        _confine(fpath, path, f, lambda: doc.line_of("file"))
        if not fpath.is_file():
            raise MissingFileError(f"{path}:{doc.line_of('file')}: the coupling file {f!r} "
                                   f"(looked for at {fpath}) does not exist; paths are "
                                   "relative to the TOML file.")
        from netctl.io.edgelist import read_edge_arrays

        e = read_edge_arrays(fpath)
        remap = np.fromiter((state_id(s) for s in e.names), np.int64, len(e.names))
        src_parts.append(remap[e.sources])
        dst_parts.append(remap[e.targets])
        w_parts.append(e.weights)
    links = coup.get("links", [])
    if not isinstance(links, list):
        raise doc.error("[couplings] links must be a list such as [[\"a\", \"b\"], "
                        "[\"b\", \"c\", 0.5]].", "links")
    if links:
        ls, ld, lw = [], [], []
        some_w = False
        for item in links:
            ok = (isinstance(item, list) and len(item) in (2, 3)
                  and all(isinstance(x, str) for x in item[:2])
                  and (len(item) == 2 or _number(item[2])))
            if not ok:
                raise doc.error(f"each coupling must be [\"source\", \"target\"] or "
                                f"[\"source\", \"target\", weight], found {item!r}.",
                                *(x for x in (item if isinstance(item, list) else [])
                                  if isinstance(x, str)))
            ls.append(state_id(item[0]))
            ld.append(state_id(item[1]))
            some_w |= len(item) == 3
            lw.append(float(item[2]) if len(item) == 3 else math.nan)
        src_parts.append(np.array(ls, np.int64))
        dst_parts.append(np.array(ld, np.int64))
        wa = np.array(lw)
        if some_w and np.isnan(wa).any():
            k = int(np.isnan(wa).sum())
            warnings.warn(f"{path}: {k} coupling(s) without a weight were given the weight "
                          "1.0 because other couplings have weights.", stacklevel=2)
        w_parts.append(np.where(np.isnan(wa), 1.0, wa) if some_w else None)

    # ---- subsystems
    subs_t = data.get("subsystems", {})
    subsystems: dict[str, tuple[str, ...]] = {}
    owner: dict[str, str] = {}
    for sub, val in subs_t.items():
        if isinstance(val, dict):
            _check_keys(doc, val, ("states",), f"subsystem {sub!r}", sub)
            val = val.get("states", [])
        members = _name_list(doc, val, f"subsystem {sub!r}", sub)
        for s in members:
            if s in owner:
                raise doc.error(f"state {s!r} is in two subsystems ({owner[s]!r} and "
                                f"{sub!r}); each state belongs to at most one.", s)
            owner[s] = sub
            state_id(s)
        subsystems[sub] = tuple(members)

    n_before_io = len(names)

    def known_states(vals: list[str], where: str, key: str) -> list[str]:
        for s in vals:
            if s not in index:
                close = difflib.get_close_matches(s, names, n=2)
                hint = f" Did you mean {', '.join(map(repr, close))}?" if close else ""
                raise doc.error(f"{where} names {s!r}, which is not a state.{hint} Declare "
                                "it under [states] or in a coupling.", key, s)
        return vals

    inputs: dict[str, tuple[str, ...]] = {}
    for u, v in data.get("inputs", {}).items():
        inputs[u] = tuple(known_states(_name_list(doc, v, f"input {u!r}", u),
                                       f"input {u!r}", u))
    outputs: dict[str, tuple[str, ...]] = {}
    for y, v in data.get("outputs", {}).items():
        outputs[y] = tuple(known_states(_name_list(doc, v, f"output {y!r}", y),
                                        f"output {y!r}", y))
    signals: dict[str, dict[str, tuple[str, ...]]] = {}
    for sec in ("disturbances", "regulated"):
        signals[sec] = {}
        for z, v in data.get(sec, {}).items():
            if z in index:
                raise doc.error(f"{sec} {z!r} has the name of a state; give it its own name "
                                "(or mark the node with disturbance = true).", z)
            signals[sec][z] = tuple(known_states(_name_list(doc, v, f"{sec} {z!r}", z),
                                                 f"{sec} {z!r}", z))
    for s in kinds:
        if s in owner:
            raise doc.error(f"{s!r} is a disturbance but is listed in subsystem {owner[s]!r}; "
                            "subsystems hold states only.", s)
    assert len(names) == n_before_io

    # ---- ties
    ties_t = data.get("ties", [])
    if not isinstance(ties_t, list) or not all(isinstance(t, dict) for t in ties_t):
        raise doc.error("ties are written as [[ties]] tables with from = [\"subsystem\", "
                        "\"name\"] and to = [\"subsystem\", \"name\"].", "ties")
    ties: list[tuple[str, str, str, str, str]] = []
    tie_w: list[float | None] = []
    consumed: set[str] = set()
    ts, td, tw = [], [], []
    for t in ties_t:
        _check_keys(doc, t, _TIE_KEYS, "[[ties]]", "ties")
        ends = []
        for key in ("from", "to"):
            v = t.get(key)
            if not (isinstance(v, list) and len(v) == 2 and all(isinstance(x, str) for x in v)):
                raise doc.error(f"a tie's {key!r} must be [\"subsystem\", \"name\"], found "
                                f"{v!r}.", key)
            if v[0] not in subsystems:
                raise doc.error(f"a tie names the subsystem {v[0]!r}, which is not declared "
                                f"under [subsystems] (declared: "
                                f"{', '.join(map(repr, subsystems)) or 'none'}).", v[0])
            ends.append((v[0], v[1]))
        kind = t.get("kind", "state")
        if kind not in TIE_KINDS:
            raise doc.error(f"a tie's kind must be one of {', '.join(TIE_KINDS)}, found "
                            f"{kind!r}.", "kind")
        (fs, fn), (us, un) = ends
        if fs == us:
            raise doc.error(f"the tie {fs}.{fn} -> {us}.{un} stays inside subsystem {fs!r}; "
                            "ties join two different subsystems (put links inside a "
                            "subsystem under [couplings]).", fn)
        weight = t.get("weight")
        if weight is not None and (not _number(weight) or weight == 0):
            raise doc.error(f"a tie's weight must be a nonzero finite number, found "
                            f"{weight!r}.", "weight")
        if kind == "state":
            for s, sub in ((fn, fs), (un, us)):
                if owner.get(s) != sub:
                    raise doc.error(f"the tie names state {s!r} of subsystem {sub!r}, but "
                                    f"{s!r} is not one of its states.", s)
            ts.append([index[fn]])
            td.append([index[un]])
        else:
            if fn not in outputs or any(owner.get(s) != fs for s in outputs[fn]):
                raise doc.error(f"a signal tie starts at {fs}.{fn}: {fn!r} must be an "
                                f"output under [outputs] reading only states of {fs!r}.", fn)
            if un not in inputs or any(owner.get(s) != us for s in inputs[un]):
                raise doc.error(f"a signal tie ends at {us}.{un}: {un!r} must be an input "
                                f"under [inputs] acting only on states of {us!r}.", un)
            if un in consumed:
                raise doc.error(f"the input {un!r} is fed by two signal ties; give each "
                                "input at most one.", un)
            consumed.add(un)
            a = [index[s] for s in outputs[fn]]
            b = [index[s] for s in inputs[un]]
            ts.append(np.repeat(a, len(b)).tolist())
            td.append(np.tile(b, len(a)).tolist())
        tw.append([1.0 if weight is None else float(weight)] * len(ts[-1]))
        ties.append((fs, fn, us, un, kind))
        tie_w.append(None if weight is None else float(weight))
    if ts:
        src_parts.append(np.array(sum(ts, []), np.int64))
        dst_parts.append(np.array(sum(td, []), np.int64))
        w_parts.append(np.array(sum(tw, []), np.float64)
                       if any(w is not None for w in tie_w) else None)

    # ---- control stations
    stations = _read_stations_table(doc, data.get("stations", {}),
                                    [u for u in inputs if u not in consumed], list(outputs),
                                    consumed)

    # ---- assemble
    n = len(names)
    if n == 0:
        raise doc.error("the description declares no states: add a [states] section, "
                        "couplings, or a coupling file (see docs/FORMATS.md).")
    stored_model = system_t.get("model")
    if stored_model is not None:
        if stored_model not in _MODEL_NAMES:
            raise doc.error(f"[system] model must be one of {', '.join(_MODEL_NAMES)}, found "
                            f"{stored_model!r}.", "model")
        model = stored_model
    weighted_given = system_t.get("weighted")
    if weighted_given is not None and not isinstance(weighted_given, bool):
        raise doc.error(f"[system] weighted must be true or false, found {weighted_given!r}.",
                        "weighted")
    weighted = any(w is not None for w in w_parts) or any_self_weight
    if weighted_given is not None:
        weighted = weighted_given
    src = np.concatenate(src_parts) if src_parts else np.zeros(0, np.int64)
    dst = np.concatenate(dst_parts) if dst_parts else np.zeros(0, np.int64)
    w = np.concatenate([np.ones(s.size) if x is None else x for s, x in
                        zip(src_parts, w_parts)]) if src_parts else np.zeros(0)
    if undirected:
        loop = src == dst
        src, dst, w = (np.concatenate([src, dst[~loop]]), np.concatenate([dst, src[~loop]]),
                       np.concatenate([w, w[~loop]]))
    if self_w:
        ids = np.array([index[s] for s in self_w], np.int64)
        src = np.concatenate([src, ids])
        dst = np.concatenate([dst, ids])
        w = np.concatenate([w, np.array(list(self_w.values()))])
    # duplicates summed (weighted) or merged to 1.0 (a pattern): NumPy for a small file,
    # scipy for a large one (netctl._csr)
    A, n_dup = coo_pattern(dst, src, w if weighted else None, (n, n))
    if n_dup:
        warnings.warn(f"{path}: {n_dup} duplicate link{'s were' if n_dup > 1 else ' was'} "
                      "merged" + (" (weights summed)" if weighted else "") + ".", stacklevel=2)
    if not weighted and n_dup:
        A = Pattern(np.ones(A.nnz), A.indices, A.indptr, A.shape).frozen()
    nodes = _node_table(attrs, names)
    if subsystems:
        col = np.empty(n, dtype=object)
        for s, sub in owner.items():
            col[index[s]] = sub
        nodes["subsystem"] = col
    system = StructuredSystem(A=A, B=None, C=None, state_names=tuple(names), input_names=(),
                              output_names=(), nodes=nodes, weighted=weighted, model=model)
    ext = {u: list(v) for u, v in inputs.items() if u not in consumed}
    if ext:
        system = system.with_inputs(ext)
    if outputs:
        system = system.with_outputs({y: list(v) for y, v in outputs.items()})
    if signals["disturbances"]:
        system = system.with_disturbances({z: list(v) for z, v in signals["disturbances"].items()})
    if signals["regulated"]:
        system = system.with_regulated({z: list(v) for z, v in signals["regulated"].items()})
    unassigned = tuple(s for s in names if s not in owner and s not in kinds) if subsystems \
        else ()
    if subsystems:  # couplings between states of different subsystems are state ties too
        sub_names = list(subsystems)
        label = np.full(n, -1, np.int64)
        for s, sub in owner.items():
            label[index[s]] = sub_names.index(sub)
        es, ed = system.edges()
        cross = (label[es] >= 0) & (label[ed] >= 0) & (label[es] != label[ed])
        have = {(t[1], t[3]) for t in ties if t[4] == "state"}
        vals = system.pattern("A").data[cross]
        for a, b, x in zip(es[cross].tolist(), ed[cross].tolist(), vals.tolist()):
            if (names[a], names[b]) not in have:
                ties.append((owner[names[a]], names[a], owner[names[b]], names[b], "state"))
                tie_w.append(float(x) if weighted else None)
    if kinds:  # the marked states leave the states in one step; an error names the
        try:   # first state refused on its own, with its line
            system = system.states_to_disturbances(kinds)
        except (ValueError, KeyError) as exc:
            for s in kinds:
                try:
                    system.states_to_disturbances([s])
                except (ValueError, KeyError) as exc1:
                    raise doc.error(str(exc1), s) from None
            raise doc.error(str(exc), kinds[0]) from None
    if "elements" in data:  # a grid's element table (branch IDs, buses, units)
        from netctl.io._spec_elements import read_elements

        node_col = system.nodes.get("node")
        known = ({str(v) for v in node_col} if node_col is not None
                 else set(system.state_names))
        system = system._replace(elements=read_elements(doc, data["elements"], known))
    _LAST_TERMS.clear()
    if file_key is not None:
        _LAST_TERMS[file_key] = terms
    return SystemSpec(path=str(path), name=name, description=description, system=system,
                      terms=terms,
                      inputs=inputs, outputs=outputs, subsystems=subsystems, ties=tuple(ties),
                      tie_weights=tuple(tie_w), unassigned=unassigned, stations=stations)


def read_system(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """The flat :class:`StructuredSystem` of a TOML system description."""
    return read_spec(path, model=model).system

