"""Reading a Host header: the part of the guard that decides what 'our own name' is."""

from __future__ import annotations

import pytest

from phasorbench.web.guards import split_host


# RFC 9110, section 7.2 (Host = uri-host [":" port]) and RFC 3986, section 3.2.2
# (an IPv6 literal is written in brackets).
@pytest.mark.parametrize("value, expected", [
    ("localhost", ("localhost", None)),
    ("LocalHost:8000", ("localhost", 8000)),
    ("127.0.0.1:80", ("127.0.0.1", 80)),
    ("[::1]:8000", ("::1", 8000)),
    ("[::1]", ("::1", None)),
])
def test_split_host_reads_name_and_port(value, expected):
    assert split_host(value) == expected


@pytest.mark.parametrize("value", ["", "::1", "[::1", "[::1]x", "a:b", "host:99999999",
                                   "user@localhost", "local host", "a/b:80"])
def test_split_host_refuses_what_is_not_a_host(value):
    assert split_host(value) is None
