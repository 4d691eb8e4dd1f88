"""Damaged copies of the bundled example files, read through the command line.

Every reader is driven through ``netctl inspect FILE --json`` (the ``main`` function, in
this process, for speed) on mutations of a good file of its format: truncated, a bad
byte inserted, the header line twice, two columns swapped, empty, a byte-order mark, CRLF
line ends, a very long line, NaN / infinite weights. The outcome must be

* exit 0 with valid JSON on standard output (a changed file may be read: a warning says
  what was dropped or changed), or
* exit 2 with exactly one line ``netctl: error: FILE...`` on standard error,

never a traceback, never another exit status. A byte-order mark or CRLF line ends change
nothing: the summary is the one of the good file.

Property-based testing with hypothesis (common practice for parsers, no source). The
quick suite runs a few dozen files a format; the ``slow`` one a few thousand.
"""

from __future__ import annotations

import io
import json
import os
import random
import re
import shutil
import warnings
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from netctl.cli import main
from netctl.io import FORMATS, read, write

ROOT = Path(__file__).resolve().parents[2]
NETWORKS = ROOT / "networks"

#: suffix of each seed (the formats' own suffixes; pandapower is a .json)
SUFFIX = {"edgelist": ".csv", "edgelist-weighted": ".csv", "system": ".toml",
          "system-side": ".toml", "system-plant": ".toml", "matpower": ".m", "graphml": ".graphml",
          "graphml-small": ".graphml", "mtx": ".mtx", "npz": ".npz", "npy": ".npy",
          "matrix-csv": ".matrix.csv", "gml": ".gml", "json": ".json",
          "pandapower": ".json"}
BINARY = {"npz", "npy"}


def _build_seeds(folder: Path) -> dict[str, bytes]:
    """One good file a seed: the bundled networks, and the formats netctl writes made
    from the (weighted) chemical plant example by netctl's own writers."""
    from tests.hostile.test_fuzz import _pandapower_seed

    out = {"edgelist": (NETWORKS / "heating_loop.csv").read_bytes(),
           "system": (NETWORKS / "heating_loop.toml").read_bytes(),
           # the TOML description is good; its side edge list is damaged
           "system-side": (NETWORKS / "heating_loop.csv").read_bytes(),
           "system-plant": (NETWORKS / "chemical_plant.toml").read_bytes(),
           "matpower": (NETWORKS / "island_grid.m").read_bytes(),
           "graphml": (NETWORKS / "water_network.graphml").read_bytes(),
           "pandapower": _pandapower_seed().encode()}
    plant = read(NETWORKS / "chemical_plant.toml")
    rng = np.random.default_rng(3)
    A = plant.A.copy().astype(float)
    A.data = rng.uniform(0.5, 2.0, A.nnz).round(3) * rng.choice([-1.0, 1.0], A.nnz)
    weighted = type(plant).from_matrices(A, state_names=plant.state_names, weighted=True)
    for fmt, name in [("edgelist-weighted", "w.csv"), ("graphml-small", "s.graphml"),
                      ("mtx", "s.mtx"), ("npz", "s.npz"), ("npy", "s.npy"),
                      ("matrix-csv", "s.matrix.csv"), ("gml", "s.gml"), ("json", "s.json")]:
        p = folder / name
        with warnings.catch_warnings():  # Matrix Market and .npy keep no names
            warnings.simplefilter("ignore")
            write(weighted, p)
        out[fmt] = p.read_bytes()
    return out


SEEDS: dict[str, bytes] = {}


def seeds() -> dict[str, bytes]:
    if not SEEDS:
        import tempfile

        with tempfile.TemporaryDirectory() as d:
            SEEDS.update(_build_seeds(Path(d)))
    return SEEDS


MUTATIONS = ["truncate", "badbyte", "header2", "swap", "empty", "bom", "crlf", "longline",
             "nanweight", "splice"]
