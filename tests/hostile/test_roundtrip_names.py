"""Round trip of hostile names through every writer (issue 27, item 6).

For every format netctl writes — edge list, matrix CSV, Matrix Market, ``.npz``,
``.npy``, GraphML, GML, node-link JSON, TOML system description — and for result tables
in CSV: a system whose state names are hostile (formula starts, quotes, separators,
control characters, NUL, lone surrogates, combining marks, very long, surrounding
spaces, ``#``, names that look like numbers) is either

* read back by netctl's own reader with exactly the same names and the same links and
  weights, or
* refused by the writer with one :class:`~netctl.errors.NetctlError` whose message is
  one line, and no file (not even a temporary one) is left;

formats that hold no names (Matrix Market, ``.npy``) warn that the names are not kept.
Never a silently different name.

Property-based testing with hypothesis (common practice for serializers, no source).
"""

from __future__ import annotations

import csv
import os
import warnings

import numpy as np
import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from netctl import StructuredSystem
from netctl.errors import NetctlError
from netctl.io import read, write
from netctl.io._common import unprotect_name

SUFFIX = {"edgelist": ".csv", "matrix-csv": ".matrix.csv", "mtx": ".mtx", "npz": ".npz",
          "npy": ".npy", "graphml": ".graphml", "gml": ".gml", "json": ".json",
          "system": ".toml"}
NAMELESS = {"mtx", "npy"}  # formats that hold the matrix only

PREFIXES = ["", "=", "+", "-", "@", "'", "''", "'=", "'-", "\t", "\r", "#", " ", "  ", "-5",
            "+x", "=cmd|' /C calc'!A0", "0x", "1e3", "\ufeff", "\u0301", "\x1b[31m"]
SUFFIXES = ["", " ", "\t", "\n", "\r\n", "\x00", "#c", ",", ";", "'", '"', "\u0301",
            "\u2028", "\x85", "\ud800", "\udfff", "\xa0"]
#: Whole names to try on every format: the classic formula-injection payloads (OWASP
#: "CSV Injection"), numbers that a reader could take for values, and the rest.
WHOLE = ["=SUM(A1)", "+x", "-x", "-5", "+5", "-0.5", "5", "007", "1e5", "inf", "nan",
         "@a", "'q", "''=z", "'", "it's", '"quoted"', "a,b", "a b", " a", "a ", "#x",
         "x#y", "tab\tx", "nl\nx", "cr\rx", "nul\x00x", "x\x00", "\ud800", "e\u0301",
         "中文", "\u202eevil", "x" * 3000, "source", "target", "true", "null", "<b>&amp;",
         "]]>", "%%MatrixMarket", "[x]", "a=b", "\x7f", "\x01\x02"]

_alphabet = st.characters(codec=None, exclude_categories=())
NAME = st.one_of(
    st.sampled_from(WHOLE),
    st.builds(lambda a, b, c: a + b + c, st.sampled_from(PREFIXES),
              st.text(_alphabet, max_size=6), st.sampled_from(SUFFIXES)),
    st.text(_alphabet, min_size=1, max_size=8),
)


def _system(names: list[str], links: list[tuple[int, int, float]]) -> StructuredSystem:
    n = len(names)
    A = np.zeros((n, n))
    for u, v, w in links:
        A[v % n, u % n] = w
    return StructuredSystem.from_matrices(A, state_names=names, weighted=True)


def _links(system: StructuredSystem) -> set[tuple[str, str, float]]:
    src, dst = system.edges()
    names = system.state_names
    return {(names[u], names[v], float(w))
            for u, v, w in zip(src.tolist(), dst.tolist(), system.A.data.tolist())}


def _leftovers(folder) -> list[str]:
    return sorted(os.listdir(folder))


def check_round_trip(fmt: str, names: list[str], links: list[tuple[int, int, float]],
                     folder) -> str:
    """Write and read back; ``"same"``, ``"refused"`` or ``"warned"`` (nameless formats)."""
    system = _system(names, links)
    path = os.path.join(folder, "net" + SUFFIX[fmt])
    before = _leftovers(folder)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            write(system, path, fmt)
        except NetctlError as exc:
            msg = str(exc)
            assert "\n" not in msg and msg, f"{fmt}: message not one line: {msg!r}"
            assert _leftovers(folder) == before, f"{fmt}: refused but left files behind"
            return "refused"
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            back = read(path, fmt)
    finally:
        os.unlink(path)
    if fmt in NAMELESS:
        if tuple(names) != tuple(f"x{i}" for i in range(len(names))):
            assert any("names" in str(w.message) for w in caught), \
                f"{fmt}: names {names!r} dropped without a warning"
        got = _system([f"x{i}" for i in range(len(names))], links)
        assert back.A.shape == got.A.shape and _links(back) == _links(got)
        return "warned"
    assert sorted(back.state_names) == sorted(names), \
        f"{fmt}: wrote {sorted(names)!r}, read back {sorted(back.state_names)!r}"
    assert _links(back) == _links(system), f"{fmt}: links changed for names {names!r}"
    return "same"


SYSTEMS = dict(
    names=st.lists(NAME, min_size=1, max_size=4, unique=True),
    links=st.lists(st.tuples(st.integers(0, 3), st.integers(0, 3),
                             st.sampled_from([1.0, -0.5, 2.5, -3e-7, 1e300])), max_size=6),
)


@pytest.mark.parametrize("fmt", sorted(SUFFIX))
@settings(max_examples=150, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture,
                                 HealthCheck.too_slow])
