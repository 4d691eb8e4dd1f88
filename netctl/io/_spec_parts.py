"""The schema of a system description (:mod:`netctl.io.system_spec`; docs/FORMATS.md):
the parsed TOML document with line look-ups for error messages, key checks, and one
reader per table -- ``[states]`` and their attributes, ``[couplings] links``,
``[subsystems]``, ``[inputs]``/``[outputs]``/``[disturbances]``/``[regulated]``,
``[[ties]]``, ``[stations]`` -- each checking every entry and returning plain names,
numbers and arrays; plus the rule that confines a referenced coupling file to the
description's folder. Assembling the system from what they return is
:func:`netctl.io.system_spec.read_spec`'s job.
"""

from __future__ import annotations

import difflib
import json
import math
import os
import re
import sys
import warnings
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path
from typing import Any

import numpy as np

from netctl.io._common import file_error, read_text
from netctl.records import TIE_KINDS

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = ["OUTSIDE_ENV", "STATE_ATTRIBUTES"]


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

    def line_of(self, *words: str, section: str | None = None) -> int | None:
        """Line of the first line mentioning every word (keys, names), or None; with
        ``section``, the first such line after that section's ``[header]``."""
        pats = [re.compile(r"(?<![\w-])" + re.escape(w) + r"(?![\w-])") for w in words if w]
        head = re.compile(r"\s*\[\s*" + re.escape(section) + r"\s*\]") if section else None
        for k, line in enumerate(self.text.splitlines(), start=1):
            if head is not None:
                if head.match(line):
                    head = None
                continue
            code = line.split("#", 1)[0] if '"' not in line else line
            if all(p.search(code) for p in pats):
                return k
        return None

    def error(self, message: str, *words: str, section: str | None = None) -> Exception:
        return file_error(self.path, self.line_of(*words, section=section) if words else None,
                          message)


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


#: State attributes with a meaning (and a type check); any other scalar attribute is
#: kept in the node table as it is.
STATE_ATTRIBUTES: dict[str, str] = {
    "x": "number (map coordinate)",
    "y": "number (map coordinate)",
    "actuator": "true/false: may host an actuator",
    "actuator_cost": "number >= 0",
    "sensor": "true/false: may host a sensor",
    "sensor_cost": "number >= 0",
    "self": "true/false or a number: self-dynamics (damping, decay) and its weight",
    "disturbance": "true/false: the node is a disturbance (not a state); its couplings "
                   "are how it acts on states",
}

#: attribute names the reader checks or acts on (any other is kept as it is)
_MEANING = frozenset(STATE_ATTRIBUTES) | {"subsystem"}
_PLAIN = frozenset((str, bool, int, float))  # value types kept as they are

#: the sections of a description (``[[ties]]`` an array of tables, every other a table)
_SECTIONS = ("system", "states", "couplings", "inputs", "outputs", "disturbances", "regulated",
             "stations", "subsystems", "ties", "elements")

#: keys of a ``[[ties]]`` table. Kinds of tie (:data:`netctl.records.TIE_KINDS`): a
#: ``state`` tie is a link from a state of one subsystem to a state of another; a
#: ``signal`` tie feeds an output of one subsystem into an input of another (the input
#: is then no longer external).
_TIE_KEYS = ("from", "to", "kind", "weight")


