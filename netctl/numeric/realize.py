"""Numeric realizations of a structured system under a stated parameterization.

A structural verdict holds for *almost all* weights of the pattern. A plant has its own
weights, often constrained (symmetric couplings, diffusive rows, identical links, swing
dynamics); :func:`realize` draws (or takes) weights under one named parameterization so
that the numeric tests in :mod:`netctl.numeric.rank` can confirm or refute the
structural answer for that family.

Every realization keeps its pattern: magnitudes are bounded away from zero, so no
stored entry is an accidental zero, and all samples of one parameterization share one
pattern (which is the pattern the structural verdict must be taken on: diffusive
coupling adds the diagonal, the swing model doubles the states).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING

import numpy as np

from netctl._csr import Pattern, coo_pattern
from netctl.errors import OptionError
from netctl.system import StructuredSystem

if TYPE_CHECKING:
    import scipy.sparse as sp

__all__ = ["PARAMETERIZATIONS", "realize", "is_second_order"]

LOW, HIGH = 0.5, 1.5

PARAMETERIZATIONS: dict[str, str] = {
    "independent": (
        "every stored entry of A and B drawn independently: magnitude uniform on "
        "[0.5, 1.5], sign + or - with probability 1/2 (the structured-system assumption)"),
    "symmetric": (
        "undirected couplings: a reciprocated pair u <-> v shares one weight (A[u,v] = "
        "A[v,u]), magnitude uniform on [0.5, 1.5] with a random sign; one-way links and "
        "self-loops drawn independently the same way; B as stored"),
    "laplacian": (
        "diffusive coupling: each link weight uniform on [0.5, 1.5] (positive; a "
        "reciprocated pair shares one weight), A[v,u] = w for u -> v and A[v,v] = -(sum "
        "of v's in-link weights), minus a damping uniform on [0.5, 1.5] where the file "
        "has a self-loop; zero row sums otherwise; B as stored"),
    "uniform": (
        "diffusive coupling with every link weight 1 (identical components): "
        "A[v,u] = 1 for u -> v, A[v,v] = -(in-degree of v), minus 1 more where the file "
        "has a self-loop; B as stored; the seed is not used"),
    "swing": (
        "second-order (swing) dynamics on the undirected coupling graph: states "
        "node:pos and node:vel, pos' = vel, m vel' = -sum_j k_ij (pos_i - pos_j) - d vel "
        "+ input; k_ij (shared by both directions), inertia m and damping d each uniform "
        "on [0.5, 1.5]; an input on a node acts on its velocity with gain 1/m"),
    "given": "the weights stored in the file, A and B unchanged (needs a weighted file)",
}


def _check(weights: str) -> None:
    if weights not in PARAMETERIZATIONS:
        raise OptionError(f"unknown weights {weights!r}; choose one of "
                          f"{', '.join(PARAMETERIZATIONS)}.")


def is_second_order(system: StructuredSystem) -> bool:
    """True when the states come in ``node:pos`` / ``node:vel`` pairs (second-order model)."""
    names = system.state_names
    if not names or len(names) % 2:
        return False
    pos = {s[:-4] for s in names if s.endswith(":pos")}
    vel = {s[:-4] for s in names if s.endswith(":vel")}
    return len(pos) * 2 == len(names) and pos == vel


def _magnitudes(rng: np.random.Generator, k: int) -> np.ndarray:
    return rng.uniform(LOW, HIGH, k)


def _signed(rng: np.random.Generator, k: int) -> np.ndarray:
    return _magnitudes(rng, k) * np.where(rng.random(k) < 0.5, -1.0, 1.0)


def _coo(M: sp.csr_array | Pattern) -> tuple[np.ndarray, np.ndarray]:
    """Row and column of each stored entry of a canonical CSR matrix, in storage order
    (scipy's ``M.tocoo()``), read from its arrays: no scipy needed."""
    rows = np.repeat(np.arange(M.shape[0], dtype=np.int64), np.diff(M.indptr))
    return rows, np.asarray(M.indices, np.int64)


def _csr(vals: np.ndarray, rows: np.ndarray, cols: np.ndarray,
         shape: tuple[int, int]) -> Pattern:
    """The canonical matrix with ``vals`` at ``(rows, cols)`` (distinct coordinates;
    scipy's ``csr_array((vals, (rows, cols)))`` as the system stores it), built with
    NumPy on small inputs (no scipy import; :func:`netctl._csr.coo_pattern`)."""
    return coo_pattern(rows, cols, vals, (int(shape[0]), int(shape[1])), count=False)[0]


def _pair_weights(rows: np.ndarray, cols: np.ndarray, n: int,
                  draw: Callable[[int], np.ndarray]) -> np.ndarray:
    """One draw per unordered pair {u, v}; both directions of a pair get the same value."""
    lo = np.minimum(rows, cols)
    hi = np.maximum(rows, cols)
    key = lo * max(n, 1) + hi
    uniq, inv = np.unique(key, return_inverse=True)
    return draw(uniq.size)[inv.ravel()]


def realize(system: StructuredSystem, *, weights: str = "independent",
            seed: int | np.random.SeedSequence | None = 0) -> StructuredSystem:
    """A weighted realization of ``system`` under the parameterization ``weights``.

    Parameters
    ----------
    system : StructuredSystem
        The pattern (and, for ``"given"``, the weights).
    weights : {"independent", "symmetric", "laplacian", "uniform", "swing", "given"}
        The family the weights come from; :data:`PARAMETERIZATIONS` states each
        distribution.
    seed : int or numpy.random.SeedSequence, default 0
        Seed of ``numpy.random.default_rng``; the same seed gives the same weights.

    Returns
    -------
    StructuredSystem
        ``weighted=True``; its ``model`` records the parameterization
        (``"<model>+<weights>"``). For ``"swing"`` the states are ``node:pos`` and
        ``node:vel`` (``2n`` of them) unless ``system`` is already second-order.
        Disturbances ``E`` and regulated outputs ``H`` are kept with their pattern and
        values (under ``"swing"`` a disturbance acts on a node's velocity, as an input
        does, and a regulated output reads its position, as a sensor does).

    Raises
    ------
    OptionError
        Unknown ``weights``; ``"given"`` on a file without weights.

    Notes
    -----
    No stored entry of a realization is zero (magnitudes lie in ``[0.5, 1.5]``; a
    diffusive diagonal is a negative sum of them), so every sample of one
    parameterization has the same pattern. Diffusive coupling (``laplacian``,
    ``uniform``) puts ``-(sum of in-link weights)`` on the diagonal: the pattern gains
    self-loops on every state with an in-link, and the structural verdict to compare
    with is the one for that pattern. O(nnz).

    The ``independent`` family is the structured-system assumption of [1]_ (every
    nonzero a free parameter). Constrained families (symmetric, diffusive, equal
    weights) can lose controllability the pattern has generically, e.g. through graph
    symmetries [2]_; that is what comparing the two is for. The distributions
    themselves are netctl's choices (common practice, no source).

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974
       (issue number from memory).
    .. [2] A. Rahmani, M. Ji, M. Mesbahi, M. Egerstedt, "Controllability of multi-agent
       systems from a graph-theoretic perspective", SIAM J. Control Optim.
       48(1):162-186, 2009. doi:10.1137/060674909 (details from memory)

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> star = StructuredSystem.from_edges([0, 0, 1, 2], [1, 2, 0, 0], 3, inputs=[0])
    >>> realize(star, weights="uniform").A.toarray()
    array([[-2.,  1.,  1.],
           [ 1., -1.,  0.],
           [ 1.,  0., -1.]])
    """
    _check(weights)
    rng = np.random.default_rng(seed)
    n = system.n_states
    A, B = system.pattern("A"), system.pattern("B")
    tag = f"{system.model}+{weights}"
    if weights == "given":
        if not system.weighted:
            raise OptionError(
                "weights 'given' needs a file that carries weights, and this system has "
                "none (every link reads as 1); choose one of "
                f"{', '.join(k for k in PARAMETERIZATIONS if k != 'given')} instead.")
        return system._replace(model=tag)
    if weights == "swing":
        return _swing(system, rng, tag)
    rows, cols = _coo(A)
    off = rows != cols
    if weights == "independent":
        Ar = _csr(_signed(rng, rows.size), rows, cols, (n, n))
        br, bc = _coo(B)
        Br = _csr(_signed(rng, br.size), br, bc, B.shape)
        return system._replace(A=Ar, B=Br, weighted=True, model=tag)
    if weights == "symmetric":
        vals = np.empty(rows.size)
        vals[off] = _pair_weights(rows[off], cols[off], n, lambda k: _signed(rng, k))
        vals[~off] = _signed(rng, int(np.count_nonzero(~off)))
        Ar = _csr(vals, rows, cols, (n, n))
        return system._replace(A=Ar, weighted=True, model=tag)
    # diffusive coupling: laplacian (random positive) or uniform (all ones)
    r, c = rows[off], cols[off]
    if weights == "laplacian":
        w = _pair_weights(r, c, n, lambda k: _magnitudes(rng, k))
        damping = _magnitudes(rng, n)
    else:
        w = np.ones(r.size)
        damping = np.ones(n)
    diag = -np.bincount(r, weights=w, minlength=n)
    looped = np.zeros(n, bool)
    looped[rows[~off]] = True
    diag = diag - np.where(looped, damping, 0.0)
    keep = diag != 0
    idx = np.flatnonzero(keep)
    Ar = _csr(np.concatenate([w, diag[keep]]), np.concatenate([r, idx]),
              np.concatenate([c, idx]), (n, n))
    return system._replace(A=Ar, weighted=True, model=tag)


def _swing(system: StructuredSystem, rng: np.random.Generator, tag: str) -> StructuredSystem:
    """Swing realization: from a second-order pattern, or built from a network."""
    import scipy.sparse as sp

    if is_second_order(system):
        names = system.state_names
        node_names = [s[:-4] for s in names if s.endswith(":pos")]
        where = {nm: i for i, nm in enumerate(names)}  # one pass (list.index was O(n^2))
        pos = np.array([where[f"{v}:pos"] for v in node_names], np.int64)
        vel = np.array([where[f"{v}:vel"] for v in node_names], np.int64)
        k = len(node_names)
        owner = np.empty(system.n_states, np.int64)
        owner[pos] = np.arange(k)
        owner[vel] = np.arange(k)
        rows, cols = _coo(system.A)
        # coupling: velocity of i read from a position of j != i
        sel = np.isin(rows, vel) & np.isin(cols, pos) & (owner[rows] != owner[cols])
        src, dst = owner[cols[sel]], owner[rows[sel]]
        b_rows, b_cols = _coo(system.B)
        b_node = owner[b_rows]
        b_on_vel = np.isin(b_rows, vel)
        state_names = names
        pos_idx, vel_idx = pos, vel
    else:
        k = system.n_states
        rows, cols = _coo(system.A)
        sel = rows != cols
        src, dst = cols[sel], rows[sel]
        b_rows, b_cols = _coo(system.B)
        b_node = b_rows
        b_on_vel = np.ones(b_rows.size, bool)
        node_names = list(system.state_names)
        state_names = tuple(s for v in node_names for s in (f"{v}:pos", f"{v}:vel"))
        pos_idx = 2 * np.arange(k, dtype=np.int64)
        vel_idx = pos_idx + 1
    # undirected coupling graph: each unordered pair once, weight shared
    lo, hi = np.minimum(src, dst), np.maximum(src, dst)
    pairs = np.unique(lo * max(k, 1) + hi)
    lo, hi = pairs // max(k, 1), pairs % max(k, 1)
    kw = _magnitudes(rng, pairs.size)
    inertia = _magnitudes(rng, k)
    damping = _magnitudes(rng, k)
    i = np.concatenate([lo, hi])
    j = np.concatenate([hi, lo])
    kk = np.concatenate([kw, kw])
    deg = np.bincount(i, weights=kk, minlength=k)
    n2 = 2 * k
    r_list = [pos_idx, vel_idx[i], vel_idx, vel_idx[deg != 0]]
    c_list = [vel_idx, pos_idx[j], vel_idx, pos_idx[deg != 0]]
    v_list = [np.ones(k), kk / inertia[i], -damping / inertia, -(deg / inertia)[deg != 0]]
    A = sp.csr_array((np.concatenate(v_list), (np.concatenate(r_list), np.concatenate(c_list))),
                     shape=(n2, n2))
    b_target = np.where(b_on_vel, vel_idx[b_node], pos_idx[b_node])
    b_gain = np.where(b_on_vel, 1.0 / inertia[b_node], 1.0)
    B = sp.csr_array((b_gain, (b_target, b_cols)), shape=(n2, system.n_inputs))
    if is_second_order(system):
        C, E, H, nodes = system.C, system.E, system.H, dict(system.nodes)
    else:  # a sensor on a node reads its position; node attributes apply to both states
        c_rows, c_cols = _coo(system.C)
        C = sp.csr_array((system.C.tocoo().data, (c_rows, pos_idx[c_cols])),
                         shape=(system.n_outputs, n2))
        # a disturbance is a force on the node, like an input (it enters the velocity);
        # a regulated output reads the node's position, like a sensor
        e = system.E.tocoo()
        E = sp.csr_array((e.data, (vel_idx[e.row.astype(np.int64)], e.col)),
                         shape=(n2, system.n_disturbances))
        h = system.H.tocoo()
        H = sp.csr_array((h.data, (h.row, pos_idx[h.col.astype(np.int64)])),
                         shape=(system.n_regulated, n2))
        nodes = {key: np.repeat(np.asarray(col), 2) for key, col in system.nodes.items()}
    return StructuredSystem(A=A, B=B, C=C, state_names=state_names,
                            input_names=tuple(system.input_names), output_names=system.output_names,
                            nodes=nodes, weighted=True, model=tag, E=E, H=H,
                            disturbance_names=system.disturbance_names,
                            regulated_names=system.regulated_names,
                            disturbance_nodes=system.disturbance_nodes,
                            elements=system.elements)
