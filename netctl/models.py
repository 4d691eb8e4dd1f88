"""From a plain network to the state-space pattern its physics implies.

* ``first-order``: one state per node; couplings along the links. Self-loops in the
  file are kept as self-dynamics of those states only.
* ``self-loops``: the same, with self-dynamics (damping, decay) on every state.
* ``second-order``: two states per node, ``node:pos`` (position-like: angle, level,
  displacement) and ``node:vel`` (velocity-like: frequency, flow rate), in that order,
  node by node. ``pos`` is driven by the ``vel`` of the same node; ``vel`` by its own
  damping (a self-loop), by the node's own ``pos`` and by the ``pos`` of every node that
  influences it in the network (a link ``j -> i`` gives ``j:pos -> i:vel``). This is the
  pattern of mechanical networks (masses, springs, dampers) and of swing-type power-grid
  dynamics. Inputs and disturbances act on velocity states (forces, power injections,
  loads); measured and regulated outputs read position states.

Self-dynamics change the answer drastically (with a self-loop on every state, one input
is generically enough for a strongly connected network), so the choice is explicit and
recorded in :attr:`StructuredSystem.model`.
"""

from __future__ import annotations

import warnings

import numpy as np

from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["MODELS", "apply_model", "resolve_model", "second_order", "SWING_DEFAULTS"]

MODELS: dict[str, str] = {
    "first-order": "one state per node, couplings along the links, self-loops only where given",
    "self-loops": "one state per node, couplings along the links, self-dynamics on every state",
    "second-order": "two states per node (node:pos, node:vel): pos <- own vel; vel <- own "
                    "vel (damping), own pos and neighbours' pos; inputs act on vel states",
}

#: Per-unit defaults of the second-order (swing) model where the case gives none: inertia
#: constant ``M`` and damping ``D`` of every bus. Couplings come from the case (branch
#: susceptance ``1/x`` in per unit on the case's MVA base), else 1.
SWING_DEFAULTS: dict[str, float] = {"inertia": 1.0, "damping": 1.0}


def resolve_model(system: StructuredSystem, requested: str | None) -> StructuredSystem:
    """Apply the model a verb should use: ``requested``, else the file's own.

    * A system whose states are already under a model (a system description that
      records ``model``) keeps it; asking for another one is an error.
    * A power grid (read with its elements: buses and branches) defaults to the
      ``second-order`` (swing) model; a warning says so when the first-order model,
      which has no self-dynamics (no inertia, no damping), is asked for on a grid.
    * Any other network defaults to ``first-order``.

    Raises
    ------
    OptionError
        ``requested`` is not one of :data:`MODELS`, or differs from the model the
        file's states are already under.
    """
    if system.model in MODELS:
        if requested is None or requested == system.model:
            return system
        raise OptionError(f"the file's states are already under the {system.model!r} model "
                          f"(recorded in the file); --model {requested} cannot be applied on "
                          "top of it. Leave out --model, or convert the original network.")
    grid = system.elements is not None
    model = requested or ("second-order" if grid else "first-order")
    if grid and model == "first-order":
        warnings.warn("the first-order model has no self-dynamics (no inertia, no damping), "
                      "which is not physical for an electrical network and inflates the "
                      "number of inputs; grids default to --model second-order (swing).",
                      stacklevel=2)
    return apply_model(system, model)


def apply_model(network: StructuredSystem, model: str) -> StructuredSystem:
    """The state-space pattern of ``network`` under ``model`` (one of :data:`MODELS`).

    Raises
    ------
    OptionError
        ``model`` is not one of :data:`MODELS` (the message lists them).

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> net = StructuredSystem.from_edges([0], [1], 2, state_names=["a", "b"])
    >>> apply_model(net, "self-loops").n_self_loops
    2
    >>> apply_model(net, "second-order").state_names
    ('a:pos', 'a:vel', 'b:pos', 'b:vel')
    """
    if model not in MODELS:
        raise OptionError(f"unknown model {model!r}; choose one of {', '.join(MODELS)}.")
    if model == "self-loops":
        return network.with_self_loops()._replace(model=model)
    if model == "second-order":
        return second_order(network)
    return network._replace(model=model)


