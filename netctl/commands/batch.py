"""``netctl batch DIR_OR_GLOB --task drivers|check|roles --out results.csv``.

One analysis over many network files (a folder of networks, contingency scenarios of one
plant), one CSV row a file. The files run as independent tasks on the executor of
:mod:`netctl.ensemble` (local processes by default, Dask on request). A file that cannot
be read or analysed gets its message (``file:line: ...``) in the ``error`` column and the
batch goes on; the exit status is then 2.
"""

from __future__ import annotations

import argparse
import glob
import json
import sys
import warnings
from pathlib import Path
from typing import Any


from netctl.commands._load import parse_names
from netctl.commands._options import (
    CAUTION,
    UsageError,
    add_executor_options,
    add_format,
    add_inputs,
    add_json,
    add_model,
    add_out,
    add_outputs,
    add_quiet,
    progress_enabled,
)
from netctl.errors import NetctlError

__all__ = ["register", "TASKS", "COLUMNS", "batch_row", "find_network_files"]

#: batch task -> what each row reports
TASKS: dict[str, str] = {
    "drivers": "minimum inputs (shared and dedicated) and the driver fraction",
    "check": "is the fixed input (and sensor) design of --inputs/--outputs structurally "
             "controllable (observable) in each network?",
    "roles": "how many states are critical / intermittent / redundant drivers and how many "
             "links are critical / ordinary / redundant",
}

#: batch task -> CSV columns between ``file, task, model`` and ``warnings, error``
COLUMNS: dict[str, list[str]] = {
    "drivers": ["n_states", "n_links", "n_self_loops", "n_inputs", "n_dedicated_inputs",
                "driver_fraction", "structural_rank_A", "n_source_components"],
    "check": ["n_states", "n_links", "n_inputs", "controllable", "structural_rank",
              "n_inaccessible", "controllable_dimension", "n_missing_inputs",
              "n_outputs", "observable", "n_missing_sensors"],
    "roles": ["n_states", "n_links", "n_inputs", "critical_states", "intermittent_states",
              "redundant_states", "critical_links", "ordinary_links", "redundant_links"],
}


#: Columns added before ``warnings, error`` when some file declares disturbances.
DISTURBANCE_COLUMNS: list[str] = ["n_disturbances", "disturbances"]


def _roles_module() -> Any:
    try:
        from netctl.structural import roles
    except ImportError:
        return None
    return roles


def register(subparsers: Any, common: argparse.ArgumentParser, name: str, help: str) -> None:
    """Add the ``batch`` verb (its own FILE argument: a folder or glob)."""
    p = subparsers.add_parser(name, help=help)
    p.add_argument("file", metavar="DIR_OR_GLOB",
                   help="a folder (its network files), a quoted glob such as 'cases/*.csv', "
                        "or one file")
    p.add_argument("--task", choices=list(TASKS), required=True,
                   help="drivers: minimum inputs; check: does the --inputs design control "
                        "each network; roles: counts of critical/intermittent/redundant "
                        "states and links")
    add_out(p, required=True,
            help="CSV to write (atomically): one row a file, problems in 'error'")
    add_inputs(p, default=None, what="check: states with a dedicated input, the same in "
               "every file")
    add_outputs(p, default=None, what="check: states with a dedicated sensor, the same in "
                "every file")
    add_format(p, help="file format of every file (default: from each file name; a folder "
                       "then contributes only files with a known suffix)")
    add_model(p, help="how each network becomes a state-space pattern (default first-order)")
    add_json(p, help="print the rows as JSON instead of the summary")
    add_quiet(p)
    add_executor_options(p)
    p.set_defaults(func=_cmd_batch)


def _known_suffix(name: str) -> bool:
    from netctl.io import FORMATS

    low = name.lower()
    if low.endswith(".gz"):
        low = low[:-3]
    return any(low.endswith(s) for _, _, suffixes in FORMATS.values() for s in suffixes)


def find_network_files(pattern: str, *, format: str | None = None
                       ) -> tuple[list[str], list[str]]:
    """Files to analyse and files skipped (unknown suffix in a folder), both sorted.

    A folder contributes its regular, non-hidden files (not recursively); without
    ``format`` only those with a known network-file suffix. A glob contributes every
    regular file it matches; a plain path names one file.
    """
    p = Path(pattern)
    if p.is_dir():
        entries = sorted(str(x) for x in p.iterdir() if x.is_file() and not x.name.startswith("."))
        if format is not None:
            return entries, []
        keep = [e for e in entries if _known_suffix(Path(e).name)]
        return keep, [e for e in entries if e not in set(keep)]
    if p.is_file():
        return [str(p)], []
    if any(ch in pattern for ch in "*?["):
        return sorted(m for m in glob.glob(pattern, recursive=True) if Path(m).is_file()), []
    raise UsageError(f"{pattern}: no such folder or file. Give a folder of network files, a "
                     "quoted glob such as 'cases/*.csv', or one file.")


