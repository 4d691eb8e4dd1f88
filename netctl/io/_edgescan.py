"""Compiled scanner for edge-list text: bytes in, integer arrays out (no per-line objects).

The scanner works on one chunk of bytes that ends at a line break (or at the end of the
file) and keeps all of its state in a small integer array, so the Python driver in
:mod:`netctl.io.edgelist` can stream a file of any length in fixed-size chunks, stop at
the first problem and report the exact line.

Two name modes:

* ``MODE_INT``: names are canonical decimal integers (``0``, ``17``, ``-3``; no sign
  ``+``, no leading zeros, at most 18 digits). The integer values are stored directly and
  factorized afterwards with array code. The first token that is not such an integer
  stops the scan with ``STATUS_NOT_INT`` and the driver restarts in string mode.
* ``MODE_STR``: every name is looked up in an open-addressing hash table (FNV-1a over the
  bytes); new names are copied once into a growing byte buffer. Ids follow the order of
  first appearance.

Weights are parsed exactly for decimals with at most 15 significant digits and a
decimal exponent within +-22 (Clinger's fast path: one correctly rounded IEEE operation
on two exactly representable numbers). Other weight tokens (17-digit ``repr`` values,
``nan``, ...) are recorded and converted by the driver with Python's ``float``.
"""

from __future__ import annotations

import numpy as np
from netctl._jit import njit

__all__ = ["scan_chunk", "rehash", "mark_present", "remap", "int_names_text", "build_csr", "MODE_INT", "MODE_STR", "STATUS_DONE", "STATUS_ERROR",
           "STATUS_NOT_INT", "STATUS_GROW", "STATUS_FULL", "ERR_TOO_MANY", "ERR_MIXED", "ERR_WEIGHT", "ERR_EMPTY", "ST_SIZE",
           "STR_BATCH"]

MODE_INT = 0
MODE_STR = 1
STATUS_DONE = 0
STATUS_ERROR = 1
STATUS_NOT_INT = 2
STATUS_GROW = 3
STATUS_FULL = 4
ERR_TOO_MANY = 1
ERR_MIXED = 2
ERR_WEIGHT = 3
#: a column left empty between two commas or semicolons (``a,,1``) or before the first
#: name (``,a,b``): never read as one separator, which would run two columns together
ERR_EMPTY = 4

# state array slots
_POS, _LINE, _NCOLS, _NE, _NI, _NFB, _NN, _NUSED, _NZERO, _ZLINE, _ERR, _ELS, _ELE = range(13)
ST_SIZE = 16
_SINK = 15  # state slot that receives the sum of the prefetch loads (never read)
#: Lines per batch of the string-name fast path; the driver keeps room for two new
#: names per line of a batch in the name table (see ``STATUS_GROW``).
STR_BATCH = 32

_POW10 = np.array([10.0 ** k for k in range(23)], dtype=np.float64)
_FNV_OFFSET = np.uint64(14695981039346656037)
_FNV_PRIME = np.uint64(1099511628211)


@njit(python=False, cache=True, nogil=True, inline="always")
def _parse_int(buf: np.ndarray, s: int, e: int) -> tuple[bool, int]:
    neg = False
    if buf[s] == 45:
        neg = True
        s += 1
    n = e - s
    if n <= 0 or n > 18:
        return False, 0
    if buf[s] == 48 and (n > 1 or neg):
        return False, 0
    v = 0
    for i in range(s, e):
        d = np.int64(buf[i]) - 48
        if d < 0 or d > 9:
            return False, 0
        v = v * 10 + d
    return True, -v if neg else v


@njit(python=False, cache=True, nogil=True, inline="always")
def _parse_float(buf: np.ndarray, s: int, e: int) -> tuple[bool, float]:
    """Exact for <= 15 significant digits and |decimal exponent| <= 22; else (False, 0)."""
    neg = False
    c = buf[s]
    if c == 45 or c == 43:
        neg = c == 45
        s += 1
    mant = 0
    ndig = 0
    exp10 = 0
    seen_digit = False
    seen_dot = False
    i = s
    while i < e:
        c = buf[i]
        if c >= 48 and c <= 57:
            seen_digit = True
            if mant == 0 and c == 48:
                if seen_dot:
                    exp10 -= 1
            else:
                if ndig >= 15:
                    return False, 0.0
                mant = mant * 10 + (np.int64(c) - 48)
                ndig += 1
                if seen_dot:
                    exp10 -= 1
        elif c == 46 and not seen_dot:
            seen_dot = True
        else:
            break
        i += 1
    if not seen_digit:
        return False, 0.0
    if i < e:
        c = buf[i]
        if c != 101 and c != 69:
            return False, 0.0
        i += 1
        if i >= e:
            return False, 0.0
        eneg = False
        if buf[i] == 45 or buf[i] == 43:
            eneg = buf[i] == 45
            i += 1
        if i >= e or e - i > 4:
            return False, 0.0
        ev = 0
        while i < e:
            d = np.int64(buf[i]) - 48
            if d < 0 or d > 9:
                return False, 0.0
            ev = ev * 10 + d
            i += 1
        exp10 += -ev if eneg else ev
    v = float(mant)
    if mant != 0:
        if exp10 > 22 or exp10 < -22:
            return False, 0.0
        if exp10 >= 0:
            v = v * _POW10[exp10]
        else:
            v = v / _POW10[-exp10]
    return True, -v if neg else v


