"""``netctl convert IN --out OUT`` (the map's way of naming its file) gets a message with
the fix, not argparse's bare "the following arguments are required: OUT" (issue 15).

For convert, OUT is the second positional argument and ``--out FILE`` means "also write
the run's result as JSON". The mistake is refused before any work (exit 2, no file
written); valid commands do what they did. Common practice, no source: a usage error
says what was expected, what was found and the fix (STYLE.md, errors).
"""

from __future__ import annotations

import json

import pytest

from netctl.cli import main


@pytest.fixture
def two(tmp_path):
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    return f


def _run(capsys, *argv: str) -> tuple[int, str, str]:
    try:
        code = main(list(argv))
    except SystemExit as exc:
        code = exc.code
    out = capsys.readouterr()
    return code, out.out, out.err


@pytest.mark.parametrize("order", ["after", "before"])
def test_out_instead_of_the_positional_output_says_the_fix(two, tmp_path, capsys, order):
    target = tmp_path / "t.graphml"
    argv = ["convert", str(two), "--out", str(target)] if order == "after" else \
        ["convert", "--out", str(target), str(two)]
    code, out, err = _run(capsys, *argv)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith("netctl: error: ")
    assert "second positional argument (netctl convert IN OUT)" in err  # what is expected
    assert f"found only the input {str(two)!r} with --out {str(target)!r}" in err  # found
    assert "also write the result of the run as JSON" in err  # why --out is not it
    assert err.rstrip().endswith(f"Write: netctl convert {two} {target}")  # the fix
    assert "the following arguments are required" not in err
    assert list(tmp_path.iterdir()) == [two]  # nothing written


def test_no_output_at_all_says_what_is_expected(two, tmp_path, capsys):
    code, out, err = _run(capsys, "convert", str(two))
    assert code == 2 and out == ""
    assert "second positional argument (netctl convert IN OUT)" in err
    assert f"found only the input {str(two)!r}" in err and "--out" not in err
    assert f"netctl convert {two} network.graphml" in err
    assert list(tmp_path.iterdir()) == [two]


def test_the_suggested_command_works(two, tmp_path, capsys):
    target = tmp_path / "t.graphml"
    _run(capsys, "convert", str(two), "--out", str(target))
    assert _run(capsys, "convert", str(two), str(target))[0] == 0
    assert target.read_text(encoding="utf-8").count("<edge ") == 2


def test_valid_commands_are_unchanged(two, tmp_path, capsys):
    """OUT positional with --out (the JSON result) still writes both; OUT alone writes
    the network and prints the one-line summary."""
    target, result = tmp_path / "t.gml", tmp_path / "r.json"
    code, out, err = _run(capsys, "convert", str(two), str(target), "--out", str(result))
    assert code == 0 and err == ""
    assert "3 states, 2 links" in out
    assert json.loads(result.read_text())["output"] == str(target)
    assert target.read_text().count("edge [") == 2
    code, out, _ = _run(capsys, "convert", str(two), str(tmp_path / "u.csv"))
    assert code == 0 and (tmp_path / "u.csv").exists()


def test_usage_still_shows_out_as_required(capsys):
    with pytest.raises(SystemExit):
        main(["convert", "--help"])
    text = capsys.readouterr().out
    assert "FILE OUT\n" in text and "[OUT]" not in text
