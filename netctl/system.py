"""The structured linear system ``dx/dt = A x + B u + E w, y = C x, z = H x``.

Orientation (used everywhere in netctl): an edge ``u -> v`` means "state u influences
state v", i.e. ``A[v, u] != 0``; ``B[i, k] != 0`` means input k acts on state i;
``C[r, i] != 0`` means output r reads state i. Disturbances ``w`` (what the plant
suffers: weather, feeds, demands, utilities) enter through ``E`` (``E[i, j] != 0``:
disturbance j acts on state i); they are never states, so no link enters them.
Regulated outputs ``z = H x`` (``H[r, i] != 0``: regulated output r depends on state i)
are what disturbances must be kept from; measured outputs ``y = C x`` are what sensors read.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, fields
from typing import TYPE_CHECKING, Any, ClassVar

import numpy as np

from netctl import _construct, _derive, _disturb
from netctl._csr import Pattern, SparseView, n_diagonal
from netctl._parts import (
    NameList,
    _empty_csr,
    _names,
    _table,
    canonical_csr,
    check_not_states,
    name_lookup,
)
from netctl.errors import InvalidSystemError, UnknownNameError

if TYPE_CHECKING:
    import scipy.sparse as sp

    from netctl.records import ElementTable

#: the matrices of a system, stored as :class:`~netctl._csr.Pattern` in ``_parts``
_MATRICES = ("A", "B", "C", "E", "H")

__all__ = ["StructuredSystem", "NameList", "NODE_COLUMNS", "canonical_csr"]

#: Node-table columns netctl itself understands (others are carried along untouched).
#: ``x``, ``y``: map coordinates (NaN when unknown); ``actuator`` / ``sensor``: whether the
#: state may host one; ``actuator_cost`` / ``sensor_cost``: the cost of doing so.
NODE_COLUMNS: tuple[str, ...] = ("x", "y", "actuator", "actuator_cost", "sensor", "sensor_cost")


@dataclass(frozen=True, eq=False)
class StructuredSystem:
    """A structured linear system ``dx/dt = A x + B u + E w, y = C x, z = H x``.

    Build it with one of the ``from_*`` class methods; the constructor validates and
    canonicalizes whatever it is given (duplicates summed, explicit zeros removed,
    indices sorted). Instances are immutable: methods that change something return a
    new system.

    Arrays of an input that is already a canonical float64 CSR matrix with int64 indices
    are shared (as read-only views), not copied: do not modify them afterwards.

    The matrices are stored as NumPy CSR arrays (:meth:`pattern`); ``A``, ``B``, ``C``,
    ``E`` and ``H`` are scipy arrays sharing them, built on first access (so that a
    structural analysis of a small network never imports scipy).

    Attributes
    ----------
    A, B, C : scipy.sparse.csr_array
        ``n x n``, ``n x m`` and ``p x n``. The stored entries are the pattern; their
        values are the weights when ``weighted`` is true (otherwise 1.0).
    state_names, input_names, output_names : tuple of str
    nodes : mapping of str to numpy array
        The node table, one array of length ``n`` per column (see :data:`NODE_COLUMNS`).
    weighted : bool
        Whether the values in ``A`` are meaningful weights.
    model : str
        How the state-space pattern was obtained from the network (``"given"`` when the
        matrices were given directly). Reports state it, since self-dynamics change the
        answer.
    E : scipy.sparse.csr_array
        ``n x q`` disturbance pattern: ``E[i, j] != 0`` means disturbance ``j`` acts on
        state ``i``. Disturbances are exogenous: they are not states, never driver or
        sensor sites, and for controllability they are simply not inputs. Empty (``q = 0``)
        unless given, which leaves every analysis exactly as without them.
    H : scipy.sparse.csr_array
        ``r x n`` regulated-output pattern (``z = H x``); empty unless given.
    disturbance_names, regulated_names : tuple of str
    disturbance_nodes : mapping of str to numpy array
        Node-table columns of the disturbances (one value per disturbance: map
        coordinates and any other attribute the file gave them), kept so writers
        round-trip them.
    elements : ElementTable or None
        The physical elements (branches with their IDs, buses, generators) when the
        system was read from a grid file; ``None`` otherwise. Element ends are network
        nodes (buses), mapped to states through the node table's ``node`` column (a
        second-order model) or the state names.
    """

    A: sp.csr_array
    B: sp.csr_array
    C: sp.csr_array
    state_names: Sequence[str]
    input_names: Sequence[str]
    output_names: Sequence[str]
    nodes: Mapping[str, np.ndarray] = field(default_factory=dict)
    weighted: bool = False
    model: str = "given"
    E: Any = None
    H: Any = None
    disturbance_names: Sequence[str] = ()
    regulated_names: Sequence[str] = ()
    disturbance_nodes: Mapping[str, np.ndarray] = field(default_factory=dict)
    elements: ElementTable | None = field(default=None, repr=False, compare=False)
    _index: dict[str, int] = field(default_factory=dict, repr=False, compare=False)
    #: the stored matrices (not a constructor field): part name -> canonical pattern
    _parts: ClassVar[dict[str, Pattern]]

    def __post_init__(self) -> None:
        n = self.A.shape[0] if hasattr(self.A, "shape") else np.asarray(self.A).shape[0]
        A = canonical_csr(self.A, (n, n), "A")
        m = len(self.input_names) if self.B is None else (
            self.B.shape[1] if hasattr(self.B, "shape") else np.asarray(self.B).shape[1])
        p = len(self.output_names) if self.C is None else (
            self.C.shape[0] if hasattr(self.C, "shape") else np.asarray(self.C).shape[0])
        B = _empty_csr((n, m)) if self.B is None else canonical_csr(self.B, (n, m), "B")
        C = _empty_csr((p, n)) if self.C is None else canonical_csr(self.C, (p, n), "C")
        states = _names(self.state_names if len(self.state_names) else None, n, "x",
                        "state names")
        inputs = _names(self.input_names if len(self.input_names) else None, m, "u",
                        "input names")
        outputs = _names(self.output_names if len(self.output_names) else None, p, "y",
                         "output names")
        nodes = _table(self.nodes, n, "node table", "state")
        q = len(self.disturbance_names) if self.E is None else (
            self.E.shape[1] if hasattr(self.E, "shape") else np.asarray(self.E).shape[1])
        r = len(self.regulated_names) if self.H is None else (
            self.H.shape[0] if hasattr(self.H, "shape") else np.asarray(self.H).shape[0])
        E = _empty_csr((n, q)) if self.E is None else canonical_csr(self.E, (n, q), "E")
        H = _empty_csr((r, n)) if self.H is None else canonical_csr(self.H, (r, n), "H")
        disturbances = _names(self.disturbance_names if len(self.disturbance_names) else None,
                              q, "w", "disturbance names")
        regulated = _names(self.regulated_names if len(self.regulated_names) else None,
                           r, "z", "regulated output names")
        check_not_states(disturbances, states)
        dnodes = _table(self.disturbance_nodes, q, "disturbance table", "disturbance")
        for k in _MATRICES:  # built again from the stored parts when first asked for
            self.__dict__.pop(k, None)
        object.__setattr__(self, "_parts", {"A": A, "B": B, "C": C, "E": E, "H": H})
        object.__setattr__(self, "disturbance_names", disturbances)
        object.__setattr__(self, "regulated_names", regulated)
        object.__setattr__(self, "disturbance_nodes", dnodes)
        object.__setattr__(self, "state_names", states)
        object.__setattr__(self, "input_names", inputs)
        object.__setattr__(self, "output_names", outputs)
        object.__setattr__(self, "nodes", nodes)
        object.__setattr__(self, "_index", {})

    # ------------------------------------------------------------------ stored form
    def pattern(self, part: str) -> Pattern:
        """The stored CSR arrays of ``part`` (``"A"`` ... ``"H"``; canonical, read-only):
        those of ``system.A`` and so on, without building a scipy array or importing scipy."""
        return self._parts[part]

    def __getstate__(self) -> dict[str, Any]:  # the scipy views are built again on demand
        return {k: v for k, v in self.__dict__.items() if k not in _MATRICES}

    # ------------------------------------------------------------------ sizes
    @property
    def n_states(self) -> int:
        """Number of states ``n``."""
        return int(self._parts["A"].shape[0])

    @property
    def n_inputs(self) -> int:
        """Number of input columns ``m``."""
        return int(self._parts["B"].shape[1])

    @property
    def n_outputs(self) -> int:
        """Number of output rows ``p``."""
        return int(self._parts["C"].shape[0])

    @property
    def n_disturbances(self) -> int:
        """Number of disturbance columns ``q`` (of ``E``)."""
        return int(self._parts["E"].shape[1])

    @property
    def n_regulated(self) -> int:
        """Number of regulated output rows ``r`` (of ``H``)."""
        return int(self._parts["H"].shape[0])

    @property
    def n_links(self) -> int:
        """Number of nonzero entries of ``A`` (self-loops included)."""
        return self._parts["A"].nnz

    @property
    def n_self_loops(self) -> int:
        """Number of states with self-dynamics (nonzero diagonal of ``A``)."""
        return n_diagonal(self._parts["A"])

    # ------------------------------------------------------------------ builders
    @classmethod
    def from_edges(
        cls,
        sources: Any,
        targets: Any,
        n_states: int | None = None,
        *,
        weights: Any = None,
        state_names: Sequence[object] | None = None,
        inputs: Any = None,
        outputs: Any = None,
        nodes: Mapping[str, Any] | None = None,
        model: str = "given",
    ) -> StructuredSystem:
        """Build a system from integer edge arrays, edge ``sources[k] -> targets[k]``.

        Parameters
        ----------
        sources, targets : array_like of int
            Edge ``u -> v`` means state ``u`` influences state ``v`` (``A[v, u] != 0``).
        n_states : int, optional
            Number of states; defaults to one more than the largest index (or the
            number of ``state_names``). Isolated states need it.
        weights : array_like of float, optional
            One weight per edge; without it the system is a pattern (weights 1.0).
            Duplicate edges are summed; a warning says how many there were.
        inputs, outputs : optional
            See :meth:`with_inputs` and :meth:`with_outputs`.

        Raises
        ------
        InvalidSystemError
            Negative or out-of-range indices, unequal lengths, NaN or infinite weights.
        """
        return _construct.from_edges(cls, sources, targets, n_states, weights=weights,
                                      state_names=state_names, inputs=inputs,
                                      outputs=outputs, nodes=nodes, model=model)

    @classmethod
    def from_named_edges(
        cls,
        sources: Sequence[object],
        targets: Sequence[object],
        *,
        weights: Any = None,
        states: Sequence[object] | None = None,
        inputs: Any = None,
        outputs: Any = None,
        nodes: Mapping[str, Any] | None = None,
        model: str = "given",
    ) -> StructuredSystem:
        """Build a system from edges given by state *names* (``sources[k] -> targets[k]``).

        States are numbered in order of first appearance, after any names listed in
        ``states`` (which may also declare isolated states).
        """
        return _construct.from_named_edges(cls, sources, targets, weights=weights,
                                            states=states, inputs=inputs, outputs=outputs,
                                            nodes=nodes, model=model)

    @classmethod
    def from_matrices(
        cls,
        A: Any,
        B: Any = None,
        C: Any = None,
        *,
        state_names: Sequence[object] | None = None,
        input_names: Sequence[object] | None = None,
        output_names: Sequence[object] | None = None,
        nodes: Mapping[str, Any] | None = None,
        weighted: bool = True,
        model: str = "given",
    ) -> StructuredSystem:
        """Build a system from dense or sparse ``A`` (and optionally ``B``, ``C``).

        The nonzero entries are the pattern; with ``weighted=True`` (default) their
        values are kept as weights. Boolean matrices are read as patterns. ``A[v, u] != 0``
        means state ``u`` influences state ``v``: an *adjacency* matrix ``M`` with
        ``M[u, v]`` for the edge ``u -> v`` (the networkx, igraph and
        ``scipy.sparse.csgraph`` convention) is passed as ``M.T``.
        """
        return _construct.from_matrices(cls, A, B, C, state_names=state_names,
                                         input_names=input_names,
                                         output_names=output_names, nodes=nodes,
                                         weighted=weighted, model=model)

    @classmethod
    def from_networkx(
        cls,
        graph: Any,
        *,
        weight: str | None = None,
        inputs: Any = None,
        model: str = "given",
    ) -> StructuredSystem:
        """Build a system from a networkx ``DiGraph`` or ``Graph``.

        An edge ``u -> v`` of the graph means state ``u`` influences state ``v``
        (``A[v, u] != 0``): note that ``networkx.to_scipy_sparse_array(graph)`` is the
        *transpose* of ``A``. An undirected edge means influence in both directions;
        parallel edges of a multigraph are merged (with a warning). Node attributes named in
        :data:`NODE_COLUMNS` fill the node table; other scalar attributes are carried in
        the table too. ``weight`` names the edge attribute holding weights.
        """
        return _construct.from_networkx(cls, graph, weight=weight, inputs=inputs, model=model)

    @classmethod
    def from_igraph(
        cls,
        graph: Any,
        *,
        weight: str | None = None,
        inputs: Any = None,
        model: str = "given",
    ) -> StructuredSystem:
        """Build a system from an igraph ``Graph`` (undirected edges mean both directions).

        An edge ``u -> v`` means state ``u`` influences state ``v`` (``A[v, u] != 0``;
        ``graph.get_adjacency()`` is the transpose of ``A``). Vertex attribute ``name``
        gives the state names when present (``_nx_name`` when the graph came from
        ``igraph.Graph.from_networkx``).
        """
        return _construct.from_igraph(cls, graph, weight=weight, inputs=inputs, model=model)

    # ------------------------------------------------------------------ views
    def edges(self) -> tuple[np.ndarray, np.ndarray]:
        """Edge arrays ``(sources, targets)`` of ``A``, sorted by target then source."""
        A = self._parts["A"]
        tgt = np.repeat(np.arange(self.n_states, dtype=np.int64), np.diff(A.indptr))
        return A.indices.copy(), tgt

    def index_of(self, names: Iterable[object], *, kind: str = "state") -> np.ndarray:
        """Indices of the given state (or ``kind="input"`` / ``"output"``) names.

        Integers are accepted as indices. Raises :class:`UnknownNameError` naming the
        first unknown name and a few close matches.
        """
        pool = self._pool(kind)
        lookup = self._index.get(kind)
        names = names if isinstance(names, (list, tuple)) else list(names)
        if lookup is None and not isinstance(pool, NameList):
            lookup = name_lookup(pool, names, self._index, kind)  # type: ignore[assignment]
        out = []
        for name in names:
            key = str(name)
            pos = pool.position(key) if isinstance(pool, NameList) else lookup.get(key)  # type: ignore[union-attr]
            if pos is not None:
                out.append(pos)
            elif isinstance(name, (int, np.integer)) and 0 <= int(name) < len(pool):
                out.append(int(name))
            else:
                if kind == "state" and key in self.disturbance_names:
                    raise UnknownNameError(
                        f"{key!r} is a disturbance, not a state: the plant suffers it and "
                        "nobody commands it, so no input or sensor is ever placed on it; "
                        f"name a state it acts on instead (e.g. "
                        f"{', '.join(map(repr, self.disturbed_by(key)[:3]))}).")
                import difflib
                close = difflib.get_close_matches(key, pool, n=3) if len(pool) <= 100_000 else []
                hint = f" Did you mean {', '.join(map(repr, close))}?" if close else ""
                raise UnknownNameError(
                    f"unknown {kind} name {key!r}: the system has {len(pool)} {kind}s"
                    f" (e.g. {', '.join(map(repr, list(pool[:3])))}).{hint}")
        return np.asarray(out, dtype=np.int64)

    def names_of(self, indices: Iterable[int], *, kind: str = "state") -> list[str]:
        """Names for the given indices."""
        pool = self._pool(kind)
        return [pool[int(i)] for i in indices]

    _KINDS = ("state", "input", "output", "disturbance", "regulated")

    def _pool(self, kind: str) -> Sequence[str]:
        pool = {"state": self.state_names, "input": self.input_names,
                "output": self.output_names, "disturbance": self.disturbance_names,
                "regulated": self.regulated_names}.get(kind)
        if pool is None:
            raise InvalidSystemError(
                f"kind must be one of {', '.join(map(repr, self._KINDS))}, found {kind!r}.")
        return pool

    def disturbed_states(self) -> np.ndarray:
        """Sorted indices of the states some disturbance acts on directly."""
        return np.flatnonzero(np.diff(self._parts["E"].indptr)).astype(np.int64)

    def disturbed_by(self, disturbance: object) -> list[str]:
        """Names of the states the disturbance (a name or an index) acts on directly."""
        j = int(self.index_of([disturbance], kind="disturbance")[0])
        E = self._parts["E"]
        rows = np.repeat(np.arange(E.shape[0]), np.diff(E.indptr))[E.indices == j]
        return [self.state_names[int(i)] for i in rows]

    def driven_states(self) -> np.ndarray:
        """Sorted indices of the states some input acts on directly (driver nodes)."""
        return np.flatnonzero(np.diff(self._parts["B"].indptr)).astype(np.int64)

    def measured_states(self) -> np.ndarray:
        """Sorted indices of the states some output reads directly."""
        return np.unique(self._parts["C"].indices).astype(np.int64)

    # ------------------------------------------------------------------ transforms
    def with_inputs(self, inputs: Any, *, names: Sequence[object] | None = None) -> StructuredSystem:
        """A copy with new input columns (replacing any existing ones).

        ``inputs`` may be: a sequence of state names or indices (one dedicated input
        each; a 1-D integer array is always indices, see :func:`netctl._derive.states_of`);
        a mapping ``input name -> states it acts on``; or an ``n x m`` matrix.
        """
        return _derive.with_inputs(self, inputs, names=names)

    def with_outputs(self, outputs: Any, *, names: Sequence[object] | None = None) -> StructuredSystem:
        """A copy with new output rows: state names/indices (one dedicated sensor each),
        a mapping ``output name -> states it reads``, or a ``p x n`` matrix."""
        return _derive.with_outputs(self, outputs, names=names)

    def with_disturbances(self, disturbances: Any, *, names: Sequence[object] | None = None,
                          nodes: Mapping[str, Any] | None = None) -> StructuredSystem:
        """A copy with new disturbance columns ``E`` (replacing any existing ones).

        ``disturbances`` may be: a sequence of state names or indices (one disturbance
        acting on each, named ``w:<state>``); a mapping ``disturbance name -> states it
        acts on``; or an ``n x q`` matrix. ``nodes`` is the disturbances' own node table
        (one value per disturbance in each column).
        """
        return _derive.with_disturbances(self, disturbances, names=names, nodes=nodes)

    def with_regulated(self, regulated: Any, *, names: Sequence[object] | None = None
                       ) -> StructuredSystem:
        """A copy with new regulated outputs ``z = H x``: state names/indices (one each,
        named ``z:<state>``), a mapping ``name -> states it depends on``, or an ``r x n``
        matrix."""
        return _derive.with_regulated(self, regulated, names=names)

    def states_to_disturbances(self, names: Iterable[object]) -> StructuredSystem:
        """A copy in which the named states become disturbances.

        Readers call this for nodes a file marks as disturbances: each one leaves the
        state set, its outgoing links become its column of ``E`` (weights kept), and its
        node-table row moves to :attr:`disturbance_nodes`. New disturbances come after
        any existing ones, in the order given.

        Raises
        ------
        InvalidSystemError
            A named state has incoming links (self-loops included: a disturbance is
            exogenous), an input acts on it, or a sensor or regulated output reads it;
            the message names it.
        """
        return _disturb.states_to_disturbances(self, names)

    def dual(self) -> StructuredSystem:
        """The dual system ``(A^T, C^T, B^T)``: inputs become outputs and vice versa.

        Observability of ``self`` is controllability of ``self.dual()``. Edges reverse.
        Disturbances and regulated outputs swap the same way (``E`` becomes ``H^T`` and
        ``H`` becomes ``E^T``), so the dual's transfer matrix from disturbances to
        regulated outputs is the transpose of the original one, and ``dual().dual()``
        is the original system. The disturbances' node table does not survive the
        swap (regulated outputs have none).

        Notes
        -----
        Every part of ``self`` was validated when it was built, and the transpose of a
        canonical pattern is canonical, so the dual is assembled without a second
        validation pass (:meth:`_trusted`): the transposes are the only O(links) work.
        The one check that can newly fail is kept: the regulated outputs become
        disturbances, whose names must not be state names.
        """
        return _derive.dual(self)

    @classmethod
    def _trusted(cls, **parts: Any) -> StructuredSystem:
        """A system from parts already in stored form (frozen canonical patterns or CSR
        arrays with int64 indices, validated names, read-only node-table columns of the
        right lengths), without the constructor's checks (``_index`` may be given: a name
        lookup to share). Internal: only for parts derived from a validated system by
        operations that keep them valid."""
        self = object.__new__(cls)
        stored = {}
        for f in fields(cls):  # not the ClassVar ``_parts``
            name = f.name
            if name in _MATRICES:
                m = parts.pop(name)
                stored[name] = m if isinstance(m, Pattern) else Pattern.of_scipy(m).frozen()
                continue
            object.__setattr__(self, name, parts.pop(name, {}) if name == "_index"
                               else parts.pop(name))
        object.__setattr__(self, "_parts", stored)
        if parts:
            raise TypeError(f"unknown parts {sorted(parts)!r}")
        return self

    def with_self_loops(self) -> StructuredSystem:
        """A copy with self-dynamics on every state (existing diagonal weights kept)."""
        return _derive.with_self_loops(self)

    def to_networkx(self) -> Any:
        """A networkx ``DiGraph`` of the state graph (edge ``u -> v`` iff ``A[v, u] != 0``).

        Node attributes: the node table columns, plus ``driven`` (an input acts on it) and
        ``measured``. Edge attribute ``weight`` when the system is weighted.
        """
        from netctl._graphlibs import to_networkx

        return to_networkx(self)

    def _replace(self, **changes: Any) -> StructuredSystem:
        p = self._parts
        base: dict[str, Any] = dict(A=p["A"], B=p["B"], C=p["C"], state_names=self.state_names,
                    input_names=self.input_names, output_names=self.output_names,
                    nodes=self.nodes, weighted=self.weighted, model=self.model,
                    E=p["E"], H=p["H"], disturbance_names=self.disturbance_names,
                    regulated_names=self.regulated_names,
                    disturbance_nodes=self.disturbance_nodes, elements=self.elements)
        base.update(changes)
        return StructuredSystem(**base)

    def same_as(self, other: StructuredSystem) -> bool:
        """Whether ``other`` has the same parts: patterns and weights of ``A, B, C, E, H``,
        all names, the node tables, ``weighted`` and ``model``."""
        def eq_matrix(a: Pattern, b: Pattern) -> bool:
            return a.shape == b.shape and a.nnz == b.nnz and bool(
                np.array_equal(a.indptr, b.indptr) and np.array_equal(a.indices, b.indices)
                and np.array_equal(a.data, b.data))

        def eq_table(a: Mapping[str, np.ndarray], b: Mapping[str, np.ndarray]) -> bool:
            return set(a) == set(b) and all(
                np.array_equal(np.asarray(a[k]), np.asarray(b[k]), equal_nan=a[k].dtype.kind == "f")
                if a[k].dtype.kind == "f" else list(a[k]) == list(b[k]) for k in a)

        return (isinstance(other, StructuredSystem)
                and all(eq_matrix(self._parts[k], other._parts[k]) for k in _MATRICES)
                and all(tuple(getattr(self, k)) == tuple(getattr(other, k)) for k in (
                    "state_names", "input_names", "output_names", "disturbance_names",
                    "regulated_names"))
                and eq_table(self.nodes, other.nodes)
                and eq_table(self.disturbance_nodes, other.disturbance_nodes)
                and self.weighted == other.weighted and self.model == other.model)

    def parts(self) -> dict[str, Any]:
        """Sizes and names of every part, JSON-ready (for ``inspect``-style summaries)."""
        return {"n_states": self.n_states, "n_links": self.n_links,
                "n_inputs": self.n_inputs, "n_outputs": self.n_outputs,
                "n_disturbances": self.n_disturbances, "n_regulated": self.n_regulated,
                "disturbances": list(self.disturbance_names),
                "regulated": list(self.regulated_names),
                "model": self.model, "weighted": self.weighted}

    def __repr__(self) -> str:
        extra = ""
        if self.n_disturbances or self.n_regulated:
            extra = (f"n_disturbances={self.n_disturbances}, "
                     f"n_regulated={self.n_regulated}, ")
        return (f"StructuredSystem(n_states={self.n_states}, n_links={self.n_links}, "
                f"n_inputs={self.n_inputs}, n_outputs={self.n_outputs}, {extra}"
                f"model={self.model!r}, weighted={self.weighted})")



for _name in _MATRICES:  # after @dataclass, which keeps them as constructor fields
    setattr(StructuredSystem, _name, SparseView(_name))
del _name
