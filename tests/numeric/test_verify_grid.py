"""verify on grids (issue 25, item 6): swing weights at grid scale by the sparse
certificate, and no "confirm" when samples sit within rounding and no exact check ran.

The sparse certificate is Lin's condition (C.-T. Lin, IEEE TAC 19(3), 1974) with a
numerical witness: a nonsingular matched submatrix of [A B] and input accessibility.
"""

from __future__ import annotations

import pytest

import importlib
from netctl.cli import main

V = importlib.import_module("netctl.numeric.verify")
from netctl.io import read
from netctl.models import resolve_model

from ..io.test_grid_files import _case, _mfile, _row


def test_swing_weights_on_a_large_grid_use_the_certificate(capsys):
    f = _mfile("case2869pegase")  # 5738 states: above the dense limit of auto
    assert main(["verify", f, "--weights", "swing", "--inputs", "3", "--samples", "1"]) == 0
    out = capsys.readouterr().out
    assert "method: certificate" in out and "rank certified" in out
    assert "confirm the structural verdict" not in out


def test_uncertain_samples_without_exact_check_are_not_confirmed(tmp_path, monkeypatch):
    s = resolve_model(read(_case(tmp_path, _row(1, 2) + _row(2, 3))), None)
    s = s.with_inputs(["1:vel"])
    monkeypatch.setattr(V, "UNCERTAIN_DECADES", 1e9)  # every sample counts as uncertain
    v = V.verify(s, weights="swing", samples=2)  # swing: no exact arithmetic available
    text = " ".join(v.findings)
    assert "NOT CONFIRMED: 2 of 2 sample(s)" in text
    assert "confirm the structural verdict" not in text
    # with independent weights the exact check runs, settles them, and confirms
    w = V.verify(s, weights="independent", samples=2)
    assert all(x is not None for x in w.exact_dimensions)
    assert any("confirm the structural verdict" in x for x in w.findings)


@pytest.mark.parametrize("weights", ["independent", "swing"])
def test_small_grid_samples_agree(tmp_path, weights):
    s = resolve_model(read(_case(tmp_path, _row(1, 2) + _row(2, 3))), None)
    v = V.verify(s.with_inputs(["1:vel"]), weights=weights, samples=2)
    assert v.agrees


@pytest.mark.parametrize("extra, weights", [([], "swing"), (["--weights", "independent"],
                                                            "independent")])
def test_report_verifies_with_the_model_weights(tmp_path, capsys, extra, weights):
    import json

    f = _case(tmp_path, _row(1, 2) + _row(2, 3))
    out = tmp_path / "r.json"
    assert main(["report", str(f), "--inputs", "1", "--out", str(out)] + extra) == 0
    capsys.readouterr()
    sec = next(s for s in json.loads(out.read_text())["sections"] if s["key"] == "numeric")
    assert sec["data"]["weights"] == weights
    assert sec["data"]["model"].startswith("second-order")