def second_order(network: StructuredSystem) -> StructuredSystem:
    r"""Two states per node: the ``second-order`` model (see the module docstring).

    Node ``i`` becomes states ``2i`` (``i:pos``) and ``2i + 1`` (``i:vel``). With
    :math:`L` the network's coupling pattern, the state matrix is

    .. math::

        \dot{p}_i = v_i, \qquad
        \dot{v}_i = -d_i v_i - k_i p_i + \sum_{j \to i} w_{ij} p_j .

    When the network is weighted, ``w_ij`` are its weights and ``k_i = \sum_j w_ij``
    (diffusive coupling; ``k_i = 1`` when that sum is 0), divided by the inertia ``M_i``
    of the node table's ``inertia`` column, with damping ``d_i = D_i / M_i`` from its
    ``damping`` column (both per unit; :data:`SWING_DEFAULTS` where absent); otherwise
    every entry is 1 (a pattern). Self-loops of the
    network are absorbed into the own-position term (with a warning that counts them).
    Input ``k`` acting on node ``i`` acts on ``i:vel``; output ``r`` reading node ``i``
    reads ``i:pos``. The node table is repeated for both states of a node, with
    ``actuator`` false on position states, plus columns ``node`` and ``part``.

    Notes
    -----
    O(n + E) array code. Orientation: ``A[v, u] != 0`` means ``u`` influences ``v``.
    """
    import scipy.sparse as sp

    n = network.n_states
    A = network.A.tocoo()
    loop = A.row == A.col
    if loop.any():
        k = int(loop.sum())
        warnings.warn(f"second-order model: {k} self-loop{'s' if k > 1 else ''} of the "
                      "network are part of the own-position term of the velocity state.",
                      stacklevel=2)
    rows, cols = A.row[~loop].astype(np.int64), A.col[~loop].astype(np.int64)
    vals: np.ndarray = A.data[~loop]
    idx = np.arange(n, dtype=np.int64)
    pos, vel = 2 * idx, 2 * idx + 1
    own: np.ndarray = np.ones(n)
    damp: np.ndarray = np.ones(n)
    couple: np.ndarray = np.ones(rows.size)
    if network.weighted:
        inertia = np.asarray(network.nodes.get("inertia", np.full(n, SWING_DEFAULTS["inertia"])),
                             float)
        damping = np.asarray(network.nodes.get("damping", np.full(n, SWING_DEFAULTS["damping"])),
                             float)
        inertia = np.where(np.isfinite(inertia) & (inertia > 0), inertia,
                           SWING_DEFAULTS["inertia"])
        damping = np.where(np.isfinite(damping), damping, SWING_DEFAULTS["damping"])
        k_i = np.bincount(rows, weights=vals, minlength=n)
        own = -np.where(k_i == 0, 1.0, k_i) / inertia
        damp = -damping / inertia
        couple = vals.astype(np.float64) / inertia[rows]
    r = np.concatenate([pos, vel, vel, 2 * rows + 1])
    c = np.concatenate([vel, vel, pos, 2 * cols])
    d = np.concatenate([np.ones(n), damp, own, couple])
    A2 = sp.coo_array((d, (r, c)), shape=(2 * n, 2 * n)).tocsr()
    B = network.B.tocoo()
    B2 = sp.coo_array((B.data, (2 * B.row.astype(np.int64) + 1, B.col)),
                      shape=(2 * n, network.n_inputs)).tocsr()
    C = network.C.tocoo()
    C2 = sp.coo_array((C.data, (C.row, 2 * C.col.astype(np.int64))),
                      shape=(network.n_outputs, 2 * n)).tocsr()
    E = network.E.tocoo()
    E2 = sp.coo_array((E.data, (2 * E.row.astype(np.int64) + 1, E.col)),
                      shape=(2 * n, network.n_disturbances)).tocsr()
    H = network.H.tocoo()
    H2 = sp.coo_array((H.data, (H.row, 2 * H.col.astype(np.int64))),
                      shape=(network.n_regulated, 2 * n)).tocsr()
    names = tuple(f"{s}:{part}" for s in network.state_names for part in ("pos", "vel"))
    nodes = {k: np.repeat(np.asarray(v), 2) for k, v in network.nodes.items()}
    act = nodes.get("actuator", np.ones(2 * n, bool)).astype(bool).copy()
    act[0::2] = False
    nodes["actuator"] = act
    node_col = np.empty(2 * n, dtype=object)
    node_col[:] = np.repeat(np.array(network.state_names, dtype=object), 2)
    part = np.empty(2 * n, dtype=object)
    part[0::2], part[1::2] = "pos", "vel"
    nodes.setdefault("node", node_col)
    nodes.setdefault("part", part)
    return StructuredSystem(A=A2, B=B2, C=C2, state_names=names,
                            input_names=network.input_names, output_names=network.output_names,
                            nodes=nodes, weighted=network.weighted, model="second-order",
                            E=E2, H=H2, disturbance_names=network.disturbance_names,
                            regulated_names=network.regulated_names,
                            disturbance_nodes=network.disturbance_nodes,
                            elements=network.elements)
