"""``netctl batch``: many files, one CSV row each, bad files reported without stopping."""

from __future__ import annotations

import csv

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching

from netctl.cli import main


def _rows(path):
    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


def _scipy_n_inputs(edges, n):
    """Reference: max(n - |M*|, 1) with scipy's Hopcroft-Karp (Liu, Slotine & Barabasi 2011)."""
    src, dst = np.asarray(edges).T
    A = sp.csr_matrix((np.ones(src.size), (dst, src)), shape=(n, n))
    match = maximum_bipartite_matching(A, perm_type="column")
    return max(n - int(np.count_nonzero(match >= 0)), 1)


def _write(path, edges):
    path.write_text("source,target\n" + "".join(f"{u},{v}\n" for u, v in edges))


@pytest.fixture
def folder(tmp_path, rng):
    d = tmp_path / "cases"
    d.mkdir()
    truth = {}
    for k in range(5):
        n = 40
        mask = rng.random((n, n)) < 0.03 + 0.01 * k
        np.fill_diagonal(mask, False)
        src, dst = np.nonzero(mask)
        edges = list(zip(src.tolist(), dst.tolist()))
        # every state appears: chain the first two to all others' indices via a path
        edges += [(i, i + 1) for i in range(0, n - 1, 7)]
        edges = sorted(set(edges))
        used = sorted({x for e in edges for x in e})
        remap = {x: i for i, x in enumerate(used)}
        edges = [(remap[u], remap[v]) for u, v in edges]
        _write(d / f"case{k}.csv", edges)
        truth[f"case{k}.csv"] = _scipy_n_inputs(edges, len(used))
    (d / "broken.csv").write_text("source,target\n1,2\n3,4,5,6\n")
    (d / "NOTES.md").write_text("not a network\n")
    return d, truth


def test_batch_drivers_over_a_folder_reports_the_bad_file_and_goes_on(folder, tmp_path, capsys):
    d, truth = folder
    out = tmp_path / "res.csv"
    code = main(["batch", str(d), "--task", "drivers", "--out", str(out), "--executor",
                 "serial"])
    text = capsys.readouterr().out
    assert code == 2  # one file failed
    assert "ok: 5, failed: 1" in text
    assert f"FAILED {d / 'broken.csv'}:3: expected 'source target [weight]'" in text
    assert "skipped 1 file(s) with unknown suffixes: NOTES.md" in text
    rows = {r["file"].split("/")[-1]: r for r in _rows(out)}
    assert set(rows) == set(truth) | {"broken.csv"}
    assert rows["broken.csv"]["error"].startswith(f"{d / 'broken.csv'}:3:")
    assert rows["broken.csv"]["n_inputs"] == ""
    for name, expected in truth.items():
        assert rows[name]["error"] == ""
        assert int(rows[name]["n_inputs"]) == expected, name


def test_batch_results_do_not_depend_on_the_executor(folder, tmp_path):
    d, _ = folder
    a, b = tmp_path / "a.csv", tmp_path / "b.csv"
    assert main(["batch", str(d), "--task", "drivers", "--out", str(a), "--executor",
                 "serial"]) == 2
    assert main(["batch", str(d), "--task", "drivers", "--out", str(b), "--executor",
                 "local", "--workers", "2"]) == 2
    assert a.read_bytes() == b.read_bytes()


def test_batch_check_gates_on_the_fixed_design(tmp_path, capsys):
    d = tmp_path / "scenarios"
    d.mkdir()
    # a path a->b->c with an input at a is controllable (Lin 1974); cutting a->b is not
    _write(d / "base.csv", [("a", "b"), ("b", "c")])
    (d / "cut.csv").write_text("source,target\nb,c\na\n")
    out = tmp_path / "check.csv"
    code = main(["batch", str(d / "*.csv"), "--task", "check", "--inputs", "a",
                 "--out", str(out), "--executor", "serial"])
    text = capsys.readouterr().out
    assert code == 1
    assert "designs that fail: 1: cut.csv" in text
    rows = {r["file"].split("/")[-1]: r for r in _rows(out)}
    assert rows["base.csv"]["controllable"] == "true"
    assert rows["cut.csv"]["controllable"] == "false"
    assert rows["cut.csv"]["n_inaccessible"] == "2"  # b and c: nothing reaches them
    assert rows["cut.csv"]["n_missing_inputs"] == "1"  # one input at b fixes it
    assert main(["batch", str(d / "base.csv"), "--task", "check", "--inputs", "a",
                 "--out", str(out), "--executor", "serial"]) == 0


