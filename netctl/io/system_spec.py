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

import os
import warnings
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from netctl._csr import Pattern, coo_pattern
from netctl.errors import MissingFileError
from netctl.io._spec_parts import (
    _SECTIONS,
    STATE_ATTRIBUTES,
    _check_keys,
    _confine,
    _Doc,
    _read_links,
    _read_signals,
    _read_stations_table,
    _read_states,
    _read_subsystems,
    _read_ties,
)
from netctl.io._spec_repeats import Place, links_entry_place, repeat_said, zero_said
from netctl.io.system_writer import INLINE_LINKS, _MODEL_NAMES, write_system  # noqa: F401
from netctl.records import TIE_KINDS
from netctl.stations import Station, make_stations
from netctl.system import StructuredSystem

__all__ = ["SystemSpec", "read_spec", "read_system", "write_system", "INLINE_LINKS", "TIE_KINDS",
           "STATE_ATTRIBUTES", "TERMS", "declared_terms"]

#: ``[system]`` and ``[couplings]`` keys (the other tables are checked in
#: :mod:`netctl.io._spec_parts`)
_SYSTEM_KEYS = ("name", "description", "weighted", "terms", "model")
_COUPLING_KEYS = ("file", "links", "undirected")

#: ``[system] terms``: the words summaries use (closed set; see docs/FORMATS.md)
TERMS: tuple[str, ...] = ("engineering", "network")


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


