"""Average and modal controllability of every state in discrete time (Gu et al. 2015)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from netctl.numeric import _small_linalg as sl
from netctl.numeric.rank import _dense
from netctl.system import StructuredSystem

__all__ = ["NodeControllability", "node_controllability"]



@dataclass(frozen=True)
class NodeControllability:
    """Per-state metrics of :func:`node_controllability` (discrete time, Gu et al.)."""

    average: np.ndarray
    modal: np.ndarray
    scale: float
    state_names: tuple[str, ...] = field(repr=False)

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary (names, not indices)."""
        return {"analysis": "node controllability (discrete time, A / (1 + sigma_max))",
                "scale": self.scale,
                "average": dict(zip(self.state_names, self.average.tolist())),
                "modal": dict(zip(self.state_names, self.modal.tolist()))}


def node_controllability(system: StructuredSystem) -> NodeControllability:
    r"""Average and modal controllability of every state, in discrete time [1]_.

    ``A`` is scaled to ``A_s = A / (1 + sigma_max(A))`` (Schur stable). Average
    controllability of state ``i`` is ``tr W_inf`` with one input at ``i``, i.e. the
    diagonal of the solution of ``X = A_s^T X A_s + I``; for symmetric ``A`` it equals
    ``sum_j v_ij^2 / (1 - lambda_j^2)``. Modal controllability is
    ``phi_i = sum_j (1 - |lambda_j|^2) v_ij^2`` with the (orthonormal, for symmetric
    ``A``) eigenvectors ``v_j`` of ``A_s``; high values mark states that can push the
    fast-decaying, hard-to-reach modes.

    Notes
    -----
    For a nonsymmetric ``A`` the modal measure uses the normalized right eigenvectors
    (it is defined for symmetric networks in [1]_). Dense, ``O(n^3)``.

    References
    ----------
    .. [1] S. Gu et al., "Controllability of structural brain networks", Nat. Commun.
       6:8414, 2015. doi:10.1038/ncomms9414

    Examples
    --------
    >>> import networkx as nx
    >>> from netctl import StructuredSystem
    >>> r = node_controllability(StructuredSystem.from_networkx(nx.path_graph(3)))
    >>> r.modal.round(6).tolist()
    [0.828427, 0.656854, 0.828427]
    """
    A, _ = _dense(system)
    n = A.shape[0]
    if n == 0:
        return NodeControllability(np.zeros(0), np.zeros(0), 1.0, ())
    scale = 1.0 + float(sl.svdvals(A)[0])
    As = A / scale
    X = sl.solve_discrete_lyapunov(As.T, np.eye(n))
    if np.array_equal(A, A.T):
        lam, V = sl.eigh(As)
        mag = lam ** 2
    else:
        lam_c, Vc = sl.eig(As)
        V = np.abs(Vc / np.linalg.norm(Vc, axis=0))
        mag = np.abs(lam_c) ** 2
    modal = (V ** 2) @ (1.0 - mag)
    return NodeControllability(average=np.diag(X).copy(), modal=np.asarray(modal, float),
                               scale=scale, state_names=tuple(system.state_names))
