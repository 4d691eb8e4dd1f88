"""State names that are numbers ('3', '7', as in most published edge lists) are names,
never positions: ``--inputs 3`` drives the state called 3, whatever its row.

The oracle is the Kalman rank test on random weights (numpy), outside netctl: for a
pattern with independent random nonzeros, rank [B AB ... A^{n-1}B] = n for almost all
weights exactly when the pattern is structurally controllable (Lin 1974; from memory).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from netctl.cli import main

# the chain 3 -> 1 -> 5 -> 7; sorted names put '1' in row 0 and '3' in row 1, so a name
# read as a position lands on another state
EDGES = [("3", "1"), ("1", "5"), ("5", "7")]


def _kalman_controllable(edges, driven, seed=0):
    names = sorted({x for e in edges for x in e})
    pos = {s: i for i, s in enumerate(names)}
    n = len(names)
    rng = np.random.default_rng(seed)
    A = np.zeros((n, n))
    for u, v in edges:  # u influences v: A[v, u] != 0
        A[pos[v], pos[u]] = rng.uniform(0.5, 2.0)
    B = np.zeros((n, len(driven)))
    for k, s in enumerate(driven):
        B[pos[s], k] = 1.0
    K = np.hstack([np.linalg.matrix_power(A, j) @ B for j in range(n)])
    return bool(np.linalg.matrix_rank(K) == n)


@pytest.fixture
def chain(tmp_path: Path) -> str:
    p = tmp_path / "chain.txt"
    p.write_text("".join(f"{u} {v}\n" for u, v in EDGES))
    return str(p)


@pytest.mark.parametrize("driven", [["3"], ["1"], ["5", "3"], ["7"]])
def test_check_inputs_by_numeric_name_matches_kalman(chain, driven, capsys):
    want = _kalman_controllable(EDGES, driven)
    code = main(["check", chain, "--inputs", ",".join(driven), "--json"])
    d = json.loads(capsys.readouterr().out)
    assert code == (0 if want else 1)
    assert d["controllable"] is want


@pytest.mark.parametrize("read, want", [("7", True), ("3", False)])
def test_check_outputs_by_numeric_name_matches_kalman_dual(chain, read, want, capsys):
    # observability of (A, C) is controllability of (A^T, C^T): reverse the links
    assert _kalman_controllable([(v, u) for u, v in EDGES], [read]) is want
    code = main(["check", chain, "--outputs", read, "--json"])
    capsys.readouterr()
    assert code == (0 if want else 1)


@pytest.mark.parametrize("verb", [["strong", "--diagonal", "free"], ["sweep"],
                                  ["whatif", "--add-links", "7->5"], ["verify"],
                                  ["energy", "--weights", "independent"],
                                  ["modes", "--weights", "independent"]])
def test_every_verb_drives_the_named_state(chain, verb, capsys):
    # input on the chain's head '3': controllable for almost all weights (Kalman)
    assert _kalman_controllable(EDGES, ["3"])
    main([verb[0], chain, "--inputs", "3", *verb[1:], "--json"])
    out = capsys.readouterr().out
    d = json.loads(out)
    text = json.dumps(d)
    # the design is the state named 3, not the state in row 3 (named 7) or named 1
    assert "u:3" in text or '"3"' in text
    assert "u:7" not in text and "u:1" not in text
    for key in ("controllable_before", "controllable", "structurally_controllable"):
        for sub in [d, *(v for v in d.values() if isinstance(v, dict))]:
            if key in sub and isinstance(sub[key], bool) and verb[0] != "strong":
                assert sub[key] is True, (key, sub)


def test_strong_minimum_checks_its_own_drivers(tmp_path, capsys):
    # names 0..9 with 2 and 5 missing: rows and names disagree from row 2 on
    rng = np.random.default_rng(1)
    names = [s for s in map(str, range(12)) if s not in ("2", "5")]
    lines = {f"{names[i]} {names[j]}" for i, j in rng.integers(0, len(names), (25, 2))
             if i != j}
    p = tmp_path / "g.txt"
    p.write_text("\n".join(sorted(lines)) + "\n")
    assert main(["strong", str(p), "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    # a search result forces every state with the drivers it names
    assert d["strongly_controllable"] is True and d["unforced"] == []
    # the verdict printed beside the search must be about the drivers it printed
    assert main(["strong", str(p), "--inputs", ",".join(d["drivers"]), "--json"]) in (0, 1)
    again = json.loads(capsys.readouterr().out)
    assert again["strongly_controllable"] == d["strongly_controllable"]
