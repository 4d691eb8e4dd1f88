"""Largest stem-cycle cover of a directed graph with inputs, in phases of many paths.

Rows are the in-copies of the ``r`` states, columns their out-copies (``0..r-1``)
followed by the inputs; a real edge (row ``v``, column ``u``: ``u -> v``) costs 0 and
the dummy pair (row ``v``, column ``v``) costs 1 (no dummy where ``v`` has a self-loop:
its real edge does the job). A perfect assignment of the rows then uses real edges that
form vertex-disjoint stems (paths starting at an input column) and cycles: every state
on a real edge has one predecessor, and following predecessors never reaches a state on
its dummy (that state holds its own column). The cheapest assignment therefore leaves
the fewest states uncovered, which is Hosoe's generic dimension of the controllable
subspace when the graph is restricted to the input-accessible states [1]_.

The assignment is found by a primal-dual method [2]_ that grows its prices from the
sink side: start from a maximum matching of the real edges (cost 0, all prices 0); then,
per phase, one backward Dijkstra search (Dial's buckets: reduced costs are small
integers) from every free column gives each vertex its least reduced cost to the sink,
and every price drops by that distance. Reduced costs stay non-negative, matched edges
stay tight, free columns keep the sink's price and other columns only drop, and the
shortest augmenting path of *every* free row becomes tight at once (a forward search
from the free rows makes only the globally shortest ones tight, so it needs one phase
per distinct distance). A maximum matching of the tight edges, completed from the
current one by push-relabel with global relabelling [3]_, then augments along as many
of them as are vertex-disjoint. The assignment LP's optimality conditions (dual
feasibility, tight matched edges, free columns at the sink's price, other column prices
below it) hold after every step, so the final perfect assignment is optimal whatever
order the rows were matched in. On the failing networks netctl targets the phases are
three or four (``benchmarks/RESULTS.md``), each one search over the edges, one copy of
the tight edges (the matching reads only those: prices do not change within a phase)
and the matching. Exact. Once few free rows remain (:data:`_CAP_SHARE`), a phase's
search stops after the distance-0 region and gives every vertex not yet settled
distance 1 (capped distances keep the reduced costs non-negative): the few rows left are
nearly always at distance 1, and their paths become tight at a fraction of a full
search's work.

On large inputs (:data:`_SIDE_MIN` entries) a second thread takes the work that can run
beside the main line without changing it: building the arrays while the starting
matching runs, the row-wise tight copy beside the column-wise one, and half of every
breadth-first level of the global relabellings. Every step gives the same arrays as on
one thread, so the cover is the same, entry for entry.

References
----------
.. [1] S. Hosoe, "Determination of generic dimensions of controllable subspaces and its
   application", IEEE Trans. Automatic Control 25(6):1192-1196, 1980 (from memory).
   doi:10.1109/TAC.1980.1102506
.. [2] R. K. Ahuja, T. L. Magnanti, J. B. Orlin, *Network Flows*, Prentice Hall 1993,
   sections 9.4 (reduced costs, complementary slackness) and 9.8 (primal-dual
   algorithm; from memory).
.. [3] B. V. Cherkassky, A. V. Goldberg, P. Martin, J. C. Setubal, J. Stolfi, "Augment
   or push: a computational study of bipartite matching and unit-capacity flow
   algorithms", ACM J. Experimental Algorithmics 3, 1998 (from memory);
   K. Kaya, J. Langguth, F. Manne, B. Uçar, "Push-relabel based algorithms for the
   maximum transversal problem", Computers & Operations Research 40(5):1266-1275, 2013
   (from memory). doi:10.1016/j.cor.2012.12.009
"""

from __future__ import annotations

from collections.abc import Callable
from concurrent.futures import Future, ThreadPoolExecutor

import numpy as np
from netctl._jit import njit

from netctl.graph.matching import matching_work, maximum_matching
from netctl.graph.transpose import index_array, index_dtype

__all__ = ["stem_cycle_cover", "accessible_rows"]


