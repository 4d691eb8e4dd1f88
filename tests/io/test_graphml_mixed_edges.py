"""A GraphML file that mixes directed and undirected edges (allowed by the GraphML
specification, refused by networkx's reader, which netctl uses): one line naming the file,
the cause and the fix, exit 2, no output file; the fix it suggests then reads, and gives
the minimum inputs networkx's own matching gives (Liu, Slotine, Barabási 2011:
N_D = max(n - |M*|, 1)).
"""

from __future__ import annotations

import json
import networkx as nx
import pytest
from networkx.algorithms import bipartite

from netctl.cli import main

MIXED = """<?xml version="1.0"?>
<graphml xmlns="http://graphml.graphdrawing.org/xmlns">
<graph edgedefault="undirected">
<node id="a"/><node id="b"/><node id="c"/><node id="d"/>
<edge source="a" target="b"/>
<edge source="b" target="c" directed="true"/>
<edge source="b" target="d" directed="true"/>
</graph></graphml>
"""


def _n_d(G: nx.DiGraph) -> int:
    top = [("o", u) for u in G]
    B = nx.Graph()
    B.add_nodes_from(top)
    B.add_nodes_from(("i", u) for u in G)
    B.add_edges_from((("o", u), ("i", v)) for u, v in G.edges())
    return max(G.number_of_nodes() - len(bipartite.hopcroft_karp_matching(B, top)) // 2, 1)


def test_mixed_graph_refused_with_the_fix_then_the_fix_reads(tmp_path, capsys):
    p = tmp_path / "mixed.graphml"
    p.write_text(MIXED)
    with pytest.raises(nx.NetworkXError):  # the reference reader refuses it too
        nx.read_graphml(p)
    out = tmp_path / "o.json"
    assert main(["drivers", str(p), "--out", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and str(p) in err and ".." not in err
    assert 'edgedefault="directed"' in err and "two edges" in err
    assert not out.exists()
    # the suggested fix: directed default, the two-way link as two edges
    fixed = (MIXED.replace('edgedefault="undirected"', 'edgedefault="directed"')
             .replace(' directed="true"', "")
             .replace('<edge source="a" target="b"/>',
                      '<edge source="a" target="b"/><edge source="b" target="a"/>'))
    q = tmp_path / "fixed.graphml"
    q.write_text(fixed)
    G = nx.read_graphml(q)
    assert main(["drivers", str(q), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["n_inputs"] == _n_d(G)
