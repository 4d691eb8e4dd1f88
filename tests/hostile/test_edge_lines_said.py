"""Edge lists: what is kept but may not be meant is said with the file and the line.

* A line of one name beside a separator (``c,``) is a state with no link, kept, but it
  may be a link whose other name is missing: one warning names the file, the first such
  line, how many there are and the fix. A name alone on its line (the documented way
  to declare a state with no link) stays silent.
* A link given twice is merged; the warning names the line of the first repeat and the
  line of the link it repeats (it named no line before).

Every expected line is found in the file's text by a plain scan here (the file is the
reference, not the reader), for the small-file reader and the compiled scanner at
several chunk sizes.
"""

from __future__ import annotations

import random
import re
import warnings
from pathlib import Path

import numpy as np
import pytest

from netctl._jit import always_compiled, always_python
from netctl.cli import main
from netctl.io.edgelist import read_edge_arrays, read_edgelist
from netctl.io._edgelines import first_repeat, line_of_link

#: None: the small-file reader (plain Python); numbers: the compiled scanner's chunks
CHUNKS = [None, 7, 64, 1 << 20]


def _read(path: Path, chunk: int | None) -> tuple[tuple[str, ...], list[str]]:
    """The names read and the warnings given."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        e = read_edge_arrays(path) if chunk is None else read_edge_arrays(path,
                                                                          chunk_bytes=chunk)
    return tuple(e.names), [str(w.message) for w in caught]


def _lone_lines(text: str) -> list[int]:
    """Lines holding one name and a comma, semicolon or tab outside the comment (a plain
    scan of the text)."""
    out = []
    for n, line in enumerate(text.splitlines(), start=1):
        body = line.split("#", 1)[0]
        if len(re.findall(r"[^,;\s]+", body)) == 1 and re.search(r"[,;\t]", body):
            out.append(n)
    return out


LONE = [
    pytest.param("a,b\nb,c\nc,\n", id="trailing-comma"),
    pytest.param("a;b\nd;\nb;c\ne;;\n", id="trailing-semicolons"),
    pytest.param("a\tb\t1\nb\t\t\nc\td\t2\n", id="tsv-missing-head"),
    pytest.param("# top\nsource,target\na,b\nspare, # old pump\nb,c\n", id="before-a-comment"),
    pytest.param("x y\n\ty\n", id="leading-tab"),
    pytest.param("1,2\n2,3\n3,\n4\n", id="integer-names"),
]


@pytest.mark.parametrize("text", LONE)
@pytest.mark.parametrize("chunk", CHUNKS)
def test_one_name_beside_a_separator_is_kept_and_said(tmp_path, text, chunk):
    p = tmp_path / "e.csv"
    p.write_text(text)
    names, said = _read(p, chunk)
    lines = _lone_lines(text)
    first = text.splitlines()[lines[0] - 1].split("#", 1)[0].strip()
    lone = [m for m in said if "holds one name and a separator" in m]
    assert len(lone) == 1, said
    msg = lone[0]
    assert msg.startswith(f"{p}:{lines[0]}: the line {first!r} holds one name and a "
                          "separator"), msg
    assert (f"({len(lines)} such lines; this is the first)" in msg) == (len(lines) > 1), msg
    assert msg.endswith("it was read as a state with no link. If a link was meant, write "
                        "the missing name; to declare a state with no link, write its name "
                        "alone on the line, with no separator (see docs/FORMATS.md)."), msg
    kept = re.findall(r"[^,;\s]+", first)[0]
    assert kept in names  # the state is kept


@pytest.mark.parametrize("text", [
    "a,b\nc\n",  # the documented way: a name alone
    "a b\nspare_pump        # one name alone: a state with no link\n",
    "a,b\r\nc\r\n",  # CRLF: the carriage return is no separator a user typed
    "a,b,1\nc   \nb,c,2\n",  # trailing spaces
])
@pytest.mark.parametrize("chunk", CHUNKS)
def test_a_name_alone_stays_silent(tmp_path, text, chunk):
    p = tmp_path / "e.csv"
    p.write_text(text)
    names, said = _read(p, chunk)
    assert not said, said
    assert "c" in names or "spare_pump" in names


def test_one_name_beside_a_separator_in_a_large_file(tmp_path):
    """Past the small-file reader, with lines of one name in several chunks: the count
    is over the whole file and the first line is the file's first."""
    rng = random.Random(7)
    rows = [f"n{rng.randrange(500)},n{rng.randrange(500)},{rng.random():.6f}"
            for _ in range(6000)]
    for at, row in ((1500, "lone_a,"), (3100, "lone_b\t"), (5900, "lone_c;;")):
        rows.insert(at, row)
    rows.insert(4000, "alone_ok")  # silent, but makes its chunk look
    text = "\n".join(rows) + "\n"
    p = tmp_path / "big.csv"
    p.write_text(text)
    assert p.stat().st_size > 1 << 15  # past the small-file reader
    for chunk in (1 << 12, 1 << 16, 1 << 24):
        names, said = _read(p, chunk)
        assert len(said) == 1, said
        assert said[0].startswith(f"{p}:1501: the line 'lone_a,' holds one name and a "
                                  "separator (3 such lines; this is the first)"), said
        assert {"lone_a", "lone_b", "lone_c", "alone_ok"} <= set(names)


def test_one_name_beside_a_separator_through_the_cli(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "e.csv").write_text("source,target\na,b\nb,c\nc,\n")
    assert main(["inspect", "e.csv", "--json"]) == 0
    cap = capsys.readouterr()
    assert '"n_states":3' in cap.out.replace(" ", "")
    assert cap.err == ("netctl: warning: e.csv:4: the line 'c,' holds one name and a "
                       "separator; it was read as a state with no link. If a link was "
                       "meant, write the missing name; to declare a state with no link, "
                       "write its name alone on the line, with no separator (see "
                       "docs/FORMATS.md).\n"), cap.err