@njit(cache=True, nogil=True)
def _restrict(aptr, aind, bptr, bind, new_id, r, ptr, ind, loop):  # pragma: no cover
    """Fill the CSR of ``[A B]`` on the rows and state columns with ``new_id >= 0`` (new
    numbers ``0..r-1``; input ``k`` becomes column ``r + k``) and mark the self-loops;
    returns the number of entries."""
    pos = 0
    for v in range(aptr.size - 1):
        nv = new_id[v]
        if nv < 0:
            continue
        for e in range(aptr[v], aptr[v + 1]):
            nu = new_id[aind[e]]
            if nu >= 0:
                ind[pos] = nu
                pos += 1
                if nu == nv:
                    loop[nv] = True
        for e in range(bptr[v], bptr[v + 1]):
            ind[pos] = r + bind[e]
            pos += 1
        ptr[nv + 1] = pos
    return pos


def accessible_rows(a_ptr: np.ndarray, a_ind: np.ndarray, b_ptr: np.ndarray,
                    b_ind: np.ndarray, n_inputs: int, keep: np.ndarray
                    ) -> tuple[np.ndarray, np.ndarray, int, np.ndarray]:
    """``[A B]`` restricted to the states in ``keep`` (rows and state columns; every
    input kept), as :func:`stem_cycle_cover` takes it: ``(indptr, indices, n_cols,
    has_loop)``, states renumbered in order (``r`` kept states, then the inputs), in one
    compiled pass over the entries (no link-sized temporaries but the result). The index
    arrays are int32 whenever the sizes allow (:func:`~netctl.graph.transpose.index_dtype`:
    half the memory, and the matching reads them faster)."""
    keep = np.asarray(keep, np.bool_)
    r = int(np.count_nonzero(keep))
    new_id = np.cumsum(keep, dtype=np.int64) - 1
    new_id[~keep] = -1
    total = np.asarray(a_ind).size + np.asarray(b_ind).size
    dt = index_dtype(r + 1, r + int(n_inputs) + 1, total + 1)
    ptr: np.ndarray = np.zeros(r + 1, dt)
    ind: np.ndarray = np.empty(total, dt)
    loop = np.zeros(r, np.bool_)
    size = _restrict(np.ascontiguousarray(a_ptr, np.int64), np.ascontiguousarray(a_ind, np.int64),
                     np.ascontiguousarray(b_ptr, np.int64), np.ascontiguousarray(b_ind, np.int64),
                     new_id, np.int64(r), ptr, ind, loop)
    return ptr, ind[:size], r + int(n_inputs), loop


@njit(cache=True, nogil=True)
def _with_dummies(ptr, ind, loop, fptr, find, fw):  # pragma: no cover - compiled
    """Fill the CSR of the rows with each row's dummy column appended (weight 1) and
    the weights (``fptr`` zeros of size r + 1, ``find``/``fw`` of the total size)."""
    r = ptr.size - 1
    pos = 0
    for i in range(r):
        for k in range(ptr[i], ptr[i + 1]):
            find[pos] = ind[k]
            fw[pos] = 0
            pos += 1
        if not loop[i]:
            find[pos] = i
            fw[pos] = 1
            pos += 1
        fptr[i + 1] = pos


@njit(cache=True, nogil=True)
def _transpose_w(fptr, find, fw, tptr, tind, tw):  # pragma: no cover - compiled
    """Fill the column-wise copy of the rows' CSR and its weights (``tptr`` zeros of
    size n_cols + 1)."""
    r = fptr.size - 1
    n_cols = tptr.size - 1
    for k in range(find.size):
        tptr[find[k] + 1] += 1
    for j in range(n_cols):
        tptr[j + 1] += tptr[j]
    for i in range(r):
        for k in range(fptr[i], fptr[i + 1]):
            j = find[k]
            p = tptr[j]
            tind[p] = i
            tw[p] = fw[k]
            tptr[j] = p + 1
    for j in range(n_cols, 0, -1):
        tptr[j] = tptr[j - 1]
    tptr[0] = 0


