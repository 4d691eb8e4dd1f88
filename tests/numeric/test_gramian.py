"""Gramians that stay positive semidefinite, and verdicts at the edge of double precision
(issue 22, items 1, 2, 3, 5, 7).

Outside checks, named beside each test: ``scipy.linalg.solve_continuous_lyapunov``
(Bartels-Stewart) on well-conditioned cases; the closed forms of REFERENCES.md §8
(Kailath, *Linear Systems*, 1980: scalar, double integrator, diag(-1, -2)); mpmath's own
``expm`` of Van Loan's block matrix (Van Loan, IEEE TAC 23(3), 1978) at 140 digits for the
31-state directed path.
"""

from __future__ import annotations

import json

import networkx as nx
import numpy as np
import pytest
import scipy.linalg as la

from netctl import StructuredSystem
from netctl.cli import main
from netctl.errors import OptionError
from netctl.numeric import energy, realize, select_actuators
from netctl.numeric.gramian import (
    factor_eigenvalues,
    finite_horizon_factor,
    lyapunov_factor,
    smallest_eigenvalue_mp,
)


@pytest.mark.parametrize("n, m, seed", [(1, 1, 0), (2, 1, 1), (5, 2, 2), (12, 3, 3),
                                        (40, 1, 4)])
def test_hammarling_factor_matches_scipy_lyapunov(n, m, seed):
    # reference: scipy.linalg.solve_continuous_lyapunov (Bartels-Stewart), well conditioned
    rng = np.random.default_rng(seed)
    A = rng.standard_normal((n, n))
    A -= (np.max(la.eigvals(A).real) + 1.0) * np.eye(n)
    B = rng.standard_normal((n, m))
    L = lyapunov_factor(A, B)
    W = la.solve_continuous_lyapunov(A, -B @ B.T)
    assert np.allclose(L @ L.T, W, rtol=1e-10, atol=1e-12 * np.abs(W).max())
    assert np.allclose(np.triu(L, 1), 0.0)


CLOSED_FORMS = [  # REFERENCES.md §8 (Kailath 1980), [C] values recomputed by hand
    pytest.param(np.array([[-1.0]]), np.array([[1.0]]), 1.0,
                 np.array([[(1 - np.exp(-2)) / 2]]), id="scalar-a-1-T1"),
    pytest.param(np.array([[0.0, 1.0], [0.0, 0.0]]), np.array([[0.0], [1.0]]), 1.0,
                 np.array([[1 / 3, 1 / 2], [1 / 2, 1.0]]), id="double-integrator-T1"),
    pytest.param(np.diag([-1.0, -2.0]), np.ones((2, 1)), None,
                 np.array([[1 / 2, 1 / 3], [1 / 3, 1 / 4]]), id="diag-1-2-infinite"),
    pytest.param(-np.eye(2), np.eye(2), None, np.eye(2) / 2, id="minus-identity-infinite"),
]


@pytest.mark.parametrize("A, B, T, W", CLOSED_FORMS)
def test_closed_forms_one_and_two_states(A, B, T, W):
    L = lyapunov_factor(A, B) if T is None else finite_horizon_factor(A, B, T)
    assert np.allclose(L @ L.T, W, rtol=1e-12, atol=1e-14)


def test_double_integrator_energy_is_12():
    # minimum energy from 0 to (1, 0) in T = 1 is 12 (REFERENCES.md §8, Kailath 1980)
    s = StructuredSystem.from_matrices(np.array([[0.0, 1.0], [0.0, 0.0]]),
                                       np.array([[0.0], [1.0]]))
    W = np.array(energy(s, horizon=1.0).gramian)
    v = np.array([1.0, 0.0])
    assert v @ np.linalg.solve(W, v) == pytest.approx(12.0, rel=1e-12)


def _path(n=31):
    g = nx.relabel_nodes(nx.path_graph(n, create_using=nx.DiGraph), lambda i: f"s{i}")
    s = StructuredSystem.from_networkx(g)
    return realize(s.with_inputs(s.index_of(["s0"])), weights="independent", seed=0)


def _mp_reference_smallest(A, B, digits=140):
    """Independent reference: mpmath.expm of Van Loan's block matrix, then mpmath.eigsy."""
    import mpmath

    n = A.shape[0]
    with mpmath.workdps(digits):
        M = mpmath.zeros(2 * n, 2 * n)
        Q = B @ B.T
        for i in range(n):
            for j in range(n):
                M[i, j] = -A[i, j]
                M[n + i, n + j] = A[j, i]
                M[i, n + j] = Q[i, j]
        F = mpmath.expm(M)
        W = F[n:2 * n, n:2 * n].T * F[0:n, n:2 * n]
        W = (W + W.T) / 2
        return min(mpmath.eigsy(W, eigvals_only=True))


def test_path_gramian_never_negative_and_true_value_with_precision():
    r = _path()
    A, B = r.A.toarray(), r.B.toarray()
    e = energy(r, precision=130)
    assert e.lambda_min >= 0.0
    assert e.verdict.key == "ill-conditioned" and not e.verdict.failing
    assert e.condition > 1e16 and e.worst_energy_bound > 1e16
    import mpmath

    ref = _mp_reference_smallest(A, B)
    assert ref > 0
    assert e.precision is not None and e.precision.resolved
    assert float(mpmath.mpf(e.precision.smallest)) == pytest.approx(float(ref), rel=1e-10)
    # the double-precision bound is honest: the true value lies below it
    assert float(ref) <= e.lambda_min_upper


