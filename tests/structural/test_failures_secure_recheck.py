"""Secure placement with ``k = 2`` beyond the exhaustive subset limit, and the recheck.

Reference values are worked by hand from Lin's theorem (C.-T. Lin, "Structural
controllability", IEEE TAC 19(3):201-208, 1974) and Hall's theorem (P. Hall, J. London
Math. Soc. 10:26-30, 1935), the conditions of Liu, Pequito, Kar, Sinopoli & Aguiar (IEEE
TCNS 2017) for robust placement: a source component of 3 states survives any 2 losses
of dedicated actuators only if all 3 carry one (reach: k + 1 elements touching it); a
group of 5 leaf states fed by 3 states only if at least 5 - 3 + 2 = 4 leaves carry one
(rank). Designs are recomputed loss by loss with networkx (``_failures_brute``),
independently of netctl's engine.
"""

from __future__ import annotations

import itertools
import json

import numpy as np
import pytest
import scipy.sparse as sp

import netctl.structural.failures.recheck as recheck
import netctl.structural.failures.secure as secure
from netctl import StructuredSystem
from netctl.cli import main
from netctl.structural.failures import secure_placement
from tests.structural import _failures_brute as brute

LIMIT = 50  # subset limit lowered: the k = 2 search takes the path used beyond 20,000


def _blocks_and_groups(blocks: int, groups: int, seed: int = 0):
    """``blocks`` strongly connected 3-cycles (both directions), then ``groups`` groups of
    5 leaf states, each leaf fed by the same 3 random block states."""
    rng = np.random.default_rng(seed)
    edges = []
    for b in range(blocks):
        a = (3 * b, 3 * b + 1, 3 * b + 2)
        edges += [(x, y) for x in a for y in a if x != y]
    n = 3 * blocks
    for _ in range(groups):
        feeds = rng.choice(3 * blocks, 3, replace=False).tolist()
        edges += [(int(f), v) for f in feeds for v in range(n, n + 5)]
        n += 5
    s = StructuredSystem.from_edges([u for u, _ in edges], [v for _, v in edges], n)
    return s, n, edges


def _secure_by_networkx(n, edges, sites, k=2) -> bool:
    cols = [[int(i)] for i in sites]
    return all(brute.controllable(n, edges, [c for j, c in enumerate(cols) if j not in F])
               for q in range(k + 1) for F in itertools.combinations(range(len(cols)), q))


def _hand_bound(blocks: int, groups: int, sites: np.ndarray, n0: int) -> bool:
    """Every block carries all 3 sites, every group at least 4 of its 5 leaves."""
    ok = all(np.isin(sites, [3 * b, 3 * b + 1, 3 * b + 2]).sum() == 3 for b in range(blocks))
    return ok and all(np.isin(sites, np.arange(n0 + 5 * g, n0 + 5 * g + 5)).sum() >= 4
                      for g in range(groups))


@pytest.mark.parametrize("method", ["two-step", "auto"])
def test_k2_beyond_subset_limit_design_is_secure(method, monkeypatch):
    # The search beyond the limit once separated only the rank condition: two-step
    # returned 38 sites here (blocks left with fewer than 3) labelled optimal.
    monkeypatch.setattr(secure, "_MAX_SUBSETS", LIMIT)
    s, n, edges = _blocks_and_groups(6, 4)
    r = secure_placement(s, k=2, method=method, time_limit=30)
    assert r.feasible and r.sites.size * (r.sites.size - 1) // 2 > LIMIT
    assert _hand_bound(6, 4, r.sites, 18), r.site_names
    assert r.cost >= 6 * 3 + 4 * 4
    assert _secure_by_networkx(n, edges, r.sites)
    assert r.verified is True and r.recheck.startswith("passed")
    assert r.lower_bound <= 6 * 3 + 4 * 4 + 1e-9  # the bound never exceeds the optimum


def _blind(*args, **kwargs):
    """A deliberately broken search: it never reports a loss that breaks the design."""
    return []


