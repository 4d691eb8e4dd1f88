"""Links too many to draw one by one are drawn as their density, and none is left out.

The density image is a 2-D histogram of points taken evenly along every plain link
(NumPy's ``histogram2d`` is the reference for the binning); the checks: every sample of
every link lands in the image (its total is samples x links) and the counts equal one
``histogram2d`` of all the samples at once (the drawing bins them in chunks), the matched links are still drawn as lines, and the
legend says how the links are drawn.
"""

from __future__ import annotations

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.collections import LineCollection  # noqa: E402
from matplotlib.image import AxesImage  # noqa: E402

from netctl import StructuredSystem  # noqa: E402
from netctl.viz import network  # noqa: E402
from netctl.viz.style import MARKS  # noqa: E402


def _system(n=200, m=900, seed=4):
    rng = np.random.default_rng(seed)
    e = np.unique(rng.integers(0, n, (m, 2)), axis=0)
    e = e[e[:, 0] != e[:, 1]]
    return StructuredSystem.from_edges(e[:, 0], e[:, 1], n)


def test_density_counts_every_sample_of_every_link():
    rng = np.random.default_rng(1)
    pos = rng.random((50, 2))
    s, t = rng.integers(0, 50, 120_000), rng.integers(0, 50, 120_000)  # chunks of 50_000
    fig, ax = plt.subplots()
    counts = network._draw_density(ax, pos, s, t, MARKS["link"], bins=64, samples=24)
    assert counts.sum() == 24 * s.size  # no sample of any link falls outside the box
    lo, hi = pos.min(axis=0), pos.max(axis=0)
    pad = (hi - lo) * 0.06
    f = np.linspace(0.0, 1.0, 24)
    x = (pos[s, 0][:, None] + (pos[t, 0] - pos[s, 0])[:, None] * f).ravel()
    y = (pos[s, 1][:, None] + (pos[t, 1] - pos[s, 1])[:, None] * f).ravel()
    want, _, _ = np.histogram2d(y, x, bins=64, range=[[lo[1] - pad[1], hi[1] + pad[1]],
                                                      [lo[0] - pad[0], hi[0] + pad[0]]])
    assert np.array_equal(counts, want)  # the same as all samples binned at once
    plt.close(fig)


def test_a_map_with_many_links_draws_them_as_density(monkeypatch):
    monkeypatch.setattr(network, "_DENSITY_ABOVE", 100)
    s = _system()
    ax = network.draw_map(s)
    gids = {a.get_gid() for a in ax.get_children()}
    assert network.GID_PREFIX + "link_density" in gids
    assert network.GID_PREFIX + "link" not in gids  # no line per plain link
    assert any(isinstance(a, LineCollection) and a.get_gid() == network.GID_PREFIX + "chain"
               for a in ax.get_children())  # the control links are still lines
    assert any(isinstance(a, AxesImage) for a in ax.get_children())
    title = ax.figure.legends[0].get_title().get_text() if ax.figure.legends else \
        ax.get_legend().get_title().get_text()
    assert "drawn as their density" in title
    plt.close(ax.figure)


def test_below_the_limit_links_are_lines(monkeypatch):
    s = _system()
    ax = network.draw_map(s)
    gids = {a.get_gid() for a in ax.get_children()}
    assert network.GID_PREFIX + "link_density" not in gids
    plt.close(ax.figure)
