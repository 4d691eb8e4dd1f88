"""Independent recheck of a secure design by recomputation (private).

Orientation: edge ``u -> v`` iff ``A[v, u] != 0``; ``B[i, k] != 0``: input ``k`` acts on
state ``i`` (see :mod:`netctl`). The recheck never trusts the search that built the
design: it recomputes Lin's test on ``[A B]`` after each loss (every ``k``-subset of
the design's elements, or each lost line), and when the losses are too many to visit it
checks a reproducible random sample of them, labelled as a sample. A loss that breaks
the design is turned back into a Hall-set (or reach) cut, so the search can learn it.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from netctl.structural.failures._core import dedicated_B, is_controlling, source_components

__all__ = ["Recheck", "RECHECK_ALL", "RECHECK_SAMPLES", "recheck_design", "loss_cuts"]

#: Every loss is recomputed up to this many; beyond it, a sample of :data:`RECHECK_SAMPLES`.
RECHECK_ALL: int = 80_000
#: Losses recomputed when they are more than :data:`RECHECK_ALL` (reproducible sample).
RECHECK_SAMPLES: int = 20_000
#: Failing losses kept (to name them and to learn cuts from them).
_KEEP_FAILING = 20


@dataclass(frozen=True)
class Recheck:
    """Outcome of :func:`recheck_design`.

    ``ok``: True every loss was recomputed and none breaks the design; False some loss
    breaks it (``failing`` names them: element positions in ``B``, or line indices);
    None a sample was recomputed and passed (``checked`` of ``total``).
    """

    ok: bool | None
    checked: int
    total: int
    failing: tuple[tuple[int, ...], ...] = ()
    intact_fails: bool = False

    def describe(self, labels: list[str] | None = None) -> str:
        """One line for people."""
        if self.intact_fails:
            return "FAILED: the design does not work even before any loss"
        if self.ok is False:
            shown = [", ".join(labels[i] for i in F) if labels else
                     ", ".join(map(str, F)) for F in self.failing[:5]]
            more = "" if len(self.failing) <= 5 else f" (and {len(self.failing) - 5} more)"
            return ("FAILED: losing {" + "}, {".join(shown) + "}" + more
                    + " breaks the design: it is NOT secure")
        if self.ok is None:
            return (f"sampled: {self.checked:,} of {self.total:,} losses recomputed, all "
                    "passed (a sample, not every loss)")
        return f"passed: every loss recomputed ({self.total:,})"


def recheck_design(A: sp.csr_array, B0: sp.csr_array, S: np.ndarray, against: str, k: int,
                   lines: list[np.ndarray] | None, seed: int = 0) -> Recheck:
    """Lin's test after every loss (or a labelled sample of them).

    ``against="elements"``: every ``min(k, m)``-subset of the ``m`` elements of
    ``B0 + e_S`` (fewer losses never hurt more); ``"lines"``: each link set of ``lines``
    removed from ``A``. Beyond :data:`RECHECK_ALL` losses, :data:`RECHECK_SAMPLES`
    distinct ones drawn at random (reproducible) plus the exact reach count (a source
    component touched by at most ``k`` elements is cut off by losing them).

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    """
    from netctl.structural.failures.links import _without

    n = A.shape[0]
    B = dedicated_B(n, np.asarray(S, np.int64), B0)
    if not is_controlling(A, B).ok:
        return Recheck(ok=False, checked=1, total=1, intact_fails=True)
    if against == "lines":
        L = lines or []
        lost = tuple((j,) for j, Lj in enumerate(L) if not is_controlling(_without(A, Lj), B).ok)
        return Recheck(ok=not lost, checked=len(L), total=len(L), failing=lost[:_KEEP_FAILING])
    m = B.shape[1]
    q = min(k, m)
    total = math.comb(m, q)
    Bc = B.tocsc()
    bad: list[tuple[int, ...]] = []

    def breaks(F: tuple[int, ...]) -> bool:
        Bk = sp.csr_array(Bc[:, np.setdiff1d(np.arange(m), F)])
        Bk.sort_indices()
        return not is_controlling(A, Bk).ok

    if total <= RECHECK_ALL:
        for F in itertools.combinations(range(m), q):
            if breaks(F):
                bad.append(F)
                if len(bad) >= _KEEP_FAILING:
                    break
        return Recheck(ok=not bad, checked=total, total=total, failing=tuple(bad))
    # exact reach count: the elements touching each source component
    cp, mem = source_components(A)
    comp = np.full(n, -1, np.int64)
    comp[mem] = np.repeat(np.arange(cp.size - 1), np.diff(cp))
    touch: dict[int, set[int]] = {}
    Bcoo = B.tocoo()
    for i, j in zip(Bcoo.row.tolist(), Bcoo.col.tolist()):
        if comp[i] >= 0:
            touch.setdefault(int(comp[i]), set()).add(int(j))
    bad.clear()
    for c in range(cp.size - 1):
        users = sorted(touch.get(c, set()))
        if len(users) <= q:
            rest = [j for j in range(m) if j not in users][:q - len(users)]
            bad.append(tuple(sorted(users + rest)))
    rng = np.random.default_rng(seed)
    picks: set[tuple[int, ...]] = set()
    while len(picks) < RECHECK_SAMPLES:
        picks.add(tuple(sorted(rng.choice(m, q, replace=False).tolist())))
    for F in sorted(picks):
        if len(bad) >= _KEEP_FAILING:
            break
        if breaks(F):
            bad.append(F)
    if bad:
        return Recheck(ok=False, checked=len(picks), total=total,
                       failing=tuple(bad[:_KEEP_FAILING]))
    return Recheck(ok=None, checked=len(picks), total=total)


def loss_cuts(A: sp.csr_array, B0: sp.csr_array, S: np.ndarray, against: str, k: int,
              lines: list[np.ndarray] | None, failing: tuple[tuple[int, ...], ...]
              ) -> list[tuple[np.ndarray, int]]:
    """The Hall-set and reach cuts (see :mod:`netctl.structural.failures.hall`) that the
    failing losses of a recheck expose: each is valid for every secure design and
    violated by ``S``.

    References
    ----------
    .. [1] P. Hall, "On representatives of subsets", J. London Math. Soc. 10:26-30,
       1935.
    .. [2] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
    """
    from netctl.structural.failures.hall import _free_rows_of, _hall_cut, _reach_cuts, _unreached
    from netctl.structural.failures.links import _without

    n = A.shape[0]
    B = dedicated_B(n, np.asarray(S, np.int64), B0)
    out: list[tuple[np.ndarray, int]] = []
    Bc = B.tocsc()
    for F in failing:
        if against == "lines":
            AL = _without(A, (lines or [])[F[0]])
            X, rank = _free_rows_of(AL, B)
            if rank < n:
                out.append(_hall_cut(AL, B0, X, 0))
            reach = _unreached(AL, B)
            if reach.size:
                out.extend(_reach_cuts(AL, B0, 1, reach))
            continue
        Bk = sp.csr_array(Bc[:, np.setdiff1d(np.arange(B.shape[1]), F)])
        Bk.sort_indices()
        X, rank = _free_rows_of(A, Bk)
        if rank < n:
            out.append(_hall_cut(A, B0, X, k))
        reach = _unreached(A, Bk)
        if reach.size:
            out.extend(_reach_cuts(A, B0, k + 1, reach))
    return out
