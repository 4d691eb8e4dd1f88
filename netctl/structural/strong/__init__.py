r"""Strong structural controllability: controllable for *every* nonzero choice of weights.

A structured pair ``(A, B)`` is *strongly* structurally controllable when every
realization with the given zero/nonzero pattern is controllable (Mayeda & Yamada [1]_),
not only almost every one. It is decided by zero forcing (colour-change) rules on the
graph [2]_, [3]_; which rule applies depends on what is assumed about the diagonal
``a_ii`` (the self-dynamics), so the convention is always explicit (:data:`DIAGONALS`).

Orientation as everywhere in netctl: edge ``j -> i`` iff ``A[i, j] != 0``.

Derivation of the forcing rules (PBH on the left eigenvector)
-------------------------------------------------------------
``(A, B)`` is uncontrollable iff some ``q != 0`` and ``lambda`` satisfy
``q^T (A - lambda I) = 0`` and ``q^T B = 0`` (Popov–Belevitch–Hautus). Column ``j`` of
the first equation reads

.. math:: \sum_{i \ne j,\ a_{ij} \ne 0} q_i a_{ij} + q_j (a_{jj} - \lambda) = 0,

and column ``k`` of the second ``sum_i q_i b_ik = 0``. Call state ``i`` *black* once
``q_i = 0`` is proven, *white* otherwise. If one such equation has exactly one term whose
``q`` is not yet known to vanish, that ``q`` must vanish (the coefficient is nonzero):
"column ``j`` forces ``i``", where ``i`` is the only white vertex in the *neighbourhood*
of ``j``. The neighbourhood holds the out-neighbours ``i != j`` of ``j`` (the states
``j`` influences), plus ``j`` itself when its diagonal coefficient ``a_jj - lambda`` is
known to be nonzero. When that coefficient can vanish, ``q_j`` drops out only if ``j``
is already black, so such a ``j`` forces only when black. An input column is a vertex
that is black from the start (it has no ``q`` entry) and forces like a black state; a
dedicated input on ``i`` therefore simply makes ``i`` black. If every state ends black,
``q = 0``: controllable for every realization. The diagonal conventions give:

``free`` (``a_ii`` any value, zero included; Monshizadeh, Zhang & Camlibel [2]_)
    ``a_jj - lambda`` can vanish for every ``lambda``: the *standard rule* (a black
    state with exactly one white out-neighbour forces it). One condition.
``nonzero`` (self-dynamics on every state, ``a_ii != 0``)
    ``lambda = 0``: coefficient ``a_jj != 0``, every vertex (white or black) forces the
    only white vertex of its out-neighbourhood *including itself* (loop rule);
    ``lambda != 0``: ``a_jj - lambda`` can vanish, standard rule. The second implies the
    first, so this coincides with ``free``.
``zero`` (no self-dynamics, ``a_ii = 0`` fixed)
    ``lambda = 0``: ``q_j`` does not appear, every vertex forces the only white
    out-neighbour ``i != j``; ``lambda != 0``: coefficient ``-lambda != 0``, every vertex
    forces the only white vertex of its out-neighbourhood including itself.
``as-given`` (``a_ii != 0`` where the pattern has a self-loop, ``a_ii = 0`` elsewhere;
    the loop-graph setting of Trefois & Delvenne [3]_)
    ``lambda = 0``: every vertex forces, looped vertices count themselves;
    ``lambda != 0``: unlooped vertices force whatever their colour and count themselves,
    looped vertices force only when black and do not.

For ``zero``, ``nonzero`` and ``as-given`` the design must pass *both* conditions.

Both conditions are also necessary (the proofs are constructive, see
:func:`strong_witness`): if the closure under one rule leaves a white set ``W``, every
column has zero or at least two white terms (or one white term and the fixed
``-lambda`` term), so weights can be chosen column by column such that
``q = 1_W`` is a left eigenvector with ``q^T B = 0`` -- an uncontrollable realization
in the class (``lambda = 0`` for the first condition, ``lambda = 1`` for the second).
Because forcing is monotone, the set a rule leaves white does not depend on the order
of forces.
"""

from netctl.structural.strong.check import (
    StrongReport,
    StrongWitness,
    forcing_closure,
    is_strongly_controllable,
    strong_controllability,
    strong_witness,
)
from netctl.structural.strong.forcing import DIAGONALS
from netctl.structural.strong.minimum import (
    EXACT_AUTO_LIMIT,
    METHODS,
    StrongInputDesign,
    minimum_strong_inputs,
)

__all__ = [
    "DIAGONALS",
    "EXACT_AUTO_LIMIT",
    "METHODS",
    "StrongInputDesign",
    "StrongReport",
    "StrongWitness",
    "forcing_closure",
    "is_strongly_controllable",
    "minimum_strong_inputs",
    "strong_controllability",
    "strong_witness",
]
