"""A ``# disturbances:`` / ``# regulated:`` line after the first link of an edge list is
refused (exit 2, file and line named, the fix said, no output file) instead of being read
as a plain comment, which silently left the marked nodes as states. Project rule: bad
input never loses data (DESIGN.md); common practice, no source."""

from __future__ import annotations

import pytest

import netctl.io as nio
import netctl.io._edgemarks as marks
from netctl.cli import main
from netctl.errors import NetworkFileError
from netctl.io._edgesmall import SMALL_BYTES


def _links(n: int) -> str:
    return "".join(f"x{i},x{i + 1}\n" for i in range(n))


@pytest.mark.parametrize("mark", ["disturbances", "regulated"])
@pytest.mark.parametrize("size", ["small", "large"])
def test_mark_after_first_link_is_refused_with_line_and_fix(tmp_path, capsys, mark, size):
    n = 3 if size == "small" else 4000
    body = "sun,x0\n" + _links(n)
    lines = body.splitlines(keepends=True)
    text = "".join(lines[:2]) + f"# {mark}: sun\n" + "".join(lines[2:])
    if mark == "regulated":
        text = text.replace("# regulated: sun", "# Regulated : z:x1")
    src = tmp_path / "net.csv"
    src.write_text(text)
    # the large file takes the compiled scanner, the small one the plain-Python reader
    assert (src.stat().st_size > SMALL_BYTES) == (size == "large")
    out = tmp_path / "out.graphml"
    code = main(["convert", str(src), str(out)])
    err = capsys.readouterr().err
    assert code == 2
    assert not out.exists()
    assert f"{src}:3:" in err and len(err.strip().splitlines()) == 1
    assert f"move the '# {mark}:' line above the first link" in err
    assert "Traceback" not in err


def test_moving_the_line_up_keeps_the_disturbance(tmp_path):
    p = tmp_path / "net.csv"
    p.write_text("# disturbances: sun\nsun,x0\n" + _links(3))
    s = nio.read(p)
    assert s.disturbance_names == ("sun",) and "sun" not in s.state_names


@pytest.mark.parametrize("chunk", [1, 5, 13, 1 << 22])
def test_late_mark_found_across_chunk_boundaries(tmp_path, monkeypatch, chunk):
    monkeypatch.setattr(marks, "_LATE_CHUNK", chunk)
    p = tmp_path / "net.csv"
    p.write_text("# invented plant\na,b\n" + _links(7) + "  #disturbances:a\nc,d")
    with pytest.raises(NetworkFileError, match=r"net\.csv:10: the '# disturbances:' line"):
        nio.read(p)
    p.write_text("# invented plant\na,b # disturbances: a (a trailing note, not a mark)\n"
                 + _links(7) + "# note\nc,d")
    assert "a" in nio.read(p).state_names


def test_mark_after_a_header_row_is_refused(tmp_path):
    p = tmp_path / "net.csv"
    p.write_text("source,target\n# disturbances: sun\nsun,a\na,b\n")
    with pytest.raises(NetworkFileError, match=r":2: the '# disturbances:' line comes after"):
        nio.read(p)
