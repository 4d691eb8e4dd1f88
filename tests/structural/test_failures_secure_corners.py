"""Corners of secure placement: kept sensors (``--keep`` on the dual) and ``k > 1`` beyond
20,000 loss subsets, rechecked from outside netctl.

Observability of ``(A, C)`` is controllability of the dual ``(A^T, C^T)`` (Kalman's
duality); both are recomputed by Lin's theorem with networkx (``_failures_brute``: C.-T.
Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974), independently of
netctl's engine. The placement problem is the robust minimum placement of Liu, Pequito,
Kar, Sinopoli & Aguiar, IEEE TCNS 2017.
"""

from __future__ import annotations

import itertools
import json
import math

import numpy as np
import pytest

from netctl import StructuredSystem
from netctl.cli import main
from netctl.structural.failures import line_elements, secure_placement
from tests.structural import _failures_brute as brute


def _observable(n: int, edges: list[tuple[int, int]], rows: list[list[int]]) -> bool:
    """Structural observability of ``(A, C)`` by duality: the reversed links with one
    input per sensor, acting on the states that sensor reads."""
    return brute.controllable(n, [(v, u) for u, v in edges], rows)


def _survives_each_loss(n: int, edges: list[tuple[int, int]], rows: list[list[int]]) -> bool:
    return _observable(n, edges, rows) and all(
        _observable(n, edges, rows[:j] + rows[j + 1:]) for j in range(len(rows)))


def _fewest_added(n: int, edges: list[tuple[int, int]], kept: list[list[int]]) -> int | None:
    """Fewest dedicated sensors added to ``kept`` so that no single sensor loss (kept or
    added) breaks observability; every subset of states in order of size."""
    for size in range(n + 1):
        for S in itertools.combinations(range(n), size):
            if _survives_each_loss(n, edges, kept + [[i] for i in S]):
                return size
    return None


@pytest.mark.parametrize("seed", range(40))
def test_keep_with_sensors_against_brute_force(seed):
    rng = np.random.default_rng(1000 + seed)
    n = int(rng.integers(2, 6))
    edges = brute.random_pattern(rng, n, float(rng.uniform(0.2, 0.55)))
    kept = [sorted(set(rng.choice(n, size=int(rng.integers(1, 3))).tolist()))
            for _ in range(int(rng.integers(1, 3)))]
    s = StructuredSystem.from_edges([u for u, _ in edges], [v for _, v in edges], n)
    s = s.with_outputs({f"y{j}": rows for j, rows in enumerate(kept)})
    r = secure_placement(s, kind="sensors", keep=True)
    want = _fewest_added(n, edges, kept)
    assert r.kept == tuple(f"y{j}" for j in range(len(kept)))
    if want is None:
        assert not r.feasible, (seed, edges, kept, r)
        return
    assert r.feasible and r.optimal and r.verified, (seed, edges, kept, r)
    rows = kept + [[int(i)] for i in r.sites]
    # every single sensor loss, kept or added, recomputed with networkx
    assert _survives_each_loss(n, edges, rows), (seed, edges, kept, r.sites)
    assert r.sites.size == want, (seed, edges, kept, r.sites, want)


