"""Writing ``.gz`` outputs: every message names the user's file, and a TOML description's
side edge list is named after the user's file (not after a scratch file)."""

from __future__ import annotations

import gzip
import os
import warnings

import numpy as np
import pytest

import netctl.io.system_writer as system_writer
from netctl import StructuredSystem
from netctl.errors import OutputFileError
from netctl.io import read, write


def _cycle(n: int, **kw) -> StructuredSystem:
    src = np.arange(n)
    return StructuredSystem.from_edges(src, (src + 1) % n, n, **kw)


@pytest.mark.parametrize("name", ["w.gml.gz", "w.mtx.gz", "w.json.gz"])
def test_writer_warning_names_the_users_file(tmp_path, name):
    s = StructuredSystem.from_matrices(np.eye(3), np.eye(3)[:, :1])
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        write(s, tmp_path / name)
    msgs = [str(w.message) for w in caught]
    assert msgs and all(m.startswith(f"{tmp_path / name}: ") for m in msgs), msgs
    assert sorted(os.listdir(tmp_path)) == [name]


def test_writer_error_names_the_users_file(tmp_path, full_disk):
    """A full disk while the uncompressed copy is written: the message names e.csv.gz
    (it named the scratch file), and nothing is left behind."""
    with pytest.raises(OutputFileError) as info:
        write(_cycle(3), tmp_path / "e.csv.gz")
    assert str(info.value) == (f"cannot write {tmp_path / 'e.csv.gz'}: the disk is full; free "
                               "some space or write to another disk. Nothing was written.")
    assert os.listdir(tmp_path) == []


def test_large_toml_gz_side_file_named_after_the_users_file(tmp_path, monkeypatch):
    monkeypatch.setattr(system_writer, "INLINE_LINKS", 5)
    s = _cycle(12)
    write(s, tmp_path / "plant.toml.gz")
    assert sorted(os.listdir(tmp_path)) == ["plant.edges.csv", "plant.toml.gz"]
    text = gzip.decompress((tmp_path / "plant.toml.gz").read_bytes()).decode()
    assert 'name = "plant"' in text and 'file = "plant.edges.csv"' in text
    back = read(tmp_path / "plant.toml.gz")
    assert back.state_names == s.state_names
    assert (back.A != s.A).nnz == 0
