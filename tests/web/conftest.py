"""Fixtures of the web tests: an in-process API client, a live server, one browser.

API tests talk to the app in-process through ``httpx.ASGITransport`` (starlette's
test client warns about its httpx use, and pytest turns warnings into errors). The
browser tests share one Chromium per session and one live uvicorn server.
"""

from __future__ import annotations

import asyncio
import socket
import threading
import time
from pathlib import Path

import httpx
import pytest

from phasorbench.web import Settings, create_app

ROOT = Path(__file__).resolve().parents[2]
ARTIFACTS = ROOT / "test-artifacts"
CHROMIUM = "/usr/lib/chromium/chromium"
#: Flags from testing-recipes.md: headless, no sandbox (root), nothing that phones home.
CHROMIUM_ARGS = ["--headless=new", "--no-sandbox", "--disable-gpu", "--disable-quic",
                 "--no-first-run", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--disable-dev-shm-usage",
                 "--disable-extensions"]

#: 230 V RMS at 50 Hz across R in series with C = 10 µF, R chosen equal to Xc.
#: Xc = 1/(2πfC) = 318.31 Ω (check-values C1, formula), so Z = Xc·√2 ∠−45° and the
#: current leads the source voltage by exactly 45°: |I| = 230/(318.31·√2) = 0.510932 A.
BENCH_CIRCUIT = """\
# A test bench: R equal to the capacitor's reactance (invented for the tests)
title RC bench
frequency 50 Hz
V1: voltage   a -> 0   230 V
R1: resistor  a -> b   (1/(2*pi*50*10u))
C1: capacitor b -> 0   10 uF
"""
BENCH_I_MAG = 230.0 / (318.309886 * 2 ** 0.5)      # A, formula above
BENCH_I_DEG = 45.0                                  # degrees, formula above

#: check-values C1: 10 µF across 230 V RMS at 50 Hz.
CAP_CIRCUIT = """\
title Capacitor across the mains
frequency 50 Hz
V1: voltage   a -> 0   230 V
C1: capacitor a -> 0   10 uF
"""


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="session")
def bench_samples(tmp_path_factory) -> Path:
    """A samples folder of our own (the real one belongs to the samples' author)."""
    folder = tmp_path_factory.mktemp("samples")
    (folder / "rc-bench.circuit").write_text(BENCH_CIRCUIT, encoding="utf-8")
    (folder / "cap-mains.circuit").write_text(CAP_CIRCUIT, encoding="utf-8")
    return folder


def make_app(bench_samples: Path, **overrides):
    settings = Settings(**{"port": 8000, "samples_dir": bench_samples, **overrides})
    return create_app(settings)


def run_async(coroutine):
    """``asyncio.run`` in a thread of its own: the browser tests' Playwright keeps an
    event loop running in the main thread, where a second one cannot start."""
    from concurrent.futures import ThreadPoolExecutor
    with ThreadPoolExecutor(max_workers=1) as pool:
        return pool.submit(asyncio.run, coroutine).result()


class Api:
    """A small synchronous client over ``httpx.ASGITransport`` for one app."""

    def __init__(self, app, base_url: str = "http://127.0.0.1:8000"):
        self.app, self.base_url = app, base_url

    async def arequest(self, method: str, url: str, **kw) -> httpx.Response:
        transport = httpx.ASGITransport(app=self.app)
        async with httpx.AsyncClient(transport=transport, base_url=self.base_url) as client:
            return await client.request(method, url, **kw)

    def request(self, method: str, url: str, **kw) -> httpx.Response:
        return run_async(self.arequest(method, url, **kw))

    def get(self, url: str, **kw) -> httpx.Response:
        return self.request("GET", url, **kw)

    def post(self, url: str, **kw) -> httpx.Response:
        return self.request("POST", url, **kw)


@pytest.fixture
def api(bench_samples) -> Api:
    return Api(make_app(bench_samples))