def test_path_at_50_digits_says_unresolved():
    # at 50 digits the true smallest eigenvalue (~2.6e-102, mpmath reference above) is
    # below the error bound; the result must say so instead of printing noise
    r = _path()
    res = smallest_eigenvalue_mp(r.A.toarray(), r.B.toarray(), 1.0, 50)
    assert not res.resolved and res.digits_needed > 50
    assert float(res.bound) > 2.6e-102


def test_factor_eigenvalues_nonnegative_on_rank_deficient():
    # B = 0 gives W = 0: eigenvalues exactly 0, never below
    L = finite_horizon_factor(-np.eye(3), np.zeros((3, 1)), 1.0)
    assert np.all(factor_eigenvalues(L) >= 0.0)


def test_greedy_keeps_lins_condition_on_the_path():
    # the log-det objective alone picked s26, leaving s0..s25 unreachable; Summers,
    # Cortesi & Lygeros (IEEE TCNS 3(1), 2016) greedy started from a structurally
    # controllable set must pick the head (Liu et al. 2011: the path needs its head)
    r = _path()
    sel = select_actuators(r)
    assert sel.names(sel.selected) == ["s0"] and sel.structurally_controllable
    sel3 = select_actuators(r, budget=3)
    assert "s0" in sel.names(sel3.selected) and sel3.structurally_controllable
    # candidates that cannot reach the head: the result says the set is not controllable
    only = select_actuators(r, budget=2, candidates=["s5", "s9"])
    assert not only.structurally_controllable


def test_greedy_sets_reach_every_state_random_graphs():
    # outside check: accessibility by networkx reachability and full generic rank of
    # [A B] by numpy's rank on random weights (Lin 1974)
    rng = np.random.default_rng(7)
    for k in range(6):
        g = nx.gnp_random_graph(12, 0.15, seed=k, directed=True)
        s = realize(StructuredSystem.from_networkx(g), weights="independent", seed=k)
        sel = select_actuators(s, horizon=1.0)
        drivers = sel.selected.tolist()
        reach = set(drivers)
        for d in drivers:
            reach |= nx.descendants(g, d)
        assert reach == set(range(12))
        A = s.A.toarray() * rng.uniform(0.5, 1.5, (12, 12))
        B = np.eye(12)[:, drivers]
        assert np.linalg.matrix_rank(np.hstack([A, B])) == 12


@pytest.fixture
def path_file(tmp_path):
    p = tmp_path / "path.txt"
    p.write_text("".join(f"s{i} s{i + 1}\n" for i in range(30)))
    return p


def test_cli_path_is_controllable_but_ill_conditioned(path_file, capsys):
    assert main(["energy", str(path_file), "--inputs", "s0", "--weights", "independent",
                 "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["verdict"]["text"] == "controllable but ill-conditioned beyond working precision"
    assert d["lambda_min"] >= 0 and d["digits_lost"] > 16
    assert d["selection"]["selected"] == ["s0"]


@pytest.mark.parametrize("extra, text", [
    (["--precision", "5000"], "too large for 31 states"),
    (["--precision", "8"], "decimal digits >= 16"),
    (["--horizon", "0"], "positive"),
    (["--horizon", "-1"], "positive"),
    (["--horizon", "inf"], "singular"),
])
def test_cli_bad_numeric_options_exit_2(path_file, capsys, extra, text):
    assert main(["energy", str(path_file), "--inputs", "s0", "--weights", "independent",
                 *extra]) == 2
    err = capsys.readouterr().err
    assert text in err and len(err.strip().splitlines()) == 1


def test_non_finite_weight_is_bad_input():
    from netctl.errors import NetctlError

    with pytest.raises(NetctlError):  # exit 2 at the command line
        energy(StructuredSystem.from_matrices(np.array([[-1.0, 0.0], [np.inf, -1.0]]),
                                              np.array([[1.0], [0.0]])))


@pytest.mark.parametrize("n, seed", [(1, 0), (3, 1), (9, 2), (25, 3)])
@pytest.mark.parametrize("horizon", [None, 0.7, 2.0])
def test_single_input_gramians_match_scipy(n, seed, horizon):
    # references: scipy.linalg.solve_continuous_lyapunov (infinite horizon) and
    # scipy.linalg.expm of Van Loan's block matrix (finite horizon; Van Loan, IEEE TAC
    # 23(3):395-404, 1978), one input at each state in turn, well conditioned
    from netctl.numeric.gramian import single_input_gramian, single_input_plan

    rng = np.random.default_rng(seed)
    A = rng.standard_normal((n, n))
    if horizon is None:
        A -= (np.max(la.eigvals(A).real) + 1.0) * np.eye(n)
    plan = single_input_plan(A, horizon)
    for i in range(n):
        b = np.zeros((n, 1))
        b[i] = 1.0
        if horizon is None:
            ref = la.solve_continuous_lyapunov(A, -b @ b.T)
        else:
            M = np.block([[-A, b @ b.T], [np.zeros((n, n)), A.T]])
            F = la.expm(M * horizon)
            ref = F[n:, n:].T @ F[:n, n:]
        np.testing.assert_allclose(single_input_gramian(plan, i), ref, rtol=1e-10,
                                   atol=1e-12 * np.abs(ref).max())