def _fmt_warnings(caught: list[warnings.WarningMessage]) -> str:
    return "; ".join(dict.fromkeys(str(w.message) for w in caught))


def batch_row(path: str, seed: Any, shared: dict[str, Any]) -> dict[str, Any]:
    """One CSV row: ``shared['task']`` on the file ``path`` (an executor task).

    Never raises for a bad file: the message goes to ``error`` (``file:line: ...`` where
    the reader knows the line).
    """
    task = shared["task"]
    row: dict[str, Any] = {"file": path, "task": task,
                           "model": shared["model"] or "default"}
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            row.update(_analyse(path, shared))
            row["error"] = ""
        except (NetctlError, UsageError) as exc:
            msg = str(exc)
            row["error"] = msg if msg.startswith(str(path)) else f"{path}: {msg}"
        except MemoryError:
            row["error"] = f"{path}: out of memory; the network is too large for this worker."
        except Exception as exc:  # noqa: BLE001 - one bad file must not stop the batch
            row["error"] = (f"{path}: internal error {type(exc).__name__}: {exc} "
                            "(please report this with the file)")
    row["warnings"] = _fmt_warnings(caught)
    return row


def _analyse(path: str, shared: dict[str, Any]) -> dict[str, Any]:
    from netctl.io import read
    from netctl.models import resolve_model

    system = resolve_model(read(path, shared["format"]), shared["model"])
    out = _analyse_system(system, shared)
    if system.n_disturbances:  # reported apart: never states, never driven or sensed
        out["n_disturbances"] = system.n_disturbances
        out["disturbances"] = ";".join(system.disturbance_names)
    return out


def _analyse_system(system: Any, shared: dict[str, Any]) -> dict[str, Any]:
    task = shared["task"]
    n = system.n_states
    if task == "drivers":
        from netctl.structural import minimum_inputs

        d = minimum_inputs(system)
        return {"model": system.model, "n_states": n, "n_links": system.n_links,
                "n_self_loops": system.n_self_loops,
                "n_inputs": d.n_inputs, "n_dedicated_inputs": int(d.drivers.size),
                "driver_fraction": d.n_inputs / n if n else "",
                "structural_rank_A": d.matching_size,
                "n_source_components": d.n_source_components}
    if task == "check":
        from netctl.structural import controllability, observability

        out: dict[str, Any] = {"model": system.model, "n_states": n,
                               "n_links": system.n_links}
        if shared["inputs"] is not None:
            system = system.with_inputs(system.names_of(
                parse_names(system, shared["inputs"])))
            r = controllability(system)
            out.update(n_inputs=system.n_inputs, controllable=r.controllable,
                       structural_rank=r.structural_rank, n_inaccessible=int(r.inaccessible.size),
                       controllable_dimension=r.controllable_dimension,
                       n_missing_inputs=r.n_missing_inputs)
        if shared["outputs"] is not None:
            system = system.with_outputs(system.names_of(
                parse_names(system, shared["outputs"], what="--outputs")))
            o = observability(system, dimension=False)
            out.update(n_outputs=system.n_outputs, observable=o.controllable,
                       n_missing_sensors=o.n_missing_inputs)
        return out
    roles = _roles_module()
    nr = roles.node_roles(system)
    lr = roles.link_roles(system)
    nc, lc = nr.counts(), lr.counts()
    return {"model": system.model, "n_states": n, "n_links": system.n_links,
            "n_inputs": nr.n_inputs, "critical_states": nc["critical"], "intermittent_states": nc["intermittent"],
            "redundant_states": nc["redundant"], "critical_links": lc["critical"],
            "ordinary_links": lc["ordinary"], "redundant_links": lc["redundant"]}


def _cell(v: Any) -> Any:
    import numpy as np

    if v is None:
        return ""
    if isinstance(v, (bool, np.bool_)):
        return "true" if v else "false"
    if isinstance(v, float):
        return repr(v)
    return v