@njit(cache=True, nogil=True)
def _sink_prices(tptr, tind, tw, rc, rows, cm, srow, scol, dcol, enode, enext, head,
                 mark, buf, stop):  # pragma: no cover - compiled
    """One backward Dijkstra search (Dial's buckets) from the sink over the residual
    graph: the distance of a row is the least reduced cost of an alternating path from
    it to a free column (a column's is its matched row's: the matched edge is tight).
    Every price drops by its vertex's distance (unreached vertices by the largest
    distance found): for an edge (i, j), ``dist(i) <= rc(i, j) + dist(j)`` keeps the
    reduced cost non-negative, and the edges of every shortest path become tight. Free
    columns (distance 0) keep stored price 0; other columns only drop.

    A bucket's columns are visited in increasing order, in rounds: the bucket's list is
    gathered, sorted (or, for a large bucket, marked and the columns scanned in order),
    and the columns found at the same distance during a round join it when the scan has
    not passed them, else the next round. The columns' data and edge lists are then read
    in memory order (measured: 1.07 s -> 0.65 s a search at 10^7 links, its rounds
    against popping one column at a time; ``benchmarks/RESULTS.md``).

    Each entry's reduced cost is read from ``rc`` (column-wise, as ``tind``; kept by
    :func:`_tight_cols`, saturated at :data:`_RC_TOP`, above which it is computed from
    the prices), not from the row's price: the entry then costs one random access, to
    the row's record ``rows[i] = (distance, matched column)`` (one cache line; the
    caller fills ``rows[:, 1]``). A matched column's distance is always its row's
    (only that row sets it), so a row that improves needs no read of its column's
    (measured: 0.63 -> 0.41 s a search at 10^7 links; ``benchmarks/RESULTS.md``).

    ``rows`` (r x 2), ``dcol`` (n_cols), ``enode``, ``enext`` (bucket entries; any
    size), ``head`` (int64, one list head per distance; any size), ``mark`` (bool,
    n_cols) and ``buf`` (n_cols) are work arrays. Returns the largest distance, or -1
    when ``enode``/``enext`` are too short and -2 when ``head`` is: the prices are then
    unchanged, and the caller calls again with longer arrays (no array is reallocated
    in here: a reassigned array in the loop made the search three times slower)."""
    r = rows.shape[0]
    n_cols = cm.size
    inf = 2 ** 30
    n_heads = head.size
    cap = enode.size
    for t in range(n_heads):
        head[t] = -1
    for j in range(n_cols):
        mark[j] = False
    for i in range(r):
        rows[i, 0] = inf
    ne = 0
    for j in range(n_cols):
        if cm[j] < 0:
            dcol[j] = 0
            if ne >= cap:
                return -1
            enode[ne] = j
            enext[ne] = head[0]
            head[0] = ne
            ne += 1
        else:
            dcol[j] = inf
    big = n_cols // 16  # a larger round scans the columns instead of sorting its list
    top = 0
    far = 0
    d = 0
    while d <= top:
        if d >= stop:  # stopped early: every vertex not yet settled takes this distance
            far = stop
            break
        if head[d] < 0:
            d += 1
            continue
        nb = 0
        e = head[d]
        head[d] = -1
        while e >= 0:
            j = enode[e]
            if dcol[j] == d and not mark[j]:
                mark[j] = True
                buf[nb] = j
                nb += 1
            e = enext[e]
        scan = nb > big
        if scan:
            hi = n_cols
        else:
            buf[:nb].sort()
            hi = nb
        pos = 0
        while pos < hi:
            if scan:
                j = pos
                pos += 1
                if not mark[j]:
                    continue
            else:
                j = buf[pos]
                pos += 1
            mark[j] = False
            sj = scol[j]
            mj = cm[j]
            for k in range(tptr[j], tptr[j + 1]):
                i = tind[k]
                red = rc[k]
                if red == _RC_TOP:
                    nd = d + np.int64(tw[k]) + srow[i] - sj
                else:
                    nd = d + np.int64(red)
                if nd < rows[i, 0]:
                    if i == mj:
                        continue
                    rows[i, 0] = nd
                    if nd > far:
                        far = nd
                    c = rows[i, 1]
                    if c < 0:  # a free row: no column follows
                        continue
                    dcol[c] = nd  # it was this row's old distance, which was larger
                    if scan and nd == d and c > j:
                        mark[c] = True  # this round's scan reaches it
                        continue
                    if nd >= n_heads:
                        return -2
                    if ne >= cap:
                        return -1
                    if nd > top:
                        top = nd
                    enode[ne] = c
                    enext[ne] = head[nd]
                    head[nd] = ne
                    ne += 1
    for i in range(r):
        srow[i] -= rows[i, 0] if rows[i, 0] < far else far
    for j in range(n_cols):
        scol[j] -= dcol[j] if dcol[j] < far else far
    return far