def _node_table(attrs: dict[str, dict[str, Any]], names: list[str]) -> dict[str, np.ndarray]:
    """The node table: one column per attribute the states carry (coordinates and costs
    as floats, NaN where not given; actuator/sensor as booleans, True where not said;
    any other as the objects given, None where absent)."""
    n = len(names)
    if not any(attrs.values()):
        return {}
    index = {s: i for i, s in enumerate(names)}
    keys: list[str] = []
    for row in attrs.values():
        keys.extend(k for k in row if k not in keys)
    rows = list(attrs.values())
    at = np.fromiter((index[s] for s in attrs), np.int64, len(rows))
    table: dict[str, np.ndarray] = {}
    for k in keys:  # column by column: one list of the rows' values, one array store
        if k in ("x", "y", "actuator_cost", "sensor_cost"):
            col = np.full(n, np.nan)
            col[at] = np.array([row.get(k, np.nan) for row in rows], float)
        elif k in ("actuator", "sensor"):
            col = np.ones(n, bool)  # not said: allowed
            col[at] = np.array([row.get(k, True) for row in rows], bool)
        else:
            col = np.empty(n, dtype=object)
            vals = np.empty(len(rows), dtype=object)
            vals[:] = [row.get(k) for row in rows]  # the objects as they are (None: absent)
            col[at] = vals
        table[k] = col
    return table


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
    attrs, self_w, any_self_weight, kinds = _read_states(doc, data.get("states", {}), state_id)

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
    places: list[Place] = []  # where each part's links are written (for the merge warning)
    coupling_file: Path | None = None
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
        from netctl.io._edgemarks import quoted_names, repeated_header
        from netctl.io.edgelist import _fields, _is_header, _open, read_edge_arrays

        e = read_edge_arrays(fpath)
        coupling_file = fpath  # its mark lines are checked once the description is read
        with _open(fpath) as fh:  # as a plain edge list says them
            repeated_header(fh, fpath, _fields, _is_header, e.names)
        quoted_names(e.names, fpath)
        remap = np.fromiter((state_id(s) for s in e.names), np.int64, len(e.names))
        src_parts.append(remap[e.sources])
        dst_parts.append(remap[e.targets])
        w_parts.append(e.weights)
        places.append((e.sources.size, _file_place(fpath, e.header)))

    links = _read_links(doc, coup.get("links", []), state_id, path)
    if links is not None:
        src_parts.append(links[0])
        dst_parts.append(links[1])
        w_parts.append(links[2])
        places.append((links[0].size, links_entry_place(doc.text, coup["links"])))

    # ---- subsystems
    subsystems, owner = _read_subsystems(doc, data.get("subsystems", {}), state_id)

    n_before_io = len(names)
    inputs, outputs, signals = _read_signals(doc, data, index, names)
    for s in kinds:
        if s in owner:
            raise doc.error(f"{s!r} is a disturbance but is listed in subsystem {owner[s]!r}; "
                            "subsystems hold states only.", s)
    assert len(names) == n_before_io

    # ---- ties
    ties, tie_w, consumed, tie_links = _read_ties(doc, data.get("ties", []), subsystems, owner,
                                                  index, inputs, outputs)
    if tie_links is not None:
        src_parts.append(tie_links[0])
        dst_parts.append(tie_links[1])
        w_parts.append(tie_links[2])
        per_tie = np.repeat(np.arange(len(ties)), [
            1 if t[4] == "state" else len(outputs[t[1]]) * len(inputs[t[3]]) for t in ties])
        places.append((tie_links[0].size, lambda i: (f"[[ties]] entry {per_tie[i] + 1}", None)))

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
    origin = np.arange(src.size)  # each link's entry, counted over ``places``
    mirror = None
    if undirected:
        loop = src == dst
        src, dst, w = (np.concatenate([src, dst[~loop]]), np.concatenate([dst, src[~loop]]),
                       np.concatenate([w, w[~loop]]))
        origin = np.concatenate([origin, origin[~loop]])
        mirror = np.arange(src.size) >= origin.size - int(np.count_nonzero(~loop))
    if self_w:
        ids = np.array([index[s] for s in self_w], np.int64)
        origin = np.concatenate([origin, sum(x[0] for x in places) + np.arange(ids.size)])
        selfs = list(self_w)
        if mirror is not None:
            mirror = np.concatenate([mirror, np.zeros(ids.size, bool)])
        places.append((ids.size, lambda i: (f"the 'self' attribute of state {selfs[i]!r}",
                                            doc.line_of(selfs[i], "self"))))
        src = np.concatenate([src, ids])
        dst = np.concatenate([dst, ids])
        w = np.concatenate([w, np.array(list(self_w.values()))])
    # duplicates summed (weighted) or merged to 1.0 (a pattern): NumPy for a small file,
    # scipy for a large one (netctl._csr)
    if weighted and (w == 0).any():  # weight 0 is no link: left out, said (as edge lists)
        warnings.warn(zero_said(path, names, src, dst, w, origin, places), stacklevel=2)
        nz = w != 0
        src, dst, w, origin = src[nz], dst[nz], w[nz], origin[nz]
        mirror = None if mirror is None else mirror[nz]
    A, n_dup = coo_pattern(dst, src, w if weighted else None, (n, n))
    if n_dup:
        said = (f"{n_dup} duplicate link{'s were' if n_dup > 1 else ' was'} merged"
                + (" (weights summed)" if weighted else ""))
        warnings.warn(repeat_said(path, said, names, src, dst, origin, places, weighted,
                                  mirror), stacklevel=2)
    if weighted and n_dup:  # repeats whose weights cancel leave no link: said
        gone = int(np.unique(dst * max(n, 1) + src).size) - A.nnz
        if gone:
            warnings.warn(f"{path}: {gone} link{'s' if gone > 1 else ''} given more than once "
                          "with weights that sum to 0 " + ("were" if gone > 1 else "was") +
                          " left out (no link is left where weights cancel); give each link "
                          "once, with its weight.", stacklevel=2)
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
    if coupling_file is not None:
        from netctl.io._edgemarks import coupling_file_marks

        coupling_file_marks(coupling_file, path, kinds,
                            {x for v in signals["regulated"].values() for x in v})
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


def _file_place(fpath: Path, header: bool) -> Any:
    """``where`` for the links of a coupling file: the file and the link's line."""
    from netctl.io._edgelines import line_of_link

    def where(i: int) -> tuple[str, int | None]:
        try:
            line = line_of_link(fpath, i, header=header)
        except (OSError, MissingFileError):  # the file went away since it was read
            line = None
        return f"the coupling file {fpath}" + (f" (line {line})" if line else ""), None
    return where


def read_system(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """The flat :class:`StructuredSystem` of a TOML system description."""
    return read_spec(path, model=model).system

