"""Sparse certificate of structural controllability for very large networks: a
nonsingular sparse LU of the matched columns of ``[A B]`` with random weights, plus graph
accessibility (Lin's conditions with a numerical witness).

One of the four rank tests of :mod:`netctl.numeric.rank` (which holds the shared
:class:`~netctl.numeric.rank.RankTest`).
"""

from __future__ import annotations

from typing import Any

import numpy as np
import scipy.sparse as sp

from netctl.errors import OptionError
from netctl.numeric.rank import _EPS, RankTest, _margin
from netctl.system import StructuredSystem

__all__ = ["sparse_certificate"]


def sparse_certificate(system: StructuredSystem, *, seed: int = 0,
                       weights: str = "independent") -> RankTest:
    r"""Certificate that ``rank [A B] = n`` with random weights, plus accessibility.

    A maximum matching of ``[A B]`` picks ``n`` columns (one per state) when the
    structural rank is ``n``; with random weights (or the stored ones, ``"given"``)
    these columns form a square sparse matrix with a zero-free diagonal. Its
    determinant is the product of the determinants of the diagonal blocks of its
    block-triangular form (strongly connected components), so only the blocks of size
    two or more are factorized (``scipy.sparse.linalg.splu``, COLAMD ordering). All
    pivots clear of the tolerance and every state reachable from an input certify,
    by Lin's theorem [1]_, that the pattern is structurally controllable, with a
    numerical witness of full rank.

    Parameters
    ----------
    system : StructuredSystem
    seed : int, default 0
    weights : {"independent", "given", "swing"}
        ``swing``: a second-order pattern with sampled swing parameters (or a network,
        built into one); the certificate then shows ``rank [A B] = n`` for those numbers,
        which rules out a dilation but not modes lost to symmetric couplings.

    Returns
    -------
    RankTest
        ``dimension`` is ``n`` when certified, ``None`` when inconclusive (a singular
        matched submatrix does not prove rank deficiency; a structural rank below ``n``
        or inaccessible states do prove that the pattern is not controllable, and then
        ``dimension`` is ``None`` and ``note`` says why). ``margin``: decades between
        the smallest pivot and the tolerance.

    Notes
    -----
    Near-linear for the matching and the components; the LU costs what the fill-in of
    the largest strongly connected block costs (small for tree-like and planar
    networks, large for big random expanders).

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> cyc = StructuredSystem.from_edges([0, 1, 2], [1, 2, 0], 3, inputs=[0])
    >>> sparse_certificate(cyc).dimension
    3
    """
    from scipy.sparse.linalg import splu

    from netctl.graph.components import strongly_connected_components
    from netctl.graph.matching import maximum_matching
    from netctl.numeric.realize import realize
    from netctl.structural._engine import accessible_states, stack_AB, structure_of

    if weights not in ("independent", "given", "swing"):
        raise OptionError(f"the sparse certificate supports weights 'independent', "
                          f"'given' and 'swing'; found {weights!r}.")
    n = system.n_states
    real = realize(system, weights=weights, seed=seed)
    st = structure_of(system.A)
    acc = accessible_states(st, system.B)
    indptr, indices, n_cols = stack_AB(system.A, system.B)
    row_match, _ = maximum_matching(indptr, indices, n_cols)
    size = int(np.count_nonzero(row_match >= 0))
    base: dict[str, Any] = dict(method="certificate", n_states=n, blocks=np.zeros(0, np.int64),
                state_names=tuple(system.state_names), weights=weights)
    n_inacc = int(np.count_nonzero(~acc))
    if size < n or n_inacc:
        why = []
        if size < n:
            why.append(f"structural rank of [A B] is {size} < {n}")
        if n_inacc:
            why.append(f"{n_inacc} state(s) not reachable from any input")
        return RankTest(dimension=None, margin=0.0, smallest_kept=0.0, largest_dropped=0.0,
                        tolerance=0.0, note="not structurally controllable: " + "; ".join(why),
                        **base)
    AB = sp.hstack([real.A, real.B], format="csc") if system.n_inputs else real.A.tocsc()
    M = AB[:, row_match].tocsr()  # column j is the column of [A B] matched to state j
    M.sort_indices()
    k, labels = strongly_connected_components(M.indptr.astype(np.int64),
                                              M.indices.astype(np.int64))
    counts = np.bincount(labels, minlength=k)
    big = counts[labels] > 1
    diag = np.abs(M.diagonal())
    tol = max(n, 1) * _EPS * max(float(np.abs(M.data).max(initial=0.0)), 1.0)
    pivots = [diag[~big]]
    sizes = np.sort(counts[counts > 1])[::-1]
    if big.any():
        idx = np.flatnonzero(big)
        order = idx[np.argsort(labels[idx], kind="stable")]
        sub = M[order][:, order].tocoo()
        same = labels[order][sub.row] == labels[order][sub.col]
        blk = sp.csc_matrix((sub.data[same], (sub.row[same], sub.col[same])),
                            shape=(order.size, order.size))
        try:
            lu = splu(blk, permc_spec="COLAMD")
            pivots.append(np.abs(lu.U.diagonal()))
        except RuntimeError:  # exactly singular
            pivots.append(np.zeros(1))
    piv = np.concatenate(pivots) if pivots else np.ones(0)
    smallest = float(piv.min(initial=np.inf))
    ok = smallest > tol
    return RankTest(dimension=n if ok else None,
                    margin=_margin(smallest, 0.0, tol) if ok else _margin(tol, smallest, tol),
                    smallest_kept=smallest if ok else np.inf,
                    largest_dropped=0.0 if ok else smallest, tolerance=tol,
                    note=("certified: rank [A B] = n with random weights, all states "
                          f"accessible; largest strongly connected block {int(sizes[0]) if sizes.size else 1}")
                    if ok else "inconclusive: the matched columns are numerically singular "
                    "for these weights (try another seed)",
                    **{**base, "blocks": sizes.astype(np.int64)})