BAD_BYTES = [b"\x00", b"\xff", b"\x80", b"\xc3", b"\x1a", b'"', b"\\", b"{", b"<", b"#",
             b",", b"\r", b"'", b"]", b"-", b"e", b"\t", b"\x0b", b"\xef\xbb\xbf"]
NONFINITE = [b"nan", b"NaN", b"inf", b"-inf", b"Infinity", b"1e999", b"-1e400", b"nan(1)"]
_NUMBER = re.compile(rb"(?<![A-Za-z_0-9.])-?[0-9]+(\.[0-9]+)?([eE][-+]?[0-9]+)?(?![A-Za-z_0-9])")
_FIELD_SEP = re.compile(rb"[,\t ]+")


def _lines(data: bytes) -> list[bytes]:
    return data.split(b"\n")


def mutate(data: bytes, kind: str, rng: random.Random) -> bytes:
    """``data`` damaged in one way (``kind`` one of :data:`MUTATIONS`)."""
    if kind == "truncate":
        return data[:rng.randint(0, max(len(data) - 1, 0))]
    if kind == "badbyte":
        at = rng.randint(0, len(data))
        return data[:at] + rng.choice(BAD_BYTES) + data[at:]
    if kind == "header2":  # the first line that is not a comment, twice (or any line)
        lines = _lines(data)
        heads = [i for i, x in enumerate(lines) if x.strip() and not x.lstrip().startswith(
            (b"#", b"%"))]
        i = heads[0] if heads and rng.random() < 0.7 else rng.randrange(len(lines))
        return b"\n".join(lines[:i + 1] + [lines[i]] + lines[i + 1:])
    if kind == "swap":  # two fields of one line (or of every line) swapped
        lines = _lines(data)
        rows = [i for i, x in enumerate(lines) if len(_FIELD_SEP.split(x.strip())) >= 2]
        if not rows:
            return data
        chosen = rows if rng.random() < 0.3 else [rng.choice(rows)]
        for i in chosen:
            parts = re.split(rb"([,\t ]+)", lines[i])
            fields = list(range(0, len(parts), 2))
            if len(fields) >= 2:
                a, b = rng.sample(fields, 2)
                parts[a], parts[b] = parts[b], parts[a]
                lines[i] = b"".join(parts)
        return b"\n".join(lines)
    if kind == "empty":
        return rng.choice([b"", b"\n", b"   \n\n", b"\xef\xbb\xbf", b"\r\n"])
    if kind == "bom":
        return b"\xef\xbb\xbf" + data
    if kind == "crlf":
        return data.replace(b"\n", b"\r\n")
    if kind == "longline":
        lines = _lines(data)
        i = rng.randrange(len(lines))
        filler = rng.choice([b"a", b"9", b"x,", b" "]) * rng.choice([3000, 70_000])
        lines.insert(i, filler) if rng.random() < 0.5 else lines.__setitem__(
            i, lines[i] + filler)
        return b"\n".join(lines)
    if kind == "nanweight":
        found = list(_NUMBER.finditer(data))
        if not found:
            return data
        picked = rng.sample(found, min(len(found), rng.choice([1, 1, 3])))
        for m in sorted(picked, key=lambda m: -m.start()):  # right to left: offsets hold
            data = data[:m.start()] + rng.choice(NONFINITE) + data[m.end():]
        return data
    a, b = sorted((rng.randint(0, len(data)), rng.randint(0, len(data))))
    return data[:a] + rng.randbytes(rng.randint(0, 12)) + data[b:]


def _binary_nonfinite(fmt: str, rng: random.Random, folder: Path) -> bytes:
    """A matrix file (.npy / .npz) whose entries hold NaN or infinity."""
    A = np.zeros((5, 5))
    A[1, 0] = A[2, 1] = A[0, 2] = 1.5
    A[rng.randrange(5), rng.randrange(5)] = rng.choice([np.nan, np.inf, -np.inf])
    p = folder / ("m" + SUFFIX[fmt])
    if fmt == "npy":
        np.save(p, A)
    else:
        np.savez(p, A=A)
    return p.read_bytes()