#: Reduced costs are kept per entry as int8 up to this value; an entry holding it has
#: its reduced cost computed from the prices when read (a rare case: reduced costs are
#: small integers on real networks).
_RC_TOP = 127


class _SearchWork:
    """The search's work arrays beyond the column distances, kept across phases and
    lengthened when a search reports them short (:func:`_sink_prices` returns -1 or
    -2)."""

    __slots__ = ("rows", "enode", "enext", "head", "mark", "buf")

    def __init__(self, r: int, n_cols: int, dt: type) -> None:
        self.rows: np.ndarray = np.empty((r, 2), dt)  # (distance, matched column) per row
        self.enode: np.ndarray = np.empty(n_cols + r + 1, dt)  # a column enters once per drop
        self.enext: np.ndarray = np.empty(n_cols + r + 1, dt)
        self.head: np.ndarray = np.empty(256, np.int64)
        self.mark: np.ndarray = np.zeros(n_cols, np.bool_)
        self.buf: np.ndarray = np.empty(n_cols, dt)

    def search(self, tptr: np.ndarray, tind: np.ndarray, tw: np.ndarray, rc: np.ndarray,
               rm: np.ndarray, cm: np.ndarray, srow: np.ndarray, scol: np.ndarray,
               dcol: np.ndarray, cap: int = 2**30) -> int:
        """One :func:`_sink_prices` search (``rc``: the entries' reduced costs at the
        current prices, column-wise, as :func:`_tight_cols` keeps them), again with
        longer arrays until they suffice; returns the largest distance. The rows'
        distances are left in ``self.rows[:, 0]``."""
        self.rows[:, 1] = rm
        while True:
            far = int(_sink_prices(tptr, tind, tw, rc, self.rows, cm, srow, scol, dcol,
                                   self.enode, self.enext, self.head, self.mark, self.buf,
                                   cap))
            if far >= 0:
                return far
            if far == -1:
                self.enode = np.empty(2 * self.enode.size, self.enode.dtype)
                self.enext = np.empty(2 * self.enext.size, self.enext.dtype)
            else:
                self.head = np.empty(4 * self.head.size, np.int64)


@njit(cache=True, nogil=True)
def _tight_rows(fptr, find, fw, srow, scol, out_ptr, out_ind):  # pragma: no cover
    """Fill the row-wise CSR of the tight edges (zero reduced cost) out of the CSR
    ``fptr``, ``find``, ``fw`` of all of them; returns their number. Prices do not change
    while the tight edges are matched, so the matching reads this smaller copy and no
    price (measured: 8.6 of 12.5 million edges tight at 10^7 links)."""
    pos = 0
    for i in range(fptr.size - 1):
        si = srow[i]
        for k in range(fptr[i], fptr[i + 1]):
            j = find[k]
            if fw[k] + si == scol[j]:
                out_ind[pos] = j
                pos += 1
        out_ptr[i + 1] = pos
    return pos


@njit(cache=True, nogil=True)
def _tight_cols(tptr, tind, tw, srow, scol, out_ptr, out_ind, rc):  # pragma: no cover
    """:func:`_tight_rows` column-wise, which also stores every entry's reduced cost
    in ``rc`` (int8, at most :data:`_RC_TOP`) for the next search."""
    pos = 0
    for j in range(tptr.size - 1):
        sj = scol[j]
        for k in range(tptr[j], tptr[j + 1]):
            i = tind[k]
            red = tw[k] + srow[i] - sj
            rc[k] = red if red < _RC_TOP else _RC_TOP
            if red == 0:
                out_ind[pos] = i
                pos += 1
        out_ptr[j + 1] = pos
    return pos


@njit(cache=True, nogil=True)
def _relabel(tptr, tind, rm, cm, psi, queue, inf):  # pragma: no cover - compiled
    """Exact labels of the push-relabel matching: ``psi[j]`` is twice the number of
    rows on the shortest alternating path of tight edges (``tptr``, ``tind``: the tight
    edges column-wise) from column ``j`` to a free column, ``inf`` where there is none.
    One backward breadth-first search from the free columns, a level at a time; each
    level's columns are put in increasing order first (sorted, or for a large level
    found by a scan of the labels) so that their data and edge lists are read in memory
    order (measured: 0.77 s -> 0.50 s a search at 10^7 links; ``benchmarks/RESULTS.md``).
    Returns the number of edges it scanned."""
    n = _first_level(cm, psi, queue, inf)
    big = cm.size // 16  # a larger level is found by a scan rather than sorted
    head = 0
    lab = 0
    work = 0
    while n:
        lab += 2
        got, seen = _level_part(tptr, tind, rm, psi, queue, head, head + n, lab, inf,
                                queue[head + n:])
        work += seen
        head += n
        rest = queue[head:]
        n = _next_level(psi, lab, rest, got, rest, 0, rest, big)
    return work


