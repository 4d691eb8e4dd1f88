"""``netctl convert IN OUT``: rewrite a network or system file in another format.

The input format comes from IN's name (or ``--format``), the output format from OUT's
name (or ``--to``); ``.gz`` on OUT compresses. ``--model`` applies a model first, so
``--model second-order`` writes the two-state-per-node pattern. The output is written
atomically: on any error no file (and no partial file) is left at OUT.
"""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import load_system
from netctl.commands._options import UsageError, links_text

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``convert`` verb."""
    from netctl.io import FORMATS

    p = subparsers.add_parser(name, parents=[common], help=help)
    # OUT is required, but checked by _cmd_convert, so that a missing OUT with --out given
    # (as `map --out` names its file) gets a message with the fix, not argparse's bare one
    p.add_argument("output", metavar="OUT", nargs="?", default=None,
                   help="file to write; its format comes from the name (.csv .toml .mtx "
                   ".npz .npy .matrix.csv .graphml .gml .json, optionally .gz) or from --to")
    p.add_argument("--to", choices=sorted(k for k, v in FORMATS.items() if v[1]),
                   default=None, help="output format (default: from OUT's name)")
    p.set_defaults(func=_cmd_convert)
    # the usage line shows OUT as required, as it is (not "[OUT]")
    p.usage = p.format_usage().removeprefix("usage: ").rstrip("\n").replace(" [OUT]", " OUT")


def _missing_output(args: argparse.Namespace) -> str:
    """The message for a convert without OUT: what is expected, what was found, the fix."""
    import shlex

    src = shlex.quote(args.file)
    if args.out:
        return (f"convert expects the file to write as its second positional argument "
                f"(netctl convert IN OUT), and found only the input {args.file!r} with "
                f"--out {args.out!r}; for convert, --out FILE means 'also write the result "
                "of the run as JSON to FILE', not the converted network. Write: netctl "
                f"convert {src} {shlex.quote(args.out)}")
    return (f"convert expects the file to write as its second positional argument "
            f"(netctl convert IN OUT), and found only the input {args.file!r}; OUT's name "
            f"gives its format. Write, e.g.: netctl convert {src} network.graphml")


def _cmd_convert(args: argparse.Namespace) -> int:
    from netctl.io import detect_format, write

    if args.output is None:  # before any work
        raise UsageError(_missing_output(args))
    system = load_system(args)
    fmt_in = args.format or detect_format(args.file)
    fmt_out = args.to or detect_format(args.output)
    write(system, args.output, fmt_out)
    result = {"file": args.file, "output": args.output, "format": fmt_in,
              "output_format": fmt_out, "model": system.model, "n_states": system.n_states,
              "n_links": system.n_links, "n_self_loops": system.n_self_loops,
              "n_inputs": system.n_inputs, "n_outputs": system.n_outputs,
              "weighted": system.weighted, "node_columns": sorted(system.nodes)}
    text = (f"{args.file} ({fmt_in}) -> {args.output} ({fmt_out}): {system.n_states} states, "
            f"{links_text(system.n_links)} ({system.n_self_loops} self-loops), "
            f"{system.n_inputs} inputs, {system.n_outputs} outputs, model {system.model}"
            f"{', weighted' if system.weighted else ''}")
    emit(args, result, text)
    return 0
