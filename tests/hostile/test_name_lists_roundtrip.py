"""Hostile names written by netctl's CSV writers read back exactly by every reader of
name lists: sites (``--sites``), candidates (``--candidates``), ties (``join --ties``),
name-list files (``--inputs FILE`` and the like), link changes (``whatif --add-links``),
and stations (TOML, ``--stations``).

The CSV writers protect a name a spreadsheet would run as a formula with one leading
apostrophe and quote cells holding separators, quotes, ``#``, line breaks or surrounding
spaces (docs/HOSTILE.md, "CSV cells"); every reader must undo exactly that. Property-based
testing with hypothesis (common practice for serializers, no source).
"""

from __future__ import annotations

import io

import numpy as np
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from netctl import StructuredSystem
from netctl.errors import NetctlError
from netctl.io import read_state_list
from netctl.io._common import SpreadsheetSafeWriter, atomic_write, protect_name
from netctl.io.changes import read_link_changes
from netctl.io.edgelist_writer import unwritable_name, write_edgelist
from netctl.io.sites import read_candidates, read_sites
from netctl.io.stations import read_stations
from netctl.io.system_writer import write_system
from netctl.io.ties import read_ties
from netctl.stations import make_stations

PREFIXES = ["", "=", "+", "-", "@", "'", "''", "'=", "'-", "\t", " ", "-5", '"', '""', "#",
            "=cmd|' /C calc'!A0", "\ufeff"]
SUFFIXES = ["", " ", ",", ";", "\t", "#c", "'", '"', "\n", "\r\n", "\r", "\u2028", "\x85",
            "\xa0", "e\u0301", " x,y "]
WHOLE = ["=SUM(A1)", "+x", "-x", "-5", "@a", "'q", "''=z", "'", "it's", '"quoted"', "a,b",
         "a b", " a", "a ", "#x", "x#y", "a;b", "tab\tx", "nl\nx", "cr\rx", "中文 ü",
         "\u202eevil", "source", "target", "u", "v", "from", "state", "name", "x" * 300]
_chars = st.characters(exclude_categories=("Cs",))  # lone surrogates: no file holds them
NAME = st.one_of(
    st.sampled_from(WHOLE),
    st.builds(lambda a, b, c: a + b + c, st.sampled_from(PREFIXES),
              st.text(_chars, max_size=5), st.sampled_from(SUFFIXES)),
    st.text(_chars, min_size=1, max_size=6),
).filter(lambda s: s.strip() != "")
NAMES = st.lists(NAME, min_size=1, max_size=5, unique=True)
SETTINGS = settings(max_examples=120, deadline=None,
                    suppress_health_check=[HealthCheck.function_scoped_fixture,
                                           HealthCheck.filter_too_much])


def _system(names: list[str]) -> StructuredSystem:
    """A directed cycle through the states (every state on a link)."""
    n = len(names)
    src = np.arange(n)
    return StructuredSystem.from_edges(src, (src + 1) % n, n, state_names=names)


def _write_rows(path, rows, *, protected: bool = False) -> None:
    with atomic_write(path) as fh:
        SpreadsheetSafeWriter(fh, protected=protected).writerows(rows)


@SETTINGS
@given(names=NAMES)
@example(names=["=SUM(A1)", "'q", "a,b", " a", "x#y", "a;b", "nl\nx", "cr\rx"])
def test_sites_read_back_exactly(names, tmp_path):
    system = _system(names)
    costs = [float(i) + 0.5 for i in range(len(names))]
    p = tmp_path / "sites.csv"
    _write_rows(p, [["state", "cost"], *zip(names, costs)])
    sites = read_sites(p, system)
    assert sites.eligible.all()
    assert sites.cost.tolist() == costs
    _write_rows(p, [["state"], *([x] for x in names[::-1])])
    assert read_sites(p, system).eligible.all()