@njit(cache=True, nogil=True)
def _pushes(fptr, find, rm, cm, free, psi, act, st):  # pragma: no cover - compiled
    """The pushes of :func:`_push_relabel` until no row is active (returns 0) or the
    pushes since the last relabelling have scanned more entries than its budget
    (returns 1: relabel, then call again). ``st`` keeps the state between calls: the
    active rows' ring ``act`` starts at ``st[0]`` and holds ``st[1]`` rows; ``st[2]``
    rows were found stuck (first in ``free``); ``st[3]`` entries were scanned against a
    budget of ``st[4]``."""
    inf = 2 * (rm.size + cm.size) + 4
    cap = act.size
    head, n_act, n_stuck, spent, budget = st[0], st[1], st[2], st[3], st[4]
    due = 0
    while n_act > 0:
        if spent > budget:
            due = 1
            break
        u = act[head]
        head += 1
        if head == cap:
            head = 0
        n_act -= 1
        best = inf
        second = inf
        v = -1
        spent += fptr[u + 1] - fptr[u]
        for k in range(fptr[u], fptr[u + 1]):
            j = find[k]
            p = psi[j]
            if p < best:
                second = best
                best = p
                v = j
            elif p < second:
                second = p
        if best >= inf:
            free[n_stuck] = u  # free is no longer read: reuse it for the result
            n_stuck += 1
            continue
        w = cm[v]
        rm[u] = v
        cm[v] = u
        psi[v] = second + 2 if second < inf else inf
        if w >= 0:
            rm[w] = -1
            tl = head + n_act
            if tl >= cap:
                tl -= cap
            act[tl] = w
            n_act += 1
    st[0], st[1], st[2], st[3] = head, n_act, n_stuck, spent
    return due


def _push_relabel(fptr: np.ndarray, find: np.ndarray, tptr: np.ndarray, tind: np.ndarray,
                  rm: np.ndarray, cm: np.ndarray, free: np.ndarray, psi: np.ndarray,
                  queue: np.ndarray, act: np.ndarray,
                  side: ThreadPoolExecutor | None = None) -> int:
    """Maximum matching of the tight edges (``fptr``, ``find`` row-wise, ``tptr``,
    ``tind`` column-wise: :func:`_tight_rows`, :func:`_tight_cols`), completed from the
    current one in place, by push-relabel with global relabelling [3]_: a free row takes
    its tight column of least label, that column's former row becomes free, and the
    column's label rises to the row's second least label plus two (labels stay lower
    bounds of the distance to a free column); a backward search recomputes the exact
    labels once the pushes since the last one have scanned a quarter as many edges as it
    did (common practice, no source: fewer wasted pushes by rows that end free, for one
    more search). Columns never become free again and only tight edges are matched, so
    the prices stay valid; which rows stay free may change (any may start the next
    phase). ``free`` holds the free rows on entry; returns the number of rows left free
    (first in ``free``: no tight path to a free column). ``queue`` (n_cols) and ``act``
    (r + 1) are work arrays. With a ``side`` thread pool, each relabelling's levels are
    searched on two threads (:func:`_relabel_two`); the result is the same."""
    inf = 2 * (rm.size + cm.size) + 4
    act[:free.size] = free
    st = np.zeros(5, np.int64)
    st[1] = free.size
    while True:
        work = (_relabel(tptr, tind, rm, cm, psi, queue, inf) if side is None
                else _relabel_two(tptr, tind, rm, cm, psi, queue, inf, side))
        st[3], st[4] = 0, work // 4
        if not _pushes(fptr, find, rm, cm, free, psi, act, st):
            return int(st[2])


