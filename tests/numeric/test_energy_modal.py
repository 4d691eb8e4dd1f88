"""Gramians, energy metrics, greedy log-det selection and modal controllability.

Sources: closed forms of the controllability Gramian (Kailath, Linear Systems, 1980:
W(t) = int e^{As} B B^T e^{A^T s} ds; minimum energy v^T W^{-1} v); Van Loan, IEEE TAC
23(3):395-404, 1978 (block exponential); Summers, Cortesi, Lygeros, IEEE TCNS 3(1):91-101,
2016 (tr W modular, log det submodular, greedy within 1 - 1/e -- Nemhauser, Wolsey,
Fisher, Math. Program. 14:265-294, 1978); Hamdan & Nayfeh, J. Guid. Control Dyn.
12(3):421-428, 1989 (modal cosine). REFERENCES.md §8 [C] values are recomputed here by
numerical quadrature (scipy.integrate) or the closed forms.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from scipy.integrate import quad_vec
from scipy.linalg import expm

from netctl import OptionError, StructuredSystem
from netctl.numeric import realize, staircase
from netctl.numeric.energy import energy, gramian
from netctl.numeric.selection import select_actuators
from netctl.numeric.modal import modal_controllability
from tests.conftest import from_edges, random_pattern


def quad_gramian(A, B, T):
    return quad_vec(lambda s: expm(A * s) @ B @ B.T @ expm(A.T * s), 0.0, T,
                    epsabs=1e-13, epsrel=1e-11)[0]


# ----------------------------------------------------------------- closed forms
def test_scalar_gramian_finite_horizon():
    # a = -1, b = 1: W(1) = (1 - e^-2) / 2 (closed form of int_0^1 e^{-2s} ds)
    W = gramian(np.array([[-1.0]]), np.array([[1.0]]), 1.0)
    assert W[0, 0] == pytest.approx((1 - np.exp(-2)) / 2, rel=1e-12)
    assert W[0, 0] == pytest.approx(0.4323324, abs=1e-7)


@pytest.mark.parametrize("t", [0.5, 1.0, 2.0])
def test_double_integrator_gramian_and_energy(t):
    # A = [[0,1],[0,0]], b = (0,1): W(t) = [[t^3/3, t^2/2], [t^2/2, t]] (Kailath 1980);
    # minimum energy to (1, 0) is 12 / t^3
    s = StructuredSystem.from_matrices(np.array([[0.0, 1.0], [0.0, 0.0]]),
                                       np.array([[0.0], [1.0]]))
    r = energy(s, horizon=t)
    np.testing.assert_allclose(r.gramian, [[t**3 / 3, t**2 / 2], [t**2 / 2, t]], rtol=1e-10)
    v = np.array([1.0, 0.0])
    assert v @ np.linalg.solve(r.gramian, v) == pytest.approx(12 / t**3, rel=1e-9)


def test_diagonal_system_infinite_horizon():
    # A = diag(l1, l2) Hurwitz, b = 1: W_ij = b_i b_j / (-l_i - l_j) (Lyapunov, closed form)
    lam = np.array([-1.0, -2.0, -0.5])
    b = np.array([[1.0], [2.0], [-1.0]])
    s = StructuredSystem.from_matrices(np.diag(lam), b)
    r = energy(s)
    expected = (b @ b.T) / (-(lam[:, None] + lam[None, :]))
    assert r.horizon is None
    np.testing.assert_allclose(r.gramian, expected, rtol=1e-12)
    assert r.trace == pytest.approx(np.trace(expected))
    # average controllability of state i: tr W with B = e_i = 1 / (2 |l_i|)
    np.testing.assert_allclose(r.average_controllability, 1 / (2 * np.abs(lam)), rtol=1e-12)


def test_minus_identity_gives_half_identity():
    s = StructuredSystem.from_matrices(-np.eye(3), np.eye(3))
    r = energy(s)
    np.testing.assert_allclose(r.gramian, np.eye(3) / 2, atol=1e-14)
    assert r.lambda_min == pytest.approx(0.5) and r.log_det == pytest.approx(3 * np.log(0.5))
    assert r.average_energy == pytest.approx(2.0)   # tr(W^-1)/n


def test_finite_horizon_against_quadrature(rng):
    for _ in range(5):
        n = int(rng.integers(2, 6))
        A = rng.normal(size=(n, n))
        B = rng.normal(size=(n, 2))
        np.testing.assert_allclose(gramian(A, B, 0.7), quad_gramian(A, B, 0.7),
                                   rtol=1e-8, atol=1e-10)


def test_infinite_horizon_against_python_control(rng):
    control = pytest.importorskip("control", reason="python-control (test extra) not installed")
    pytest.importorskip("slycot", reason="python-control's gram() needs slycot")
    for _ in range(5):
        n = int(rng.integers(2, 7))
        A = rng.normal(size=(n, n)) - (n + 1) * np.eye(n)   # Hurwitz by Gershgorin-ish shift
        B = rng.normal(size=(n, 2))
        sysc = control.ss(A, B, np.eye(n), np.zeros((n, 2)))
        np.testing.assert_allclose(gramian(A, B), control.gram(sysc, "c"), rtol=1e-9, atol=1e-12)


def test_infinite_horizon_against_spectral_formula(rng):
    # diagonalizable Hurwitz A = V diag(l) V^-1: W = V [G_ij / -(l_i + conj l_j)] V^H with
    # G = V^-1 B B^T V^-H (integrate e^{(l_i + conj l_j) s} termwise)
    for _ in range(5):
        n = int(rng.integers(2, 6))
        A = rng.normal(size=(n, n)) - (n + 2) * np.eye(n)
        B = rng.normal(size=(n, 2))
        lam, V = np.linalg.eig(A)
        assert max(lam.real) < 0
        Vi = np.linalg.inv(V)
        G = Vi @ B @ B.T @ Vi.conj().T
        W = V @ (G / -(lam[:, None] + lam.conj()[None, :])) @ V.conj().T
        np.testing.assert_allclose(gramian(A, B), W.real, rtol=1e-9, atol=1e-12)


def test_unstable_system_uses_finite_horizon_and_says_so():
    s = StructuredSystem.from_matrices(np.array([[1.0]]), np.array([[1.0]]))
    r = energy(s)
    assert r.horizon == 1.0 and "not Hurwitz" in r.horizon_note
    assert r.gramian[0, 0] == pytest.approx((np.exp(2) - 1) / 2)


def test_uncontrollable_gramian_is_singular():
    s = StructuredSystem.from_matrices(np.diag([-1.0, -2.0]), np.array([[1.0], [0.0]]))
    r = energy(s)
    assert not r.controllable and r.log_det == -np.inf and r.average_energy == np.inf
    d = r.to_dict()
    assert d["log_det"] == "-inf" and d["controllable"] is False


def test_horizon_is_validated():
    s = StructuredSystem.from_matrices(-np.eye(1), np.eye(1))
    with pytest.raises(OptionError, match="horizon must be a positive number"):
        energy(s, horizon=-1.0)


# ----------------------------------------------------------------- greedy log det
def _laplacian_system(rng, n, p, seed):
    e = random_pattern(rng, n, p)
    e = e[e[:, 0] < e[:, 1]]
    s = from_edges(np.vstack([e, e[:, ::-1]]) if e.size else e, n).with_self_loops()
    return realize(s, weights="laplacian", seed=seed)


def test_trace_is_modular_over_dedicated_inputs(rng):
    # Summers et al. 2016: W_S = sum_i W_{e_i}, so tr W is modular
    s = _laplacian_system(rng, 7, 0.4, 3)
    A = s.A.toarray()
    S = [1, 4, 5]
    whole = np.trace(gramian(A, np.eye(7)[:, S]))
    parts = sum(np.trace(gramian(A, np.eye(7)[:, [i]])) for i in S)
    assert whole == pytest.approx(parts, rel=1e-10)


def test_greedy_within_one_minus_one_over_e_of_brute_force(rng):
    for trial in range(4):
        s = _laplacian_system(rng, 6, 0.5, trial)
        A = s.A.toarray()
        r = select_actuators(s, budget=2)
        eps = r.epsilon
        f0 = 6 * np.log(eps)

        def f(S):
            W = sum((gramian(A, np.eye(6)[:, [i]]) for i in S), np.zeros((6, 6)))
            return np.linalg.slogdet(W + eps * np.eye(6))[1]

        best = max(f(S) for S in itertools.combinations(range(6), 2))
        assert r.objective == pytest.approx(f(r.selected.tolist()), rel=1e-9)
        assert r.objective - f0 >= (1 - 1 / np.e) * (best - f0) - 1e-9
        single = max(f([i]) for i in range(6))
        assert r.gains[0] == pytest.approx(single, rel=1e-12)


def test_selection_reports_structural_set_and_validates_budget(rng):
    s = _laplacian_system(rng, 8, 0.3, 1)
    r = select_actuators(s)
    d = r.to_dict()
    assert d["budget"] == len(d["structural_minimum_set"])
    with pytest.raises(OptionError, match="budget must lie between 1 and the 8 candidate"):
        select_actuators(s, budget=9)


# ----------------------------------------------------------------- modal
def test_modal_cosine_closed_form():
    # diag(-1, -2), b = (1, 1): left eigenvectors e1, e2, cos = 1/sqrt(2) (Hamdan-Nayfeh)
    s = StructuredSystem.from_matrices(np.diag([-1.0, -2.0]), np.array([[1.0], [1.0]]))
    r = modal_controllability(s)
    assert [m.reach for m in r.modes] == pytest.approx([2**-0.5] * 2)
    b = np.array([[3.0, 0.0], [4.0, 1.0]])
    r = modal_controllability(StructuredSystem.from_matrices(np.diag([-1.0, -2.0]), b))
    by_ev = {round(m.eigenvalue.real): m for m in r.modes}
    np.testing.assert_allclose(by_ev[-1].per_input, [0.6, 0.0], atol=1e-12)
    np.testing.assert_allclose(by_ev[-2].per_input, [0.8, 1.0], atol=1e-12)


def test_modal_star_cluster_unreached_on_leaves():
    # Rahmani et al. 2009 star: the repeated Laplacian eigenvalue lives on the leaves
    s = from_edges([(0, 1), (0, 2), (0, 3), (1, 0), (2, 0), (3, 0)], 4, inputs=[0])
    r = modal_controllability(realize(s, weights="uniform"))
    (weak,) = r.unreached
    assert weak.multiplicity == 2 and weak.geometric == 2 and weak.reach < 1e-12
    assert r.names(weak.carriers) == ["x1", "x2", "x3"]
    assert r.modes[0] is weak


def test_modal_unreached_count_matches_staircase(rng):
    for _ in range(30):
        n = int(rng.integers(2, 8))
        A = rng.normal(size=(n, n)) * (rng.random((n, n)) < 0.4)
        A = np.triu(A) if rng.random() < 0.5 else A
        B = np.zeros((n, 1))
        B[int(rng.integers(n)), 0] = 1.0
        s = StructuredSystem.from_matrices(A + np.diag(rng.normal(size=n) * 3), B)
        r = modal_controllability(s, tol=1e-8)
        lost = sum(m.multiplicity for m in r.unreached if m.multiplicity == 1)
        if all(m.multiplicity == 1 for m in r.modes):
            assert n - staircase(s).dimension == lost


# ----------------------------------------------------------------- Gu et al. (2015)
def test_node_controllability_path3_exact():
    # Gu et al., Nat. Commun. 6:8414 (2015): A_s = A / (1 + sigma_max), average
    # controllability sum_j v_ij^2 / (1 - l_j^2), modal phi_i = sum_j (1 - l_j^2) v_ij^2.
    # REFERENCES.md §8 [C] values for P3, recomputed here in exact arithmetic (sympy).
    import networkx as nx
    import sympy

    from netctl.numeric.node_metrics import node_controllability

    A = sympy.Matrix([[0, 1, 0], [1, 0, 1], [0, 1, 0]])
    s2 = sympy.sqrt(2)
    As = A / (1 + s2)
    avg, phi = [0] * 3, [0] * 3
    for lam, _, vecs in As.eigenvects():
        for v in vecs:
            v = v / sympy.sqrt((v.T * v)[0])
            for i in range(3):
                avg[i] += v[i] ** 2 / (1 - lam ** 2)
                phi[i] += (1 - lam ** 2) * v[i] ** 2
    avg = [float(sympy.nsimplify(x)) for x in avg]
    phi = [float(sympy.simplify(x)) for x in phi]
    r = node_controllability(StructuredSystem.from_networkx(nx.path_graph(3)))
    np.testing.assert_allclose(r.modal, phi, rtol=1e-12)
    np.testing.assert_allclose(r.average, avg, rtol=1e-12)
    np.testing.assert_allclose(r.modal, [0.828427, 0.656854, 0.828427], atol=1e-6)
    np.testing.assert_allclose(r.average, [1.261204, 1.522408, 1.261204], atol=1e-6)


def test_node_average_controllability_against_truncated_sum(rng):
    from netctl.numeric.node_metrics import node_controllability

    A = rng.normal(size=(5, 5))
    r = node_controllability(StructuredSystem.from_matrices(A, np.zeros((5, 0))))
    As = A / r.scale
    total, P = np.zeros((5, 5)), np.eye(5)
    for _ in range(400):           # sum_t (A_s^t)^T A_s^t, diagonal = tr W with B = e_i
        total += P.T @ P
        P = As @ P
    np.testing.assert_allclose(r.average, np.diag(total), rtol=1e-10)


@pytest.mark.parametrize("n", [2, 3, 4, 5, 8, 9])
def test_modal_equal_reaches_come_in_eigenvalue_order_on_either_route(n, monkeypatch):
    # the path graph's adjacency (weights 1 both ways), input on the first state: its
    # eigenvalues 2 cos(k pi / (n + 1)) are symmetric about 0 and the eigenvector of k is
    # sqrt(2 / (n + 1)) sin(j k pi / (n + 1)) (textbook closed form, e.g. G. Strang,
    # Linear Algebra and Its Applications), so eigenvalues k and n + 1 - k have the same
    # reach sqrt(2 / (n + 1)) sin(k pi / (n + 1)): a tie, to be listed by eigenvalue on
    # the NumPy route (up to 64 states) and on SciPy's alike
    from netctl.numeric import rank

    A = np.eye(n, k=1) + np.eye(n, k=-1)
    s = StructuredSystem.from_matrices(A, np.eye(n)[:, :1])
    k = np.arange(1, n + 1)
    want = sorted(zip(np.round(np.sqrt(2 / (n + 1)) * np.sin(k * np.pi / (n + 1)), 9),
                      np.round(2 * np.cos(k * np.pi / (n + 1)), 9)))
    orders = []
    for small in (64, 0):
        monkeypatch.setattr(rank, "SMALL_STATES", small)
        r = modal_controllability(s)
        got = [(round(m.reach, 9), round(m.eigenvalue.real, 9)) for m in r.modes]
        assert got == want, small
        orders.append([m.eigenvalue for m in r.modes])
    assert np.array_equal(orders[0], orders[1])
