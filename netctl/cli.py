"""The ``netctl`` command: a thin layer that parses, calls the public API, renders, exits.

Exit status: 0 the analysis ran and the property holds; 1 it ran and the property does
not hold; 2 bad usage or bad input (a message naming the file, the line and the fix).

Further verbs live in :mod:`netctl.commands`, one module each exposing
``register(subparsers, common)``; they are discovered, so no shared file is edited to add
one. ``common`` is the parent parser with the options every verb shares (FILE,
``--format``, ``--model``, ``--json``, ``--out``).
"""

from __future__ import annotations

import argparse
import importlib
import json
import sys
import warnings
from collections.abc import Callable, Sequence
from typing import Any, NoReturn

import numpy as np

from netctl import __version__  # noqa: F401 (re-exported for --version)
from netctl.errors import NetctlError
from netctl.io import FORMATS, atomic_write, read, read_state_list
from netctl.models import MODELS, apply_model
from netctl.system import StructuredSystem

__all__ = ["main", "build_parser", "load_system", "emit", "CAUTION", "parse_names",
           "UsageError", "disturbance_summary"]

CAUTION = ("Caution: results concern a linear(ized) structural model, not the plant itself; "
           "a structurally controllable design can still need impractically large inputs. "
           "Safety-relevant decisions follow the operator's procedures, applicable codes and "
           "licensed engineers.")


class UsageError(Exception):
    """Bad command-line usage that argparse cannot see (exit status 2)."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:  # exit 2 with our prefix, no traceback
        self.print_usage(sys.stderr)
        print(f"netctl: error: {message}", file=sys.stderr)
        raise SystemExit(2)


def _common_parser() -> _Parser:
    common = _Parser(add_help=False)
    common.add_argument("file", metavar="FILE", help="network or system file "
                        "(edge list, Matrix Market, ...; see docs/FORMATS.md)")
    common.add_argument("--format", choices=sorted(FORMATS), default=None,
                        help="file format (default: from the file name)")
    common.add_argument("--model", choices=list(MODELS), default="first-order",
                        help="how a plain network becomes a state-space pattern "
                        "(default: first-order; self-loops adds self-dynamics to every state)")
    common.add_argument("--json", action="store_true", help="print the full result as JSON")
    common.add_argument("--out", metavar="FILE", default=None,
                        help="also write the full result as JSON to FILE (atomically)")
    return common


def load_system(args: argparse.Namespace) -> StructuredSystem:
    """Read ``args.file`` and apply ``args.model``.

    When the file declares disturbances, they are noted on ``args`` so that :func:`emit`
    reports them separately in every verb's output (they are never states, never driven
    and never sensed)."""
    system = apply_model(read(args.file, args.format), args.model)
    if system.n_disturbances:
        args._disturbances = disturbance_summary(system)
    return system


def disturbance_summary(system: StructuredSystem) -> dict[str, Any]:
    """JSON-ready description of a system's disturbances and regulated outputs."""
    return {"n_disturbances": system.n_disturbances,
            "disturbances": {w: system.disturbed_by(j)
                             for j, w in enumerate(system.disturbance_names)},
            "regulated": {z: system.names_of(system.H.indices[system.H.indptr[r]:
                                                              system.H.indptr[r + 1]])
                          for r, z in enumerate(system.regulated_names)},
            "note": "disturbances are exogenous (weather, feeds, utilities): not states, "
                    "never driven or sensed, not counted in minimum inputs or sensors"}


def _disturbance_text(info: dict[str, Any]) -> str:
    parts = [f"{w} -> {', '.join(on[:4])}{', ...' if len(on) > 4 else ''}"
             for w, on in list(info["disturbances"].items())[:_SHOWN]]
    more = info["n_disturbances"] - len(parts)
    return (f"  disturbances ({info['n_disturbances']}; not states, never driven or sensed): "
            + "; ".join(parts) + (f"; ... ({more} more; --json lists all)" if more > 0 else ""))


def parse_names(system: StructuredSystem, value: str, *, what: str = "--inputs") -> np.ndarray:
    """State indices from a comma-separated list or a file with one name a line."""
    names = read_state_list(value)
    if not names:
        raise UsageError(f"{what} names no state; give comma-separated state names or a "
                          "file with one name a line.")
    try:
        return system.index_of(names)
    except NetctlError as exc:
        raise type(exc)(f"{what}: {exc}") from None