def _cmd_batch(args: argparse.Namespace) -> int:
    from netctl.ensemble import default_workers, run_tasks
    from netctl.io import atomic_write

    if args.task == "roles" and _roles_module() is None:
        raise UsageError("--task roles is not available in this installation (the node and "
                         "link roles module is missing); use --task drivers or check.")
    if args.task == "check" and args.inputs is None and args.outputs is None:
        raise UsageError("--task check needs --inputs (and/or --outputs): the states with a "
                         "dedicated input, the same names in every file ('a,b,c' or a file "
                         "with one name a line).")
    if args.task != "check" and (args.inputs is not None or args.outputs is not None):
        raise UsageError(f"--inputs/--outputs only apply to --task check, not "
                         f"--task {args.task}.")
    if args.workers is not None and args.workers < 1:
        raise UsageError(f"--workers must be at least 1, found {args.workers}.")
    if args.scheduler is not None and args.executor != "dask":
        raise UsageError(f"--scheduler {args.scheduler} needs --executor dask.")
    files, skipped = find_network_files(args.file, format=args.format)
    if not files:
        raise UsageError(f"{args.file}: no network files found"
                         + (f" (skipped {len(skipped)} with unknown suffixes, e.g. "
                            f"{Path(skipped[0]).name}; give --format to read them)"
                            if skipped else "") + ".")
    from netctl.io._common import check_outputs

    check_outputs([args.out], files)
    out_dir = Path(args.out).resolve().parent
    if not out_dir.is_dir():
        raise UsageError(f"cannot write {args.out}: the folder {out_dir} does not exist.")
    shared = {"task": args.task, "format": args.format, "model": args.model,
              "inputs": args.inputs, "outputs": args.outputs}
    from netctl.report.progress import count_progress

    rows = run_tasks(batch_row, files, seed=0, shared=shared, executor=args.executor,
                     workers=args.workers, scheduler=args.scheduler,
                     progress=count_progress(f"batch {args.task}, files",
                                             enabled=progress_enabled(args)))
    disturbed = [r for r in rows if r.get("n_disturbances")]
    # the disturbance columns appear only when some file declares disturbances, so a
    # batch of files without them writes exactly the columns it always did
    columns = (["file", "task", "model"] + COLUMNS[args.task]
               + (DISTURBANCE_COLUMNS if disturbed else []) + ["warnings", "error"])
    try:
        from netctl.io._common import SpreadsheetSafeWriter

        with atomic_write(args.out) as fh:
            w = SpreadsheetSafeWriter(fh)  # no formula injection
            w.writerow(columns)
            for row in rows:
                w.writerow([_cell(row.get(c)) for c in columns])
    except OSError as exc:
        raise UsageError(f"cannot write {args.out}: {exc.strerror or exc}; check that the "
                         "folder is writable.") from None
    failed = [r for r in rows if r["error"]]
    negative = [r for r in rows if not r["error"] and args.task == "check"
                and (r.get("controllable") is False or r.get("observable") is False)]
    if args.json:
        sys.stdout.write(json.dumps(rows, indent=2, default=_cell) + "\n")
    else:
        where = (f"{args.executor}" if args.executor != "local" else
                 f"local, {min(args.workers or default_workers(), len(files))} worker(s)")
        lines = [f"batch {args.task}: {len(files)} file(s) ({where}) -> {args.out}",
                 f"  ok: {len(files) - len(failed)}, failed: {len(failed)}"]
        if skipped:
            lines.append(f"  skipped {len(skipped)} file(s) with unknown suffixes: "
                         + ", ".join(Path(s).name for s in skipped[:5])
                         + (" ..." if len(skipped) > 5 else "") + " (give --format to read them)")
        if disturbed:
            lines.append(f"  disturbances (not states, never driven or sensed) in "
                         f"{len(disturbed)} file(s): " + ", ".join(
                             f"{Path(r['file']).name} ({r['n_disturbances']})"
                             for r in disturbed[:10])
                         + (" ..." if len(disturbed) > 10 else "")
                         + "; the CSV column 'disturbances' names them")
        if args.task == "check":
            lines.append(f"  designs that fail: {len(negative)}"
                         + (": " + ", ".join(Path(r['file']).name for r in negative[:10])
                            if negative else ""))
        for r in failed[:10]:
            lines.append(f"  FAILED {r['error']}")
        if len(failed) > 10:
            lines.append(f"  ... {len(failed) - 10} more failures in the 'error' column")
        if failed:
            lines.append("  the failed files have empty results; fix them and run again "
                         "(the other rows are complete).")
        if args.task == "check":
            lines.append("  " + CAUTION)
        sys.stdout.write("\n".join(lines) + "\n")
    if failed:
        return 2
    return 1 if negative else 0
