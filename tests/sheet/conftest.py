"""Fixtures of the sheet tests: circuits of our own, an app with the sheet route, a browser.

The app is the real ``create_app()`` (guards, error handlers, solve pool) with the
sheet router included the way the lead includes it, unless it already is.
"""

from __future__ import annotations

import re
from datetime import datetime, timezone
from html.parser import HTMLParser
from pathlib import Path

import pytest

from phasorbench.web import Settings, create_app
from phasorbench.web.sheet_routes import router

from ..web.conftest import CHROMIUM, CHROMIUM_ARGS, Api, LiveServer, free_port

ROOT = Path(__file__).resolve().parents[2]
ARTIFACTS = ROOT / "test-artifacts" / "sheet"

#: A fixed moment, so two sheets of one circuit can be compared byte for byte.
NOW = datetime(2026, 3, 14, 9, 26, 53, tzinfo=timezone.utc)

#: The one timestamp of a sheet (its ``<time class="stamp">``), removed to compare
#: sheets made at different moments.
STAMP = re.compile(r'<time class="stamp" datetime="[^"]*">[^<]*</time>')

#: 230 V RMS at 50 Hz across R in series with C = 10 µF, R equal to Xc.
#: Xc = 1/(2πfC) = 318.31 Ω (check-values C1, formula), so the current leads the source
#: voltage by exactly 45° and |I| = 230/(318.31·√2) = 0.510932 A.
RC_BENCH = """\
# R equal to the capacitor's reactance (invented for the sheet tests)
title RC bench
frequency 50 Hz
V1: voltage   a -> 0   230 V
R1: resistor  a -> b   (1/(2*pi*50*10u))
C1: capacitor b -> 0   10 uF
"""

#: check-values C4: 230 V RMS, 50 Hz across Z = 30 + j40 Ω: I = 4.6 A ∠-53.1301°,
#: P = 634.8 W, Q = 846.4 var, S = 1058 VA, PF 0.6 lagging (IEEE Std 1459-2010, 3.1,
#: from memory), as a resistor and an inductor in series.
RL_LOAD = """\
title RL load
frequency 50 Hz
Vs: voltage  a -> 0  230 V
Rl: resistor a -> b  30 ohm
Ll: inductor b -> 0  (40/(2*pi*50))
"""

#: check-values C22: 400 V line, 50 Hz, wye load 16 + j12 Ω a phase, 4-wire:
#: I = 11.547 A ∠-36.8699° (phase a), P = 6400 W, Q = 4800 var, S = 8000 VA.
BALANCED_WYE = """\
title Balanced wye load
frequency 50 Hz
Grid: voltage3  a b c -> 0   400 V line
Load: load3 wye a b c -> 0   16 + j12 ohm
"""

#: Markup in a title and in comments: all of it must reach the sheet as text.
HOSTILE = """\
title <script>alert(1)</script> & "quotes" 'too'
# </pre><script>alert(2)</script>
# <img src=x onerror=alert(3)> <a href="https://example.invalid/">link</a>
frequency 50 Hz
V1: voltage   a -> 0   230 V
C1: capacitor a -> 0   10 uF   # <svg onload=alert(4)>
"""


def ladder(n: int, title: str = "Ladder") -> str:
    """A source and R–L–C sections until the circuit has ``n`` elements (invented values)."""
    lines = [f"title {title} of {n} elements", "frequency 50 Hz", "Vs: voltage n0 -> 0 230 V"]
    count, k = 1, 0
    while count < n:
        parts = [f"R{k}: resistor n{k} -> m{k} {1 + k % 5} ohm",
                 f"L{k}: inductor m{k} -> n{k + 1} {2 + k % 3} mH",
                 f"C{k}: capacitor n{k + 1} -> 0 {10 + k % 7} uF"]
        for line in parts[:n - count]:
            lines.append(line)
            count += 1
        k += 1
    return "\n".join(lines) + "\n"


class _Text(HTMLParser):
    """Text of a document as a browser would show it, and the text of one element."""

    def __init__(self, wanted_tag: str | None = None, wanted_class: str | None = None):
        super().__init__(convert_charrefs=True)
        self.parts: list[str] = []
        self.wanted = (wanted_tag, wanted_class)
        self.depth = 0
        self.inside: list[str] = []
        self.skip = 0

    def handle_starttag(self, tag, attrs):
        if tag in ("style", "title"):
            self.skip += 1
        if self.depth:
            self.depth += 1
        elif tag == self.wanted[0] and self.wanted[1] in (dict(attrs).get("class") or "").split():
            self.depth = 1

    def handle_endtag(self, tag):
        if tag in ("style", "title"):
            self.skip -= 1
        if self.depth:
            self.depth -= 1

    def handle_data(self, data):
        if not self.skip:
            self.parts.append(data)
        if self.depth:
            self.inside.append(data)


def visible_text(html: str) -> str:
    """The document's text (Python's own HTML parser: entities decoded, tags dropped)."""
    parser = _Text()
    parser.feed(html)
    parser.close()
    return " ".join(" ".join(parser.parts).split())


def element_text(html: str, tag: str, css_class: str) -> str:
    """The exact text inside the first ``<tag class="css_class">`` (whitespace kept)."""
    parser = _Text(tag, css_class)
    parser.feed(html)
    parser.close()
    return "".join(parser.inside)


def sheet_app(**overrides):
    settings = Settings(**{"port": 8000, **overrides})
    app = create_app(settings)
    if not any(getattr(r, "path", None) == "/api/sheet" for r in app.routes):
        app.include_router(router)
    return app


@pytest.fixture
def api() -> Api:
    return Api(sheet_app())


@pytest.fixture
def make_api():
    return lambda **overrides: Api(sheet_app(**overrides))


@pytest.fixture(scope="session")
def artifacts() -> Path:
    ARTIFACTS.mkdir(parents=True, exist_ok=True)
    return ARTIFACTS


@pytest.fixture(scope="module")
def live_sheet_server():
    port = free_port()
    server = LiveServer(sheet_app(port=port), port).start()
    yield server
    server.stop()


@pytest.fixture(scope="module")
def sheet_browser():
    # Module scope: Playwright's sync driver holds an event loop in this thread while it
    # runs, and asyncio.run (the API tests' client) refuses to start beside it, so the
    # driver stops when the browser tests are done, before any other module runs.
    from playwright.sync_api import sync_playwright
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        yield browser
        browser.close()
