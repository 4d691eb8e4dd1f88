"""JSON output of the verbs: the schema tag, the layout and the encoder.

Every verb's ``--json`` (and JSON ``--out``) object starts with ``"schema":
"netctl/<verb>/<version>"``; the version goes up when a verb's shape changes (fields
renamed, removed or restructured; a new field does not count). The shapes are documented
in ``docs/JSON.md``.

Layout: indented (two spaces) for a person reading a terminal, compact (no spaces, one
line) when the output is piped or written to a file, or when it is large, because at
10^6 states indentation alone doubles the bytes and the time.

Encoder: orjson (a dependency: it serializes NumPy arrays natively and runs 10–20×
faster than the standard library's ``json``: 0.04 s instead of 0.5–0.8 s for the
``drivers`` result of a 10^6-state network, ``benchmarks/RESULTS.md``), with the standard
library as a fallback when orjson is missing or cannot encode an object (integers beyond
64 bits). Non-finite floats are written as ``null`` (JSON has no NaN or infinity; the
standard library's ``NaN`` tokens are not JSON).
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping, Sequence
from typing import Any

__all__ = ["SCHEMA_VERSIONS", "LARGE_BYTES", "schema_tag", "encode", "tagged"]

#: Schema version of each verb whose shape changed since the first release (others: 1).
#: drivers / sensors 2: ``wiring`` is a list of name lists (input k acts on
#: ``wiring[k]``), no longer one object per input.
SCHEMA_VERSIONS: dict[str, int] = {"drivers": 2, "sensors": 2}

#: Compact output from this many bytes on, even on a terminal (common practice, no
#: source: about a screenful of a thousand lines is what a person reads).
LARGE_BYTES = 64 * 1024


def schema_tag(verb: str) -> str:
    """``"netctl/<verb>/<version>"``."""
    return f"netctl/{verb}/{SCHEMA_VERSIONS.get(verb, 1)}"


def tagged(data: Any, verb: str | None) -> Any:
    """``data`` with ``"schema"`` first (dictionaries only; an existing tag is kept)."""
    if verb and isinstance(data, dict) and "schema" not in data:
        return {"schema": schema_tag(verb), **data}
    return data


def _default(o: Any) -> Any:
    import numpy as np

    if isinstance(o, np.generic):
        return o.item()
    if isinstance(o, np.ndarray):
        return o.tolist()
    if isinstance(o, Mapping):
        return dict(o)
    if isinstance(o, (Sequence, set, frozenset)) and not isinstance(o, (str, bytes)):
        return list(o)
    raise TypeError(f"not JSON serialisable: {type(o).__name__}")


def _finite(o: Any) -> Any:
    """The standard library's fallback: non-finite floats as ``None`` (as orjson)."""
    if isinstance(o, float):
        return o if math.isfinite(o) else None
    if isinstance(o, dict):
        return {k: _finite(v) for k, v in o.items()}
    if isinstance(o, (list, tuple)):
        return [_finite(v) for v in o]
    return o


def encode(data: Any, *, pretty: bool) -> str:
    """``data`` as JSON text ending in a line break; indented when ``pretty`` and small."""
    try:
        import orjson
    except ImportError:  # pragma: no cover - orjson is a dependency
        orjson = None  # type: ignore[assignment]
    if orjson is not None:
        opts = orjson.OPT_SERIALIZE_NUMPY | orjson.OPT_NON_STR_KEYS
        try:
            raw = orjson.dumps(data, default=_default, option=opts)
            if pretty and len(raw) < LARGE_BYTES:
                raw = orjson.dumps(data, default=_default, option=opts | orjson.OPT_INDENT_2)
            return raw.decode("utf-8") + "\n"
        except (TypeError, orjson.JSONEncodeError):
            pass  # e.g. an integer beyond 64 bits: the standard library handles it
    plain = json.loads(json.dumps(data, default=_default))  # every value a plain one
    text = json.dumps(_finite(plain), separators=(",", ":"), allow_nan=False)
    if pretty and len(text) < LARGE_BYTES:
        text = json.dumps(_finite(plain), indent=2, allow_nan=False)
    return text + "\n"
