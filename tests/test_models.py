"""Models: the state-space pattern a plain network implies.

The structural verdict (Lin 1974) under every model is checked against a numeric test
independent of netctl's engine: the rank of the Kalman matrix [B, AB, ..., A^(n-1)B] for
random weights on the pattern, computed exactly over GF(p), p = 2^31 - 1. By the
Schwartz-Zippel lemma a generically full rank is found with probability >= 1 - n^2/p per
trial (Schwartz 1980, J. ACM 27(4):701-717).
"""

from __future__ import annotations

import numpy as np
import pytest

from netctl import StructuredSystem, controllability
from netctl.cli import build_parser, main
from netctl.errors import OptionError
from netctl.models import MODELS, apply_model

P = 2**31 - 1


def rank_mod_p(M):
    M = [[int(x) % P for x in row] for row in M]
    rank, rows = 0, len(M)
    cols = len(M[0]) if rows else 0
    for c in range(cols):
        piv = next((r for r in range(rank, rows) if M[r][c]), None)
        if piv is None:
            continue
        M[rank], M[piv] = M[piv], M[rank]
        inv = pow(M[rank][c], P - 2, P)
        M[rank] = [x * inv % P for x in M[rank]]
        for r in range(rows):
            if r != rank and M[r][c]:
                f = M[r][c]
                M[r] = [(x - f * y) % P for x, y in zip(M[r], M[rank])]
        rank += 1
    return rank


def generic_kalman_rank(system, rng, trials=2):
    n = system.n_states
    best = 0
    for _ in range(trials):
        A = np.zeros((n, n), dtype=object)
        B = np.zeros((n, system.n_inputs), dtype=object)
        a = system.A.tocoo()
        b = system.B.tocoo()
        for r, c in zip(a.row, a.col):
            A[r, c] = int(rng.integers(1, P))
        for r, c in zip(b.row, b.col):
            B[r, c] = int(rng.integers(1, P))
        blocks, X = [], B
        for _ in range(n):
            blocks.append(X)
            X = (A.dot(X)) % P
        best = max(best, rank_mod_p(np.hstack(blocks).tolist()))
    return best


def test_models_listed_and_used_by_the_command_line():
    assert set(MODELS) == {"first-order", "self-loops", "second-order"}
    p = build_parser()
    sub = next(a for a in p._actions if a.dest == "command")
    inspect = sub.choices["inspect"]
    model_opt = next(a for a in inspect._actions if a.dest == "model")
    assert list(model_opt.choices) == list(MODELS)


def test_unknown_model_lists_the_choices():
    net = StructuredSystem.from_edges([0], [1], 2)
    with pytest.raises(OptionError, match=r"unknown model 'third-order'; choose one of "
                       r"first-order, self-loops, second-order"):
        apply_model(net, "third-order")


def test_second_order_pattern_by_hand():
    # network a -> b, input on b, output reading a
    net = StructuredSystem.from_edges([0], [1], 2, state_names=["a", "b"],
                                      inputs=["b"], outputs=["a"])
    s = apply_model(net, "second-order")
    assert s.state_names == ("a:pos", "a:vel", "b:pos", "b:vel")
    want = np.zeros((4, 4), int)
    # pos <- own vel; vel <- own vel (damping); vel <- own pos; b:vel <- a:pos (the link)
    for u, v in [(1, 0), (3, 2), (1, 1), (3, 3), (0, 1), (2, 3), (0, 3)]:
        want[v, u] = 1
    assert np.array_equal(s.A.toarray() != 0, want != 0)
    assert s.B.toarray()[:, 0].tolist() == [0, 0, 0, 1]  # input on b:vel
    assert s.C.toarray()[0].tolist() == [1, 0, 0, 0]  # output reads a:pos
    assert s.nodes["actuator"].tolist() == [False, True, False, True]
    assert s.nodes["node"].tolist() == ["a", "a", "b", "b"]
    assert s.model == "second-order"


def test_second_order_weights_are_diffusive():
    net = StructuredSystem.from_edges([0, 2], [1, 1], 3, weights=[2.0, 0.5])
    A = apply_model(net, "second-order").A.toarray()
    assert A[3, 0] == 2.0 and A[3, 4] == 0.5  # 1:vel <- 0:pos, 2:pos
    assert A[3, 2] == -2.5  # own position: minus the sum of coupling weights
    assert A[3, 3] == -1.0 and A[2, 3] == 1.0  # damping, pos <- vel


def test_second_order_self_loops_warned():
    net = StructuredSystem.from_edges([0, 0], [0, 1], 2)
    with pytest.warns(UserWarning, match="1 self-loop of the network"):
        apply_model(net, "second-order")


def test_self_loops_model_adds_every_diagonal_entry():
    net = StructuredSystem.from_edges([0, 1], [1, 1], 3)
    assert apply_model(net, "self-loops").A.diagonal().tolist() == [1, 1, 1]
    assert apply_model(net, "first-order").A.diagonal().tolist() == [0, 1, 0]


@pytest.mark.parametrize("model", list(MODELS))
def test_structural_verdict_matches_numeric_rank(model):
    rng = np.random.default_rng(sum(model.encode()))
    verdicts = []
    for trial in range(45):
        n = int(rng.integers(2, 6 if model == "second-order" else 8))
        mask = rng.random((n, n)) < rng.uniform(0.1, 0.5)
        np.fill_diagonal(mask, rng.random(n) < 0.2 if model != "second-order" else False)
        src, dst = np.nonzero(mask)
        k = int(rng.integers(1, 3))
        drivers = sorted(set(rng.integers(0, n, k).tolist()))
        net = StructuredSystem.from_edges(src, dst, n, inputs=drivers)
        s = apply_model(net, model)
        structural = controllability(s, dimension=False).controllable
        numeric = generic_kalman_rank(s, rng) == s.n_states
        assert structural == numeric, (model, trial, src.tolist(), dst.tolist(), drivers)
        verdicts.append(structural)
    assert any(verdicts) and not all(verdicts)  # both outcomes were exercised


def test_cli_second_order(tmp_path, capsys):
    p = tmp_path / "line.csv"
    p.write_text("a,b\nb,a\nb,c\nc,b\n")
    assert main(["check", str(p), "--model", "second-order", "--inputs", "a:vel"]) == 0
    assert "structurally controllable: yes" in capsys.readouterr().out