def _read_states(doc: _Doc, states_t: Mapping[str, Any], state_id: Callable[[str], int]
                 ) -> tuple[dict[str, dict[str, Any]], dict[str, float], bool, list[str]]:
    """``[states]``: every state's attributes, checked against :data:`STATE_ATTRIBUTES`.

    Returns the node-table row of each state, the self-loop weights, whether a self-loop
    weight was given as a number, and the states marked ``disturbance = true`` (in file
    order). ``state_id`` numbers a state on first sight.
    """
    attrs: dict[str, dict[str, Any]] = {}
    self_w: dict[str, float] = {}
    any_self_weight = False
    kinds: list[str] = []  # nodes marked disturbance = true, in file order
    for s, a in states_t.items():
        if not isinstance(a, dict):
            raise doc.error(f"state {s!r} must be a table of attributes such as "
                            f"{{ x = 1.0, actuator = true }} (or {{}}), found {a!r}.", s)
        state_id(s)
        row: dict[str, Any] = {}
        special = _MEANING.intersection(a)
        if all(type(v) in _PLAIN and (type(v) is not float or math.isfinite(v))
               for v in a.values()):  # plain values: only the meaningful keys need checks
            row = dict(a)  # same key order; checked keys below are set in place
            if not special:
                attrs[s] = row
                continue
            for drop in ("self", "disturbance"):  # not node-table attributes
                row.pop(drop, None)
            items = [(k, a[k]) for k in a if k in special]
        else:
            items = list(a.items())
        for k, v in items:
            if k not in _MEANING and (isinstance(v, (str, bool)) or _number(v)):
                row[k] = v  # an attribute without a meaning, kept as it is
                continue
            if k in ("x", "y", "actuator_cost", "sensor_cost"):
                if not _number(v) or (k.endswith("cost") and v < 0):
                    raise doc.error(f"attribute {k!r} of state {s!r} must be a "
                                    f"{STATE_ATTRIBUTES[k]}, found {v!r}.", s, k)
                row[k] = float(v)
            elif k in ("actuator", "sensor"):
                if not isinstance(v, bool):
                    raise doc.error(f"attribute {k!r} of state {s!r} must be true or false, "
                                    f"found {v!r}.", s, k)
                row[k] = v
            elif k == "self":
                if isinstance(v, bool):
                    if v:
                        self_w[s] = 1.0
                elif _number(v) and v != 0:
                    self_w[s] = float(v)
                    any_self_weight = True
                else:
                    raise doc.error(f"attribute 'self' of state {s!r} must be true, false "
                                    f"or a nonzero finite number (its weight), found {v!r}.",
                                    s, k)
            elif k == "disturbance":
                if not isinstance(v, bool):
                    raise doc.error(f"attribute 'disturbance' of {s!r} must be true or false, "
                                    f"found {v!r}.", s, k)
                if v:
                    kinds.append(s)
            elif k == "subsystem":
                raise doc.error(f"state {s!r}: put states into subsystems in the "
                                "[subsystems] section, not with a 'subsystem' attribute.", s, k)
            elif isinstance(v, (str, bool)) or _number(v):
                row[k] = v
            else:
                raise doc.error(f"attribute {k!r} of state {s!r} has the type "
                                f"{type(v).__name__} ({v!r}); node attributes must be "
                                "numbers, strings or true/false.", s, k)
        attrs[s] = row
    return attrs, self_w, any_self_weight, kinds


def _read_links(doc: _Doc, links: Any, state_id: Callable[[str], int],
                path: str | os.PathLike[str]
                ) -> tuple[np.ndarray, np.ndarray, np.ndarray | None] | None:
    """``[couplings] links``: each ``[source, target]`` or ``[source, target, weight]``,
    checked. Returns the sources and targets (state ids, numbered by ``state_id``) and
    the weights (None when no link has one; a link without one then weighs 1.0, with a
    warning), or None when there are no links.
    """
    if not isinstance(links, list):
        raise doc.error("[couplings] links must be a list such as [[\"a\", \"b\"], "
                        "[\"b\", \"c\", 0.5]].", "links")
    if not links:
        return None
    ls, ld, lw = [], [], []
    some_w = False
    for item in links:
        ok = (isinstance(item, list) and len(item) in (2, 3)
              and all(isinstance(x, str) for x in item[:2])
              and (len(item) == 2 or _number(item[2])))
        if not ok:
            message = (f"each coupling must be [\"source\", \"target\"] or [\"source\", "
                       f"\"target\", weight], found {item!r}.")
            if isinstance(item, list):
                raise doc.error(message, *(x for x in item if isinstance(x, str)),
                                section="couplings")
            # a lone value: its line if one line of the links holds it alone
            alone = re.compile(r"^[\s,\[]*" + re.escape(json.dumps(item) if isinstance(
                item, str) else repr(item)) + r"[\s,\]]*(#.*)?$")
            found = [k for k, x in enumerate(doc.text.splitlines(), start=1) if alone.match(x)]
            raise file_error(doc.path, found[0] if len(found) == 1 else None, message)
        ls.append(state_id(item[0]))
        ld.append(state_id(item[1]))
        some_w |= len(item) == 3
        lw.append(float(item[2]) if len(item) == 3 else math.nan)
    wa = np.array(lw)
    if some_w and np.isnan(wa).any():
        k = int(np.isnan(wa).sum())
        warnings.warn(f"{path}: {k} coupling(s) without a weight were given the weight "
                      "1.0 because other couplings have weights.", stacklevel=3)
    return (np.array(ls, np.int64), np.array(ld, np.int64),
            np.where(np.isnan(wa), 1.0, wa) if some_w else None)


