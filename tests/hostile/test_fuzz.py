"""Fuzzed readers: every reader, given random bytes, truncations, flipped bytes, wrong
encodings (BOM, Latin-1, UTF-16, CRLF), huge lines and hostile names, either reads the
file or raises one :class:`~netctl.errors.NetctlError` whose message is one line naming
the file. Never another exception, never a hang on a small file.

Property-based testing with hypothesis (common practice for parsers, no source). The
quick suite runs a few hundred files per reader; the ``slow`` suite >= 10^4 per reader.
"""

from __future__ import annotations

import os
import random
import tempfile
import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from netctl import StructuredSystem
from netctl.errors import NetctlError
from netctl.io import FORMATS, read, write

SUFFIX = {"edgelist": ".csv", "mtx": ".mtx", "system": ".toml", "npz": ".npz", "npy": ".npy",
          "matrix-csv": ".matrix.csv", "graphml": ".graphml", "gml": ".gml", "json": ".json",
          "matpower": ".m", "pandapower": ".json"}
ROOT = Path(__file__).resolve().parents[2]
HOSTILE_NAMES = ["=cmd|' /C calc'!A0", "+1", "-x", "@SUM(1)", "a\x1b[31mred", "tab\there",
                 "é ü 中", "\u202eevil", "quote\"s", "<b>&amp;</b>", "x" * 300, "#hash",
                 "a,b", "nul\x00x", "cr\rx", "\ud800"]


def _pandapower_seed() -> str:
    """A small pandapower network document (pandas split tables), written by hand."""
    import json

    def table(columns, index, data):
        return {"_module": "pandas.core.frame", "_class": "DataFrame", "orient": "split",
                "_object": json.dumps({"columns": columns, "index": index, "data": data})}

    bus = table(["name", "vn_kv", "in_service"], [0, 1, 2], [[None, 110.0, True]] * 3)
    line = table(["from_bus", "to_bus", "length_km", "x_ohm_per_km", "in_service"], [0, 1],
                 [[0, 1, 1.0, 0.4, True], [1, 2, 2.0, 0.4, True]])
    return json.dumps({"_module": "pandapower.auxiliary", "_class": "pandapowerNet",
                       "_object": {"bus": bus, "line": line, "sn_mva": 100}}, indent=1)


def _seed_files() -> dict[str, bytes]:
    """One valid file per format, written by netctl's own writers."""
    rng = np.random.default_rng(7)
    A = (rng.random((6, 6)) < 0.35) * rng.uniform(0.5, 2.0, (6, 6))
    s = StructuredSystem.from_matrices(A, state_names=[f"s{i}" for i in range(6)],
                                       weighted=True)
    out = {}
    # formats netctl reads but does not write: an example file of our own invention
    out["matpower"] = (ROOT / "networks" / "island_grid.m").read_bytes()
    out["pandapower"] = _pandapower_seed().encode()
    with tempfile.TemporaryDirectory() as d:
        for fmt, suffix in SUFFIX.items():
            if fmt in out:
                continue
            p = os.path.join(d, "seed" + suffix)
            with warnings.catch_warnings():  # Matrix Market and .npy keep no names
                warnings.filterwarnings("ignore", ".*format holds no state names")
                write(s, p, fmt)
            with open(p, "rb") as fh:
                out[fmt] = fh.read()
    return out


SEEDS = _seed_files()


