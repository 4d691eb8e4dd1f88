"""Matrix Market files: the file holds the state matrix ``A`` itself.

Entry ``(i, j)`` (1-based in the file) nonzero means state ``j`` influences state ``i``
(``A[i, j] != 0``), the netctl orientation. ``pattern`` files give a pattern;
``real``/``integer`` files give weights; ``symmetric`` files are expanded.
"""

from __future__ import annotations

import io
import os
import re
from typing import Any

import numpy as np

from netctl.io._common import atomic_write, check_states, file_error, read_bytes
from netctl.system import StructuredSystem

__all__ = ["read_mtx", "write_mtx", "mtx_bytes", "shortest_real", "warn_names_not_kept", "SMALL_WRITE"]

#: Refuse headers that claim more entries than this (protects memory).
MAX_ENTRIES = 2_000_000_000
#: Refuse headers that claim more states than this (the row pointer alone would not fit).
MAX_STATES = 500_000_000


def read_mtx(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read a Matrix Market coordinate or array file as ``A``.

    Raises
    ------
    NetworkFileError
        Bad banner, non-square matrix, absurd sizes, malformed entries (with the line).
    """
    data = read_bytes(path)
    if data[:3] == b"\xef\xbb\xbf":  # a byte-order mark (saved as "UTF-8 with BOM")
        data = data[3:]
    nul = data.find(b"\x00")
    if nul >= 0:  # never hand a NUL byte to scipy's parser (it crashed the process)
        raise file_error(path, data.count(b"\n", 0, nul) + 1, "the file holds a NUL byte; "
                         "a Matrix Market file is plain text. Is it damaged or binary?")
    lines = data.split(b"\n", 1)
    banner = lines[0].decode("latin-1").strip().lower().split()
    if len(banner) < 4 or banner[0] != "%%matrixmarket" or banner[1] != "matrix":
        raise file_error(path, 1, f"expected a Matrix Market banner such as "
                         f"'%%MatrixMarket matrix coordinate real general', found "
                         f"{lines[0][:80].decode('latin-1')!r}.")
    fmt, field = banner[2], banner[3]
    symmetry = banner[4] if len(banner) > 4 else "general"
    if fmt not in ("coordinate", "array"):
        raise file_error(path, 1, f"unknown Matrix Market format {fmt!r}; expected "
                         "'coordinate' or 'array'.")
    if field not in ("real", "integer", "pattern", "double"):
        raise file_error(path, 1, f"the field {field!r} is not supported; expected 'real', "
                         "'integer' or 'pattern' (complex weights are not meaningful here).")
    if symmetry not in ("general", "symmetric", "skew-symmetric"):
        raise file_error(path, 1, f"the symmetry {symmetry!r} is not supported; expected "
                         "'general', 'symmetric' or 'skew-symmetric'.")
    # size line: first non-comment line
    size_line_no = None
    pos, k = len(lines[0]) + 1, 2  # any number of comment lines may precede the size line
    while pos < len(data):
        end = data.find(b"\n", pos)
        end = len(data) if end < 0 else end
        raw = data[pos:end]
        s = raw.strip()
        if s and not s.startswith(b"%"):
            size_line_no = k
            parts = s.split()
            break
        pos, k = end + 1, k + 1
    if size_line_no is None:
        raise file_error(path, None, "the size line ('rows cols entries') is missing.")
    try:
        dims = [int(x) for x in parts]
    except ValueError:
        raise file_error(path, size_line_no, f"expected the size line 'rows cols entries', "
                         f"found {raw.strip().decode('latin-1')!r}.") from None
    want = 3 if fmt == "coordinate" else 2
    if len(dims) != want or min(dims) < 0:
        raise file_error(path, size_line_no, f"expected {want} non-negative integers on the "
                         f"size line, found {raw.strip().decode('latin-1')!r}.")
    if dims[0] != dims[1]:
        raise file_error(path, size_line_no, f"the matrix is {dims[0]} x {dims[1]}; a state "
                         "matrix A must be square (n x n).")
    claimed = dims[2] if fmt == "coordinate" else dims[0] * dims[1]
    if claimed > MAX_ENTRIES or dims[0] > MAX_STATES:
        raise file_error(path, size_line_no, f"the header claims {dims[0]} states and {claimed} "
                         f"entries, more than netctl reads ({MAX_STATES} states, {MAX_ENTRIES} "
                         "entries); check the size line.")
    check_states(path, dims[0], size_line_no)
    room = len(data) // (4 if fmt == "coordinate" else 2) + 1
    stored = claimed if fmt == "coordinate" or symmetry == "general" else \
        dims[0] * (dims[0] + 1) // 2
    if stored > room:
        raise file_error(path, size_line_no, f"the header claims {stored} entries but the "
                         f"file ({len(data)} bytes) has room for at most {room}; the size line "
                         "is wrong or the file is truncated.")
    if not data.endswith(b"\n"):
        # scipy 1.17's parser reads past the end of a last line such as '2 3 1E-' without
        # a line break and crashes the process (found by tests/hostile/test_fuzz.py)
        data = data + b"\n"
    import scipy.io  # here: 0.03 s of start-up that other formats do not need
    import scipy.sparse as sp

    try:
        M = scipy.io.mmread(io.BytesIO(data))
    except Exception as exc:  # scipy raises ValueError/OverflowError/... without a line
        line, what = _locate(data, size_line_no, fmt, field, dims)
        said = _SAYS_LINE.match(str(exc))  # scipy's own reader names the line it stopped at
        if line is None and what is None and said:
            line = int(said.group(1))
            found = data.split(b"\n")[line - 1:line] or [b""]
            what = (f"{said.group(2).rstrip('. ').lower()} "
                    f"(found {found[0].strip()[:80].decode('latin-1')!r})")
        raise file_error(path, line, f"could not read the entries: {what or exc}. Each entry "
                         "line must be 'row col [value]' with 1-based indices.") from None
    want = (2 if field == "pattern" else 3) if fmt == "coordinate" else 1
    n_stored = claimed if fmt == "coordinate" or symmetry == "general" else \
        dims[0] * (dims[0] + (1 if symmetry == "symmetric" else -1)) // 2
    if _count_tokens(data, end + 1) != n_stored * want:
        # scipy's parser ignores extra numbers on an entry line ('1 2 3.0 7'): find it
        line, what = _locate(data, size_line_no, fmt, field, dims)
        raise file_error(path, line, f"{what or 'the entries do not match the size line'}. "
                         f"Each entry line must be 'row col{' value' if want == 3 else ''}' "
                         "(1-based indices), nothing more.")
    if len(data.translate(None, _NUMBER_BYTES)) > len(data[:end + 1].translate(None,
                                                                         _NUMBER_BYTES)):
        # scipy's parser reads '1_5' as 1 and '2.5x' as 2.5, silently: a byte that is in
        # no number sends the entries through the strict look (a C-level pass otherwise)
        line, what = _locate(data, size_line_no, fmt, field, dims)
        if line is not None:
            raise file_error(path, line, f"could not read the entries: {what}. Each entry "
                             "line must be 'row col [value]' with 1-based indices.")
    A = sp.csr_array(M) if sp.issparse(M) else sp.csr_array(np.asarray(M))
    n_dup = 0
    if sp.issparse(M):  # an entry given twice is summed (scipy): said, as edge lists do
        A.sum_duplicates()
        n_dup = int(M.nnz) - int(A.nnz)
    if n_dup:
        import warnings
        warnings.warn(_repeat_said(path, data, size_line_no, end, M, claimed, n_dup,
                                   field), stacklevel=2)
    if field == "pattern":
        A = sp.csr_array((np.ones(A.nnz), A.indices, A.indptr), shape=A.shape)
    if A.nnz and not np.all(np.isfinite(A.data)):
        raise file_error(path, _nonfinite_line(data, size_line_no), "a value is NaN or "
                         "infinite; give finite weights.")
    n_zero = int(np.count_nonzero(A.data == 0))
    if n_zero:
        import warnings
        first = None
        if sp.issparse(M):  # the first entry line of a position whose value is 0
            width = max(A.shape[1], 1)
            rows = np.repeat(np.arange(A.shape[0]), np.diff(A.indptr))
            zero = (rows * width + A.indices)[A.data == 0]
            held = np.isin(np.asarray(M.row, np.int64) * width + np.asarray(M.col, np.int64),
                           zero)
            held = held[:claimed] | _mirrors_of(M, claimed, held)
            if held.any():
                first = _entry_line(data, size_line_no, end, claimed, int(np.argmax(held)))
        warnings.warn(f"{path}{f':{first}' if first else ''}: {n_zero} explicitly stored "
                      f"zero entr{'y is no link and was' if n_zero == 1 else 'ies are no links and were'} "
                      f"left out{' (the first on this line)' if first else ''}. Remove "
                      "the zero entries (and lower the entry count on the size line) to "
                      "silence this.", stacklevel=2)
    return StructuredSystem.from_matrices(A, weighted=field != "pattern", model=model)


def _mirrors_of(M: Any, claimed: int, flags: np.ndarray) -> np.ndarray:
    """``flags`` of a symmetric file's mirrored coordinates (after the ``claimed``
    stored ones, one per off-diagonal entry) carried back to their stored entries."""
    out = np.zeros(claimed, bool)
    if flags.size > claimed:
        off = np.flatnonzero(np.asarray(M.row[:claimed]) != np.asarray(M.col[:claimed]))
        out[off[:flags.size - claimed]] = flags[claimed:]
    return out


def _entry_line(data: bytes, size_line: int, end: int, claimed: int, k: int) -> int | None:
    """Line of entry ``k`` (from 0, in file order) of a coordinate file whose size line
    is line ``size_line`` ending at byte ``end`` (only on a warning's path). Without
    comment or blank lines among the entries (the entry lines are exactly ``claimed``),
    it is counted; otherwise the lines are walked."""
    rest = data[end + 1:]
    if rest.count(b"\n") == claimed and b"%" not in rest:
        return size_line + 1 + k
    seen = -1
    for n, raw in enumerate(rest.split(b"\n"), start=size_line + 1):
        s = raw.strip()
        if s and not s.startswith(b"%"):
            seen += 1
            if seen == k:
                return n
    return None


def _repeat_said(path: object, data: bytes, size_line: int, end: int, M: Any,
                 claimed: int, n_dup: int, field: str) -> str:
    """The merge warning for entries given twice, on the line of the first entry that
    repeats an earlier one (its row and column, the line of the earlier one, the fix).
    A symmetric file's mirrored entries count as given on their original's line."""
    from netctl.io._edgelines import first_repeat

    row, col = np.asarray(M.row, np.int64), np.asarray(M.col, np.int64)
    stored = np.arange(claimed)  # the file entry behind each coordinate of M
    mirrored = np.flatnonzero(row[:claimed] != col[:claimed])[:row.size - claimed]
    pos = np.concatenate([stored, mirrored])
    order = np.argsort(pos, kind="stable")
    k, j = (int(x) for x in first_repeat(row[order], col[order], max(M.shape[0], 1)))
    said = (f"{n_dup} entr{'y' if n_dup == 1 else 'ies'} given twice "
            f"{'was' if n_dup == 1 else 'were'} merged"
            + (" (values summed)" if field != "pattern" else ""))
    if k < 0:
        return f"{path}: {said}."
    ek, ej = int(pos[order[k]]), int(pos[order[j]])
    line = _entry_line(data, size_line, end, claimed, ek)
    before = _entry_line(data, size_line, end, claimed, ej)
    r, c = int(row[order[k]]) + 1, int(col[order[k]]) + 1
    return (f"{path}{f':{line}' if line else ''}: {said}: the entry (row {r}, column {c}) "
            f"here repeats the one{f' on line {before}' if before and before != line else ''}. "
            "Give each entry once" + (" (one entry with the summed value, if both were "
                                      "meant)." if field != "pattern" else "."))


#: Bytes looked at per step when counting the numbers of the entry lines (small enough
#: that the step's temporary arrays stay in the processor's cache).
_COUNT_STEP = 1 << 20


def _count_tokens(data: bytes, start: int) -> int:
    """Numbers (white-space separated words) in ``data[start:]``, comment lines excluded.

    Streams over the bytes in steps of :data:`_COUNT_STEP` with numpy into two reused
    buffers (a few milliseconds for 30 MB; see benchmarks/RESULTS.md)."""
    if data.find(b"%", start) >= 0:  # comment lines among the entries: rare, count in Python
        return sum(len(x.split()) for x in data[start:].split(b"\n")
                   if not x.lstrip().startswith(b"%"))
    step = _COUNT_STEP
    space_buf = np.empty(step, np.bool_)
    start_buf = np.empty(step, np.bool_)
    total = 0
    prev_space = True
    for a in range(start, len(data), step):
        arr = np.frombuffer(data, np.uint8, count=min(step, len(data) - a), offset=a)
        m = arr.size
        # blank, tab, line breaks (a control byte is no number either)
        space = np.less_equal(arr, 32, out=space_buf[:m])
        word = np.greater(space[:-1], space[1:], out=start_buf[:m - 1])  # blank, then word
        total += int(np.count_nonzero(word)) + int(prev_space and not space[0])
        prev_space = bool(space[-1])
    return total


def _nonfinite_line(data: bytes, size_line: int) -> int | None:
    """The first entry line holding NaN or infinity (only on the error path)."""
    for k, raw in enumerate(data.split(b"\n")[size_line:], start=size_line + 1):
        s = raw.strip()
        if s and not s.startswith(b"%"):
            for tok in s.split():
                try:
                    if not np.isfinite(float(tok)):
                        return k
                except ValueError:
                    pass
    return None


def _locate(data: bytes, size_line: int, fmt: str, field: str, dims: list[int]
            ) -> tuple[int | None, str | None]:
    """Find the first bad entry line (only on the error path; plain Python)."""
    want = (2 if field == "pattern" else 3) if fmt == "coordinate" else 1
    claimed = dims[2] if fmt == "coordinate" else dims[0] * dims[1]
    count = 0
    lines = data.split(b"\n")
    for k in range(size_line, len(lines)):
        s = lines[k].strip()
        if not s or s.startswith(b"%"):
            continue
        parts = s.split()
        count += 1
        text = s[:80].decode("latin-1")
        if len(parts) != want:
            return k + 1, (f"expected {want} number{'s' if want > 1 else ''}, found "
                           f"{text!r}")
        try:
            if fmt == "coordinate":
                i, j = int(parts[0]), int(parts[1])
                if not (1 <= i <= dims[0] and 1 <= j <= dims[1]):
                    return k + 1, (f"the index ({i}, {j}) is outside 1..{dims[0]} "
                                   f"(found {text!r})")
            if want != 2 and not _REAL.match(parts[-1]):  # float() takes '1_0'; scipy not
                raise ValueError(parts[-1])
        except ValueError:
            return k + 1, f"expected numbers, found {text!r}"
        if count == claimed + 1:  # the first entry line beyond the count
            return k + 1, (f"the size line (line {size_line}) claims {claimed} entries, and "
                           f"this is entry {count} ({text!r}); correct the count, or remove "
                           "the extra entries")
    if count != claimed:
        return size_line, (f"the size line claims {claimed} entries but the file has "
                           f"{count}; correct the count, or restore the missing entries")
    return None, None


#: The bytes of entry lines of numbers (digits, signs, point, exponent, white space)
_NUMBER_BYTES = b"0123456789eE.+- \t\r\n\v\f"
_SAYS_LINE = re.compile(r"Line (\d+): (.*)\Z")
#: A real number as Matrix Market writes it (C's strtod without hexadecimal and Python's
#: digit separators, which scipy's reader refuses)
_REAL = re.compile(rb"[-+]?([0-9]+\.?[0-9]*|\.[0-9]+)([eE][-+]?[0-9]+)?\Z|"
                   rb"[-+]?(inf|infinity|nan)\Z", re.IGNORECASE)


def warn_names_not_kept(system: StructuredSystem, path: object, fmt: str) -> None:
    """Warn when ``fmt`` (a matrix-only format) drops names other than ``x0, x1, ...``,
    a node table, inputs, outputs or signals."""
    if system.n_inputs or system.n_outputs or system.n_disturbances or system.n_regulated:
        import warnings
        warnings.warn(f"{path}: the {fmt} format holds the matrix A only; the inputs, "
                      "outputs and signals were not written (use a .toml system "
                      "description to keep them).", stacklevel=3)
    named = any(a != f"x{i}" for i, a in enumerate(system.state_names))
    if named or system.nodes:
        import warnings
        lost = " and ".join(x for x in (
            "no state names (they read back as x0, x1, ...)" if named else "",
            f"no node table (the columns {', '.join(sorted(system.nodes))} were not written)"
            if system.nodes else "") if x)
        warnings.warn(f"{path}: the {fmt} format holds {lost}; write .npz, GraphML, "
                      "node-link JSON or .toml to keep them.", stacklevel=3)


#: Up to this many weighted entries of ``A`` (ten times as many for a pattern, which
#: has no numbers to format) the file is written here, without importing scipy: measured
#: 0.06 s for 20000 weighted entries, 0.01 s for 60000 pattern entries, against 0.12 s
#: for the import of scipy.io and scipy.sparse alone (benchmarks/RESULTS.md, small
#: writers); above it scipy's compiled writer is faster.
SMALL_WRITE = 20_000
#: The comment line every file netctl writes carries (the orientation).
_COMMENT = " netctl: A[i, j] != 0 means state j influences state i"


def write_mtx(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write ``A`` as a Matrix Market coordinate file (pattern unless weighted).

    The format holds no names: a warning says so unless the names are ``x0, x1, ...``.
    Up to :data:`SMALL_WRITE` weighted entries (ten times as many for a pattern) the
    file is built by :func:`mtx_bytes`, the same bytes as scipy's ``mmwrite`` writes for
    larger ones.
    """
    warn_names_not_kept(system, path, "Matrix Market")
    if system.pattern("A").nnz <= SMALL_WRITE * (1 if system.weighted else 10):
        data = mtx_bytes(system)
    else:
        import scipy.io
        import scipy.sparse as sp

        buf = io.BytesIO()
        scipy.io.mmwrite(buf, sp.coo_matrix(system.A),
                         field="real" if system.weighted else "pattern", comment=_COMMENT)
        data = buf.getvalue()
    with atomic_write(path, "wb") as fh:
        fh.write(data)


def mtx_bytes(system: StructuredSystem) -> bytes:
    """``A`` as Matrix Market coordinate text, without scipy: the bytes of scipy's
    ``mmwrite(coo_matrix(A), field=..., comment=...)`` (scipy >= 1.12).

    As scipy does, a matrix of fewer than 100 states that equals its transpose is written
    ``symmetric`` (or, with opposite weights across the diagonal and none on it,
    ``skew-symmetric``) with the entries on and below the diagonal only; larger ones are
    ``general``; a matrix without entries is ``real``. Entries in row order; weights as
    the shortest decimal that reads back as the same double, in the form ``d.dddE±x``
    (``E0`` left out).
    """
    from netctl._csr import transpose_pattern

    A = system.pattern("A")
    n = A.shape[0]
    rows = np.repeat(np.arange(1, n + 1, dtype=np.int64), np.diff(A.indptr))
    cols = A.indices + 1
    vals = A.data
    symmetry = "general"
    if n < 100:  # scipy looks for symmetry below 100 rows and columns only
        T = transpose_pattern(A)
        if np.array_equal(A.indptr, T.indptr) and np.array_equal(A.indices, T.indices):
            if np.array_equal(A.data, T.data):
                symmetry = "symmetric"
            elif not np.any(rows == cols) and np.array_equal(A.data, -T.data):
                symmetry = "skew-symmetric"
    if symmetry != "general":
        lower = rows >= cols
        rows, cols, vals = rows[lower], cols[lower], vals[lower]
    # scipy tells a pattern by its missing values, so a matrix without entries is 'real'
    field = "real" if system.weighted or rows.size == 0 else "pattern"
    out = [f"%%MatrixMarket matrix coordinate {field} {symmetry}", f"%{_COMMENT}",
           f"{n} {n} {rows.size}"]
    if system.weighted:
        text: dict[float, str] = {}
        for r, c, v in zip(rows.tolist(), cols.tolist(), vals.tolist()):
            t = text.get(v)
            if t is None:
                t = text[v] = shortest_real(v)
            out.append(f"{r} {c} {t}")
    else:
        out += [f"{r} {c}" for r, c in zip(rows.tolist(), cols.tolist())]
    return ("\n".join(out) + "\n").encode("ascii")


def shortest_real(v: float) -> str:
    """``v`` as Matrix Market files written by scipy hold it: the shortest decimal that
    reads back as ``v`` (Python's ``repr`` finds the same digits), as ``d.ddd`` times a
    power of ten written ``E±x``, left out when it is 0 (``1E-1``, ``2.5``, ``1E2``,
    ``1.2345E17``, ``-0``)."""
    r = repr(float(v))
    sign = "-" if r.startswith("-") else ""
    mantissa, _, exp = r.lstrip("-").partition("e")
    whole, _, frac = mantissa.partition(".")
    digits = (whole + frac).lstrip("0")
    stripped = digits.rstrip("0")
    # v = int(stripped) * 10**power
    power = (int(exp) if exp else 0) - len(frac) + len(digits) - len(stripped)
    if not stripped:
        return sign + "0"
    e = power + len(stripped) - 1
    head = stripped[0] + ("." + stripped[1:] if len(stripped) > 1 else "")
    return sign + head + (f"E{e}" if e else "")