def emit(args: argparse.Namespace, result: dict[str, Any] | Callable[[], dict[str, Any]],
         text: str) -> None:
    """Print ``text`` (or the JSON with ``--json``) and write ``--out`` atomically.

    ``result`` may be a callable returning the dictionary, so that the full JSON of a
    very large result is only built when ``--json`` or ``--out`` asks for it.
    """
    want_out = bool(getattr(args, "out", None))
    info = getattr(args, "_disturbances", None)
    if info is not None and text:
        head, _, rest = text.partition("\n")
        text = head + "\n" + _disturbance_text(info) + ("\n" + rest if rest else "")
    if args.json or want_out:
        data = result() if callable(result) else result
        if info is not None and isinstance(data, dict):
            data = {**data, "disturbances": info}
        payload = json.dumps(data, indent=2, sort_keys=False, default=_json_default) + "\n"
        if want_out:
            with atomic_write(args.out) as fh:
                fh.write(payload)
    sys.stdout.write(payload if args.json else text.rstrip("\n") + "\n")


def _json_default(o: Any) -> Any:
    if isinstance(o, np.generic):
        return o.item()
    if isinstance(o, np.ndarray):
        return o.tolist()
    raise TypeError(f"not JSON serialisable: {type(o).__name__}")


_SHOWN = 30


def _names_line(names: Sequence[str], limit: int = _SHOWN, total: int | None = None) -> str:
    """At most ``limit`` names, then how many more (``total`` when only a prefix of the
    names was built)."""
    total = len(names) if total is None else total
    shown = list(names[:limit])
    if total <= limit:
        return ", ".join(shown)
    return ", ".join(shown) + f", ... ({total - limit} more; --json lists all)"


# ---------------------------------------------------------------------- verbs
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


def _cmd_drivers(args: argparse.Namespace, sensors: bool = False) -> int:
    from netctl.structural import minimum_inputs, minimum_sensors

    system = load_system(args)
    design = (minimum_sensors if sensors else minimum_inputs)(system, dedicated=args.dedicated)

    def full() -> dict[str, Any]:
        return {**design.to_dict(), "file": args.file}

    noun = "sensors" if sensors else "inputs"
    kind = "dedicated" if args.dedicated else "shared"
    where = "read" if sensors else "driven"
    lines = [f"{args.file}: {design.n_states} states, model {design.model}",
             f"  minimum {noun} ({kind}): {design.n_inputs}",
             f"  {where} states ({design.drivers.size}): "
             + _names_line(design.names(design.drivers[:_SHOWN]), total=design.drivers.size)]
    if not args.dedicated and design.n_inputs < design.drivers.size:
        lines.append(f"  wiring: {design.n_inputs} {noun}; see --json for which states each "
                     f"{noun[:-1]} {'reads' if sensors else 'acts on'}")
    lines.append("  (one minimum set of possibly many; ties broken by state order)")
    emit(args, full, "\n".join(lines))
    return 0


def _cmd_sensors(args: argparse.Namespace) -> int:
    return _cmd_drivers(args, sensors=True)