@pytest.fixture
def make_api(bench_samples):
    """An ``Api`` over an app built with other settings: ``make_api(max_elements=3)``."""
    return lambda **overrides: Api(make_app(bench_samples, **overrides))


def template_context(app, path: str = "/", host: str = "127.0.0.1:8000") -> tuple[str, dict]:
    """The template name and context a page route hands to Jinja2.

    Starlette's template responses report them through the ``http.response.debug``
    extension when the server offers it; this asks for it like its test client does.
    """
    seen = {}

    async def run():
        scope = {"type": "http", "asgi": {"version": "3.0"}, "http_version": "1.1",
                 "method": "GET", "scheme": "http", "path": path, "raw_path": path.encode(),
                 "root_path": "", "query_string": b"", "server": ("127.0.0.1", 8000),
                 "client": ("127.0.0.1", 5000), "headers": [(b"host", host.encode())],
                 "extensions": {"http.response.debug": {}}}

        async def receive():
            return {"type": "http.request", "body": b"", "more_body": False}

        async def send(message):
            if message["type"] == "http.response.debug":
                seen.update(message["info"])
            elif message["type"] == "http.response.start":
                seen["status"] = message["status"]
        await app(scope, receive, send)
    asyncio.run(run())
    assert seen.get("status") == 200, seen
    return seen["template"].name, seen["context"]


class LiveServer:
    """uvicorn serving one app in a daemon thread (testing-recipes.md)."""

    def __init__(self, app, port: int):
        import uvicorn
        self.port = port
        self.url = f"http://127.0.0.1:{port}"
        self.server = uvicorn.Server(uvicorn.Config(app, host="127.0.0.1", port=port,
                                                    log_level="warning", access_log=False))
        self.thread = threading.Thread(target=self.server.run, daemon=True)

    def start(self) -> "LiveServer":
        self.thread.start()
        deadline = time.monotonic() + 15
        while not self.server.started:
            if time.monotonic() > deadline or not self.thread.is_alive():
                raise RuntimeError("the test server did not start")
            time.sleep(0.02)
        return self

    def stop(self) -> None:
        self.server.should_exit = True
        self.thread.join(timeout=10)


@pytest.fixture(scope="session")
def live_server(bench_samples):
    port = free_port()
    server = LiveServer(make_app(bench_samples, port=port, initial_sample="rc-bench"), port).start()
    yield server
    server.stop()


@pytest.fixture(scope="session")
def playwright_driver():
    from playwright.sync_api import sync_playwright
    with sync_playwright() as p:
        yield p


@pytest.fixture(scope="session")
def browser(playwright_driver):
    browser = playwright_driver.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
    yield browser
    browser.close()


#: Chromium logs every non-2xx fetch as a console error; 422 is the API's expected
#: answer to a circuit with errors, so that one line is not a page fault.
EXPECTED_CONSOLE = ("Failed to load resource: the server responded with a status of 422",)


class PageErrors:
    """Collects every JS error and console error of a page; the test fails on any."""

    def __init__(self):
        self.errors: list[str] = []

    def on_console(self, msg) -> None:
        if msg.type == "error" and not msg.text.startswith(EXPECTED_CONSOLE):
            self.errors.append(f"console.{msg.type}: {msg.text}")

    def watch(self, page) -> None:
        page.on("pageerror", lambda exc: self.errors.append(f"pageerror: {exc}"))
        page.on("console", self.on_console)


@pytest.fixture
def page_errors():
    watcher = PageErrors()
    yield watcher
    assert watcher.errors == [], watcher.errors


@pytest.fixture
def new_page(browser, page_errors):
    """A fresh page (its own context, so an empty localStorage) at a given size."""
    contexts = []

    def make(width: int = 1366, height: int = 768):
        context = browser.new_context(viewport={"width": width, "height": height})
        contexts.append(context)
        page = context.new_page()
        page_errors.watch(page)
        return page
    yield make
    for context in contexts:
        context.close()


@pytest.fixture(scope="session")
def artifacts() -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS
