"""Results as tables and in notebooks: one implementation for every result class.

Every public result dataclass mixes in :class:`ResultTables`, which gives it

* ``to_frame()`` — a pandas DataFrame (pandas is the optional extra ``frames``, imported
  only here, only when called);
* ``_repr_html_()`` — the key findings as a small HTML table, which Jupyter shows when the
  result is the last expression of a cell, and, when the result knows the system it was
  computed on, a small inline SVG map of that system with the result's roles marked;
* ``with_system(system)`` — remember that system (the public functions of the package
  root, ``netctl.minimum_inputs(...)`` and the other analyses, do this themselves).

The system is kept as a private attribute, not a dataclass field: it is not in
``to_dict()``, ``repr()`` or ``==``, and it is dropped when the result is pickled (results
travel between processes without their networks). The map itself is drawn by
:mod:`netctl.viz.small_map`, which this base module must not import: the package root
lends it through :data:`netctl._hooks.RENDERERS`.

A result class only *declares* what its rows are, through three class attributes:

``_frame_rows``
    ``"states"`` (one row per state, column ``state`` holds its name, so the table joins
    onto an asset table by name), ``"links"`` (one row per link of ``A``, columns
    ``source`` and ``target``: ``source`` influences ``target``), ``"elements"`` (one row
    per element of a grid, columns ``element``, its case ID, and ``kind``) or
    ``"summary"`` (one row of the scalar findings).
``_frame_sets``
    Fields that are sorted index arrays into the rows (``drivers``, ``critical``...):
    each becomes a boolean column of the same name.
``_frame_values``
    Fields with one value per row; ``_frame_labels`` maps a field of integer codes to the
    labels of the codes (``role`` -> ``("critical", "intermittent", "redundant")``).

A result that holds its system as a field (a before/after comparison holds both) names
that field in ``_map_system_field``; its notebook map needs no ``with_system``.

The scalar findings of ``to_dict()`` go to ``DataFrame.attrs`` of row tables.
:func:`result_columns` gives the same columns as plain lists and arrays, without pandas
(the CSV and Parquet writers in :mod:`netctl.io.tables` use it).
"""

from __future__ import annotations

import html
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from netctl._hooks import RENDERERS
from netctl._extras import require
from netctl._meta import CAUTION

__all__ = ["ResultTables", "attach_system", "result_columns", "result_frame", "result_html",
           "scalar_findings", "system_of"]

#: Private attribute names on a result: the system it was computed on, and cached
#: notebook map positions (both dropped on pickling).
_SYSTEM_ATTR = "_netctl_system"
_PRIVATE_ATTRS = (_SYSTEM_ATTR, "_netctl_map_cache")

_MAX_NAMES = 10
_MAX_ROWS = 30
_MAX_TEXT = 240
_CAUTION = CAUTION


class ResultTables:
    """Mixin for result dataclasses: :meth:`to_frame` and :meth:`_repr_html_`."""

    _frame_rows: str = "summary"
    _frame_sets: tuple[str, ...] = ()
    _frame_values: tuple[str, ...] = ()
    _frame_labels: Mapping[str, Sequence[str]] = {}
    _map_system_field: str = ""

    def to_frame(self) -> Any:
        """The result as a pandas DataFrame (needs the ``frames`` extra: pandas).

        One row per state (column ``state``), per link (``source``, ``target``) or one
        summary row, as the class declares; scalar findings in ``DataFrame.attrs``.
        """
        return result_frame(self)

    def _repr_html_(self) -> str:
        return result_html(self)

    def with_system(self, system: Any) -> Any:
        """Remember ``system`` as the network this result was computed on; returns ``self``.

        Only the notebook view uses it (the small map of :meth:`_repr_html_`); the
        result's fields, ``to_dict()`` and equality do not change. The analyses of the
        package root (``netctl.minimum_inputs(system)``...) call this themselves; results
        from the subpackages (``netctl.structural...``) do not.
        """
        attach_system(self, system)
        return self

    def __getstate__(self) -> dict[str, Any]:
        # pickles carry the fields only: the system (possibly large) stays behind
        state = dict(self.__dict__)
        for key in _PRIVATE_ATTRS:
            state.pop(key, None)
        return state


def attach_system(result: Any, system: Any) -> None:
    """Keep ``system`` on ``result`` (a frozen dataclass) as a private, non-field attribute."""
    object.__setattr__(result, _SYSTEM_ATTR, system)
    if "_netctl_map_cache" in getattr(result, "__dict__", {}):
        object.__delattr__(result, "_netctl_map_cache")


def system_of(result: Any) -> Any:
    """The system ``result`` was computed on, or ``None`` when it does not know."""
    kept = getattr(result, "__dict__", {}).get(_SYSTEM_ATTR)
    field = getattr(result, "_map_system_field", "")
    if kept is None and field:
        return getattr(result, field, None)
    return kept


def _to_dict(result: Any) -> dict[str, Any]:
    out = result.to_dict()
    return out if isinstance(out, dict) else {}


def _is_scalar(v: Any) -> bool:
    return v is None or isinstance(v, (bool, int, float, str, np.generic))


def scalar_findings(result: Any) -> dict[str, Any]:
    """The scalar entries of ``result.to_dict()`` (numbers, strings, booleans, None)."""
    return {k: (v.item() if isinstance(v, np.generic) else v)
            for k, v in _to_dict(result).items() if _is_scalar(v)}


