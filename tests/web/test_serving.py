"""Headers on every response and deadlines for slow clients (issue 9, item 13)."""

from __future__ import annotations

import asyncio
import json
import socket
import threading

import pytest

from phasorbench.web.serving import timed_protocol

from .conftest import CAP_CIRCUIT, free_port, make_app, run_async

SAFETY = 30          # seconds: only a hang reaches it; no speed is asserted


@pytest.mark.parametrize("method, path, body", [
    ("GET", "/", None), ("GET", "/docs", None), ("GET", "/static/js/api.js", None),
    ("GET", "/api/samples", None), ("GET", "/openapi.json", None),
    ("POST", "/api/check", {"netlist": CAP_CIRCUIT}), ("POST", "/api/solve", {"netlist": "x"}),
    ("GET", "/no/such/page", None)])
def test_every_response_says_nosniff_and_how_to_cache(api, method, path, body):
    # WHATWG Fetch, "X-Content-Type-Options" header (nosniff); RFC 9111, section 5.2.2
    # (no-store for answers computed per request, no-cache: revalidate before reuse)
    r = api.request(method, path, json=body) if body is not None else api.request(method, path)
    assert r.headers["x-content-type-options"] == "nosniff"
    wanted = "no-store" if path.startswith("/api/") or path == "/openapi.json" else "no-cache"
    assert r.headers["cache-control"] == wanted
    if path in ("/", "/docs"):
        assert "default-src 'self'" in r.headers["content-security-policy"]   # CSP Level 3


def test_guard_refusals_carry_the_headers_and_the_error_shape(api):
    # WHATWG Fetch (nosniff), and the API's one error shape for every refusal
    r = api.post("/api/check", json={"netlist": "x"}, headers={"host": "evil.example"})
    assert r.status_code == 400
    assert r.headers["x-content-type-options"] == "nosniff"
    assert set(r.json()["errors"][0]) == {"line", "column", "length", "severity", "message", "hint"}


def test_a_body_that_stalls_gets_408(bench_samples):
    # RFC 9110, section 15.5.9 (408 Request Timeout): the server gives up on a body
    app = make_app(bench_samples, body_timeout_s=0.2)
    sent = []

    async def scenario():
        parts = [{"type": "http.request", "body": b'{"netlist": "fre', "more_body": True}]

        async def receive():
            if parts:
                return parts.pop()
            await asyncio.Event().wait()         # the rest never comes

        async def send(message):
            sent.append(message)
        scope = {"type": "http", "asgi": {"version": "3.0"}, "http_version": "1.1",
                 "method": "POST", "scheme": "http", "path": "/api/check",
                 "raw_path": b"/api/check", "root_path": "", "query_string": b"",
                 "server": ("127.0.0.1", 8000), "client": ("127.0.0.1", 5000),
                 "headers": [(b"host", b"127.0.0.1:8000"),
                             (b"content-type", b"application/json")]}
        await asyncio.wait_for(app(scope, receive, send), SAFETY)
    run_async(scenario())
    start = next(m for m in sent if m["type"] == "http.response.start")
    assert start["status"] == 408
    assert (b"connection", b"close") in start["headers"]
    body = b"".join(m.get("body", b"") for m in sent if m["type"] == "http.response.body")
    assert "did not arrive in time" in json.loads(body)["errors"][0]["message"]


def test_a_head_sent_a_byte_at_a_time_is_cut_off(bench_samples):
    # common practice, no source ("slow headers"): a connection whose request head does not
    # arrive in time is closed, so slow clients cannot hold the server's connections
    import uvicorn
    port = free_port()
    app = make_app(bench_samples, port=port, header_timeout_s=0.3)
    server = uvicorn.Server(uvicorn.Config(app, host="127.0.0.1", port=port, log_level="warning",
                                           access_log=False,
                                           http=timed_protocol(app.state.settings)))
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    try:
        for _ in range(SAFETY * 50):
            if server.started:
                break
            threading.Event().wait(0.02)
        with socket.create_connection(("127.0.0.1", port), timeout=SAFETY) as s:
            s.sendall(b"POST /api/check HTTP/1.1\r\nHost: 127.0.0.1\r\n")   # never finished
            assert s.recv(100) == b""            # closed by the server, not by our timeout
        # a whole request on a fresh connection is still answered
        with socket.create_connection(("127.0.0.1", port), timeout=SAFETY) as s:
            s.sendall(b"GET /api/samples HTTP/1.1\r\nHost: 127.0.0.1:%d\r\n\r\n" % port)
            assert s.recv(12).startswith(b"HTTP/1.1 200")
    finally:
        server.should_exit = True
        thread.join(10)