@given(**SYSTEMS)
@example(names=["=SUM(A1)", "-5", "+x", "'q"], links=[(0, 1, -0.5), (1, 2, 1.0), (3, 0, 2.5)])
@example(names=["''=z", "'", "it's", "-x"], links=[(0, 1, -0.5), (2, 3, 1.0)])
@example(names=["\ufeffa", "b"], links=[(0, 1, 1.0)])  # a byte-order mark first
@example(names=["b", "\x7f"], links=[(0, 1, 1.0)])  # DEL (TOML)
@example(names=["b", "x\x00"], links=[(0, 1, 1.0)])  # a trailing NUL (.npz)
@example(names=["b", "a\x1b[31m"], links=[(0, 1, 1.0)])  # an escape (GraphML)
def test_hostile_names_round_trip_or_are_refused(fmt, names, links, tmp_path):
    check_round_trip(fmt, names, links, tmp_path)


FORMULA_NAMES = ["=SUM(A1)", "+x", "-x", "@a", "''=z", "'q", "-5", "it's"]


@pytest.mark.parametrize("fmt", ["edgelist", "matrix-csv"])
def test_csv_writers_quote_formula_starts_and_read_them_back(fmt, tmp_path):
    """No cell a spreadsheet would run as a formula (OWASP "CSV Injection", common
    practice): every name cell starting with = + - @ gets a leading apostrophe, except a
    negative number (which a spreadsheet reads as a number) -- and the names read back."""
    names = FORMULA_NAMES
    links = [(i, (i + 1) % len(names), -0.5 if i % 2 else 2.0) for i in range(len(names))]
    assert check_round_trip(fmt, names, links, tmp_path) == "same"
    system = _system(names, links)
    path = tmp_path / ("net" + SUFFIX[fmt])
    write(system, path, fmt)
    for row in csv.reader(path.read_text(encoding="utf-8").splitlines()):
        for cell in row:
            if cell.startswith(("=", "+", "@")) or (cell.startswith("-") and not
                                                    _is_number(cell)):
                pytest.fail(f"{fmt}: the cell {cell!r} would run as a formula")
    text = path.read_text(encoding="utf-8")
    assert "'=SUM(A1)" in text and "'''=z" in text and ",-0.5" in text or fmt == "matrix-csv"


def _is_number(cell: str) -> bool:
    try:
        float(cell)
        return True
    except ValueError:
        return False


def test_quoted_and_plain_spellings_are_one_state(tmp_path):
    """A hand-made file may spell one name both ways ('=x' quoted and =x plain): one state."""
    p = tmp_path / "net.csv"
    p.write_text("source,target\n'=x,b\n=x,c\n'abc,b\n")
    s = read(p)
    assert sorted(s.state_names) == sorted(["=x", "b", "c", "'abc"])
    assert s.n_links == 3


@pytest.mark.parametrize("chunk", [None, 64])
def test_scanner_and_small_path_unquote_alike(chunk, tmp_path):
    """The compiled scanner (large files, or a small chunk size) and the small-file path
    give the same names for quoted cells."""
    from netctl.io.edgelist import read_edge_arrays

    p = tmp_path / "net.csv"
    p.write_text("source,target,weight\n'-x,''q,-0.5\n''q,'@a,1.0\n-5,'-x,2.0\n'it\n")
    e = read_edge_arrays(p) if chunk is None else read_edge_arrays(p, chunk_bytes=chunk)
    assert sorted(e.names) == sorted(["-x", "'q", "@a", "-5", "'it"])
    assert e.weights.tolist() == [-0.5, 1.0, 2.0]


@settings(max_examples=200, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(names=st.lists(NAME, min_size=1, max_size=5, unique=True))
def test_table_csv_round_trips_names(names, tmp_path):
    """Result tables in CSV: Python's csv reader plus one apostrophe removed before a
    formula start gives the names back exactly; no cell starts a formula."""
    from netctl.io.tables import write_table
    from netctl import node_roles

    n = len(names)
    A = np.zeros((n, n))
    for i in range(n - 1):
        A[i + 1, i] = 1.0
    system = StructuredSystem.from_matrices(A, state_names=names)
    path = tmp_path / "roles.csv"
    try:
        write_table(node_roles(system), path)
    except NetctlError as exc:
        assert "\n" not in str(exc)
        assert not path.exists()
        return
    with open(path, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    col = rows[0].index("state")
    cells = [r[col] for r in rows[1:]]
    assert not [c for c in cells if c.startswith(("=", "+", "@", "\t", "\r"))
                or (c.startswith("-") and not _is_number(c))]
    assert sorted(unprotect_name(c) for c in cells) == sorted(names)
    path.unlink()


def test_cli_refuses_an_unwritable_name_with_exit_2(tmp_path):
    """Through the command line: one line, exit 2, nothing written."""
    from netctl.cli import main

    src = tmp_path / "in.json"
    write(_system(["a,b", "c"], [(0, 1, 1.0)]), src, "json")
    out = tmp_path / "out.csv"
    code = main(["convert", str(src), str(out)])
    assert code == 2
    assert not out.exists()
    assert sorted(os.listdir(tmp_path)) == ["in.json"]


@pytest.mark.parametrize("suffix", [".csv", ".toml"])
def test_signal_marks_keep_quoted_names(suffix, tmp_path):
    """Disturbances and regulated outputs named with formula starts survive the edge
    list's '# disturbances:' / '# regulated:' lines (and a TOML's edge-list side file)."""
    s = _system(["=w", "-x", "'q", "y"], [(0, 1, 1.0), (1, 2, -0.5), (2, 3, 2.0)])
    s = s.with_regulated(["'q"]).states_to_disturbances(["=w"])
    p = tmp_path / ("net" + suffix)
    write(s, p)
    back = read(p)
    assert back.disturbance_names == ("=w",)
    assert back.regulated_names == s.regulated_names
    assert sorted(back.state_names) == sorted(s.state_names)
    assert _links(back) == _links(s)