def _cmd_check(args: argparse.Namespace) -> int:
    from netctl.structural import controllability, observability

    system = load_system(args)
    check_inputs = args.inputs is not None
    check_outputs = args.outputs is not None
    if not check_inputs and not check_outputs:
        # a system description may carry its own design
        check_inputs = system.n_inputs > 0
        check_outputs = system.n_outputs > 0
        if not (check_inputs or check_outputs):
            raise UsageError("check needs --inputs (controllability) and/or --outputs "
                             "(observability): comma-separated state names or a file with "
                             "one name a line (the file itself declares no inputs or "
                             "outputs).")
    if args.inputs is not None:
        system = system.with_inputs(parse_names(system, args.inputs))
    if args.outputs is not None:
        system = system.with_outputs(parse_names(system, args.outputs, what="--outputs"))
    reports = []
    if check_inputs:
        reports.append(controllability(system, dimension=not args.no_dimension))
    if check_outputs:
        reports.append(observability(system, dimension=not args.no_dimension))
    lines = [f"{args.file}: {system.n_states} states, model {system.model}"]
    ok = True
    for r in reports:
        ok &= r.controllable
        word = "controllable" if r.kind == "controllability" else "observable"
        what = "inputs" if r.kind == "controllability" else "sensors"
        dim = r.controllable_dimension
        lines.append(f"  structurally {word}: {'yes' if r.controllable else 'NO'}"
                     + (f" (generic {word} dimension {dim} of {r.n_states})"
                        if dim is not None and not r.controllable else ""))
        reasons = r.reasons()
        lines.extend(f"    - {reason}" for reason in reasons[:_SHOWN])
        if len(reasons) > _SHOWN:
            lines.append(f"    ... ({len(reasons) - _SHOWN} more reasons; --json lists all)")
        if not r.controllable:
            lines.append(f"  smallest fix: add {r.n_missing_inputs} dedicated {what} at "
                         + _names_line(r.names(r.fix[:_SHOWN]), total=r.fix.size))
    lines.append("  " + CAUTION)

    def full() -> dict[str, Any]:
        result: dict[str, Any] = {"file": args.file}
        if len(reports) == 1:
            result.update(reports[0].to_dict())
        else:
            for r in reports:
                result[r.kind] = r.to_dict()
            result["controllable"] = reports[0].controllable
            result["observable"] = reports[1].controllable
        return result

    emit(args, full, "\n".join(lines))
    return 0 if ok else 1


def build_parser() -> argparse.ArgumentParser:
    """The argument parser with every verb registered."""
    parser = _Parser(prog="netctl", description="Structural controllability analysis of "
                     "networked systems. Edge u -> v means 'state u influences state v' "
                     "(A[v, u] != 0).")
    parser.add_argument("--version", action="version", version=f"netctl {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    common = _common_parser()

    p = sub.add_parser("inspect", parents=[common], help="sizes, components, structural "
                       "rank and minimum input counts")
    p.set_defaults(func=_cmd_inspect)

    p = sub.add_parser("drivers", parents=[common], help="minimum inputs and where to put them")
    p.add_argument("--dedicated", action="store_true",
                   help="each input acts on exactly one state (default: inputs may be shared)")
    p.set_defaults(func=_cmd_drivers)

    p = sub.add_parser("sensors", parents=[common], help="minimum sensors and where to put them")
    p.add_argument("--dedicated", action="store_true",
                   help="each sensor reads exactly one state (default: may be shared)")
    p.set_defaults(func=_cmd_sensors)

    p = sub.add_parser("check", parents=[common], help="is a given input (sensor) design "
                       "structurally controllable (observable)? exit 0 yes, 1 no")
    p.add_argument("--inputs", metavar="NAMES|FILE", default=None,
                   help="states with a dedicated input: 'a,b,c' or a file, one name a line "
                   "(default: the inputs the file declares)")
    p.add_argument("--outputs", metavar="NAMES|FILE", default=None,
                   help="states with a dedicated sensor: 'a,b,c' or a file, one name a line "
                   "(default: the outputs the file declares)")
    p.add_argument("--no-dimension", action="store_true",
                   help="skip the generic controllable dimension (faster on huge failing cases)")
    p.set_defaults(func=_cmd_check)

    import pkgutil

    import netctl.commands

    for info in sorted(pkgutil.iter_modules(netctl.commands.__path__), key=lambda i: i.name):
        if not info.name.startswith("_"):
            importlib.import_module(f"netctl.commands.{info.name}").register(sub, common)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``netctl`` command; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help(sys.stderr)
        return 2
    func: Callable[[argparse.Namespace], int] = args.func
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            code = func(args)
        except (NetctlError, UsageError) as exc:
            _flush_warnings(caught)
            print(f"netctl: error: {exc}", file=sys.stderr)
            return 2
        except MemoryError:
            _flush_warnings(caught)
            print("netctl: error: out of memory; the network is too large for this machine "
                  "(see benchmarks/RESULTS.md for sizes that fit).", file=sys.stderr)
            return 2
        except KeyboardInterrupt:
            print("netctl: interrupted", file=sys.stderr)
            return 130
    _flush_warnings(caught)
    return code


def _flush_warnings(caught: list[warnings.WarningMessage]) -> None:
    for w in caught:
        print(f"netctl: warning: {w.message}", file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
