"""n_D against mean degree: cavity lines and simulated points (Liu, Slotine & Barabasi,
Nature 473:167 (2011), Fig. 3, from memory: n_D falls with <k>; scale-free networks need
more drivers than Erdos-Renyi ones at the same <k>, the more so the smaller gamma; for
Erdos-Renyi n_D -> exp(-<k>/2) at large <k> [main text, from memory]).

Outside reference: simulation with our generators, whose degree laws are checked against
the published models in tests/test_generate.py. Tolerance per point: 4 standard errors
of the simulated mean + 3/sqrt(N) (finite size near the core transition; at N = 4000 the
largest deviation seen was 0.004 at <k> = 6).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from netctl.cli import main
from netctl.ensemble.curves import driver_fraction_curve
from netctl.errors import OptionError

KS = [1, 2, 4, 6, 8]


@pytest.mark.parametrize("family, gamma", [("erdos-renyi", None), ("scale-free", 2.2),
                                           ("scale-free", 3.0)])
def test_simulation_follows_the_cavity_line(family, gamma):
    n = 4000
    c = driver_fraction_curve(family, KS, n_states=n, samples=4, exponent=gamma or 2.5,
                              seed=2)
    tol = 4 * c.simulated_standard_error + 3 / math.sqrt(n)
    assert np.all(np.abs(c.simulated_mean - c.predicted) < tol), (c.predicted,
                                                                   c.simulated_mean)
    assert np.all(np.diff(c.predicted) < 0)  # n_D falls with <k>


def test_shape_of_the_published_figure():
    er = driver_fraction_curve("erdos-renyi", [4, 8, 14], n_states=200, samples=1)
    sf22 = driver_fraction_curve("scale-free", [4, 8, 14], n_states=5000, samples=1,
                                 exponent=2.2)
    sf30 = driver_fraction_curve("scale-free", [4, 8, 14], n_states=5000, samples=1,
                                 exponent=3.0)
    assert np.all(sf22.predicted > sf30.predicted) and np.all(sf30.predicted > er.predicted)
    # ER tail: exp(-<k>/2) within 2% at <k> = 14 (REFERENCES.md §2 table: 0.00093 vs 0.00091)
    assert er.predicted[-1] == pytest.approx(math.exp(-7), rel=0.03)


def test_curve_command_table_json_and_plot(tmp_path, capsys):
    out = tmp_path / "c.svg"
    assert main(["curve", "--family", "erdos-renyi", "--mean-degrees", "2,4", "--nodes",
                 "500", "--samples", "2", "--plot", str(out)]) == 0
    text = capsys.readouterr().out
    assert "0.456" in text and "standard error" in text and out.exists()
    assert b'netctl:cavity' in out.read_bytes()
    assert main(["curve", "--family", "scale-free", "--mean-degrees", "3", "--nodes", "500",
                 "--samples", "2", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    row = d["curves"][0]["rows"][0]
    assert set(row) == {"mean_degree", "predicted", "simulated_mean",
                        "simulated_standard_error"}
    assert main(["curve", "--mean-degrees", "two"]) == 2
    assert "--mean-degrees must be comma-separated numbers" in capsys.readouterr().err
    with pytest.raises(OptionError, match="unknown family 'lattice'"):
        driver_fraction_curve("lattice", [1])


def test_family_choices_of_the_command_are_the_library_families():
    import argparse

    from netctl.commands.curve import register
    from netctl.ensemble.curves import CURVE_FAMILIES

    parser = argparse.ArgumentParser()
    register(parser.add_subparsers(), argparse.ArgumentParser(add_help=False), "curve", "")
    sub = parser._subparsers._group_actions[0].choices["curve"]  # type: ignore[union-attr]
    family = next(a for a in sub._actions if a.dest == "family")
    assert list(family.choices) == list(CURVE_FAMILIES)
