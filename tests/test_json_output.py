"""The verbs' JSON: schema tag, compact or indented layout, the encoder (docs/JSON.md).

The fast encoder (orjson) is checked against Python's standard ``json`` module, the
reference: the same text must parse back to the same values.
"""

from __future__ import annotations

import io
import json
import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from netctl.cli import main
from netctl.commands import VERBS
from netctl.commands._json import LARGE_BYTES, SCHEMA_VERSIONS, encode, schema_tag

ROOT = Path(__file__).resolve().parents[1]
HEATING = str(ROOT / "networks" / "heating_loop.csv")

_json_values = st.recursive(
    st.none() | st.booleans() | st.integers(-2**63, 2**63 - 1)
    | st.floats(allow_nan=False, allow_infinity=False) | st.text(max_size=8),
    lambda inner: st.lists(inner, max_size=4) | st.dictionaries(st.text(max_size=6), inner,
                                                                max_size=4),
    max_leaves=20)


@settings(max_examples=200, deadline=None)
@given(_json_values, st.booleans())
def test_encoder_agrees_with_the_standard_library(value, pretty):
    text = encode(value, pretty=pretty)
    assert text.endswith("\n")
    assert json.loads(text) == json.loads(json.dumps(value))


def test_numpy_values_non_finite_floats_and_huge_integers():
    d = {"a": np.arange(3)[::2], "b": np.float32(1.5), "c": float("nan"), "d": 10**30,
         "e": (np.int64(4),), "f": np.array([1.0, np.inf])}
    got = json.loads(encode(d, pretty=False))
    assert got == {"a": [0, 2], "b": 1.5, "c": None, "d": 10**30, "e": [4],
                   "f": [1.0, None]}


def test_compact_when_large_indented_when_small_and_asked():
    small = {"x": [1, 2]}
    assert "\n  " in encode(small, pretty=True)
    assert encode(small, pretty=False) == '{"x":[1,2]}\n'
    large = {"x": list(range(LARGE_BYTES // 2))}
    assert "\n" not in encode(large, pretty=True).rstrip("\n")


class _Terminal(io.StringIO):
    def isatty(self):
        return True


@pytest.mark.parametrize("tty", [False, True])
def test_drivers_json_piped_is_compact_terminal_is_indented(monkeypatch, tty):
    out = _Terminal() if tty else io.StringIO()
    monkeypatch.setattr(sys, "stdout", out)
    assert main(["drivers", HEATING, "--json"]) == 0
    text = out.getvalue()
    assert (text.count("\n") > 3) == tty
    d = json.loads(text)
    assert d["schema"] == "netctl/drivers/2" == schema_tag("drivers")


def test_drivers_wiring_is_one_name_list_per_input(capsys):
    from netctl.io import read
    from netctl.structural import minimum_inputs

    main(["drivers", HEATING, "--json"])
    d = json.loads(capsys.readouterr().out)
    design = minimum_inputs(read(HEATING))
    assert d["wiring"] == [design.names(w) for w in design.wiring]
    assert d["n_inputs"] == len(d["wiring"])


def test_every_versioned_verb_exists():
    assert set(SCHEMA_VERSIONS) <= set(VERBS)
    assert all(isinstance(v, int) and v >= 1 for v in SCHEMA_VERSIONS.values())


def test_schema_is_documented():
    doc = (ROOT / "docs" / "JSON.md").read_text()
    for verb in VERBS:
        if verb in ("batch", "report"):
            continue
        assert f"`{schema_tag(verb)}`" in doc, verb
