"""Charts draw exactly the arrays they are given."""

from __future__ import annotations

import matplotlib
import numpy as np
import pytest

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

from netctl.errors import OptionError  # noqa: E402
from netctl.viz import (  # noqa: E402
    plot_attack_curves,
    plot_null_model,
    plot_role_composition,
    plot_weakest_modes,
    save_figure,
)


@pytest.fixture(autouse=True)
def _close():
    yield
    plt.close("all")


def test_attack_curves_draw_the_given_points(tmp_path):
    x = np.linspace(0, 1, 21)
    rnd, tgt = 0.2 + 0.8 * x ** 2, np.minimum(1, 0.2 + 1.6 * x)
    ax = plot_attack_curves({"random": (x, rnd, rnd - 0.05, rnd + 0.05),
                             "highest degree first": (x, tgt)})
    lines = {ln.get_label(): ln for ln in ax.get_lines()}
    np.testing.assert_array_equal(lines["random"].get_xydata(), np.column_stack([x, rnd]))
    np.testing.assert_array_equal(lines["highest degree first"].get_ydata(), tgt)
    # series differ by marker and line style, not colour alone (grey print)
    a, b = lines.values()
    assert a.get_marker() != b.get_marker() and a.get_linestyle() != b.get_linestyle()
    assert [c.get_gid() for c in ax.collections] == ["netctl:band:0"]
    save_figure(ax.figure, tmp_path / "attack.pdf")
    assert (tmp_path / "attack.pdf").read_bytes()[:4] == b"%PDF"


def test_attack_curves_reject_bad_data():
    with pytest.raises(OptionError, match="curve 'r': x has 3 values but y has 2"):
        plot_attack_curves({"r": ([0, 1, 2], [1, 2])})
    with pytest.raises(OptionError, match="at least one curve"):
        plot_attack_curves({})


def test_null_model_statistics_match_numpy():
    rng = np.random.default_rng(1)
    null = rng.poisson(40, size=200)
    ax = plot_null_model(52, null)
    z = (52 - null.mean()) / null.std(ddof=1)
    assert f"z = {z:.2f}" in ax.get_title(loc="left")
    # histogram counts add up to the sample
    heights = [p.get_height() for p in ax.patches if p.get_gid() == "netctl:null"]
    assert sum(heights) == null.size
    (line,) = [ln for ln in ax.get_lines() if ln.get_gid() == "netctl:observed"]
    assert line.get_xdata()[0] == 52


def test_role_composition_shares():
    ax = plot_role_composition({"grid": [3, 9, 18], "plant $A$": [0, 1, 1]})
    widths = {}
    for p in ax.patches:
        widths.setdefault(p.get_gid(), []).append(round(float(p.get_width()), 6))
    # bars listed per role, networks in the given order
    assert widths == {"netctl:role:0": [0.1, 0.0], "netctl:role:1": [0.3, 0.5],
                      "netctl:role:2": [0.6, 0.5]}
    assert [t.get_text() for t in ax.get_yticklabels()] == ["grid", "plant \\$A\\$"]
    with pytest.raises(OptionError, match="each network needs 3 counts"):
        plot_role_composition({"x": [1, 2]})


def test_weakest_modes_order_and_zero():
    lam = np.array([-1.0, -0.5 + 2j, -0.5 - 2j, -3.0, -0.1])
    val = np.array([0.3, 1e-4, 1e-4, 0.0, 2.0])
    ax = plot_weakest_modes(lam, val, k=3)
    labels = [t.get_text() for t in ax.get_yticklabels()]
    order = np.lexsort((np.abs(lam), val))[:3]  # numpy reference: smallest first
    assert labels == [f"λ = {'-3' if i == 3 else '-0.5 ' + ('+' if lam[i].imag > 0 else '-') + ' 2j'}"
                      for i in order]
    assert any("uncontrollable" in t.get_text() for t in ax.texts)
    with pytest.raises(OptionError, match="5 eigenvalues but 4 measure values"):
        plot_weakest_modes(lam, val[:4])


def test_null_model_histogram_has_whole_count_ticks_and_a_prediction_mark():
    # counts of randomized networks are whole numbers; the analytic value gets its own
    # mark (house rule for honest plots, common practice, no source)
    from netctl.viz import plot_null_model

    ax = plot_null_model(7, [3, 4, 4, 5, 5, 5, 6], prediction=4.4)
    ax.figure.canvas.draw()
    ticks = ax.get_yticks()
    assert np.all(ticks == np.round(ticks))
    gids = [a.get_gid() for a in ax.lines]
    assert "netctl:prediction" in gids and "netctl:observed" in gids
    assert "sd " in ax.get_title(loc="left") and "±" not in ax.get_title(loc="left")
    import matplotlib.pyplot as plt
    plt.close(ax.figure)
