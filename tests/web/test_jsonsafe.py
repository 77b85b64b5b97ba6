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
