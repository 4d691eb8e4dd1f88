"""The shared command-line options keep their names and defaults in every verb.

Expected defaults are those of each verb before the options moved into
``netctl/commands/_options.py`` (main at edb1832); the CLI contract itself is the
project's own (no published source).
"""

from __future__ import annotations

import argparse
import io

import pytest

from netctl.cli import build_parser
from netctl.commands._emit import names_line
from netctl.commands._options import progress_enabled
from netctl.report.progress import Progress

# --model: None = the file's own model (first-order for a plain network, second-order for
# a grid; issue 25 item 3 changed the default on purpose)
FILE_DEFAULTS = {"format": None, "model": None, "json": False, "out": None,
                 "quiet": False}

CASES = [  # argv -> defaults of the shared options it takes
    pytest.param(["inspect", "f.csv"], FILE_DEFAULTS, id="inspect"),
    pytest.param(["drivers", "f.csv"], FILE_DEFAULTS, id="drivers"),
    pytest.param(["check", "f.csv"], {**FILE_DEFAULTS, "inputs": None, "outputs": None},
                 id="check"),
    pytest.param(["compare", "f.csv"], {**FILE_DEFAULTS, "samples": 100, "seed": None,
                                        "executor": "local", "workers": None}, id="compare"),
    pytest.param(["verify", "f.csv"], {**FILE_DEFAULTS, "inputs": None, "samples": 3,
                                       "seed": 0, "weights": "independent"}, id="verify"),
    pytest.param(["energy", "f.csv"], {"inputs": None, "seed": 0, "weights": None},
                 id="energy"),
    pytest.param(["modes", "f.csv"], {"inputs": None, "seed": 0, "weights": None},
                 id="modes"),
    pytest.param(["sweep", "f.csv"], {"inputs": None, "samples": 100, "seed": 0}, id="sweep"),
    pytest.param(["map", "f.csv"], {"inputs": None, "seed": 0}, id="map"),
    pytest.param(["report", "f.csv"], {"inputs": None, "seed": 0}, id="report"),
    pytest.param(["place", "f.csv"], {"sites": None, "candidates": None}, id="place"),
    pytest.param(["whatif", "f.csv"], {"inputs": None}, id="whatif"),
    pytest.param(["join", "f.csv"], {"inputs": None}, id="join"),
    pytest.param(["strong", "f.csv"], {"inputs": None}, id="strong"),
    pytest.param(["generate", "grid", "o.csv", "--nodes", "4"], {"seed": 0, "json": False,
                                                                  "out": None}, id="generate"),
    pytest.param(["batch", "d", "--task", "drivers", "--out", "r.csv"],
                 {"format": None, "model": None, "json": False, "inputs": None,
                  "outputs": None, "executor": "local"}, id="batch"),
]


@pytest.mark.parametrize("argv, expected", CASES)
def test_shared_options_keep_their_defaults(argv, expected):
    args = build_parser([argv[0]]).parse_args(argv)
    assert {k: getattr(args, k) for k in expected} == expected


def test_full_parser_and_one_verb_parser_agree():
    full = build_parser().parse_args(["verify", "f.csv", "--seed", "4", "--samples", "2"])
    one = build_parser(["verify"]).parse_args(["verify", "f.csv", "--seed", "4",
                                               "--samples", "2"])
    assert {k: v for k, v in vars(full).items() if k != "func"} == \
        {k: v for k, v in vars(one).items() if k != "func"}


def test_quiet_turns_progress_off_even_on_a_terminal(monkeypatch):
    from netctl.commands.sweep import progress_printer

    class Tty(io.StringIO):
        def isatty(self) -> bool:
            return True

    monkeypatch.setattr("sys.stderr", Tty())
    assert progress_printer("x") is not None
    assert progress_printer("x", quiet=True) is None
    quiet = argparse.Namespace(quiet=True)
    assert not Progress(1, stream=Tty(), enabled=progress_enabled(quiet)).enabled
    assert Progress(1, stream=Tty(), enabled=progress_enabled(argparse.Namespace(
        quiet=False))).enabled


def test_names_line_counts_what_is_left_out():
    assert names_line(["a", "b"]) == "a, b"
    assert names_line(["a", "b", "c"], limit=1) == "a, ... (2 more; --json lists all)"
    assert names_line(["a"], limit=1, total=5) == "a, ... (4 more; --json lists all)"
