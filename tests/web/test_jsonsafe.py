"""Strict JSON out, whatever the text holds (issue 9, item 4)."""

from __future__ import annotations

import json

from phasorbench.web.jsonsafe import StrictJSONResponse, utf8


def test_lone_surrogates_become_the_replacement_character():
    # Unicode 15.0, section 3.9 (D76, D92): a lone surrogate is no scalar value and
    # UTF-8 cannot encode it; U+FFFD is the standard's replacement character
    assert utf8("a\ud800b\udfff") == "a\ufffdb\ufffd".encode("utf-8")
    assert utf8("Ω 😀") == "Ω 😀".encode("utf-8")          # common practice: whole characters kept


def test_a_response_quoting_a_surrogate_is_valid_json():
    # RFC 8259, section 8.1: JSON text exchanged between systems is UTF-8
    body = StrictJSONResponse({"message": "no element named '\ud800'"}).body
    message = json.loads(body.decode("utf-8"))["message"]      # valid UTF-8 JSON text
    assert message.startswith("no element named '") and len(message) == len("no element named '?'")


def _sent(response) -> list[dict]:
    """The ASGI messages ``response`` sends for a plain HTTP request."""
    import asyncio
    messages = []

    async def send(message):
        messages.append(message)

    async def receive():
        return {"type": "http.request", "body": b"", "more_body": False}
    # its own thread: the browser tests' driver may hold a running loop in this one
    from concurrent.futures import ThreadPoolExecutor
    with ThreadPoolExecutor(1) as pool:
        pool.submit(asyncio.run, response({"type": "http", "method": "GET", "path": "/"},
                                          receive, send)).result()
    return messages


def test_a_big_body_is_sent_a_slice_at_a_time_with_the_same_bytes_and_headers():
    # ASGI HTTP spec ("http.response.body": more_body True while more follows); RFC 9110
    # section 8.6: Content-Length is the whole body's length however it is sent
    from fastapi.responses import Response

    from phasorbench.web.jsonsafe import SLICE, EncodedJSONResponse, SlicedResponse
    body = bytes(range(256)) * (5 * SLICE // 256) + b"tail"
    plain = _sent(Response(body, media_type="application/json"))
    sliced = _sent(EncodedJSONResponse(body))
    assert sliced[0] == plain[0]                      # same status and headers
    parts = sliced[1:]
    assert len(parts) == 6 and all(len(p["body"]) <= SLICE for p in parts)
    assert [p["more_body"] for p in parts] == [True] * 5 + [False]
    assert b"".join(p["body"] for p in parts) == body
    small = _sent(SlicedResponse(b"{}", media_type="text/csv"))
    assert len(small) == 2 and small[1]["body"] == b"{}"