@njit(python=False, cache=True, nogil=True, inline="always")
def _fnv(buf: np.ndarray, s: int, e: int) -> np.uint64:
    h = _FNV_OFFSET
    for i in range(s, e):
        h = (h ^ np.uint64(buf[i])) * _FNV_PRIME
    return _fmix(h)


@njit(python=False, cache=True, nogil=True, inline="always")
def _fmix(h: np.uint64) -> np.uint64:
    """MurmurHash3's fmix64 avalanche, so that the low bits used as the slot are well
    mixed."""
    h ^= h >> np.uint64(33)
    h *= np.uint64(0xFF51AFD7ED558CCD)
    h ^= h >> np.uint64(33)
    h *= np.uint64(0xC4CEB9FE1A85EC53)
    h ^= h >> np.uint64(33)
    return h


@njit(python=False, cache=True, nogil=True, inline="always")
def _pack(buf: np.ndarray, s: int, e: int) -> int:
    """Up to 8 bytes packed little-endian into an int64 (0 for an empty range)."""
    v = np.uint64(0)
    for i in range(s, e):
        v |= np.uint64(buf[i]) << np.uint64(8 * (i - s))
    return np.int64(v)


@njit(python=False, cache=True, nogil=True, inline="always")
def _mix(k0: int, k1: int, ln: int) -> np.uint64:
    """Hash of a name of at most 16 bytes from its two packed words (multiply-xor, then
    the fmix64 avalanche), far cheaper than a byte-wise hash."""
    h = (np.uint64(k0) * np.uint64(0x9E3779B97F4A7C15)) ^ (
        (np.uint64(k1) + np.uint64(ln)) * np.uint64(0xC2B2AE3D27D4EB4F))
    return _fmix(h)


@njit(python=False, cache=True, nogil=True, inline="always")
def _name_key(buf: np.ndarray, s: int, e: int) -> tuple[np.uint64, int, int]:
    """``(hash, key0, key1)`` of the name ``buf[s:e]``: the keys are the name itself in
    two little-endian words when it has at most 16 bytes, else ``(hash >> 1, 0)``."""
    ln = e - s
    if ln > 16:
        h = _fnv(buf, s, e)
        return h, np.int64(h >> np.uint64(1)), np.int64(0)
    m = min(e, s + 8)
    k0 = _pack(buf, s, m)
    k1 = _pack(buf, m, e)
    return _mix(k0, k1, ln), k0, k1


@njit(python=False, cache=True, nogil=True, inline="always")
def _lookup(buf: np.ndarray, s: int, e: int, line: int, table: np.ndarray,
            names_buf: np.ndarray, name_pos: np.ndarray, name_line: np.ndarray,
            st: np.ndarray) -> int:
    """Id of the name ``buf[s:e]``, inserting it if new (the caller guarantees room)."""
    h, k0, k1 = _name_key(buf, s, e)
    return _lookup_k(buf, s, e, h, k0, k1, line, table, names_buf, name_pos, name_line,
                     st)


@njit(python=False, cache=True, nogil=True, inline="always")
def _insert(buf: np.ndarray, s: int, e: int, k0: int, k1: int, slot: int, line: int,
            table: np.ndarray, names_buf: np.ndarray, name_pos: np.ndarray,
            name_line: np.ndarray, st: np.ndarray) -> int:
    """Give the name ``buf[s:e]`` the next id in the empty table ``slot``. The name is
    appended to ``names_buf`` followed by a line break (names never hold one), so the
    whole buffer decodes and splits in one step."""
    ln = e - s
    nid = st[_NN]
    used = st[_NUSED]
    for k in range(ln):
        names_buf[used + k] = buf[s + k]
    names_buf[used + ln] = 10
    name_pos[nid, 0] = used
    name_pos[nid, 1] = ln
    name_line[nid] = line
    st[_NUSED] = used + ln + 1
    st[_NN] = nid + 1
    table[slot, 0] = (np.int64(ln) << 40) | nid
    table[slot, 1] = k0
    table[slot, 2] = k1
    return nid


