"""The visual language stays readable in grey print and under colour-vision deficiency."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from matplotlib.colors import to_rgb

from netctl.viz.style import MARKS, SERIES

# Machado, Oliveira & Fernandes, "A physiologically-based model for simulation of color
# vision deficiency", IEEE TVCG 15(6):1291-1298, 2009, doi:10.1109/TVCG.2009.113:
# simulation matrices for severity 1.0, applied to linear RGB (values from memory; the
# test below checks that each row sums to 1, i.e. the matrices keep white white).
MACHADO = {
    "protanopia": np.array([[0.152286, 1.052583, -0.204868],
                            [0.114503, 0.786281, 0.099216],
                            [-0.003882, -0.048116, 1.051998]]),
    "deuteranopia": np.array([[0.367322, 0.860646, -0.227968],
                              [0.280085, 0.672501, 0.047413],
                              [-0.011820, 0.042940, 0.968881]]),
    "tritanopia": np.array([[1.255528, -0.076749, -0.178779],
                            [-0.078411, 0.930809, 0.147602],
                            [0.004733, 0.691367, 0.303900]]),
}


def _linear(rgb):
    c = np.asarray(rgb, float)  # IEC 61966-2-1 (sRGB) transfer function
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def _lab(lin):
    # sRGB (D65) -> XYZ -> CIELAB (CIE 15:2004)
    M = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722],
                  [0.0193, 0.1192, 0.9505]])
    xyz = M @ np.clip(lin, 0, 1) / np.array([0.95047, 1.0, 1.08883])
    f = np.where(xyz > (6 / 29) ** 3, np.cbrt(xyz), xyz / (3 * (6 / 29) ** 2) + 4 / 29)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


# the colour-carrying marks that can sit next to each other on one map
COLOURED = ["driver", "unreached", "dilation", "chain", "cycle", "fragile", "disturbed"]


def _colour(key):
    mk = MARKS[key]
    return mk.face if mk.face != "none" else mk.edge


def test_machado_rows_keep_white():
    for M in MACHADO.values():
        np.testing.assert_allclose(M.sum(axis=1), 1.0, atol=2e-6)


@pytest.mark.parametrize("vision", ["normal", *MACHADO])
def test_coloured_marks_stay_apart(vision):
    # rule of thumb (common practice, no source): CIELAB distance >= 12 tells two
    # colours apart at a glance; we ask it under every simulated deficiency
    labs = {}
    for key in COLOURED:
        lin = _linear(to_rgb(_colour(key)))
        if vision != "normal":
            lin = MACHADO[vision] @ lin
        labs[key] = _lab(lin)
    worst = min((float(np.linalg.norm(labs[a] - labs[b])), a, b)
                for a, b in itertools.combinations(COLOURED, 2))
    assert worst[0] >= 12.0, worst


def test_grey_print_is_carried_by_shape_and_fill():
    # every point mark differs from every other in marker, fill, hatch or outline style,
    # so colour never carries a meaning alone (greyscale print)
    points = {k: m for k, m in MARKS.items() if m.marker is not None}
    sig = {k: (m.marker, m.face == "none", m.hatch, m.linestyle,
               round(float(np.mean(to_rgb(m.face))), 1) if m.face != "none" else None)
           for k, m in points.items()}
    assert len(set(sig.values())) == len(sig), sig
    lines = {k: m for k, m in MARKS.items() if m.marker is None}
    lsig = {k: (m.linestyle, m.linewidth) for k, m in lines.items()}
    assert len(set(lsig.values())) == len(lsig), lsig


def test_chart_series_differ_in_marker_and_style():
    markers = [s[1] for s in SERIES]
    styles = [str(s[2]) for s in SERIES]
    assert len(set(markers)) == len(SERIES) and len(set(styles)) == len(SERIES)