def _read_subsystems(doc: _Doc, subs_t: Mapping[str, Any], state_id: Callable[[str], int]
                     ) -> tuple[dict[str, tuple[str, ...]], dict[str, str]]:
    """``[subsystems]``: each a list of states or a table with ``states``; no state in
    two. Returns the subsystems (members in file order) and each member's subsystem."""
    subsystems: dict[str, tuple[str, ...]] = {}
    owner: dict[str, str] = {}
    for sub, val in subs_t.items():
        if isinstance(val, dict):
            _check_keys(doc, val, ("states",), f"subsystem {sub!r}", sub)
            val = val.get("states", [])
        members = _name_list(doc, val, f"subsystem {sub!r}", sub)
        for s in members:
            if s in owner:
                raise doc.error(f"state {s!r} is in two subsystems ({owner[s]!r} and "
                                f"{sub!r}); each state belongs to at most one.", s)
            owner[s] = sub
            state_id(s)
        subsystems[sub] = tuple(members)
    return subsystems, owner


def _read_signals(doc: _Doc, data: Mapping[str, Any], index: Mapping[str, int],
                  names: list[str]) -> tuple[dict[str, tuple[str, ...]],
                                             dict[str, tuple[str, ...]],
                                             dict[str, dict[str, tuple[str, ...]]]]:
    """``[inputs]``, ``[outputs]``, ``[disturbances]`` and ``[regulated]``: each entry a
    state name or a list of them, every one a declared state; a disturbance or regulated
    output never has a state's name. Returns the inputs, the outputs, and the other two
    by section name."""

    def known_states(vals: list[str], where: str, key: str) -> list[str]:
        for s in vals:
            if s not in index:
                close = difflib.get_close_matches(s, names, n=2)
                hint = f" Did you mean {', '.join(map(repr, close))}?" if close else ""
                raise doc.error(f"{where} names {s!r}, which is not a state.{hint} Declare "
                                "it under [states] or in a coupling.", key, s)
        return vals

    inputs: dict[str, tuple[str, ...]] = {}
    for u, v in data.get("inputs", {}).items():
        inputs[u] = tuple(known_states(_name_list(doc, v, f"input {u!r}", u),
                                       f"input {u!r}", u))
    outputs: dict[str, tuple[str, ...]] = {}
    for y, v in data.get("outputs", {}).items():
        outputs[y] = tuple(known_states(_name_list(doc, v, f"output {y!r}", y),
                                        f"output {y!r}", y))
    signals: dict[str, dict[str, tuple[str, ...]]] = {}
    for sec in ("disturbances", "regulated"):
        signals[sec] = {}
        for z, v in data.get(sec, {}).items():
            if z in index:
                raise doc.error(f"{sec} {z!r} has the name of a state; give it its own name "
                                "(or mark the node with disturbance = true).", z)
            signals[sec][z] = tuple(known_states(_name_list(doc, v, f"{sec} {z!r}", z),
                                                 f"{sec} {z!r}", z))
    return inputs, outputs, signals