@njit(python=False, cache=True, nogil=True, inline="always")
def _lookup_k(buf: np.ndarray, s: int, e: int, h: np.uint64, k0: int, k1: int, line: int,
              table: np.ndarray, names_buf: np.ndarray, name_pos: np.ndarray,
              name_line: np.ndarray, st: np.ndarray) -> int:
    """:func:`_lookup` with the name's hash and keys (:func:`_name_key`) at hand.

    A table slot holds ``(length << 40 | id, key0, key1)`` (``id = -1``: empty), so names
    of at most 16 bytes are found with one memory access (:func:`_lookup_short`); longer
    names are confirmed against the stored bytes.
    """
    ln = e - s
    if ln <= 16:
        return _lookup_short(buf, s, e, h, k0, k1, line, table, names_buf, name_pos,
                             name_line, st)
    mask = np.int64(table.shape[0] - 1)
    slot = np.int64(h & np.uint64(mask))
    while True:
        head = table[slot, 0]
        if head < 0:
            return _insert(buf, s, e, k0, k1, slot, line, table, names_buf, name_pos,
                           name_line, st)
        if table[slot, 1] == k0 and table[slot, 2] == k1 and (head >> 40) == ln:
            idx = head & 0xFFFFFFFFFF
            ns = name_pos[idx, 0]
            same = True
            for k in range(ln):
                if names_buf[ns + k] != buf[s + k]:
                    same = False
                    break
            if same:
                return idx
        slot = (slot + 1) & mask


@njit(python=False, cache=True, nogil=True, inline="always")
def _lookup_short(buf: np.ndarray, s: int, e: int, h: np.uint64, k0: int, k1: int,
                  line: int, table: np.ndarray, names_buf: np.ndarray,
                  name_pos: np.ndarray, name_line: np.ndarray, st: np.ndarray) -> int:
    """:func:`_lookup_k` for a name of at most 16 bytes (its keys are the name itself, so
    a key match is the answer). Kept apart from the long-name case: with that case in
    the same loop the compiled probe ran about four times slower (measured)."""
    ln = e - s
    mask = np.int64(table.shape[0] - 1)
    slot = np.int64(h & np.uint64(mask))
    while True:
        head = table[slot, 0]
        if head < 0:
            return _insert(buf, s, e, k0, k1, slot, line, table, names_buf, name_pos,
                           name_line, st)
        if table[slot, 1] == k0 and table[slot, 2] == k1 and (head >> 40) == ln:
            return head & 0xFFFFFFFFFF
        slot = (slot + 1) & mask


@njit(python=False, cache=True, nogil=True)
def rehash(table: np.ndarray, names_buf: np.ndarray, name_pos: np.ndarray,
           n_names: int) -> None:
    """Insert names ``0..n_names-1`` into the empty (``table[:, 0] == -1``) ``table``."""
    mask = np.int64(table.shape[0] - 1)
    for nid in range(n_names):
        s = name_pos[nid, 0]
        e = s + name_pos[nid, 1]
        h, k0, k1 = _name_key(names_buf, s, e)
        slot = np.int64(h & np.uint64(mask))
        while table[slot, 0] >= 0:
            slot = (slot + 1) & mask
        table[slot, 0] = (np.int64(e - s) << 40) | nid
        table[slot, 1] = k0
        table[slot, 2] = k1


# byte classes for the scanner: 0 other, 1 separator, 2 line break, 3 comment
_CLASS = np.zeros(256, np.uint8)
for _c in b",\t; \r\v\f":
    _CLASS[_c] = 1
_CLASS[10] = 2
_CLASS[35] = 3
# separators that end a cell (a run holding two of them leaves a cell empty); spaces and
# tabs are layout, and a run of them counts as one
_HARD = np.zeros(256, np.uint8)
for _c in b",;":
    _HARD[_c] = 1