@njit(cache=True, nogil=True)
def _level_part(tptr, tind, rm, psi, front, lo, hi, nxt, inf, out):  # pragma: no cover
    """Label the columns one tight alternating step below ``front[lo:hi]`` (label
    ``nxt``) and list them in ``out``; returns ``(how many listed, entries scanned)``.
    Two threads may call this on two parts of one level: both may label and list the
    same column (same label; the caller drops the repeat), which is harmless."""
    n = 0
    work = 0
    for f in range(lo, hi):
        j = front[f]
        work += tptr[j + 1] - tptr[j]
        for k in range(tptr[j], tptr[j + 1]):
            c = rm[tind[k]]
            if c < 0 or c == j:
                continue
            if psi[c] == inf:
                psi[c] = nxt
                out[n] = c
                n += 1
    return n, work


@njit(cache=True, nogil=True)
def _first_level(cm, psi, front, inf):  # pragma: no cover - compiled
    """Label the free columns 0 (the others ``inf``) and list them; returns how many."""
    n = 0
    for j in range(cm.size):
        if cm[j] < 0:
            psi[j] = 0
            front[n] = j
            n += 1
        else:
            psi[j] = inf
    return n


@njit(cache=True, nogil=True)
def _next_level(psi, lab, a, na, b, nb, front, big):  # pragma: no cover - compiled
    """The next level's columns in increasing order, without repeats: from the two
    lists ``a[:na]``, ``b[:nb]`` (sorted), or for a large level by a scan of the labels
    (memory order either way, as in :func:`_relabel`); returns how many."""
    n = 0
    if na + nb > big:
        for j in range(psi.size):
            if psi[j] == lab:
                front[n] = j
                n += 1
        return n
    for t in range(na):
        front[n] = a[t]
        n += 1
    for t in range(nb):
        front[n] = b[t]
        n += 1
    front[:n].sort()
    m = 0
    for t in range(n):
        if m == 0 or front[t] != front[m - 1]:
            front[m] = front[t]
            m += 1
    return m


def _relabel_two(tptr: np.ndarray, tind: np.ndarray, rm: np.ndarray, cm: np.ndarray,
                 psi: np.ndarray, queue: np.ndarray, inf: int,
                 side: ThreadPoolExecutor) -> int:
    """:func:`_relabel` with each level split between this thread and ``side``: the
    same labels (a level's columns all get the same label, whichever thread finds them
    first), in 0.16 s against 0.23 s a relabelling at 10^7 links
    (``benchmarks/RESULTS.md``). Returns the number of entries scanned."""
    n_cols = cm.size
    a, b = np.empty(n_cols, queue.dtype), np.empty(n_cols, queue.dtype)  # each half's finds
    n = int(_first_level(cm, psi, queue, inf))
    big = n_cols // 16
    lab = 0
    work = 0
    while n:
        lab += 2
        half = n // 2
        job = side.submit(_level_part, tptr, tind, rm, psi, queue, half, n, lab, inf, b)
        na, wa = _level_part(tptr, tind, rm, psi, queue, 0, half, lab, inf, a)
        nb, wb = job.result()
        work += int(wa) + int(wb)
        n = int(_next_level(psi, lab, a, na, b, nb, queue, big))
    return work


class _TightWork:
    """The tight edges' CSRs, both ways (sized for every edge, reused by each phase).
    With a ``side`` thread pool, the row-wise copy is made there while this thread
    makes the column-wise one (both kernels release the GIL)."""

    __slots__ = ("fptr", "find", "tptr", "tind", "side")

    def __init__(self, r: int, n_cols: int, size: int, dt: type,
                 side: ThreadPoolExecutor | None = None) -> None:
        self.fptr: np.ndarray = np.zeros(r + 1, dt)
        self.find: np.ndarray = np.empty(size, dt)
        self.tptr: np.ndarray = np.zeros(n_cols + 1, dt)
        self.tind: np.ndarray = np.empty(size, dt)
        self.side = side
        _touch(self.find)
        _touch(self.tind)

    def match(self, fptr: np.ndarray, find: np.ndarray, fw: np.ndarray, tptr: np.ndarray,
              tind: np.ndarray, tw: np.ndarray, rc: np.ndarray, rm: np.ndarray,
              cm: np.ndarray, srow: np.ndarray, scol: np.ndarray, free: np.ndarray,
              psi: np.ndarray, queue: np.ndarray, act: np.ndarray) -> int:
        """The tight edges at the current prices (and every entry's reduced cost in
        ``rc``, column-wise, for the next search), then :func:`_push_relabel` on them;
        returns the number of rows left free (first in ``free``)."""
        if self.side is None:
            _tight_rows(fptr, find, fw, srow, scol, self.fptr, self.find)
        else:
            rows_job = self.side.submit(_tight_rows, fptr, find, fw, srow, scol, self.fptr,
                                        self.find)
        _tight_cols(tptr, tind, tw, srow, scol, self.tptr, self.tind, rc)
        if self.side is not None:
            rows_job.result()
        return _push_relabel(self.fptr, self.find, self.tptr, self.tind, rm, cm, free, psi,
                             queue, act, self.side)


