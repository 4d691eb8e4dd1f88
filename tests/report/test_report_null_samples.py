"""The report's null-model section draws fewer samples on large networks and says so.

Sample counts are netctl's own choice (common practice, no source); the check here is
that the count used is the count reported, against the result object of
``compare_to_null`` itself.
"""

from __future__ import annotations

import numpy as np

from netctl import StructuredSystem
from netctl.report.sections import (
    NULL_FEWER_ABOVE,
    NULL_SAMPLES,
    NULL_SAMPLES_LARGE,
    ReportContext,
    null_model_section,
)


def _random(n, seed):
    rng = np.random.default_rng(seed)
    e = np.unique(rng.integers(0, n, (2 * n, 2)), axis=0)  # no repeated links
    return StructuredSystem.from_edges(e[:, 0], e[:, 1], n)


def test_large_network_uses_fewer_samples_and_says_how_many():
    n = NULL_FEWER_ABOVE + 1
    sec = null_model_section(ReportContext(system=_random(n, 1)))
    assert sec is not None
    assert sec.data["n_samples"] == NULL_SAMPLES_LARGE < NULL_SAMPLES
    text = sec.blocks[0].text
    assert f"{NULL_SAMPLES_LARGE} random networks" in text
    assert f"Only {NULL_SAMPLES_LARGE} samples above {NULL_FEWER_ABOVE} states" in text
    assert "netctl compare --samples N" in text


def test_smaller_network_keeps_the_full_count():
    sec = null_model_section(ReportContext(system=_random(300, 2)))
    assert sec is not None and sec.data["n_samples"] == NULL_SAMPLES
    assert "Only" not in sec.blocks[0].text


def test_many_links_on_few_states_use_fewer_samples_or_none(monkeypatch):
    # a dense block: few states, many links; the count of links drives the samples too
    from netctl.report import sections

    monkeypatch.setattr(sections, "NULL_FEWER_LINKS_ABOVE", 500)
    s = _random(300, 3)
    assert s.n_states <= NULL_FEWER_ABOVE and s.n_links > 500
    sec = null_model_section(ReportContext(system=s))
    assert sec is not None and sec.data["n_samples"] == NULL_SAMPLES_LARGE
    assert f"Only {NULL_SAMPLES_LARGE} samples above 500 links" in sec.blocks[0].text
    monkeypatch.setattr(sections, "NULL_LINKS_LIMIT", 500)
    ctx = ReportContext(system=s)
    assert null_model_section(ctx) is None
    assert any("over 500 links; run netctl compare" in m for m in ctx.missing)
