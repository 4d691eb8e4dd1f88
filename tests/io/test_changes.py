"""The link-change reader (netctl.io.changes): edge-list files and inline lists.

External check: the links read from random edge-list files equal those networkx's
general-purpose edge-list parser (``networkx.parse_edgelist``) finds in the same lines.
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest

from netctl.errors import NetworkFileError, OptionError
from netctl.io.changes import parse_link_changes, read_link_changes
from netctl.records import LinkChange


@pytest.mark.parametrize("sep", [",", "\t", ";", " "], ids=["comma", "tab", "semicolon", "space"])
def test_links_match_networkx_edgelist_parser(sep):
    rng = np.random.default_rng(2024)
    for _ in range(30):
        n = int(rng.integers(2, 9))
        names = [f"s{i}" for i in range(n)]
        pairs = sorted({(names[a], names[b]) for a, b in rng.integers(0, n, (12, 2)) if a != b})
        lines = [f"{a}{sep}{b}" for a, b in pairs]
        got = parse_link_changes("\n".join(lines) + "\n")
        G = nx.parse_edgelist(lines, delimiter=None if sep == " " else sep,
                              create_using=nx.DiGraph, nodetype=str, data=False)
        assert sorted(c.pair for c in got) == sorted(G.edges())
        assert len(got) == G.number_of_edges()


def test_file_records_keep_line_and_origin(tmp_path):
    f = tmp_path / "links.csv"
    f.write_text("# planned works\nsource,target\n\npump,tank  # new pipe\ntank;valve\n")
    got = read_link_changes(str(f), "--add-links")
    assert got == [LinkChange("pump", "tank", 4, str(f)), LinkChange("tank", "valve", 5, str(f))]


def test_inline_records_have_no_line():
    got = read_link_changes(" pump -> tank ,tank->valve,", "--remove-links")
    assert [(c.source, c.target, c.line, c.origin) for c in got] == [
        ("pump", "tank", None, "--remove-links"), ("tank", "valve", None, "--remove-links")]


def test_file_errors_name_file_line_and_fix(tmp_path):
    f = tmp_path / "bad.csv"
    f.write_text("source,target\npump,tank\npump,tank,valve\n")
    with pytest.raises(NetworkFileError) as exc:
        read_link_changes(str(f), "--add-links")
    assert exc.value.line == 3 and exc.value.path == str(f)
    assert str(exc.value).startswith(f"{f}:3: expected 'source,target', found 3 column(s) in "
                                     "'pump,tank,valve'. One link a line")
    empty = tmp_path / "empty.csv"
    empty.write_text("# nothing yet\nsource,target\n")
    with pytest.raises(NetworkFileError, match=r"empty\.csv: --add-links: the file lists no "
                                               r"links; expected lines 'source,target'\."):
        read_link_changes(str(empty), "--add-links")


@pytest.mark.parametrize("value, message", [
    ("pump", "--add-links: 'pump' is neither a file nor a link 'a->b'; give an edge-list file"),
    ("pump->", "--add-links: the link 'pump->' lacks a state name; write 'a->b'."),
    (" , ", "--add-links names no link; write 'a->b,c->d' or give a file."),
], ids=["not-a-link", "missing-name", "empty"])
def test_inline_errors(value, message):
    with pytest.raises(OptionError) as exc:
        read_link_changes(value, "--add-links")
    assert str(exc.value).startswith(message)


def test_only_the_first_line_can_be_a_header():
    """A link between states named like header words ('u,v', 'from,to') after the header
    is a link: it was skipped as a second header, silently (found by the round trip of
    edge lists netctl writes, tests/hostile/test_name_lists_roundtrip.py)."""
    got = parse_link_changes("source,target\nu,v\nfrom,to\n")
    assert [c.pair for c in got] == [("u", "v"), ("from", "to")]
    assert [c.line for c in got] == [2, 3]
