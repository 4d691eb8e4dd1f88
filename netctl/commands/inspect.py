"""``netctl inspect FILE``: sizes, components, structural rank and minimum input counts."""

from __future__ import annotations

import argparse
from typing import Any

from netctl.commands._emit import emit
from netctl.commands._load import load_system
from netctl.commands._options import add_terms, analysis_step, caution, links_text, terms

__all__ = ["register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``inspect`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_terms(p)
    p.set_defaults(func=_cmd_inspect)


def _cmd_inspect(args: argparse.Namespace) -> int:
    from netctl.structural import summarize

    system = load_system(args)
    with analysis_step(args, system, "components, structural rank, minimum counts"):
        s = summarize(system)
    d = s.to_dict()
    d["file"] = args.file
    t = terms(args)
    text = (
        f"{args.file}: {t.of(s.n_states)}, {links_text(s.n_links)} ({s.n_self_loops} self-loops), "
        f"model {s.model}{', weighted' if s.weighted else ''}\n"
        f"  components: {s.n_weak_components} weak, {s.n_strong_components} strong "
        f"({s.n_source_components} source, {s.n_sink_components} sink); "
        f"{s.n_isolated} isolated {t.states}\n"
        f"  structural rank of A: {s.structural_rank} of {s.n_states}\n"
        f"  {t.inputs}: {s.n_inputs} (shared), {s.n_dedicated_inputs} (dedicated)\n"
        f"  {t.sensors}: {s.n_sensors} (shared), {s.n_dedicated_sensors} (dedicated)"
    )
    note = caution(args, engineering=False)
    if note:
        text += "\n  " + note
    emit(args, d, text)
    return 0
