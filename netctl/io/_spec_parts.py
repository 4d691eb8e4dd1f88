"""Parts of the system description reader (:mod:`netctl.io.system_spec`): the parsed TOML
document with line look-ups for error messages, key checks, the ``[stations]`` table, the
node table of state attributes, and the rule that confines a referenced coupling file to the
description's folder.
"""

from __future__ import annotations

import difflib
import math
import os
import re
import sys
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path
from typing import Any

import numpy as np

from netctl.io._common import file_error, read_text

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = ["OUTSIDE_ENV"]


def _fast_loads(text: str) -> dict[str, Any] | None:
    """The TOML document parsed by rtoml (compiled, several times faster than the
    standard library on a large grid's description), or None when rtoml is not
    installed (extra ``fast-toml``) or refuses the text: the standard library then
    parses it, so every error message keeps its line and column and a text either
    parser refuses is judged by the standard library."""
    try:
        import rtoml
    except ImportError:
        return None
    try:
        data = rtoml.loads(text)
    except Exception:  # noqa: BLE001 (any refusal: the standard parser decides)
        return None
    return data if isinstance(data, dict) else None


class _Doc:
    """The parsed TOML text with helpers to locate keys for error messages."""

    def __init__(self, path: str | os.PathLike[str]) -> None:
        self.path = path
        self.text = read_text(path)
        data = _fast_loads(self.text)
        if data is not None:
            self.data = data
            return
        try:
            self.data = tomllib.loads(self.text)
        except tomllib.TOMLDecodeError as exc:
            msg = str(exc)
            m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
            line = int(m.group(1)) if m else None
            if m is None and "end of document" in msg:
                line = self.text.count("\n") + 1
            col = f", column {m.group(2)}" if m else ""
            msg = re.sub(r"\s*\(at line \d+, column \d+\)", "", msg)
            raise file_error(path, line, f"not valid TOML{col}: {msg}. Check quotes, "
                             "brackets and '=' signs (see docs/FORMATS.md).") from None

    def line_of(self, *words: str) -> int | None:
        """Line of the first line mentioning every word (keys, names), or None."""
        pats = [re.compile(r"(?<![\w-])" + re.escape(w) + r"(?![\w-])") for w in words if w]
        for k, line in enumerate(self.text.splitlines(), start=1):
            code = line.split("#", 1)[0] if '"' not in line else line
            if all(p.search(code) for p in pats):
                return k
        return None

    def error(self, message: str, *words: str) -> Exception:
        return file_error(self.path, self.line_of(*words) if words else None, message)


def _check_keys(doc: _Doc, table: Mapping[str, Any], allowed: Sequence[str], where: str,
                *words: str) -> None:
    for key in table:
        if key not in allowed:
            close = difflib.get_close_matches(key, allowed, n=1)
            hint = f" Did you mean {close[0]!r}?" if close else ""
            raise doc.error(f"unknown key {key!r} in {where}; expected one of "
                            f"{', '.join(allowed)}.{hint}", key, *words)


def _name_list(doc: _Doc, value: Any, where: str, key: str) -> list[str]:
    if isinstance(value, str):
        return [value]
    if isinstance(value, list) and all(isinstance(v, str) for v in value):
        if len(set(value)) != len(value):  # each column entry once (a repeat summed to 2)
            dup = next(x for k, x in enumerate(value) if x in value[:k])
            raise doc.error(f"{where} lists the state {dup!r} twice; list each state once.",
                            key)
        return list(value)
    raise doc.error(f"{where} must be a state name or a list of state names such as "
                    f"[\"a\", \"b\"], found {value!r}.", key)