def _read_ties(doc: _Doc, ties_t: Any, subsystems: Mapping[str, tuple[str, ...]],
               owner: Mapping[str, str], index: Mapping[str, int],
               inputs: Mapping[str, tuple[str, ...]], outputs: Mapping[str, tuple[str, ...]]
               ) -> tuple[list[tuple[str, str, str, str, str]], list[float | None], set[str],
                          tuple[np.ndarray, np.ndarray, np.ndarray | None] | None]:
    """``[[ties]]``: each joins two different subsystems, a ``state`` tie from a state of
    one to a state of the other, a ``signal`` tie from an output reading only states of
    one to an input acting only on states of the other (each input fed at most once).

    Returns the ties ``(from_subsystem, from_name, to_subsystem, to_name, kind)`` in file
    order, their weights (None when not given), the inputs the signal ties consume, and
    the links they add (sources, targets, weights or None), or None when there are none.
    """
    if not isinstance(ties_t, list) or not all(isinstance(t, dict) for t in ties_t):
        raise doc.error("ties are written as [[ties]] tables with from = [\"subsystem\", "
                        "\"name\"] and to = [\"subsystem\", \"name\"].", "ties")
    ties: list[tuple[str, str, str, str, str]] = []
    tie_w: list[float | None] = []
    consumed: set[str] = set()
    ts, td, tw = [], [], []
    for t in ties_t:
        _check_keys(doc, t, _TIE_KEYS, "[[ties]]", "ties")
        ends = []
        for key in ("from", "to"):
            v = t.get(key)
            if not (isinstance(v, list) and len(v) == 2 and all(isinstance(x, str) for x in v)):
                raise doc.error(f"a tie's {key!r} must be [\"subsystem\", \"name\"], found "
                                f"{v!r}.", key)
            if v[0] not in subsystems:
                raise doc.error(f"a tie names the subsystem {v[0]!r}, which is not declared "
                                f"under [subsystems] (declared: "
                                f"{', '.join(map(repr, subsystems)) or 'none'}).", v[0])
            ends.append((v[0], v[1]))
        kind = t.get("kind", "state")
        if kind not in TIE_KINDS:
            raise doc.error(f"a tie's kind must be one of {', '.join(TIE_KINDS)}, found "
                            f"{kind!r}.", "kind")
        (fs, fn), (us, un) = ends
        if fs == us:
            raise doc.error(f"the tie {fs}.{fn} -> {us}.{un} stays inside subsystem {fs!r}; "
                            "ties join two different subsystems (put links inside a "
                            "subsystem under [couplings]).", fn)
        weight = t.get("weight")
        if weight is not None and (not _number(weight) or weight == 0):
            raise doc.error(f"a tie's weight must be a nonzero finite number, found "
                            f"{weight!r}.", "weight")
        if kind == "state":
            for s, sub in ((fn, fs), (un, us)):
                if owner.get(s) != sub:
                    raise doc.error(f"the tie names state {s!r} of subsystem {sub!r}, but "
                                    f"{s!r} is not one of its states.", s)
            ts.append([index[fn]])
            td.append([index[un]])
        else:
            if fn not in outputs or any(owner.get(s) != fs for s in outputs[fn]):
                raise doc.error(f"a signal tie starts at {fs}.{fn}: {fn!r} must be an "
                                f"output under [outputs] reading only states of {fs!r}.", fn)
            if un not in inputs or any(owner.get(s) != us for s in inputs[un]):
                raise doc.error(f"a signal tie ends at {us}.{un}: {un!r} must be an input "
                                f"under [inputs] acting only on states of {us!r}.", un)
            if un in consumed:
                raise doc.error(f"the input {un!r} is fed by two signal ties; give each "
                                "input at most one.", un)
            consumed.add(un)
            a = [index[s] for s in outputs[fn]]
            b = [index[s] for s in inputs[un]]
            ts.append(np.repeat(a, len(b)).tolist())
            td.append(np.tile(b, len(a)).tolist())
        tw.append([1.0 if weight is None else float(weight)] * len(ts[-1]))
        ties.append((fs, fn, us, un, kind))
        tie_w.append(None if weight is None else float(weight))
    if not ts:
        return ties, tie_w, consumed, None
    return ties, tie_w, consumed, (np.array(sum(ts, []), np.int64),
                                   np.array(sum(td, []), np.int64),
                                   np.array(sum(tw, []), np.float64)
                                   if any(w is not None for w in tie_w) else None)


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