def run_cli(argv: list[str]) -> tuple[int, str, str]:
    """``netctl ARGV`` in this process: (exit status, stdout, stderr)."""
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err), warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            code = main(argv)
        except SystemExit as exc:  # argparse
            code = exc.code if isinstance(exc.code, int) else 2
    return code, out.getvalue(), err.getvalue()


def _no_constants(x: str) -> float:
    raise ValueError(f"JSON holds {x}, which is not JSON")


def check_outcome(path: Path, data: bytes, run: Path | None = None) -> tuple[int, str]:
    """Write ``data`` to ``path``, run inspect on it (or on ``run``, a file that reads
    ``path``) and check the outcome: the message names one of the two."""
    path.write_bytes(data)
    run = run or path
    code, out, err = run_cli(["inspect", str(run), "--json"])
    assert "Traceback" not in err, err[-2000:]
    if code == 0:
        json.loads(out, parse_constant=_no_constants)  # valid JSON, no NaN / Infinity
        return code, out
    assert code == 2, f"exit {code}: {err[-600:]!r}"
    lines = [x for x in err.splitlines() if x.startswith("netctl: error:")]
    assert len(lines) == 1 and err.endswith("\n"), err[-600:]
    assert any(str(p) in lines[0] or p.name in lines[0] for p in (path, run)), lines[0][:400]
    return code, err


def _summary(out: str) -> dict:
    d = json.loads(out)
    d.pop("file", None)
    return d


def _one_case(fmt: str, kind: str, rng: random.Random, folder: Path) -> None:
    seed = seeds()[fmt]
    path = folder / ("fuzzed" + SUFFIX[fmt])
    run = None
    if fmt == "system":  # the loop's wiring is a side file
        shutil.copy(NETWORKS / "heating_loop.csv", folder / "heating_loop.csv")
    if fmt == "system-side":
        run = path
        path = folder / "heating_loop.csv"
        shutil.copy(NETWORKS / "heating_loop.toml", run)
    if kind == "nanweight" and fmt in BINARY:
        data = _binary_nonfinite(fmt, rng, folder)
    else:
        data = mutate(seed, kind, rng)
    code, text = check_outcome(path, data, run)
    if kind in ("bom", "crlf") and fmt not in BINARY:
        ok, good = check_outcome(path, seed, run)
        assert ok == 0, good
        assert code == 0 and _summary(text) == _summary(good), \
            f"{fmt}: {kind} changed the reading: {text[-400:]!r}"


@pytest.mark.parametrize("fmt", sorted(SUFFIX))
def test_damaged_examples_through_the_cli(fmt, tmp_path_factory):
    folder = tmp_path_factory.mktemp(f"cli-fuzz-{fmt}")

    @settings(max_examples=12 if fmt == "graphml" else 40, deadline=None,
              derandomize=True, suppress_health_check=list(HealthCheck))
    @given(kind=st.sampled_from(MUTATIONS), r=st.integers(0, 2**32 - 1))
    def run(kind: str, r: int) -> None:
        _one_case(fmt, kind, random.Random(r), folder)

    run()


@pytest.mark.slow
@pytest.mark.parametrize("fmt", sorted(SUFFIX))
def test_damaged_examples_through_the_cli_volume(fmt, tmp_path):
    """A few thousand damaged files a format, reproducible (random start fixed)."""
    rng = random.Random(f"netctl-cli-fuzz-{fmt}")
    for _ in range(300 if fmt == "graphml" else 2000):
        _one_case(fmt, rng.choice(MUTATIONS), random.Random(rng.getrandbits(32)), tmp_path)


def test_every_reader_has_a_seed():
    assert {k.split("-")[0] if k != "matrix-csv" else k for k in SUFFIX} == set(FORMATS)
    assert set(MUTATIONS) >= {"truncate", "badbyte", "header2", "swap", "empty", "bom",
                              "crlf", "longline", "nanweight"}


