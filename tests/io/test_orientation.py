"""Orientation of matrix files and undirected edge lists.

Outside reference: networkx (reference library). ``networkx.to_numpy_array`` and
``to_scipy_sparse_array`` write entry (i, j) for the link i -> j (networkx documentation,
"adjacency matrix"); netctl's own convention is entry (i, j) for j -> i (A[i, j] of
dx/dt = A x; Liu, Slotine & Barabasi 2011, Nature 473:167, Methods).
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
import scipy.io as sio

from netctl import StructuredSystem, minimum_inputs
from netctl.cli import main
from netctl.errors import OptionError
from netctl.io import read
from netctl.structural.roles import node_roles


def _digraph(seed):
    return nx.gnp_random_graph(30, 0.08, seed=seed, directed=True)


def _edges(system):
    s, t = system.edges()
    return set(zip(s.tolist(), t.tolist()))


@pytest.mark.parametrize("suffix", [".npy", ".mtx", ".matrix.csv"])
@pytest.mark.parametrize("seed", [1, 2])
def test_row_to_column_reads_graph_library_matrices(tmp_path, suffix, seed):
    g = _digraph(seed)
    adj = nx.to_numpy_array(g, nodelist=range(30))  # entry (i, j): link i -> j
    p = tmp_path / f"g{suffix}"
    if suffix == ".npy":
        np.save(p, adj)
    elif suffix == ".mtx":
        sio.mmwrite(p, adj)
    else:
        p.write_text("\n".join(",".join(str(int(v)) for v in row) for row in adj) + "\n")
    want = set(g.edges())
    assert _edges(read(p, orientation="row-to-column")) == want
    assert _edges(read(p)) == {(v, u) for u, v in want}  # default: column-to-row
    ref = StructuredSystem.from_networkx(g)
    ours = read(p, orientation="row-to-column")
    assert minimum_inputs(ours).n_inputs == minimum_inputs(ref).n_inputs
    # roles are those of the network, not of its reverse
    r1, r2 = node_roles(ours), node_roles(ref)
    assert r1.to_dict()["counts"] == r2.to_dict()["counts"]


def test_summary_names_the_convention_and_json_carries_it(tmp_path, capsys):
    p = tmp_path / "star.npy"
    a = np.zeros((4, 4))
    a[0, 1:] = 1
    np.save(p, a)
    assert main(["drivers", str(p)]) == 0
    out = capsys.readouterr().out
    assert "column-to-row: entry (i, j) is the link j -> i" in out
    assert main(["drivers", str(p), "--orientation", "row-to-column", "--json"]) == 0
    import json
    d = json.loads(capsys.readouterr().out)
    assert d["file_convention"].startswith("matrix read as row-to-column")
    # out-star 0 -> 1, 2, 3: the hub and two leaves drive (N_D = 3), hub included
    assert d["n_inputs"] == 3 and "x0" in d["drivers"]


def test_orientation_and_undirected_rejected_where_meaningless(tmp_path, capsys):
    p = tmp_path / "e.csv"
    p.write_text("a,b\n")
    with pytest.raises(OptionError, match="an orientation applies to matrix files"):
        read(p, orientation="row-to-column")
    with pytest.raises(OptionError, match="unknown orientation 'rows'"):
        read(p, format="npy", orientation="rows")
    q = tmp_path / "m.npy"
    np.save(q, np.eye(2))
    with pytest.raises(OptionError, match="'undirected' applies to edge lists"):
        read(q, undirected=True)
    assert main(["drivers", str(p), "--orientation", "row-to-column"]) == 2
    assert "leave it out" in capsys.readouterr().err


def test_undirected_edge_list_matches_networkx_graph(tmp_path):
    g = nx.gnm_random_graph(40, 70, seed=3)
    g.add_edge(5, 5)  # a self-loop stays single
    g.add_edge(0, 1)
    lines = [f"{u},{v}" if (u + v) % 2 else f"{v},{u}" for u, v in g.edges()]
    lines.append("0,1" if "1,0" in lines else "1,0")  # one link listed both ways: merged
    p = tmp_path / "u.csv"
    p.write_text("source,target\n" + "\n".join(lines) + "\n")
    with pytest.warns(UserWarning, match="1 duplicate link was merged"):
        s = read(p, undirected=True)
    names = [int(x) for x in s.state_names]
    got = {(names[a], names[b]) for a, b in _edges(s)}
    want = set(g.to_directed().edges())
    assert got == want