@njit(python=False, cache=True, nogil=True, inline="always")
def _scan_name(buf: np.ndarray, q: int, n: int) -> tuple[int, int, int]:
    """End of the name starting at ``q`` and its first 16 bytes packed in two words."""
    k0 = np.uint64(0)
    k1 = np.uint64(0)
    s = q
    while q < n and _CLASS[buf[q]] == 0:
        i = q - s
        if i < 8:
            k0 |= np.uint64(buf[q]) << np.uint64(8 * i)
        elif i < 16:
            k1 |= np.uint64(buf[q]) << np.uint64(8 * (i - 8))
        q += 1
    return q, np.int64(k0), np.int64(k1)


@njit(python=False, cache=True, nogil=True, inline="always")
def _save(st: np.ndarray, p: int, line: int, ncols: int, ne: int, ni: int, nfb: int,
          nzero: int, zline: int) -> None:
    st[_POS] = p
    st[_LINE] = line
    st[_NCOLS] = ncols
    st[_NE] = ne
    st[_NI] = ni
    st[_NFB] = nfb
    st[_NZERO] = nzero
    st[_ZLINE] = zline


@njit(python=False, cache=True, nogil=True, inline="always")
def _fast_int(buf: np.ndarray, q: int, n: int) -> tuple[bool, int, int]:
    """A canonical integer at ``q`` ending at a separator, '#', a line break or the end."""
    neg = False
    if q < n and buf[q] == 45:
        neg = True
        q += 1
    ds = q
    v = 0
    while q < n:
        d = np.int64(buf[q]) - 48
        if d < 0 or d > 9:
            break
        v = v * 10 + d
        q += 1
    nd = q - ds
    if nd == 0 or nd > 18 or (buf[ds] == 48 and (nd > 1 or neg)):
        return False, 0, q
    if q < n and _CLASS[buf[q]] == 0:
        return False, 0, q
    return True, -v if neg else v, q


@njit(python=False, cache=True, nogil=True, inline="always")
def _line_tail(buf: np.ndarray, q: int, n: int) -> tuple[int, int, bool, float]:
    """The rest of a fast-path line after its second name: separators, an optional
    weight, separators, an optional comment. Returns ``(q, n_fields, ok, weight)`` with
    ``q`` at the line break (or the end, or where reading stopped); ``ok`` is False when
    the weight needs the general path (or an empty cell comes before it)."""
    hard = 0
    while q < n and _CLASS[buf[q]] == 1:
        hard += _HARD[buf[q]]
        q += 1
    nf = 2
    x = 0.0
    ok = True
    if q < n and _CLASS[buf[q]] == 0:
        if hard >= 2:  # an empty cell before the weight: the general path reports it
            return q, 3, False, x
        ws = q
        while q < n and _CLASS[buf[q]] == 0:
            q += 1
        ok, x = _parse_float(buf, ws, q)
        nf = 3
        while q < n and _CLASS[buf[q]] == 1:
            q += 1
    if ok and q < n and buf[q] == 35:
        while q < n and buf[q] != 10:
            q += 1
    return q, nf, ok, x


@njit(python=False, cache=True, nogil=True, inline="always")
def _zero_count(x: float, line: int, nzero: int, zline: int) -> tuple[int, int]:
    """Count a weight of 0 (not a link; the driver warns) and keep the first one's line."""
    if x == 0.0:
        if nzero == 0:
            zline = line
        nzero += 1
    return nzero, zline


@njit(python=False, cache=True, nogil=True, inline="always")
def _short_of_room(st: np.ndarray, new_names: int, new_bytes: int, table: np.ndarray,
                   name_pos: np.ndarray, names_buf: np.ndarray) -> bool:
    """Whether ``new_names`` more names of ``new_bytes`` bytes (line breaks included)
    could overfill the name table (kept at most half full), the name positions or the
    name buffer; the driver's ``_grow`` makes room for a fast-path batch."""
    nn = st[_NN] + new_names
    return (nn * 2 > table.shape[0] or nn > name_pos.shape[0]
            or st[_NUSED] + new_bytes > names_buf.size)


