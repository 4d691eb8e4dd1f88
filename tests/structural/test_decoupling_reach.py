"""How fast disturbances and inputs reach the outputs, and where a fix is looked for,
against NetworkX's shortest paths (issue 15, goal 1: the decoupling analysis no longer
builds scipy arrays nor calls ``scipy.sparse.csgraph.dijkstra``; its breadth-first
searches must give the distances the reference library gives).

A distance here is the number of states on the shortest path from an entry state to a
state an output reads (an entry state that is read itself: 1), as in
:class:`netctl.structural.decoupling.DisturbanceReach` (Commault, Dion & Perez, IEEE TAC
36(7):884-887 (1991), compare how soon a disturbance and the inputs reach an output).
"""

from __future__ import annotations

import importlib
import json

import networkx as nx
import numpy as np
import pytest

from netctl import _jit
from netctl.graph.components import hops_from
from netctl.system import StructuredSystem

#: the module (``netctl.structural.decoupling`` is also the name of its function)
dec = importlib.import_module("netctl.structural.decoupling")


def _random_system(rng: np.random.Generator, n_max: int = 12) -> StructuredSystem:
    n = int(rng.integers(1, n_max))
    m, q, r = int(rng.integers(0, 3)), int(rng.integers(1, 4)), int(rng.integers(1, 4))
    p = rng.uniform(0.05, 0.4)
    A, B = rng.random((n, n)) < p, rng.random((n, m)) < p
    E, H = rng.random((n, q)) < p, rng.random((r, n)) < p
    # some states barred from carrying an input
    nodes = {"actuator": rng.random(n) < 0.7} if rng.random() < 0.3 else None
    s = StructuredSystem.from_matrices(A.astype(float), B.astype(float).reshape(n, -1),
                                       np.zeros((0, n)), weighted=False, nodes=nodes)
    return s.with_disturbances(E.astype(float)).with_regulated(H.astype(float))


def _digraph(s: StructuredSystem) -> nx.DiGraph:
    g = nx.DiGraph()
    g.add_nodes_from(range(s.n_states))
    src, dst = s.edges()
    g.add_edges_from((int(u), int(v)) for u, v in zip(src, dst) if u != v)
    return g


def _reference_states(g: nx.DiGraph, entry: list[int], reads: list[int]) -> int:
    """Fewest states on a path from ``entry`` to ``reads`` (-1: none), by NetworkX."""
    if not entry or not reads:
        return -1
    d = nx.multi_source_dijkstra_path_length(g, set(entry))
    hit = [d[v] for v in reads if v in d]
    return int(min(hit)) + 1 if hit else -1


@pytest.mark.parametrize("seed", range(4))
def test_reach_distances_match_networkx(seed):
    rng = np.random.default_rng(seed)
    checked = 0
    for _ in range(120):
        s = _random_system(rng)
        r = dec.decoupling(s, fixes=False)
        g = _digraph(s)
        H = s.H.toarray() != 0
        E = s.E.toarray() != 0
        driven = s.driven_states().tolist()
        for reach in r.reach:
            entry = np.flatnonzero(E[:, reach.disturbance]).tolist()
            everything = [_reference_states(g, entry, np.flatnonzero(H[t]).tolist())
                          for t in range(H.shape[0])]
            hit = [t for t, d in enumerate(everything) if d >= 0]
            assert reach.outputs.tolist() == hit
            assert reach.distance.tolist() == [everything[t] for t in hit]
            assert reach.input_distance.tolist() == [
                _reference_states(g, driven, np.flatnonzero(H[t]).tolist()) for t in hit]
            checked += 1
    assert checked > 50  # the comparison ran on many failing disturbances


@pytest.mark.parametrize("seed", range(3))
def test_fix_candidates_match_networkx(seed):
    """The states tried for one more input: those with a path to a state read by an
    output that a failing disturbance reaches, nearest first, ties by index, barred
    states left out (NetworkX's shortest paths on the reversed graph)."""
    rng = np.random.default_rng(100 + seed)
    checked = 0
    for _ in range(150):
        s = _random_system(rng)
        r = dec.decoupling(s, fixes=False)
        if r.state_feedback.solvable:
            continue
        Z, _ = dec._outputs(s, "regulated")
        limit = int(rng.integers(1, 15))
        got = dec._candidates(s, Z, list(r.reach), r.state_feedback.failing.tolist(), limit)
        H = s.H.toarray() != 0
        outs = sorted({int(t) for x in r.reach for t in x.outputs}) if r.reach else \
            list(range(H.shape[0]))
        reads = sorted({int(v) for t in outs for v in np.flatnonzero(H[t])})
        want: list[int] = []
        if reads:
            d = nx.multi_source_dijkstra_path_length(_digraph(s).reverse(), set(reads))
            ok = s.nodes.get("actuator")
            near = [(dist, v) for v, dist in d.items() if ok is None or ok[v]]
            want = [v for _, v in sorted(near)][:limit]
        assert got.tolist() == want
        checked += 1
    assert checked > 50