# ---------------------------------------------------------------- links given twice
def _repeat_by_hand(text: str) -> tuple[str, str, int, int]:
    """The first link line whose ends appeared on an earlier link line, and the lines of
    both (comments, blank lines, a header row and lines of one name skipped; weight 0
    is no link)."""
    seen: dict[tuple[str, str], int] = {}
    header_done = False
    for n, line in enumerate(text.splitlines(), start=1):
        cells = re.findall(r"[^,;\s]+", line.split("#", 1)[0])
        if not cells:
            continue
        if not header_done:
            header_done = True
            if cells[:2] == ["source", "target"]:
                continue
        if len(cells) < 2 or (len(cells) == 3 and float(cells[2]) == 0):
            continue
        key = (cells[0], cells[1])
        if key in seen:
            return key[0], key[1], n, seen[key]
        seen[key] = n
    raise AssertionError("no repeat")


def _big_with_repeat(seed: int) -> str:
    rng = random.Random(seed)
    rows = ["# a generated network", "source,target,weight"]
    pairs: list[tuple[int, int]] = []
    used = set()
    while len(pairs) < 4000:
        a, b = rng.randrange(3000), rng.randrange(3000)
        if (a, b) not in used:
            used.add((a, b))
            pairs.append((a, b))
    for k, (a, b) in enumerate(pairs):
        rows.append(f"{a},{b},{rng.choice([0.5, 1, 2])}")
        if k % 700 == 3:
            rows += ["", "# a comment", f"{5000 + k}"]  # lines that are no link
    a, b = pairs[rng.randrange(1000, 2000)]
    rows.insert(rng.randrange(len(rows) - 500, len(rows)), f"{a},{b},3")
    return "\n".join(rows) + "\n"


@pytest.mark.parametrize("seed", [1, 2])
@pytest.mark.parametrize("chunk", [None, 1 << 10, 1 << 24])
def test_repeat_named_by_its_line_in_a_large_file(tmp_path, seed, chunk):
    text = _big_with_repeat(seed)
    p = tmp_path / "big.csv"
    p.write_text(text)
    a, b, line, first = _repeat_by_hand(text)
    from netctl.io.edgelist import _system_from_arrays

    with pytest.warns(UserWarning) as caught:
        if chunk is None:
            read_edgelist(p)
        else:
            _system_from_arrays(read_edge_arrays(p, chunk_bytes=chunk), p, model="given")
    said = [str(w.message) for w in caught if "duplicate" in str(w.message)]
    assert said == [f"{p}:{line}: 1 duplicate link was merged (weights summed): the link "
                    f"{a!r} -> {b!r} here repeats the one on line {first}. Give each link "
                    "once (one link with the summed weight, if both were meant)."], said


def test_repeat_named_by_its_line_through_the_cli(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "d.csv").write_text("# plant\nsource,target\na,b\nb,c\n\nc,a\na,b\n")
    assert main(["convert", "d.csv", "out.json"]) == 0
    err = capsys.readouterr().err
    assert err == ("netctl: warning: d.csv:7: 1 duplicate link was merged: the link 'a' -> "
                   "'b' here repeats the one on line 3. Give each link once.\n"), err


def test_undirected_repeat_named_as_written(tmp_path):
    """Read undirected, 'c,b' repeats 'b,c': named as line 3 writes it."""
    p = tmp_path / "u.csv"
    p.write_text("a,b\nb,c\nc,b\n")
    with pytest.warns(UserWarning) as caught:
        read_edgelist(p, undirected=True)
    said = [str(w.message) for w in caught]
    assert said == [f"{p}:3: 1 duplicate link was merged: the link 'c' -> 'b' here repeats "
                    "the one on line 2. Give each link once."], said


@pytest.mark.parametrize("mode", ["compiled", "python"])
def test_first_repeat_against_a_plain_scan(mode):
    """The kernel against a dict scan (brute force) on random pairs, short and long rows,
    with and without repeats, compiled and as Python."""
    rng = np.random.default_rng(5)
    ctx = always_compiled if mode == "compiled" else always_python
    for trial in range(60):
        n = int(rng.integers(1, 40))
        m = int(rng.integers(0, 200))
        rows = rng.integers(0, n, m)
        cols = rng.integers(0, n if trial % 3 else 200, m)  # some rows longer than 32
        seen: dict[tuple[int, int], int] = {}
        want = (-1, -1)
        for k, key in enumerate(zip(rows.tolist(), cols.tolist())):
            if key in seen:
                want = (k, seen[key])
                break
            seen[key] = k
        with ctx():
            got = tuple(int(x) for x in first_repeat(rows, cols, n))
        assert got == want, (trial, got, want)


def test_line_of_link_across_chunks(tmp_path):
    """The line of every link, found in chunks of a few bytes, against the text."""
    text = ("# c\nsource target\na b\n\nspare\nb c # x\n, \n c  d  2\n#\nd a\n")
    p = tmp_path / "l.txt"
    p.write_text(text)
    want = [n for n, line in enumerate(text.splitlines(), start=1)
            if len(re.findall(r"[^,;\s]+", line.split("#", 1)[0])) >= 2][1:]  # no header
    for chunk in (1, 3, 8, 1 << 20):
        got = [line_of_link(p, k, header=True, chunk_bytes=chunk) for k in range(len(want))]
        assert got == want, chunk
        assert line_of_link(p, len(want), header=True, chunk_bytes=chunk) is None
