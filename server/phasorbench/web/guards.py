"""Request guards in front of every route: Host, Origin and body size.

A local server is still reachable by any web page the user opens: a page on another
site can post to ``127.0.0.1`` (cross-site request) or rebind its own name to
``127.0.0.1`` (DNS rebinding). So the server answers only requests addressed to its
own loopback names (400 otherwise), refuses state-changing requests sent by a page of
another origin (403), never reads a body larger than its limit (413) and waits for a
body at most ``body_timeout_s`` (408).

It is plain ASGI middleware so it runs before routing and before any body is parsed.
"""

from __future__ import annotations

import asyncio
import json
import math
from urllib.parse import urlsplit

from .settings import Settings

_SAFE_METHODS = frozenset({"GET", "HEAD", "OPTIONS"})


def split_host(value: str) -> tuple[str, int | None] | None:
    """``"localhost:8000"`` → ``("localhost", 8000)``; ``"[::1]"`` → ``("::1", None)``.

    Returns None when the value is not a host[:port] at all.
    """
    value = value.strip().lower()
    if not value or any(c in value for c in "/@ \t"):
        return None
    if value.startswith("["):
        end = value.find("]")
        if end < 0:
            return None
        name, rest = value[1:end], value[end + 1:]
        if rest and not rest.startswith(":"):
            return None
        port_text = rest[1:] if rest else ""
    elif value.count(":") == 1:
        name, port_text = value.split(":")
    elif ":" in value:
        return None                     # a bare IPv6 address must be bracketed in Host
    else:
        name, port_text = value, ""
    if port_text:
        if not port_text.isdigit() or len(port_text) > 5:
            return None
        return name, int(port_text)
    return name, None


class HostOriginGuard:
    """ASGI middleware: Host check (400), Origin check on writes (403), body cap (413)."""

    def __init__(self, app, settings: Settings):
        self.app = app
        self.settings = settings
        self.names = settings.host_names()

    def host_is_ours(self, host: str | None) -> bool:
        parsed = split_host(host or "")
        if parsed is None:
            return False
        name, port = parsed
        if name not in self.names:
            return False
        wanted = self.settings.port
        # No port in the header is what a client sends for the scheme's default port;
        # the name alone is what defeats DNS rebinding, so accept it.
        return port is None or not wanted or port == wanted

    def origin_is_ours(self, origin: str, host: str | None = None) -> bool:
        """An origin is scheme, host AND port (RFC 6454, section 4): only
        ``http://NAME:PORT`` of this server's own port is ours. ``http://127.0.0.1``
        (port 80) or ``https://localhost:PORT`` are other origins."""
        if origin == "null":            # sandboxed frames and file:// pages
            return False
        parts = urlsplit(origin)
        if parts.scheme != "http" or not parts.netloc or parts.path or parts.query:
            return False                # this server speaks plain http only
        parsed = split_host(parts.netloc)
        if parsed is None or parsed[0] not in self.names:
            return False
        port = 80 if parsed[1] is None else parsed[1]
        wanted = self.settings.port
        if not wanted:                  # ephemeral port: the port the request came to
            own = split_host(host or "")
            wanted = 80 if own is None or own[1] is None else own[1]
        return port == wanted

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        headers = _headers(scope)
        if not self.host_is_ours(headers.get("host")):
            await _refuse(send, 400, "this server answers only requests addressed to its "
                          "own loopback address", "open the page at http://127.0.0.1:PORT/")
            return
        method = scope["method"].upper()
        if method not in _SAFE_METHODS:
            origin = headers.get("origin")
            fetch_site = headers.get("sec-fetch-site")
            if (origin is not None and not self.origin_is_ours(origin, headers.get("host"))) or fetch_site == "cross-site":
                await _refuse(send, 403, "requests from another site's page are refused",
                              "use the workbench page served by this server")
                return
            declared = headers.get("content-length")
            if declared is not None and (not declared.isdigit()
                                         or int(declared) > self.settings.max_body_bytes):
                await _refuse_too_large(send, self.settings.max_body_bytes)
                return
            try:
                body = await asyncio.wait_for(
                    _read_body(receive, self.settings.max_body_bytes),
                    self.settings.body_timeout_s)
            except asyncio.TimeoutError:
                await _refuse(send, 408, "the request body did not arrive in time "
                              f"({self.settings.body_timeout_s:g} s)", "send the whole "
                              "body at once", close=True)
                return
            if body is None:
                await _refuse_too_large(send, self.settings.max_body_bytes)
                return
            receive = _replay(body, receive)
        await self.app(scope, receive, send)


def _headers(scope) -> dict[str, str]:
    out: dict[str, str] = {}
    for key, value in scope.get("headers", []):
        out.setdefault(key.decode("latin-1").lower(), value.decode("latin-1"))
    return out


async def _read_body(receive, limit: int) -> bytes | None:
    """The whole body, or None as soon as it passes ``limit`` (chunked uploads too)."""
    chunks, size = [], 0
    while True:
        message = await receive()
        if message["type"] == "http.disconnect":
            return b"".join(chunks)
        chunk = message.get("body", b"")
        size += len(chunk)
        if size > limit:
            return None
        chunks.append(chunk)
        if not message.get("more_body", False):
            return b"".join(chunks)


def _replay(body: bytes, original):
    """A ``receive`` that hands the app the body already read, then waits as before."""
    sent = False

    async def receive():
        nonlocal sent
        if not sent:
            sent = True
            return {"type": "http.request", "body": body, "more_body": False}
        return await original()
    return receive


async def _refuse_too_large(send, limit: int) -> None:
    mb = limit / 2**20
    await _refuse(send, 413, f"the request body is larger than this server's limit of "
                  f"{mb:.1f} MB ({limit} bytes)",
                  f"start the server with a larger limit, e.g. phasorbench serve "
                  f"--max-body-mb {max(64, 2 * math.ceil(mb))} (or --max-elements, which "
                  "raises it too), or split the circuit")


async def _refuse(send, status: int, message: str, hint: str, close: bool = False) -> None:
    """The API's error shape (``api.error_item``'s fields), sent before any route runs."""
    body = json.dumps({"errors": [{"line": None, "column": None, "length": 1,
                                   "severity": "error", "message": message, "hint": hint}],
                       "warnings": []}).encode()
    headers = [(b"content-type", b"application/json"),
               (b"content-length", str(len(body)).encode())]
    if close:
        headers.append((b"connection", b"close"))
    await send({"type": "http.response.start", "status": status, "headers": headers})
    await send({"type": "http.response.body", "body": body})
