"""JSON out: the one encoder behind the command line's ``--json`` and the web API.

orjson writes the contract dicts (and numpy arrays, should one reach it) straight to
UTF-8 bytes, several times faster than the standard library. The text is strict JSON
(RFC 8259): a non-finite float, which the contract never holds, is written as null,
never as ``NaN`` or ``Infinity``. Numbers are written in their shortest form that reads
back to the same double, as the standard library does, so a reader gets the same
numbers to the last bit.
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping

import orjson

__all__ = ["dumps", "plain"]

_OPTIONS = orjson.OPT_SERIALIZE_NUMPY | orjson.OPT_NON_STR_KEYS


def _default(value):
    """What orjson cannot write by itself: objects that write themselves (a
    ``json_fragment()`` method giving JSON bytes, such as the harmonic study's per-order
    tables), complex numbers and other numpy values."""
    fragment = getattr(value, "json_fragment", None)
    if fragment is not None:
        return orjson.Fragment(fragment())
    if isinstance(value, complex):
        return {"re": value.real, "im": value.imag}
    if hasattr(value, "tolist"):          # numpy arrays of a dtype orjson does not write
        return value.tolist()
    if hasattr(value, "item"):
        return value.item()
    raise TypeError(f"cannot write {type(value).__name__} as JSON")


def plain(value):
    """A copy of ``value`` made of dict, list, str, int, finite float, bool and None.

    Only the fallback of ``dumps`` uses it (text orjson refuses, such as a lone UTF-16
    surrogate in a name sent to the web API, or an integer beyond 64 bits).

    >>> plain({"a": float("nan"), "b": (1, 2.5), "c": 1j})
    {'a': None, 'b': [1, 2.5], 'c': {'re': 0.0, 'im': 1.0}}
    """
    if value is None or isinstance(value, (str, bool, int)):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, (dict, Mapping)):
        return {str(k): plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(v) for v in value]
    return plain(_default(value))


def dumps(data) -> bytes:
    """``data`` as compact UTF-8 JSON bytes (non-finite floats written as null).

    >>> dumps({"x": 1.5, "µ": "Ω", "bad": float("inf")}).decode()
    '{"x":1.5,"µ":"Ω","bad":null}'
    """
    try:
        return orjson.dumps(data, default=_default, option=_OPTIONS)
    except (orjson.JSONEncodeError, TypeError):
        # escapes what is not valid UTF-8 rather than failing on it
        return json.dumps(plain(data), ensure_ascii=True, allow_nan=False,
                          separators=(",", ":")).encode("ascii")
