"""``netctl inspect FILE``: sizes, components, structural rank and minimum input counts."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._options import emit, load_system

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``inspect`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    p.set_defaults(func=_cmd_inspect)


def _cmd_inspect(args: argparse.Namespace) -> int:
    from netctl.structural import summarize

    system = load_system(args)
    s = summarize(system)
    d = s.to_dict()
    d["file"] = args.file
    text = (
        f"{args.file}: {s.n_states} states, {s.n_links} links ({s.n_self_loops} self-loops), "
        f"model {s.model}{', weighted' if s.weighted else ''}\n"
        f"  components: {s.n_weak_components} weak, {s.n_strong_components} strong "
        f"({s.n_source_components} source, {s.n_sink_components} sink); "
        f"{s.n_isolated} isolated states\n"
        f"  structural rank of A: {s.structural_rank} of {s.n_states}\n"
        f"  minimum inputs: {s.n_inputs} (shared), {s.n_dedicated_inputs} (dedicated)\n"
        f"  minimum sensors: {s.n_sensors} (shared), {s.n_dedicated_sensors} (dedicated)"
    )
    emit(args, d, text)
    return 0