@njit(python=False, cache=True, nogil=True)
def scan_chunk(buf: np.ndarray, mode: int, st: np.ndarray,
               src: np.ndarray, dst: np.ndarray, w: np.ndarray, iso: np.ndarray,
               fb_edge: np.ndarray, fb_line: np.ndarray, fb_start: np.ndarray,
               fb_end: np.ndarray, table: np.ndarray, names_buf: np.ndarray,
               name_pos: np.ndarray, name_line: np.ndarray) -> int:
    """Scan ``buf`` from ``st[POS]``; append links, single names and weight fallbacks.

    Links go to ``src``/``dst``/``w`` from index ``st[NE]`` on; single-name lines to
    ``iso`` and weight fallbacks to ``fb_*`` from index 0 (per chunk). Returns a status;
    on ``STATUS_ERROR`` the error code and the byte range of the bad line are in ``st``;
    on ``STATUS_NOT_INT`` ``st[LINE]`` is the line of the token; on ``STATUS_GROW``
    (string mode) the name table or buffers must grow, on ``STATUS_FULL`` ``iso`` or the
    ``fb_*`` arrays, before the scan resumes at ``st[POS]``. ``src``/``dst``/``w`` must
    have room for one entry per line of ``buf``.
    """
    n = buf.size
    p = st[_POS]
    line = st[_LINE]
    ncols = st[_NCOLS]
    ne = st[_NE]
    ni = st[_NI]
    nfb = st[_NFB]
    nzero = st[_NZERO]
    zline = st[_ZLINE]
    starts = np.zeros(4, np.int64)
    ends = np.zeros(4, np.int64)
    ids = np.zeros(2, np.int64)
    b_tok = np.empty((STR_BATCH, 4), np.int64)
    b_hash = np.empty((STR_BATCH, 2), np.uint64)
    b_key = np.empty((STR_BATCH, 4), np.int64)
    b_w = np.empty(STR_BATCH, np.float64)
    while p < n:
        if mode == MODE_INT:
            # fast path: 'int sep int [sep weight] [seps] [# comment]' in one pass
            q = p
            while q < n and (buf[q] == 32 or buf[q] == 9):
                q += 1
            ok, a, q = _fast_int(buf, q, n)
            if ok and q < n and _CLASS[buf[q]] == 1:
                hard = 0
                while q < n and _CLASS[buf[q]] == 1:
                    hard += _HARD[buf[q]]
                    q += 1
                ok, b, q = _fast_int(buf, q, n)
                if ok and hard < 2:
                    q, nf, ok, x = _line_tail(buf, q, n)
                    if ok and (q >= n or buf[q] == 10) and (ncols == 0 or ncols == nf):
                        ncols = nf
                        src[ne] = a
                        dst[ne] = b
                        if nf == 3:
                            w[ne] = x
                            nzero, zline = _zero_count(x, line, nzero, zline)
                        ne += 1
                        p = q + 1
                        line += 1
                        continue
        elif mode == MODE_STR:
            # fast path in batches: up to STR_BATCH lines 'name sep name [sep weight]
            # [seps] [# comment]' with names of at most 16 bytes are tokenized and their
            # names hashed first, then the name-table slots of all of them are loaded
            # (independent loads that overlap in the memory system), then the names are
            # looked up in file order. A line of any other form ends the batch and goes
            # through the general path below.
            nb = 0
            q = p
            pend = p  # just past the last line taken into the batch
            bcols = ncols
            nbytes = 0
            tmask = np.uint64(table.shape[0] - 1)
            acc = 0
            while nb < STR_BATCH and q < n:
                while q < n and (buf[q] == 32 or buf[q] == 9):
                    q += 1
                s0 = q
                q, a0, a1 = _scan_name(buf, q, n)
                e0 = q
                if e0 == s0 or q >= n or _CLASS[buf[q]] != 1:
                    break
                hard = 0
                while q < n and _CLASS[buf[q]] == 1:
                    hard += _HARD[buf[q]]
                    q += 1
                if hard >= 2:
                    break  # an empty cell: the general path reports it
                s1 = q
                q, c0, c1 = _scan_name(buf, q, n)
                e1 = q
                if e1 == s1:
                    break
                q, nf, ok, x = _line_tail(buf, q, n)
                if not ok or not (q >= n or buf[q] == 10) or (bcols != 0 and bcols != nf):
                    break
                if e0 - s0 > 16 or e1 - s1 > 16:
                    break  # long names: the general path
                bcols = nf
                b_hash[nb, 0] = _mix(a0, a1, e0 - s0)
                b_hash[nb, 1] = _mix(c0, c1, e1 - s1)
                b_key[nb, 0] = a0
                b_key[nb, 1] = a1
                b_key[nb, 2] = c0
                b_key[nb, 3] = c1
                b_tok[nb, 0] = s0
                b_tok[nb, 1] = e0
                b_tok[nb, 2] = s1
                b_tok[nb, 3] = e1
                b_w[nb] = x
                nbytes += (e0 - s0) + (e1 - s1) + 2  # names and their line breaks
                nb += 1
                q += 1
                pend = q
            # the table loads in a tight loop of their own, so that all of them are in
            # flight at once (interleaved with the tokenizing, the processor's window
            # held only one or two)
            for j in range(nb):
                acc += (table[np.int64(b_hash[j, 0] & tmask), 0]
                        + table[np.int64(b_hash[j, 1] & tmask), 0])
            st[_SINK] = acc
            if nb > 0:
                if _short_of_room(st, 2 * nb + 2, nbytes, table, name_pos, names_buf):
                    _save(st, p, line, ncols, ne, ni, nfb, nzero, zline)
                    return STATUS_GROW
                ncols = bcols
                for j in range(nb):
                    src[ne] = _lookup_short(buf, b_tok[j, 0], b_tok[j, 1], b_hash[j, 0],
                                            b_key[j, 0], b_key[j, 1], line, table,
                                            names_buf, name_pos, name_line, st)
                    dst[ne] = _lookup_short(buf, b_tok[j, 2], b_tok[j, 3], b_hash[j, 1],
                                            b_key[j, 2], b_key[j, 3], line, table,
                                            names_buf, name_pos, name_line, st)
                    if bcols == 3:
                        w[ne] = b_w[j]
                        nzero, zline = _zero_count(b_w[j], line, nzero, zline)
                    ne += 1
                    line += 1
                p = min(pend, n)
                continue
        # general path: tokenize the line, then interpret it
        nf = 0
        intok = False
        hard = 0  # cell separators since the last name
        empty = False
        q = p
        while q < n:
            c = _CLASS[buf[q]]
            if c == 2:
                break
            if c == 3:  # '#': comment to end of line
                if intok and nf <= 4:
                    ends[nf - 1] = q
                intok = False
                while q < n and buf[q] != 10:
                    q += 1
                break
            if c == 1:
                if intok:
                    if nf <= 4:
                        ends[nf - 1] = q
                    intok = False
                    hard = 0
                hard += _HARD[buf[q]]
            elif not intok:
                if hard >= 2 or (nf == 0 and hard >= 1):
                    empty = True  # a cell left empty before this name
                hard = 0
                if nf < 4:
                    starts[nf] = q
                nf += 1
                intok = True
            q += 1
        if intok and nf <= 4:
            ends[nf - 1] = q
        if empty or nf > 3 or (nf >= 2 and ncols != 0 and ncols != nf):
            st[_ERR] = ERR_EMPTY if empty else ERR_TOO_MANY if nf > 3 else ERR_MIXED
            st[_ELS] = p
            st[_ELE] = q
            _save(st, p, line, ncols, ne, ni, nfb, nzero, zline)
            return STATUS_ERROR
        if nf >= 2:
            ncols = nf
        if (nf == 1 and ni >= iso.size) or (nf == 3 and nfb >= fb_edge.size):
            _save(st, p, line, ncols, ne, ni, nfb, nzero, zline)
            return STATUS_FULL
        if nf >= 1 and mode == MODE_STR and _short_of_room(st, 2, (q - p) + 2, table,
                                                           name_pos, names_buf):
            _save(st, p, line, ncols, ne, ni, nfb, nzero, zline)
            return STATUS_GROW
        if nf >= 1:
            for f in range(min(nf, 2)):
                if mode == MODE_INT:
                    ok, v = _parse_int(buf, starts[f], ends[f])
                    if not ok:
                        _save(st, p, line, ncols, ne, ni, nfb, nzero, zline)
                        return STATUS_NOT_INT
                    ids[f] = v
                else:
                    ids[f] = _lookup(buf, starts[f], ends[f], line, table, names_buf,
                                     name_pos, name_line, st)
            if nf == 1:
                iso[ni] = ids[0]
                ni += 1
            else:
                src[ne] = ids[0]
                dst[ne] = ids[1]
                if nf == 3:
                    ok, x = _parse_float(buf, starts[2], ends[2])
                    if ok:
                        w[ne] = x
                        nzero, zline = _zero_count(x, line, nzero, zline)
                    else:
                        fb_edge[nfb] = ne
                        fb_line[nfb] = line
                        fb_start[nfb] = starts[2]
                        fb_end[nfb] = ends[2]
                        nfb += 1
                        w[ne] = 0.0
                ne += 1
        p = q + 1
        line += 1
    _save(st, p, line, ncols, ne, ni, nfb, nzero, zline)
    return STATUS_DONE


# the kernels run after the scan live in their own module (kept importable from here)
from netctl.io._edgekernels import build_csr, int_names_text, mark_present, remap  # noqa: E402