@njit(cache=True, nogil=True)
def _touch(a):  # pragma: no cover - compiled
    """Write a zero into every 4 KiB of ``a``, so that the memory is mapped now (on the
    thread that calls this) rather than at the first write of a kernel."""
    step = max(1, 4096 // a.itemsize)
    for k in range(0, a.size, step):
        a[k] = 0


#: From this many entries (with the dummies) on, the set-up beside the maximum matching
#: and the two tight copies of each phase run on a second thread (measured at 10^7
#: links: ``benchmarks/RESULTS.md``; below, a thread costs more than it saves: common
#: practice, no source).
_SIDE_MIN = 1_000_000


class _Arrays:
    """What the phases read beside the matching: the rows' CSR with the dummies
    (``fptr``, ``find``, ``fw``), its column-wise copy (``tptr``, ``tind``, ``tw``) and
    the kept reduced costs ``rc`` (all at prices 0)."""

    def __init__(self, ptr: np.ndarray, ind: np.ndarray, loops: np.ndarray, size: int,
                 n_cols: int, dt: type) -> None:
        r = ptr.size - 1
        self.fptr: np.ndarray = np.zeros(r + 1, dt)
        self.find: np.ndarray = np.empty(size, dt)
        self.fw: np.ndarray = np.empty(size, np.int8)
        _with_dummies(ptr, ind, loops, self.fptr, self.find, self.fw)
        self.tptr: np.ndarray = np.zeros(n_cols + 1, dt)
        self.tind: np.ndarray = np.empty(size, dt)
        self.tw: np.ndarray = np.empty(size, np.int8)
        _transpose_w(self.fptr, self.find, self.fw, self.tptr, self.tind, self.tw)
        self.rc: np.ndarray = self.tw.copy()  # every reduced cost at prices 0


def stem_cycle_cover(indptr: np.ndarray, indices: np.ndarray, n_cols: int,
                     has_loop: np.ndarray, *,
                     progress: Callable[[int, int], None] | None = None
                     ) -> tuple[np.ndarray, int]:
    """Largest set of states covered by vertex-disjoint stems and cycles.

    Parameters
    ----------
    indptr, indices : ndarray of int
        CSR of ``[A B]`` restricted to ``r`` states: row ``v`` lists the columns ``u``
        with ``A[v, u] != 0`` (states ``0..r-1``) and ``r + k`` for input ``k`` acting
        on ``v``.
    n_cols : int
        ``r`` plus the number of inputs.
    has_loop : ndarray of bool, shape (r,)
        Whether each state has a self-loop (the real edge ``(v, v)``).
    progress : callable, optional
        ``progress(done, total)`` after the maximum matching and after every phase:
        ``total`` rows were left free by the matching, ``done`` of them are placed.

    Returns
    -------
    row_match : ndarray of int64, shape (r,)
        Column of each row in one optimal assignment; a row ``v`` with
        ``row_match[v] == v`` and no self-loop is uncovered.
    n_uncovered : int
        States left out of every stem and cycle; ``r - n_uncovered`` is the largest
        number covered (Hosoe's dimension when the rows are the accessible states).

    Notes
    -----
    Primal-dual minimum-cost assignment grown from the sink (module docstring), exact;
    one of possibly many optimal assignments. Each phase is one O(E + V) search plus a
    push-relabel matching; the phases are few in practice. The work arrays are int32
    whenever the sizes allow (less memory traffic on huge networks).
    """
    ptr, ind = index_array(indptr), index_array(indices)
    r = ptr.size - 1
    n_cols = int(n_cols)
    loops = np.ascontiguousarray(has_loop, np.bool_)
    size = ind.size + r - int(np.count_nonzero(loops))
    # labels reach 2 (r + n_cols) + 4; distances stay below 2**30
    dt = np.int32 if max(size, 2 * (r + n_cols) + 8) < 2**31 - 4 else np.int64
    if r == 0:
        return maximum_matching(ptr, ind, n_cols)[0], 0
    if size < _SIDE_MIN:
        rm = matching_work(ptr, ind, n_cols, dtype=dt)[0]
        return _phases(rm, _Arrays(ptr, ind, loops, size, n_cols, dt), loops, progress,
                       None)
    # the second thread builds the arrays beside the maximum matching, maps the tight
    # copies' memory during the first search (not beside the matching, whose own arrays
    # are then freed: the peak stays that of one thread) and makes each phase's
    # row-wise tight copy
    with ThreadPoolExecutor(max_workers=1, thread_name_prefix="netctl-cover") as side:
        job = side.submit(_Arrays, ptr, ind, loops, size, n_cols, dt)
        rm = matching_work(ptr, ind, n_cols, dtype=dt)[0]
        arrays = job.result()
        del ptr, ind
        return _phases(rm, arrays, loops, progress, side)


#: A phase searches only to distance 1 once at most 1/_CAP_SHARE of the rows the
#: starting matching left free are still free (measured at 10^7 links:
#: ``benchmarks/RESULTS.md``).
_CAP_SHARE = 128


def _phases(rm: np.ndarray, arr: _Arrays, loops: np.ndarray,
            progress: Callable[[int, int], None] | None,
            side: ThreadPoolExecutor | None) -> tuple[np.ndarray, int]:
    """The phases of :func:`stem_cycle_cover` from the maximum matching ``rm`` (of the
    work type) of the real edges (prices 0); ``rm`` is completed in place."""
    r = rm.size
    n_cols = arr.tptr.size - 1
    dt = arr.find.dtype.type
    cm = np.full(n_cols, -1, dt)
    matched = np.flatnonzero(rm >= 0)
    cm[rm[matched]] = matched
    del matched
    srow = np.zeros(r, dt)
    scol = np.zeros(n_cols, dt)
    dcol = np.empty(n_cols, dt)
    act = np.empty(r + 1, dt)
    work = _SearchWork(r, n_cols, dt)
    tight: _TightWork | None = None
    tight_job: Future[_TightWork] | None = None
    if side is None:
        tight = _TightWork(r, n_cols, arr.find.size, dt)
    else:  # mapped on the second thread during the first search
        tight_job = side.submit(_TightWork, r, n_cols, arr.find.size, dt, side)
    free = np.flatnonzero(rm < 0).astype(dt)
    n_free0 = free.size
    if progress is not None:
        progress(0, n_free0)
    capped = stalled = False  # whether the last search stopped at distance 1 (and
    # its phase matched no row)
    while free.size:
        # few rows left (nearly always at distance 1): a search that stops after the
        # distance-0 region (a valid step: unsettled vertices take the cap) makes their
        # paths tight at a fraction of a full search's work; after a capped phase that
        # matched none, a full search follows (each full phase matches one row at least)
        capped = _CAP_SHARE * free.size <= n_free0 and not (capped and stalled)
        work.search(arr.tptr, arr.tind, arr.tw, arr.rc, rm, cm, srow, scol, dcol,
                    1 if capped else 2**30)
        if tight is None:
            assert tight_job is not None
            tight = tight_job.result()
        # a maximum matching of the tight edges: every free row whose shortest
        # augmenting path is still vertex-disjoint from the others' is matched
        n_free = tight.match(arr.fptr, arr.find, arr.fw, arr.tptr, arr.tind, arr.tw,
                             arr.rc, rm, cm, srow, scol, free, dcol, work.buf,
                             act)  # the search's arrays, reused
        stalled = n_free == free.size
        if stalled and not capped:  # cannot happen: the dummies make a perfect assignment
            raise RuntimeError(f"stem-cycle cover: a phase matched none of {n_free} free "
                               f"rows (internal error; please report)")
        free = free[:n_free]
        if progress is not None:
            progress(n_free0 - n_free, n_free0)
    rm_out = rm.astype(np.int64)
    n_unc = int(np.count_nonzero((rm_out == np.arange(r)) & ~loops))
    return rm_out, n_unc