def test_batch_check_unknown_name_is_a_row_error(tmp_path, capsys):
    d = tmp_path / "s"
    d.mkdir()
    _write(d / "one.csv", [("a", "b")])
    _write(d / "two.csv", [("x", "y")])
    out = tmp_path / "r.csv"
    assert main(["batch", str(d), "--task", "check", "--inputs", "a", "--out", str(out),
                 "--executor", "serial"]) == 2
    rows = {r["file"].split("/")[-1]: r for r in _rows(out)}
    assert rows["one.csv"]["error"] == ""
    assert "'a'" in rows["two.csv"]["error"] and "two.csv" in rows["two.csv"]["error"]


def test_batch_roles_known_example(tmp_path, capsys):
    # Jia et al., Nat. Commun. 4:2002 (2013), Fig. 1 numbers (REFERENCES §4): with
    # 1->2, 2->3, 2->4, 2->5 node 1 is critical, 2 redundant, 3, 4, 5 intermittent; link
    # 1->2 is critical, the other three ordinary (Liu et al. 2011 link classes).
    d = tmp_path / "r"
    d.mkdir()
    _write(d / "jia.csv", [(1, 2), (2, 3), (2, 4), (2, 5)])
    out = tmp_path / "roles.csv"
    assert main(["batch", str(d), "--task", "roles", "--out", str(out), "--executor",
                 "serial"]) == 0
    (row,) = _rows(out)
    assert (row["critical_states"], row["intermittent_states"], row["redundant_states"]) == (
        "1", "3", "1")
    assert (row["critical_links"], row["ordinary_links"], row["redundant_links"]) == (
        "1", "3", "0")
    assert row["n_inputs"] == "3"


def test_batch_warnings_column_keeps_what_the_reader_said(tmp_path):
    d = tmp_path / "w"
    d.mkdir()
    (d / "dup.csv").write_text("source,target\na,b\na,b\nb,c\n")
    out = tmp_path / "w.csv"
    assert main(["batch", str(d), "--task", "drivers", "--out", str(out), "--executor",
                 "serial"]) == 0
    (row,) = _rows(out)
    assert "duplicate" in row["warnings"]


def test_batch_usage_errors_write_nothing(tmp_path, capsys):
    out = tmp_path / "none.csv"
    assert main(["batch", str(tmp_path / "missing"), "--task", "drivers", "--out",
                 str(out)]) == 2
    assert "no such folder or file" in capsys.readouterr().err
    empty = tmp_path / "empty"
    empty.mkdir()
    (empty / "readme.md").write_text("x\n")
    assert main(["batch", str(empty), "--task", "drivers", "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert "no network files found (skipped 1 with unknown suffixes, e.g. readme.md" in err
    assert main(["batch", str(empty), "--task", "check", "--out", str(out)]) == 2
    assert "--task check needs --inputs" in capsys.readouterr().err
    assert main(["batch", str(empty), "--task", "drivers", "--inputs", "a", "--out",
                 str(out)]) == 2
    assert "only apply to --task check" in capsys.readouterr().err
    assert not out.exists()



def test_edge_list_reading_is_bounded_by_chunks_not_by_the_text(tmp_path):
    # Memory-bounded reading (the streaming edge-list reader, commit 7949872): an 80 MB
    # text (2e5 links, each line carrying a long comment) read in 4 MiB chunks. Holding the
    # text as Python objects would cost more than the file's bytes; the streaming reader's
    # traced peak (numpy buffers included) must stay under half of them (measured: ~0.3:
    # the int64 arrays, the names and a few chunk buffers). Bound: common practice, no source.
    import tracemalloc

    from netctl.io.edgelist import read_edge_arrays

    rng = np.random.default_rng(8)
    n_links = 200_000
    src = rng.integers(0, 60_000, n_links)
    dst = rng.integers(0, 60_000, n_links)
    pad = "# " + "field survey note " * 22
    path = tmp_path / "annotated.txt"
    path.write_text("".join(f"{u} {v} {pad}\n" for u, v in zip(src.tolist(), dst.tolist())))
    size = path.stat().st_size
    assert size > 80e6
    tracemalloc.start()
    try:
        e = read_edge_arrays(path, chunk_bytes=1 << 22)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    names = np.asarray(e.names, dtype=np.int64)
    np.testing.assert_array_equal(names[e.sources], src)
    np.testing.assert_array_equal(names[e.targets], dst)
    assert peak < 0.5 * size, (peak, size)