@st.composite
def hostile_bytes(draw, fmt: str) -> bytes:
    seed = SEEDS[fmt]
    kind = draw(st.sampled_from(["random", "truncate", "flip", "bom", "latin1", "utf16",
                                 "crlf", "hugeline", "name", "splice"]))
    if kind == "random":
        return draw(st.binary(max_size=400))
    if kind == "truncate":
        return seed[:draw(st.integers(0, len(seed)))]
    if kind == "flip":
        b = bytearray(seed)
        for _ in range(draw(st.integers(1, 8))):
            i = draw(st.integers(0, len(b) - 1))
            b[i] = draw(st.integers(0, 255))
        return bytes(b)
    if kind == "bom":
        return b"\xef\xbb\xbf" + seed
    if kind == "latin1":
        return seed.decode("utf-8", "replace").replace("s1", "s\xe9").encode("latin-1",
                                                                               "replace")
    if kind == "utf16":
        return seed.decode("utf-8", "replace").encode("utf-16")
    if kind == "crlf":
        return seed.replace(b"\n", b"\r\n")
    if kind == "hugeline":
        at = draw(st.integers(0, len(seed)))
        return seed[:at] + b"9" * draw(st.sampled_from([5000, 70_000])) + seed[at:]
    if kind == "name":
        name = draw(st.sampled_from(HOSTILE_NAMES))
        return seed.replace(b"s2", name.encode("utf-8", "surrogatepass"))
    a, b = sorted(draw(st.lists(st.integers(0, len(seed)), min_size=2, max_size=2)))
    return seed[:a] + draw(st.binary(max_size=40)) + seed[b:]


def _check(fmt: str, data: bytes, path: str) -> None:
    with open(path, "wb") as fh:
        fh.write(data)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            system = read(path, fmt)
        except NetctlError as exc:
            msg = str(exc)
            assert "\n" not in msg, msg[:300]
            assert os.path.basename(path) in msg or "--inputs" in msg, msg[:300]
            assert len(msg) < 2000, msg[:300]
            return
    assert isinstance(system, StructuredSystem)


def _fuzz(fmt: str, n: int):
    @settings(max_examples=n, deadline=None, derandomize=True,
              suppress_health_check=list(HealthCheck))
    @given(data=hostile_bytes(fmt))
    def run(data: bytes) -> None:
        _check(fmt, data, run.path)

    with tempfile.TemporaryDirectory() as d:
        run.path = os.path.join(d, "fuzzed" + SUFFIX[fmt])
        run()


@pytest.mark.parametrize("fmt", sorted(SUFFIX))
def test_fuzzed_reader_quick(fmt):
    _fuzz(fmt, 150)


def _mutant(rng: random.Random, fmt: str) -> bytes:
    """The same kinds of damage as :func:`hostile_bytes`, from a plain seeded generator
    (no shrinking: fast enough for 10^4 files per reader)."""
    seed = SEEDS[fmt]
    kind = rng.choice(["random", "truncate", "flip", "bom", "latin1", "utf16", "crlf",
                       "hugeline", "name", "splice"])
    if kind == "random":
        return rng.randbytes(rng.randint(0, 400))
    if kind == "truncate":
        return seed[:rng.randint(0, len(seed))]
    if kind == "flip":
        b = bytearray(seed)
        for _ in range(rng.randint(1, 8)):
            b[rng.randrange(len(b))] = rng.randrange(256)
        return bytes(b)
    if kind == "bom":
        return b"\xef\xbb\xbf" + seed
    if kind == "latin1":
        return seed.decode("utf-8", "replace").replace("s1", "s\xe9").encode("latin-1",
                                                                               "replace")
    if kind == "utf16":
        return seed.decode("utf-8", "replace").encode("utf-16")
    if kind == "crlf":
        return seed.replace(b"\n", b"\r\n")
    if kind == "hugeline":
        at = rng.randint(0, len(seed))
        return seed[:at] + b"9" * rng.choice([5000, 70_000]) + seed[at:]
    if kind == "name":
        return seed.replace(b"s2", rng.choice(HOSTILE_NAMES).encode("utf-8", "surrogatepass"))
    a, b = sorted((rng.randint(0, len(seed)), rng.randint(0, len(seed))))
    return seed[:a] + rng.randbytes(rng.randint(0, 40)) + seed[b:]


@pytest.mark.slow
@pytest.mark.parametrize("fmt", sorted(SUFFIX))
def test_fuzzed_reader_volume(fmt, tmp_path):
    """10^4 generated files per reader (issue 27, item 7), seeded."""
    rng = random.Random(f"netctl-fuzz-{fmt}")
    path = str(tmp_path / ("fuzzed" + SUFFIX[fmt]))
    for _ in range(10_000):
        _check(fmt, _mutant(rng, fmt), path)


def test_every_reader_is_fuzzed():
    assert set(SUFFIX) == set(FORMATS)
