"""The page when the server freezes or stops (issue 9, item 7), in headless Chromium.

The page waits a stated time (``page_timeout_s``, short here), then says the server is
not answering, re-enables Solve, keeps the text as typed, and never says the circuit
fails to solve when it was the server that did not answer.
"""

from __future__ import annotations

import threading
import time

import pytest

from phasorbench.web import answers

from .conftest import BENCH_CIRCUIT, LiveServer, free_port, make_app
from .test_browser import TIMEOUT_MS, open_page, type_circuit

pytestmark = pytest.mark.browser

FROZEN = BENCH_CIRCUIT + "# the server freezes on this circuit (a test hook)\n"


@pytest.fixture
def freezing_server(bench_samples, monkeypatch):
    """A live server whose solve and check hang on ``FROZEN`` until released."""
    release = threading.Event()
    solve, check = answers.solve_answer, answers.check_answer

    def hang_on_frozen(real):
        def job(text, *rest):
            while "freezes" in text and not release.is_set():
                time.sleep(0.01)                 # Python-level: the job stays stoppable
            return real(text, *rest)
        return job
    monkeypatch.setattr(answers, "solve_answer", hang_on_frozen(solve))
    monkeypatch.setattr(answers, "check_answer", hang_on_frozen(check))
    port = free_port()
    server = LiveServer(make_app(bench_samples, port=port, initial_sample="rc-bench",
                                 page_timeout_s=1.5), port).start()
    yield server
    release.set()
    server.stop()


def test_a_frozen_server_is_reported_and_solve_comes_back(new_page, freezing_server, artifacts):
    # WHATWG DOM, AbortSignal.timeout(): the page's own deadline ends the wait; common
    # practice, no source: say the server is not answering, never "no problems found"
    page = new_page()
    open_page(page, freezing_server)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    type_circuit(page, FROZEN)
    page.keyboard.press("Control+Enter")
    page.wait_for_function(
        "() => document.getElementById('result-banner').textContent.includes('not answering')",
        timeout=TIMEOUT_MS)
    banner = page.inner_text("#result-banner")
    assert "did not answer within 2 s" in banner and "does not solve" not in banner
    page.wait_for_function("() => !document.getElementById('solve').disabled", timeout=TIMEOUT_MS)
    assert "no problems found" not in page.inner_text("#check-state")
    assert page.input_value("#editor-text") == FROZEN           # the text stays as typed
    page.screenshot(path=str(artifacts / "server-frozen.png"))


@pytest.fixture
def orphaned_page(new_page, bench_samples, page_errors):
    """A page that loaded and solved the bench circuit, whose server has then stopped."""
    port = free_port()
    server = LiveServer(make_app(bench_samples, port=port, initial_sample="rc-bench",
                                 page_timeout_s=5), port).start()
    page = new_page()
    try:
        open_page(page, server)
        page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    finally:
        server.stop()
    yield page
    # Chromium logs each refused connection as a console error: expected here, and only
    # those are let through (any other page error still fails the test)
    page_errors.errors[:] = [e for e in page_errors.errors if "ERR_CONNECTION_REFUSED" not in e]


def test_export_with_the_server_down_blames_the_server(orphaned_page):
    # common practice, no source: a refused connection is the server's state, not the
    # circuit's; Export must say so
    page = orphaned_page
    edited = BENCH_CIRCUIT + "# edited after the server stopped\n"
    type_circuit(page, edited)
    page.click("#export-sheet")
    page.wait_for_function(
        "() => document.getElementById('result-banner').textContent.includes('server')",
        timeout=TIMEOUT_MS)
    banner = page.inner_text("#result-banner")
    assert "does not solve" not in banner and "No answer from the server" in banner
    assert page.is_enabled("#export-sheet") and page.is_enabled("#solve")
    assert page.input_value("#editor-text") == edited


@pytest.mark.parametrize("tab, prepare, submit, out", [
    ("sweep", "#sweep-custom=V(b)|#sweep-add", "#sweep-form button[type=submit]", "#sweep-out"),
    ("harmonics", "", "#hs-form button[type=submit]", "#hs-out"),
    ("formula", "#formula-probe=V(b)/V(a)", "#formula-run", "#formula-out"),
])
def test_study_tabs_with_the_server_down_blame_the_server(tab, prepare, submit, out,
                                                           orphaned_page):
    # common practice, no source: a refused connection is the server's state; each study
    # tab must say so rather than "the circuit does not solve"
    page = orphaned_page
    edited = BENCH_CIRCUIT + f"# edited after the server stopped ({tab})\n"
    type_circuit(page, edited)
    page.click(f"#tab-{tab}")
    for step in filter(None, prepare.split("|")):
        selector, _, value = step.partition("=")
        if value:
            page.fill(selector, value)
        else:
            page.click(selector)
    page.click(submit)
    page.wait_for_function(
        f"() => document.querySelector('{out}').textContent.includes('server')",
        timeout=TIMEOUT_MS)
    said = page.inner_text(out)
    assert "No answer from the server" in said and "does not solve" not in said
    assert page.input_value("#editor-text") == edited