def _number(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


def _read_stations_table(doc: _Doc, table: Any, input_names: Sequence[str],
                         output_names: Sequence[str], consumed: set[str] = set()
                         ) -> dict[str, tuple[tuple[str, ...], tuple[str, ...]]]:
    """``[stations]``: ``name = { inputs = [...], outputs = [...] }``, checked: every item
    a known (external) input or output, and no item in two stations."""
    if not isinstance(table, dict):
        raise doc.error("[stations] must be a table of stations such as "
                        "area1 = { inputs = [\"u1\"], outputs = [\"y1\"] }.", "stations")
    out: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {}
    owner: dict[tuple[str, str], str] = {}
    pools = {"inputs": set(input_names), "outputs": set(output_names)}
    for st, val in table.items():
        if not isinstance(val, dict):
            raise doc.error(f"station {st!r} must be a table such as "
                            f"{{ inputs = [\"u1\"], outputs = [\"y1\"] }}, found {val!r}.", st)
        _check_keys(doc, val, ("inputs", "outputs"), f"station {st!r}", st)
        parts: dict[str, tuple[str, ...]] = {}
        for part in ("inputs", "outputs"):
            v = val.get(part, [])
            items = [v] if isinstance(v, str) else v
            if not (isinstance(items, list) and all(isinstance(x, str) for x in items)):
                raise doc.error(f"station {st!r}: {part} must be a list of names, found "
                                f"{v!r}.", st)
            kind = part[:-1]
            for x in items:
                if x not in pools[part]:
                    pool = sorted(pools[part])
                    close = difflib.get_close_matches(x, pool, n=2)
                    hint = f" Did you mean {', '.join(map(repr, close))}?" if close else ""
                    why = (" (it is fed by a signal tie, so no station drives it)"
                           if x in consumed else "")
                    raise doc.error(f"station {st!r} names the {kind} {x!r}, which is not an "
                                    f"{kind} of this system{why}.{hint} List it under "
                                    f"[{part}] first.", st, x)
                prev = owner.setdefault((part, x), st)
                if prev != st:
                    raise doc.error(f"stations {prev!r} and {st!r} overlap: both hold the "
                                    f"{kind} {x!r}; each {kind} belongs to at most one "
                                    "station.", st, x)
            if len(set(items)) != len(items):
                dup = next(x for k, x in enumerate(items) if x in items[:k])
                raise doc.error(f"station {st!r} lists the {kind} {dup!r} twice.", st, dup)
            parts[part] = tuple(items)
        out[st] = (parts["inputs"], parts["outputs"])
    return out


def _node_table(attrs: dict[str, dict[str, Any]], names: list[str]) -> dict[str, np.ndarray]:
    n = len(names)
    if not any(attrs.values()):
        return {}
    index = {s: i for i, s in enumerate(names)}
    keys: list[str] = []
    for row in attrs.values():
        keys.extend(k for k in row if k not in keys)
    rows = list(attrs.values())
    at = np.fromiter((index[s] for s in attrs), np.int64, len(rows))
    table: dict[str, np.ndarray] = {}
    for k in keys:  # column by column: one list of the rows' values, one array store
        if k in ("x", "y", "actuator_cost", "sensor_cost"):
            col = np.full(n, np.nan)
            col[at] = np.array([row.get(k, np.nan) for row in rows], float)
        elif k in ("actuator", "sensor"):
            col = np.ones(n, bool)  # not said: allowed
            col[at] = np.array([row.get(k, True) for row in rows], bool)
        else:
            col = np.empty(n, dtype=object)
            vals = np.empty(len(rows), dtype=object)
            vals[:] = [row.get(k) for row in rows]  # the objects as they are (None: absent)
            col[at] = vals
        table[k] = col
    return table


#: Environment variable that, set to 1, lets a description's coupling ``file`` name a
#: file outside the description's own folder (off by default: a downloaded description
#: must not make netctl read, and quote, other files on the machine).
OUTSIDE_ENV = "NETCTL_ALLOW_OUTSIDE_FILES"


def _confine(fpath: Path, path: object, given: str,
             line: int | None | Callable[[], int | None]) -> None:
    """Refuse a referenced file that resolves (through ``..`` and symlinks) outside the
    folder of the description ``path``, unless :data:`OUTSIDE_ENV` is 1 (``line``: the
    line for the message, or a function finding it, called only on a refusal)."""
    if os.environ.get(OUTSIDE_ENV, "").strip() == "1":
        return
    folder = Path(os.path.realpath(Path(str(path)).parent))
    target = Path(os.path.realpath(fpath))
    if target != folder and folder not in target.parents:
        if callable(line):
            line = line()
        raise file_error(path, line, f"the coupling file {given[:80]!r} lies outside the "
                         f"folder of the description; netctl reads only files beside it or "
                         f"below it. Move the file there, or set {OUTSIDE_ENV}=1 if you "
                         "trust this description.")