def test_hops_from_python_and_compiled_match_networkx():
    """``hops_from``: fewest edges from any source, -1 where none reaches, both as Python
    (small inputs) and compiled; NetworkX's multi-source shortest paths as reference."""
    rng = np.random.default_rng(7)
    for _ in range(60):
        n = int(rng.integers(1, 40))
        k = int(rng.integers(0, 4 * n))
        u, v = rng.integers(0, n, k), rng.integers(0, n, k)
        key = np.unique(u * n + v)
        u, v = key // n, key % n
        indptr = np.zeros(n + 1, np.int64)
        np.cumsum(np.bincount(u, minlength=n), out=indptr[1:])
        sources = np.unique(rng.integers(0, n, int(rng.integers(0, 4))))
        g = nx.DiGraph()
        g.add_nodes_from(range(n))
        g.add_edges_from(zip(u.tolist(), v.tolist()))
        ref = nx.multi_source_dijkstra_path_length(g, set(sources.tolist())) \
            if sources.size else {}
        want = [ref.get(x, -1) for x in range(n)]
        with _jit.always_python():
            py = hops_from(indptr, v, sources)
        with _jit.always_compiled():
            co = hops_from(indptr, v, sources)
        assert py.tolist() == want and co.tolist() == want


def test_decoupling_on_a_small_system_loads_no_scipy():
    """The analysis itself (not only the command) runs on a small system without
    importing scipy (issue 15, goal 1); the answer is the hand-worked one of the module's
    example: u -> x0 -> x1 with w entering x1 and z reading x1 cannot be decoupled, and
    one more input on x1 fixes both questions."""
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    code = (f"import sys\nsys.path.insert(0, {str(root)!r})\n"
            "from netctl.system import StructuredSystem\n"
            "from netctl.structural.decoupling import decoupling\n"
            "s = StructuredSystem.from_edges([0], [1], inputs=[0])\n"
            "s = s.with_disturbances({'w': [1]}).with_regulated({'z': [1]})\n"
            "r = decoupling(s)\n"
            "print(r.state_feedback.solvable, r.measured.solvable, "
            "[(f.kind, f.state) for f in r.fixes], [r_.distance.tolist() for r_ in r.reach],"
            " [r_.input_distance.tolist() for r_ in r.reach])\n"
            "print(sorted(m for m in sys.modules if m == 'scipy' or m.startswith('scipy.')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=300, cwd=root)
    assert out.returncode == 0, out.stderr
    answer, loaded = out.stdout.strip().splitlines()[-2:]
    assert answer == "False False [('input', 1)] [[1]] [[2]]"
    assert loaded == "[]"


def test_fix_search_on_states_that_all_have_self_loops(tmp_path, capsys):
    """Every state with a self-loop (decay) used to crash the fix search (scipy's
    ``setdiag`` wrote into the system's read-only arrays). Worked by hand with the rules
    of Commault, Dion & Perez (1991): w and z both sit on a, b -> a, no input; w reaches z
    through 1 state and no input reaches it, so neither question is answered yes; an input
    on a arrives as fast as w (measured disturbance only), one on b a state later (no)."""
    from netctl.cli import main

    f = tmp_path / "decay.csv"
    f.write_text("# disturbances: w\n# regulated: a\na,a\nb,b\nb,a\nw,a\n")
    assert main(["decouple", str(f), "--json"]) == 1
    d = json.loads(capsys.readouterr().out)
    assert not d["state_feedback"]["solvable"] and not d["measured_disturbance"]["solvable"]
    assert d["reach"] == [{"disturbance": "w", "outputs": [
        {"output": "z:a", "states": 1, "nearest_input_states": None}]}]
    assert d["candidates_tried"] == 2
    assert [(x["kind"], x["state"]) for x in d["fixes"]] == [("input", "a")]
    assert d["fixes"][0]["solves"] == [dec.MEASURED]
