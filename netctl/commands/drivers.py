"""``netctl drivers FILE`` and ``netctl sensors FILE``: minimum inputs (sensors) and
where to put them."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING, Any

import numpy as np

from netctl.commands._emit import SHOWN, emit, names_line
from netctl.commands._load import load_system
from netctl.commands._options import add_terms, analysis_step, caution, terms

if TYPE_CHECKING:
    from netctl.system import StructuredSystem

__all__ = ["barred_line", "not_eligible", "register"]


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``drivers`` or the ``sensors`` verb."""
    p = subparsers.add_parser(name, parents=[common], help=help)
    add_terms(p)
    if name == "sensors":
        p.add_argument("--dedicated", action="store_true",
                       help="each sensor reads exactly one state (default: may be shared)")
        p.set_defaults(func=_cmd_sensors)
    else:
        p.add_argument("--dedicated", action="store_true",
                       help="each input acts on exactly one state (default: inputs may be "
                            "shared)")
        p.set_defaults(func=_cmd_drivers)


def _cmd_drivers(args: argparse.Namespace, sensors: bool = False) -> int:
    from netctl.structural import minimum_inputs, minimum_sensors
    from netctl.structural.branches import state_labels  # a grid's states by bus

    system = load_system(args)
    with analysis_step(args, system, f"minimum {'sensors' if sensors else 'inputs'}"):
        design = (minimum_sensors if sensors else minimum_inputs)(system,
                                                                  dedicated=args.dedicated)

    # the minimum is a graph answer: say where it lands on a state the node table says
    # cannot host an actuator (sensor), rather than propose it silently
    barred = not_eligible(system, design.drivers, sensors=sensors)

    def full() -> dict[str, Any]:
        d = {**design.to_dict(), "file": args.file}
        if barred is not None:
            d["not_eligible"] = design.names(barred)
        if system.elements is not None:  # a grid: each driven (read) state's bus
            from netctl.structural.branches import state_buses

            at = state_buses(system)[design.drivers]
            d["sensor_buses" if sensors else "driver_buses"] = [
                system.elements.node_names[int(b)] if b >= 0 else None for b in at.tolist()]
        return d

    t = terms(args)
    noun = "sensors" if sensors else "inputs"
    kind = "dedicated" if args.dedicated else "shared"
    where = f"read {t.states}" if sensors else t.driven
    lines = [f"{args.file}: {t.of(design.n_states)}, model {design.model}",
             f"  {t.sensors if sensors else t.inputs} ({kind}): {design.n_inputs}"
             + (f" ({t.fraction} {design.n_inputs / design.n_states:.3g})"
                if design.n_states else ""),
             f"  {where} ({design.drivers.size}): "
             + names_line(state_labels(system, design.drivers[:SHOWN]),
                          total=design.drivers.size)]
    if barred is not None and barred.size:
        lines.append("  " + barred_line(system, barred, t, sensors=sensors,
                                             preferred=True))
    if not args.dedicated and design.n_inputs < design.drivers.size:
        lines.append(f"  wiring: {design.n_inputs} {noun if design.n_inputs != 1 else noun[:-1]}"
                     f"; see --json for which {t.states} "
                     f"each {noun[:-1]} {'reads' if sensors else 'acts on'}")
    lines.append(f"  (one minimum set of possibly many; ties broken by {t.state} order)")
    note = caution(args, engineering=False)
    if note:
        lines.append("  " + note)
    emit(args, full, "\n".join(lines))
    return 0


def not_eligible(system: StructuredSystem, states: np.ndarray, *,
                 sensors: bool) -> np.ndarray | None:
    """Those of ``states`` the node table marks as unable to host an actuator (column
    ``actuator`` false; ``sensor`` for sensors); None when the table has no such column."""
    eligible = system.nodes.get("sensor" if sensors else "actuator")
    if eligible is None or np.asarray(eligible).dtype != bool:
        return None
    states = np.asarray(states, np.int64)
    return states[~np.asarray(eligible, bool)[states]]


def barred_line(system: StructuredSystem, barred: np.ndarray, t: Any, *,
                sensors: bool, preferred: bool = False) -> str:
    """One line naming the proposed states the node table forbids, and the way out
    (``preferred``: the analysis already left as few of them as a maximum matching can)."""
    from netctl.structural.branches import state_labels

    return (f"not allowed by the node table ({'sensor' if sensors else 'actuator'} = false) "
            f"({barred.size}): "
            + names_line(state_labels(system, barred[:SHOWN]), total=barred.size)
            + ("; allowed states were preferred and no maximum matching avoids these"
               if preferred else "")
            + "; netctl place" + (" --sensors" if sensors else "")
            + " finds the cheapest design on the allowed sites")


def _cmd_sensors(args: argparse.Namespace) -> int:
    return _cmd_drivers(args, sensors=True)
