"""JSON out: the one encoder behind the command line's ``--json`` and the web API.

orjson writes the contract dicts (and numpy arrays, should one reach it) straight to
UTF-8 bytes, several times faster than the standard library. The text is strict JSON
(RFC 8259): a non-finite float, which the contract never holds, is written as null,
never as ``NaN`` or ``Infinity``. Numbers are written in their shortest form that reads
back to the same double, as the standard library does, so a reader gets the same
numbers to the last bit.
"""

from __future__ import annotations

import io
import json
import math
from collections.abc import Mapping
from itertools import islice

import orjson

__all__ = ["dumps", "dumps_in_pieces", "plain"]

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


#: Containers with more entries than this are written a piece at a time by
#: ``dumps_in_pieces``; each piece is one orjson call of a few milliseconds at most.
PIECE = 512


def dumps_in_pieces(data) -> bytes:
    """The bytes of ``dumps(data)``, written by many short orjson calls, not one long one.

    orjson holds the GIL for the whole of a call: a 150 MB answer written in one call
    stops every other thread, the web server's event loop too, for its whole length,
    even when it runs in a worker thread. Between pieces the interpreter can hand the
    GIL over (its switch interval), so the loop keeps answering small requests. Plain
    dicts and lists longer than ``PIECE`` are split; anything else is written whole.
    When orjson refuses some text the whole answer goes through ``dumps``' fallback, so
    the bytes are always those of ``dumps``.

    The pieces go straight into one growing buffer (``io.BytesIO``, whose ``getvalue``
    hands its bytes over without a copy), so the answer is held once, never as a list
    of pieces beside their join.

    >>> big = {"n": list(range(2000)), "m": {str(i): [i, 0.5] for i in range(900)}}
    >>> dumps_in_pieces(big) == dumps(big)
    True
    """
    out = io.BytesIO()
    try:
        _pieces(data, out.write)
    except (orjson.JSONEncodeError, TypeError):
        return dumps(data)
    return out.getvalue()


def _one(value) -> bytes:
    return orjson.dumps(value, default=_default, option=_OPTIONS)


def _pieces(value, write) -> None:
    """``write`` the JSON of ``value`` in pieces (see ``dumps_in_pieces``).

    A long dict or list (more than ``PIECE`` entries) is written ``PIECE`` entries per
    call, whatever their size; a short one that holds long containers has each of its
    entries written on its own, the long ones again in pieces.
    """
    kind = type(value)
    if not _big(value):
        write(_one(value))
        return
    write(b"{" if kind is dict else b"[")
    entries = value.items() if kind is dict else value
    if len(value) > PIECE:
        entries = iter(entries)
        comma = False
        while chunk := kind(islice(entries, PIECE)):
            if comma:
                write(b",")
            write(memoryview(_one(chunk))[1:-1])
            comma = True
    else:
        for index, entry in enumerate(entries):
            if index:
                write(b",")
            if kind is dict:
                key, entry = entry
                write(memoryview(_one({key: 0}))[1:-2])  # the key as orjson writes it, ':'
            _pieces(entry, write)
    write(b"}" if kind is dict else b"]")


def _big(value) -> bool:
    """A plain dict or list worth splitting: more than ``PIECE`` entries, counting
    those of the containers it holds directly."""
    if type(value) is dict:
        values = value.values()
    elif type(value) is list:
        values = value
    else:
        return False
    if len(value) > PIECE:
        return True
    return sum(len(v) for v in values if type(v) in (dict, list)) > PIECE