# ---------------------------------------------------------------------- side readers
#: The readers of the files a verb takes beside the network: (seed file name, its good
#: content, the command, with {F} for the damaged file and {D} for the folder).
SIDE = {
    "sites": ("sites.csv", b"state,cost\nboiler_temp,2.5\nsupply_header,1\npipe_north,3\n"
              b"fuel_valve,0.5\nstorage_tank,1\nbypass_valve,1\npipe_south,2\n",
              ["place", "{D}/heating_loop.csv", "--sites", "{F}", "--json"]),
    "candidates": ("cands.csv", b"name,cost,states\nv1,2,boiler_temp supply_header\n"
                   b"v2,1.5,pipe_north;pipe_south\nv3,1,fuel_valve\nv4,1,bypass_valve\n"
                   b"v5,1,storage_tank\nv6,4,outdoor_temp\n",
                   ["place", "{D}/heating_loop.csv", "--candidates", "{F}", "--json"]),
    "links": ("links.csv", b"source,target\nstorage_tank,pipe_north\nboiler_temp,pipe_south\n",
              ["whatif", "{D}/heating_loop.toml", "--add-links", "{F}", "--json"]),
    "names": ("inputs.txt", b"# drives\nfuel_valve\nbypass_valve, storage_tank\n",
              ["check", "{D}/heating_loop.csv", "--inputs", "{F}", "--json"]),
    "ties": ("ties.csv", b"from_system,from_state,to_system,to_state,kind\nplant,c,ctrl,p,state\n",
             ["join", "{D}/plant.csv", "{D}/ctrl.csv", "--ties", "{F}", "--inputs", "plant.a",
              "--json"]),
    "stations": ("st.toml", (NETWORKS / "stations" / "heating_loop_stations.toml").read_bytes(),
                 ["stations", "{D}/heating_loop.toml", "--stations", "{F}", "--json"]),
}


def _side_case(which: str, kind: str, rng: random.Random, folder: Path) -> None:
    name, seed, argv = SIDE[which]
    for f in ("heating_loop.csv", "heating_loop.toml"):
        shutil.copy(NETWORKS / f, folder / f)
    (folder / "plant.csv").write_text("source,target\na,b\nb,c\n")
    (folder / "ctrl.csv").write_text("source,target\np,q\np,r\n")
    path = folder / name
    path.write_bytes(mutate(seed, kind, rng))
    code, out, err = run_cli([a.replace("{D}", str(folder)).replace("{F}", str(path))
                              for a in argv])
    assert "Traceback" not in err, err[-2000:]
    if code in (0, 1):  # the verb ran: 1 is "the property does not hold"
        json.loads(out, parse_constant=_no_constants)
        return
    assert code == 2, f"exit {code}: {err[-600:]!r}"
    lines = [x for x in err.splitlines() if x.startswith("netctl: error:")]
    assert len(lines) == 1 and err.endswith("\n"), err[-600:]
    assert name in lines[0], f"{which} ({kind}): the message does not name {name}: {lines[0]}"


@pytest.mark.parametrize("which", sorted(SIDE))
def test_damaged_side_files_through_the_cli(which, tmp_path_factory):
    folder = tmp_path_factory.mktemp(f"cli-side-{which}")

    @settings(max_examples=30, deadline=None, derandomize=True,
              suppress_health_check=list(HealthCheck))
    @given(kind=st.sampled_from(MUTATIONS), r=st.integers(0, 2**32 - 1))
    def run(kind: str, r: int) -> None:
        _side_case(which, kind, random.Random(r), folder)

    run()


@pytest.mark.slow
@pytest.mark.parametrize("which", sorted(SIDE))
def test_damaged_side_files_through_the_cli_volume(which, tmp_path):
    """A thousand damaged side files a reader, reproducible (random start fixed)."""
    rng = random.Random(f"netctl-cli-side-{which}")
    for _ in range(1000):
        _side_case(which, rng.choice(MUTATIONS), random.Random(rng.getrandbits(32)), tmp_path)