def test_cli_keep_sensors_every_loss_rechecked(tmp_path, capsys):
    # a <-> b -> c <-> d: {c, d} is the only sink component, so with a kept sensor at c
    # one more sensor in {c, d} survives any single loss (worked by hand on the dual)
    p = tmp_path / "net.txt"
    p.write_text("a b\nb a\nb c\nc d\nd c\n")
    assert main(["secure", str(p), "--place", "--sensors", "--keep", "--outputs", "c",
                 "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    # (the kept sensor's name is not checked: StructuredSystem.with_outputs names
    # sensors given as an index array "u:<state>", reported separately)
    assert d["kind"] == "sensors" and len(d["kept"]) == 1 and d["kept"][0].endswith(":c")
    assert d["sites"] in (["c"], ["d"]) and d["optimal"] and d["verified"]
    idx = {"a": 0, "b": 1, "c": 2, "d": 3}
    edges = [(0, 1), (1, 0), (1, 2), (2, 3), (3, 2)]
    rows = [[2], [idx[d["sites"][0]]]]
    assert _survives_each_loss(4, edges, rows)
    assert not _survives_each_loss(4, edges, [[2]])  # the kept sensor alone is not secure
    # a kept design that already survives: nothing to add
    assert main(["secure", str(p), "--place", "--sensors", "--keep", "--outputs", "c,d"]) == 0
    assert "nothing to add: the kept design is already secure" in capsys.readouterr().out


def _blocks(rng: np.random.Generator, blocks: int, down: int) -> tuple[int, list]:
    """``blocks`` source components, each three states linked both ways (every state two
    in-links), then ``down`` states fed by 2-3 earlier states each."""
    edges = []
    for b in range(blocks):
        a = (3 * b, 3 * b + 1, 3 * b + 2)
        edges += [(x, y) for x in a for y in a if x != y]
    n0 = 3 * blocks
    for j in range(down):
        v = n0 + j
        edges += [(int(u), v) for u in rng.choice(v, size=int(rng.integers(2, 4)),
                                                 replace=False)]
    return n0 + down, edges


@pytest.mark.slow
def test_two_failures_beyond_the_subset_limit_feasible():
    """k = 2 with more than 20,000 pairs of placed elements (the exact subset check is
    replaced by the integer programme finding rank-breaking losses): a feasible design,
    every single loss and a random sample of 600 pairs recomputed with networkx, and
    Lin's reach bound (k + 1 sites in every source component) met."""
    rng = np.random.default_rng(7)
    n, edges = _blocks(rng, 70, 60)
    s = StructuredSystem.from_edges([u for u, _ in edges], [v for _, v in edges], n)
    r = secure_placement(s, k=2, time_limit=60)
    assert r.feasible and r.scenarios == "all"
    m = int(r.sites.size)
    assert math.comb(m, 2) > 20_000
    for b in range(70):  # each source component needs k + 1 = 3 sites of its own
        assert np.isin(r.sites, [3 * b, 3 * b + 1, 3 * b + 2]).sum() >= 3
    cols = [[int(i)] for i in r.sites]
    assert brute.controllable(n, edges, cols)
    for j in range(m):
        assert brute.controllable(n, edges, cols[:j] + cols[j + 1:]), j
    pairs = {tuple(sorted(rng.choice(m, 2, replace=False).tolist())) for _ in range(600)}
    for a, b in pairs:
        assert brute.controllable(n, edges, [c for j, c in enumerate(cols)
                                             if j not in (a, b)]), (a, b)
    assert r.verified is True  # netctl's own recheck visited every pair


@pytest.mark.slow
def test_two_lines_beyond_the_subset_limit_is_labelled_sampled(tmp_path, capsys):
    """More than 20,000 pairs of lines: the losses are sampled and the output says so
    (JSON ``scenarios``, the text and the guarantee); the design found survives every
    single line loss (each line lies in some sampled pair, and losing links only lowers
    the rank and the reach), recomputed here with networkx."""
    rng = np.random.default_rng(3)
    n = 40
    pairs = set()
    while len(pairs) < 210:
        u, v = (int(x) for x in rng.choice(n, 2, replace=False))
        if (v, u) not in pairs:
            pairs.add((u, v))
    edges = sorted(pairs)
    p = tmp_path / "lines.txt"
    p.write_text("".join(f"s{u} s{v}\n" for u, v in edges))
    assert main(["secure", str(p), "--place", "--against", "lines", "--k", "2",
                 "--json", "--time-limit", "20"]) in (0, 1)
    d = json.loads(capsys.readouterr().out)
    total = math.comb(210, 2)
    assert d["scenarios"].startswith("sampled ") and d["scenarios"].endswith(f" of {total}")
    assert "not every combination" in d["guarantee"]
    assert d["feasible"] and d["sites"]
    main(["secure", str(p), "--place", "--against", "lines", "--k", "2", "--time-limit",
          "20"])
    out = capsys.readouterr().out
    assert "line losses sampled" in out and "not proven for every combination" in out
    s = StructuredSystem.from_named_edges([f"s{u}" for u, _ in edges],
                                          [f"s{v}" for _, v in edges])
    names = list(s.state_names)
    src, tgt = s.edges()
    links = list(zip(src.tolist(), tgt.tolist()))
    cols = [[names.index(x)] for x in d["sites"]]
    groups, _ = line_elements(s)
    assert len(groups) == 210
    assert brute.controllable(len(names), links, cols)
    for g in groups:
        lost = set(g.tolist())
        assert brute.controllable(len(names),
                                  [e for q, e in enumerate(links) if q not in lost], cols)
