"""Turn core results into strict JSON: no NaN, no infinity, no numpy types.

The contract promises JSON that every parser reads; ``json.dumps`` would happily
write ``NaN`` (not JSON at all), so each float is checked once here.
"""

from __future__ import annotations

import math
import re

from fastapi.responses import JSONResponse, Response

from ..jsonout import dumps, dumps_in_pieces


def jsonable(value):
    """A copy of ``value`` made of dict, list, str, int, float (finite), bool, None.

    Non-finite floats become None; numpy scalars and arrays are unwrapped through
    their ``item``/``tolist`` methods (the web layer never imports numpy).

    >>> jsonable({"a": float("nan"), "b": (1, 2.5)})
    {'a': None, 'b': [1, 2.5]}
    """
    if value is None or isinstance(value, (str, bool, int)):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {str(k): jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [jsonable(v) for v in value]
    if isinstance(value, complex):
        return {"re": jsonable(value.real), "im": jsonable(value.imag)}
    if hasattr(value, "tolist"):           # numpy arrays and numpy scalars
        return jsonable(value.tolist())
    if hasattr(value, "item"):
        return jsonable(value.item())
    raise TypeError(f"cannot send {type(value).__name__} as JSON")


_SURROGATE = re.compile("[\ud800-\udfff]")


class StrictJSONResponse(JSONResponse):
    """A JSON response written by the one encoder (``jsonout.dumps``): strict JSON,
    non-finite floats as null, numpy values unwrapped, without a cleaning copy first."""

    def render(self, content) -> bytes:
        return dumps(content)


def encoded(answer) -> bytes:
    """``answer`` as the bytes ``StrictJSONResponse`` would send (``jsonout.dumps``).

    The API's jobs call it in their worker thread (``api.run_job``), so that a big
    answer's encode (a 250 MB harmonic study) never runs on the event loop; written in
    pieces (``jsonout.dumps_in_pieces``) so that the loop gets the GIL between them.
    """
    return dumps_in_pieces(answer)


#: Bytes per body message of a ``SlicedResponse``.
SLICE = 1 << 20


class SlicedResponse(Response):
    """A response whose body goes to the server a slice (``SLICE`` bytes) at a time.

    Handed over whole, a body the socket cannot take at once is copied into the
    transport's buffer (and, on Python 3.11, sliced once more before that): a 150 MB
    answer held two or three times over. A slice at a time, the server's flow control
    waits for the socket between slices, so the body is held once. Same bytes, same
    headers (its Content-Length included) as a plain ``Response``.
    """

    async def __call__(self, scope, receive, send):
        body = self.body
        if scope["type"] != "http" or len(body) <= SLICE:
            await super().__call__(scope, receive, send)
            return
        await send({"type": "http.response.start", "status": self.status_code,
                    "headers": self.raw_headers})
        for start in range(0, len(body), SLICE):
            await send({"type": "http.response.body", "body": body[start:start + SLICE],
                        "more_body": start + SLICE < len(body)})
        if self.background is not None:
            await self.background()


class EncodedJSONResponse(SlicedResponse):
    """A JSON response whose bytes were written already (``encoded``, off the event
    loop): the same body and headers as ``StrictJSONResponse`` of the same answer."""

    media_type = JSONResponse.media_type

    def __init__(self, body: bytes, status_code: int = 200, headers=None):
        super().__init__(body, status_code=status_code, headers=headers)


def utf8(text: str) -> bytes:
    """``text`` as UTF-8, a lone surrogate (which UTF-8 cannot hold) as U+FFFD.

    The request models refuse lone surrogates; this is the last resort for any that an
    answer still quotes, so a stray one costs a replacement character, never a 500.

    >>> utf8("a\\ud800b")
    b'a\\xef\\xbf\\xbdb'
    """
    try:
        return text.encode("utf-8")
    except UnicodeEncodeError:
        return _SURROGATE.sub("\ufffd", text).encode("utf-8")