def test_a_design_failing_its_recheck_is_repaired_from_the_failing_losses(monkeypatch):
    monkeypatch.setattr(secure, "_MAX_SUBSETS", LIMIT)
    monkeypatch.setattr(secure, "_violations", _blind)
    learned = []
    real = recheck.loss_cuts

    def spy(*a, **kw):
        learned.append(real(*a, **kw))
        return learned[-1]
    monkeypatch.setattr(secure, "loss_cuts", spy, raising=False)
    s, n, edges = _blocks_and_groups(6, 4)
    r = secure_placement(s, k=2, method="two-step", time_limit=30)
    assert learned and all(learned)  # the first design failed and taught cuts
    assert r.verified is True and _secure_by_networkx(n, edges, r.sites)
    assert _hand_bound(6, 4, r.sites, 18)


def test_a_design_failing_its_recheck_is_never_called_optimal(monkeypatch, tmp_path, capsys):
    # the search misses reach violations and the recheck's losses teach it nothing:
    # the answer must say plainly that the design is not secure
    monkeypatch.setattr(secure, "_MAX_SUBSETS", LIMIT)
    monkeypatch.setattr(secure, "_violations", _blind)
    monkeypatch.setattr(secure, "loss_cuts", lambda *a, **kw: [], raising=False)
    s, n, edges = _blocks_and_groups(6, 4)
    r = secure_placement(s, k=2, method="two-step", time_limit=30)
    assert not _secure_by_networkx(n, edges, r.sites)
    assert r.verified is False and not r.optimal and r.to_dict()["gap"] is None
    assert r.recheck.startswith("FAILED: losing {") and "NOT secure" in r.recheck
    assert r.guarantee.startswith("NOT SECURE")
    assert r.lower_bound <= 6 * 3 + 4 * 4 + 1e-9  # only a proven bound, not the cost
    p = tmp_path / "net.txt"
    p.write_text("".join(f"{s.state_names[u]} {s.state_names[v]}\n" for u, v in edges))
    assert main(["secure", str(p), "--place", "--k", "2", "--method", "two-step"]) == 1
    out = capsys.readouterr().out
    assert "NOT SECURE" in out and "optimal" not in out and "FAILED: losing {" in out


def test_a_design_below_the_proven_bound_is_never_called_optimal(monkeypatch):
    # a design cheaper than a proven lower bound cannot be secure: never claimed
    real = secure.solve_cuts

    def inflated(*a, **kw):
        import dataclasses
        res = real(*a, **kw)
        return dataclasses.replace(res, proven=res.proven + 100.0)
    monkeypatch.setattr(secure, "solve_cuts", inflated)
    s, n, edges = _blocks_and_groups(2, 1)
    r = secure_placement(s, k=2, time_limit=30)
    assert not r.optimal and r.verified is False and "below the proven" in r.recheck


def test_sampled_recheck_says_so_and_exits_per_design(monkeypatch, net_pair, capsys):
    monkeypatch.setattr(recheck, "RECHECK_ALL", 2)
    monkeypatch.setattr(recheck, "RECHECK_SAMPLES", 5)
    assert main(["secure", net_pair, "--place", "--k", "2", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["verified"] is None and d["recheck"].startswith("sampled: 5 of 15 ")
    assert d["n_sites"] == 6 and d["optimal"]
    assert main(["secure", net_pair, "--place", "--k", "2"]) == 0
    out = capsys.readouterr().out
    assert "NOT passed" not in out and "sampled: 5 of 15 " in out and "all passed" in out


def test_sampled_recheck_still_finds_a_cut_off_component(monkeypatch):
    # two sites in a 3-state source component: losing both cuts it off (found by the
    # exact count even when the pairs are only sampled)
    monkeypatch.setattr(recheck, "RECHECK_ALL", 1)
    monkeypatch.setattr(recheck, "RECHECK_SAMPLES", 1)
    s, n, edges = _blocks_and_groups(3, 0)
    sites = np.array([0, 1, 3, 4, 5, 6, 7, 8])  # block 0 has two, blocks 1 and 2 three
    c = recheck.recheck_design(s.A, sp.csr_array((n, 0)), sites, "elements", 2, None)
    assert c.ok is False and (0, 1) in c.failing and c.checked == 1 and c.total == 28
    assert not _secure_by_networkx(n, edges, sites)


@pytest.fixture
def net_pair(tmp_path):
    p = tmp_path / "pair.txt"  # two 3-cycles both ways: k = 2 needs all six states
    p.write_text("a b\nb a\nb c\nc b\na c\nc a\nd e\ne d\ne f\nf e\nd f\nf d\n")
    return str(p)