@SETTINGS
@given(names=NAMES, states=NAMES)
@example(names=["=SUM(A1)", "'q"], states=["-x", "''=z", "@a"])
def test_candidates_read_back_exactly(names, states, tmp_path):
    # a candidate's states are listed in one cell separated by spaces: names holding a
    # space or ';' cannot be listed there (documented), so they are left out here
    states = [x for x in states if not any(c.isspace() or c == ";" for c in x)] or ["s"]
    system = _system(states)
    p = tmp_path / "cands.csv"
    rows = [["name", "cost", "states"]] + [
        [protect_name(c), 1.5, " ".join(protect_name(x) for x in states[: k + 1])]
        for k, c in enumerate(names)]
    _write_rows(p, rows, protected=True)
    cands = read_candidates(p, system)
    assert list(cands.names) == names
    for k in range(len(names)):
        idx = cands.indices[cands.indptr[k]:cands.indptr[k + 1]]
        assert sorted(system.state_names[i] for i in idx) == sorted(states[: k + 1])


@SETTINGS
@given(names=st.lists(NAME, min_size=2, max_size=5, unique=True))
@example(names=["=a", "'b", "-x", "@SUM(1)"])
def test_ties_read_back_exactly(names, tmp_path):
    p = tmp_path / "ties.csv"
    pairs = list(zip(names, names[1:]))
    _write_rows(p, [["from_system", "from_state", "to_system", "to_state", "kind"]] +
                [["plant_a", a, "plant_b", b, "state"] for a, b in pairs])
    ties = read_ties(str(p))
    assert [(t.from_name, t.to_name) for t in ties] == pairs


@SETTINGS
@given(names=NAMES)
@example(names=["=a", "'b", "x,y", "#c", " pad "])
def test_name_list_file_reads_back_exactly(names, tmp_path):
    p = tmp_path / "names.csv"
    _write_rows(p, [[x] for x in names])
    assert read_state_list(str(p)) == names


@SETTINGS
@given(names=NAMES)
@example(names=["source", "target", "=x", "'y"])
@example(names=["u", "v"])
def test_link_changes_read_an_edge_list_netctl_wrote(names, tmp_path):
    """An edge list written by netctl, given as ``whatif --add-links FILE``: the same
    links, by name (names an edge list cannot hold are refused by its writer)."""
    system = _system(names)
    p = tmp_path / "links.csv"
    if unwritable_name(names) is not None:
        return
    write_edgelist(system, p)
    changes = read_link_changes(str(p))
    src, dst = system.edges()
    want = [(names[u], names[v]) for u, v in zip(src.tolist(), dst.tolist())]
    assert sorted(c.pair for c in changes) == sorted(want)


@SETTINGS
@given(names=st.lists(NAME, min_size=2, max_size=4, unique=True))
@example(names=["=u", "'y"])
def test_stations_read_back_exactly(names, tmp_path):
    """Stations written into a TOML system description (strings there are TOML's own
    quoted strings: no spreadsheet quoting is added, and none is removed)."""
    n = len(names)
    ins, outs = names[: n // 2], names[n // 2:]
    B = np.eye(n)[:, : len(ins)]
    C = np.eye(n)[len(ins):, :]
    system = StructuredSystem.from_matrices(np.zeros((n, n)), B, C,
                                            state_names=[f"s{i}" for i in range(n)],
                                            input_names=ins, output_names=outs)
    stations = make_stations(system, {"=panel": {"inputs": ins, "outputs": outs}})
    p = tmp_path / "sys.toml"
    try:
        write_system(system, p, stations=stations)
    except NetctlError:  # a name TOML cannot hold is refused by the writer: fine
        return
    back = read_stations(p, system)
    assert [(s.name, s.inputs, s.outputs) for s in back] == \
        [(s.name, s.inputs, s.outputs) for s in stations]


def test_a_state_list_typed_on_the_command_line_is_literal():
    assert read_state_list("'=x,b") == ["'=x", "b"]


def test_unclosed_quote_names_the_file_and_line(tmp_path):
    p = tmp_path / "sites.csv"
    p.write_text('state,cost\na,1\n"b,2\n')
    system = _system(["a", "b"])
    try:
        read_sites(p, system)
    except NetctlError as exc:
        msg = str(exc)
    assert msg.startswith(f"{p}:3:") and "never closed" in msg


def test_quoted_writer_cells_for_readers(tmp_path):
    """The cells the readers would strip or split are quoted by the writer."""
    buf = io.StringIO()
    SpreadsheetSafeWriter(buf).writerows([["a#b", 1], [" a", 2], ["a;b", 3], ["plain", -1]])
    assert buf.getvalue().splitlines() == ['"a#b","1"', '" a","2"', '"a;b","3"', "plain,-1"]
