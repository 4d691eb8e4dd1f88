"""Yardsticks for ``netctl drivers`` as whole processes: read an edge list and find a
maximum matching of its bipartite graph with a general-purpose library.

Run by hand (by ``bench_verbs.py``)::

    python3 benchmarks/yardstick_matching.py igraph FILE.bip N  # igraph reader + matching
    python3 benchmarks/yardstick_matching.py scipy FILE.csv N  # numpy reader + scipy matching

igraph reads its own whitespace-separated integer edge list (``Graph.Read_Edgelist``, its
fastest reader), written by ``bench_verbs.py`` already as the bipartite graph of ``A``
(link ``u -> v`` as ``u n+v``: out-copies and in-copies of the states), so no Python
loop over links runs on igraph's side, and ``Graph.maximum_bipartite_matching``. SciPy reads a comma-separated file of the links alone with
``numpy.loadtxt`` and runs ``scipy.sparse.csgraph.maximum_bipartite_matching``
(Hopcroft–Karp). Each prints the number of driver nodes ``max(n - |M*|, 1)`` (Liu,
Slotine & Barabási 2011) so the answers can be compared with netctl's.
"""

from __future__ import annotations

import sys

__all__: list[str] = []


def igraph_drivers(path: str, n: int) -> int:
    import igraph as ig

    g = ig.Graph.Read_Edgelist(path, directed=False)
    g.add_vertices(2 * n - g.vcount())
    m = g.maximum_bipartite_matching(types=[False] * n + [True] * n)
    return max(n - len(m), 1)


def scipy_drivers(path: str, n: int) -> int:
    import numpy as np
    import scipy.sparse as sp
    from scipy.sparse.csgraph import maximum_bipartite_matching

    e = np.loadtxt(path, delimiter=",", dtype=np.int64, ndmin=2)
    a = sp.csr_matrix((np.ones(len(e), np.int8), (e[:, 0], e[:, 1])), shape=(n, n))
    match = maximum_bipartite_matching(a, perm_type="column")
    return max(n - int((match >= 0).sum()), 1)


if __name__ == "__main__":
    kind, path = sys.argv[1], sys.argv[2]
    n = int(sys.argv[3])
    print(igraph_drivers(path, n) if kind == "igraph" else scipy_drivers(path, n))