def result_columns(result: Any) -> tuple[str, dict[str, Any]]:
    """``(rows, columns)``: the kind of rows and the table as name -> list or array.

    Needs no pandas. See the module docstring for how the columns are chosen.
    """
    rows = getattr(result, "_frame_rows", "summary")
    labels = getattr(result, "_frame_labels", {})
    cols: dict[str, Any] = {}
    if rows == "summary":
        return rows, {k: [v] for k, v in scalar_findings(result).items()}
    if rows == "states":
        names = list(result.state_names)
        count = len(names)
        cols["state"] = names
    elif rows == "elements":  # a grid's elements by their case IDs
        count = len(result.ids)
        cols["element"] = list(result.ids)
        cols["kind"] = list(result.kinds)
    elif rows == "links":
        names = list(result.state_names)
        src = np.asarray(result.sources, np.int64)
        dst = np.asarray(result.targets, np.int64)
        count = int(src.size)
        cols["source"] = [names[i] for i in src.tolist()]
        cols["target"] = [names[i] for i in dst.tolist()]
    else:  # a class declared something else: a programming error, not user input
        raise ValueError(f"_frame_rows must be 'states', 'links', 'elements' or 'summary', "
                         f"found {rows!r}.")
    for f in getattr(result, "_frame_sets", ()):
        idx = getattr(result, f)
        if idx is None:
            continue
        mask = np.zeros(count, bool)
        mask[np.asarray(idx, np.int64)] = True
        cols[f] = mask
    for f in getattr(result, "_frame_values", ()):
        vals = np.asarray(getattr(result, f))
        if vals.shape != (count,):
            raise ValueError(f"{type(result).__name__}.{f} has shape {vals.shape}, expected "
                             f"one value per row ({count}).")
        if f in labels:
            lab = list(labels[f])
            cols[f] = [lab[int(c)] for c in vals.tolist()]
        else:
            cols[f] = vals
    return rows, cols


def result_frame(result: Any) -> Any:
    """``result`` as a pandas DataFrame (see :class:`ResultTables`)."""
    pd = require("pandas", f"{type(result).__name__}.to_frame()")
    _, cols = result_columns(result)
    frame = pd.DataFrame(cols)
    frame.attrs.update(scalar_findings(result))
    frame.attrs["result"] = type(result).__name__
    return frame


def _short(text: str) -> str:
    return text if len(text) <= _MAX_TEXT else text[:_MAX_TEXT - 1] + "\u2026"


def _names_text(names: Sequence[Any]) -> str:
    head = ", ".join(str(x) for x in names[:_MAX_NAMES])
    more = len(names) - _MAX_NAMES
    return f"({len(names)}) {head}" + (f", \u2026 and {more} more" if more > 0 else "")


def _finding_text(v: Any) -> str | None:
    if _is_scalar(v):
        return "\u2014" if v is None else str(v.item() if isinstance(v, np.generic) else v)
    if isinstance(v, (list, tuple)) and all(_is_scalar(x) for x in v):
        return _names_text(list(v))
    if isinstance(v, Mapping) and v and all(_is_scalar(x) for x in v.values()):
        if len(v) <= _MAX_NAMES:
            return ", ".join(f"{k}: {x}" for k, x in v.items())
        kinds: dict[str, int] = {}
        for x in v.values():
            kinds[str(x)] = kinds.get(str(x), 0) + 1
        return f"({len(v)}) " + ", ".join(f"{k}: {c}" for k, c in sorted(kinds.items()))
    if isinstance(v, (list, tuple)):
        return f"({len(v)} entries; see to_dict())"
    return None


def result_html(result: Any) -> str:
    """Key findings of ``result`` as a small self-contained HTML fragment.

    Every entry of ``to_dict()`` that is a number, a string, a list of names or a
    mapping of scalars becomes a row (long lists are cut to their first ten names);
    all text is HTML-escaped.
    """
    d = _to_dict(result)
    title = type(result).__name__
    analysis = d.get("analysis")
    rows: list[str] = []
    for k, v in d.items():
        if k == "analysis":
            continue
        text = _finding_text(v)
        if text is None:
            continue
        rows.append(f"<tr><th style=\"text-align:left\">{html.escape(str(k))}</th>"
                    f"<td style=\"text-align:left\">{html.escape(_short(text))}</td></tr>")
        if len(rows) >= _MAX_ROWS:
            rows.append(f"<tr><td colspan=\"2\">\u2026 {len(d) - _MAX_ROWS} more entries in "
                        "to_dict()</td></tr>")
            break
    head = html.escape(title) + (f" <small>({html.escape(str(analysis))})</small>"
                                 if analysis else "")
    return (f"<div class=\"netctl-result\"><p><strong>{head}</strong></p>"
            f"<table>{''.join(rows)}</table>{_map_html(result)}"
            f"<p><small>{html.escape(_CAUTION)}</small></p></div>")


def _map_html(result: Any) -> str:
    """The small map of the result's system (empty without a system or a renderer)."""
    system = system_of(result)
    render = RENDERERS.get("result_map")
    if system is None or render is None:
        return ""
    try:
        body = render(result, system)
    except Exception as exc:  # a notebook view must never lose the findings above it
        body = (f"<p><small>No map: {html.escape(type(exc).__name__)}: "
                f"{html.escape(_short(str(exc)))}</small></p>")
    return f"<div class=\"netctl-map\">{body}</div>"
