"""Result tables written as CSV and Parquet read back (with pandas, pyarrow and the
standard csv module as independent readers) equal to to_frame(), join by name, and are
safe to open in a spreadsheet (OWASP, "CSV Injection": cells starting with = + - @ tab CR
are prefixed with an apostrophe)."""

from __future__ import annotations

import csv
import sys
from pathlib import Path

import pytest

import netctl
import netctl.io as nio
import netctl.io.tables as tables
from netctl.errors import MissingExtraError, OptionError
from netctl.io.tables import write_table

pd = pytest.importorskip("pandas")
ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def plant():
    """networks/chemical_plant.toml (invented)."""
    return nio.read(ROOT / "networks" / "chemical_plant.toml")


@pytest.mark.parametrize("analysis", ["node_roles", "link_roles", "place_inputs"])
def test_csv_reads_back_as_the_frame(plant, analysis, tmp_path):
    result = getattr(netctl, analysis)(plant)
    out = tmp_path / "roles.csv"
    write_table(result, out)
    back = pd.read_csv(out, keep_default_na=False)
    pd.testing.assert_frame_equal(back, result.to_frame(), check_dtype=False)


@pytest.mark.parametrize("analysis", ["node_roles", "link_roles"])
def test_parquet_reads_back_as_the_frame(plant, analysis, tmp_path):
    pq = pytest.importorskip("pyarrow.parquet")
    result = getattr(netctl, analysis)(plant)
    out = tmp_path / "roles.parquet"
    write_table(result, out)
    back = pq.read_table(out).to_pandas()
    pd.testing.assert_frame_equal(back, result.to_frame(), check_dtype=False)


def test_csv_joins_onto_an_asset_table(plant, tmp_path):
    out = tmp_path / "roles.csv"
    write_table(netctl.node_roles(plant), out)
    assets = pd.DataFrame({"tag": list(plant.state_names), "area": range(plant.n_states)})
    joined = assets.merge(pd.read_csv(out), left_on="tag", right_on="state", how="left")
    assert joined["role"].notna().all()


def test_formula_cells_are_neutralised(tmp_path):
    s = netctl.StructuredSystem.from_named_edges(
        ["=HYPERLINK(\"x\")", "+1", "-cmd", "@SUM(A1)"], ["+1", "-cmd", "@SUM(A1)", "safe"])
    out = tmp_path / "roles.csv"
    write_table(netctl.node_roles(s), out)
    with open(out, newline="", encoding="utf-8") as fh:
        cells = [row[0] for row in csv.reader(fh)][1:]
    assert cells == ["'=HYPERLINK(\"x\")", "'+1", "'-cmd", "'@SUM(A1)", "safe"]


def test_failed_write_leaves_no_file(plant, tmp_path, monkeypatch):
    calls = {"n": 0}
    real = tables.csv_cell

    def boom(v):
        calls["n"] += 1
        if calls["n"] > 20:
            raise RuntimeError("disk full")
        return real(v)

    monkeypatch.setattr(tables, "csv_cell", boom)
    out = tmp_path / "roles.csv"
    with pytest.raises(RuntimeError):
        write_table(netctl.node_roles(plant), out)
    assert list(tmp_path.iterdir()) == []


def test_bad_format_and_object(plant, tmp_path):
    with pytest.raises(OptionError, match="name the file \\*.csv or \\*.parquet"):
        write_table(netctl.node_roles(plant), tmp_path / "roles.xlsx")
    with pytest.raises(OptionError, match="expected a netctl result"):
        write_table({"a": 1}, tmp_path / "x.csv")


def test_missing_pyarrow_names_the_extra(plant, tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "pyarrow", None)
    monkeypatch.setitem(sys.modules, "pyarrow.parquet", None)
    with pytest.raises(MissingExtraError, match=r'pip install "netctl\[parquet\]"'):
        write_table(netctl.node_roles(plant), tmp_path / "r.parquet")
    assert list(tmp_path.iterdir()) == []
