"""How the server meets slow clients: uvicorn's HTTP/1.1 protocol with a deadline on
each request head, and the header set every response carries.

uvicorn closes an idle kept-alive connection (``timeout_keep_alive``) but waits without
end for a request head that trickles in a byte at a time; ``timed_protocol`` closes a
connection whose head has not arrived ``header_timeout_s`` after the connection opened
or after its last answer. The body has its own deadline in ``guards.py``.
"""

from __future__ import annotations

from .settings import Settings


def timed_protocol(settings: Settings) -> type:
    """An ``H11Protocol`` subclass with ``settings.header_timeout_s`` on each head."""
    from uvicorn.protocols.http.h11_impl import H11Protocol     # only when serving
    limit = settings.header_timeout_s

    class TimedH11Protocol(H11Protocol):
        _head_timer = None

        def _arm(self) -> None:
            if self._head_timer is not None:
                self._head_timer.cancel()
            self._head_timer = self.loop.call_later(limit, self._head_overdue)

        def _head_overdue(self) -> None:
            self._head_timer = None
            waiting_for_head = self.cycle is None or self.cycle.response_complete
            if waiting_for_head and not self.transport.is_closing():
                self.transport.close()          # the client is too slow to say what it wants

        def connection_made(self, transport) -> None:
            super().connection_made(transport)
            self._arm()

        def on_response_complete(self) -> None:
            super().on_response_complete()
            self._arm()

        def connection_lost(self, exc) -> None:
            if self._head_timer is not None:
                self._head_timer.cancel()
            super().connection_lost(exc)

    return TimedH11Protocol


#: Every response: the browser must not guess a content type (a JSON answer quoting
#: circuit text must never be read as HTML).
ALWAYS = {"x-content-type-options": "nosniff"}
#: API answers are computed for one request and may quote the circuit: never stored.
API = {"cache-control": "no-store"}
#: Pages and static files: kept, but revalidated, so a new version is seen at once.
OTHER = {"cache-control": "no-cache"}


class SecurityHeaders:
    """ASGI middleware adding ``ALWAYS`` and ``API``/``OTHER`` headers to every response
    (the guards' refusals too) unless the response set its own."""

    def __init__(self, app):
        self.app = app

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        extra = {**ALWAYS, **(API if scope["path"].startswith("/api/") or
                              scope["path"] == "/openapi.json" else OTHER)}

        async def send_with_headers(message):
            if message["type"] == "http.response.start":
                headers = list(message.get("headers", []))
                present = {k.decode("latin-1").lower() for k, _ in headers}
                headers += [(k.encode(), v.encode()) for k, v in extra.items()
                            if k not in present]
                message = {**message, "headers": headers}
            await send(message)
        await self.app(scope, receive, send_with_headers)
