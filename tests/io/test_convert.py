"""``netctl convert``: through the command-line entry point (exit codes, messages, files)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from netctl.cli import main
from netctl.io import read


@pytest.fixture
def net(tmp_path):
    p = tmp_path / "net.csv"
    p.write_text("source,target,weight\na,b,0.5\nb,c,2\nc,a,1\nd\n")
    return p


@pytest.mark.parametrize("suffix", [".toml", ".mtx", ".npz", ".npy", ".matrix.csv",
                                    ".graphml", ".gml", ".json", ".csv.gz"])
def test_convert_to_every_format(tmp_path, net, suffix, capsys):
    out = tmp_path / ("out" + suffix)
    assert main(["convert", str(net), str(out)]) == 0
    msg = capsys.readouterr().out
    assert "4 states, 3 links (0 self-loops)" in msg and "weighted" in msg
    a, b = read(net), read(out)
    assert b.n_states == 4 and np.allclose(sorted(b.A.data), sorted(a.A.data))


def test_convert_json_summary_and_model(tmp_path, net, capsys):
    out = tmp_path / "so.toml"
    assert main(["convert", str(net), str(out), "--model", "second-order", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["n_states"] == 8 and d["model"] == "second-order"
    assert d["output_format"] == "system"
    assert read(out).state_names[:2] == ("a:pos", "a:vel")


def test_convert_bad_input_exit_2_and_no_output(tmp_path, capsys):
    bad = tmp_path / "bad.csv"
    bad.write_text("a b\nb c d e\n")
    out = tmp_path / "out.mtx"
    assert main(["convert", str(bad), str(out)]) == 2
    err = capsys.readouterr().err
    assert "bad.csv:2: expected 'source target [weight]', found 4 columns" in err
    assert not out.exists()


def test_convert_unwritable_names_exit_2_and_no_partial_file(tmp_path, capsys):
    src = tmp_path / "g.json"
    src.write_text('{"nodes": [{"id": "pump 1"}, {"id": "tank"}], '
                   '"links": [{"source": "pump 1", "target": "tank"}]}')
    out = tmp_path / "out.csv"
    assert main(["convert", str(src), str(out)]) == 2
    assert "the state name 'pump 1' contains a separator" in capsys.readouterr().err
    assert not out.exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.csv")]


def test_convert_explicit_formats(tmp_path, net):
    out = tmp_path / "out.data"
    assert main(["convert", str(net), str(out), "--to", "mtx"]) == 0
    assert out.read_text().startswith("%%MatrixMarket")
    again = tmp_path / "again.csv"
    assert main(["convert", str(out), str(again), "--format", "mtx"]) == 0
    assert read(again).n_links == 3
