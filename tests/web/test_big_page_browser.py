"""The page with a big circuit, in a real headless Chromium: one solve per action, a
table drawn a window at a time, no lists of thousands of options (counted, not timed:
the timings are benchmarks/bench_page.py's)."""

from __future__ import annotations

import pytest

from phasorbench.web import answers

from .test_big_circuits import ladder
from .test_browser import TIMEOUT_MS, open_page, type_circuit, wait_views

pytestmark = pytest.mark.browser

SECTIONS = 3000            # 6,001 elements, 3,002 nodes


def paste(page, text: str) -> None:
    """Put a big text in the editor in one input event (Playwright's fill types it
    through the browser's editing machinery, which takes minutes over 200 KB)."""
    page.eval_on_selector("#editor-text", "(t, text) => { t.value = text; "
                          "t.dispatchEvent(new Event('input', {bubbles: true})); }", text)


def api_requests(page) -> list[str]:
    seen: list[str] = []
    page.on("request", lambda r: seen.append(r.url.split("/api/", 1)[1])
            if "/api/" in r.url else None)
    return seen


def test_one_action_reads_and_solves_the_text_once(new_page, live_server):
    page = new_page()
    open_page(page, live_server)
    type_circuit(page, ladder(40))
    page.wait_for_timeout(600)          # the typing's own check (debounced) has been sent
    seen = api_requests(page)
    before = answers.SOLVED.computed
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.keyboard.press("Control+Enter")
    wait_views(page, "R1")          # the selection (R1 of the first sample) is kept
    page.wait_for_timeout(300)
    # common practice, no source: one solve per user action, whatever asks about it
    assert answers.SOLVED.computed - before == 1
    assert seen.count("solve") == 1 and "check" not in seen
    assert set(seen) <= {"solve", "phasors", "waveforms", "rows"}


def test_a_big_table_is_drawn_a_window_at_a_time(new_page, live_server, artifacts):
    page = new_page()
    open_page(page, live_server)
    paste(page, ladder(SECTIONS))
    with page.expect_response(lambda r: r.url.endswith("/api/solve"), timeout=60_000):
        page.keyboard.press("Control+Enter")
    page.wait_for_selector("#branch-table.windowed tr[data-element]", timeout=60_000)
    rows = page.locator("#branch-table tbody tr[data-element]").count()
    assert 0 < rows < 200                               # of 6,001
    assert page.locator("#branch-table tr.more").count() == 0    # no "show all"
    assert page.evaluate("document.querySelectorAll('option').length") < 1000
    # the scroll bar is the whole table's: scrolling to the end draws the last rows
    page.eval_on_selector("#branch-table", "t => { const w = t.closest('.table-wrap'); w.scrollTop = w.scrollHeight; }")
    page.wait_for_selector(f'#branch-table tr[data-element="C{SECTIONS - 1}"]', timeout=TIMEOUT_MS)
    # the find box asks the server: names containing 'r299' are R299 and R2990..R2999
    page.fill("#branch-find", "r299")
    page.wait_for_function("() => document.getElementById('branch-count').textContent.startsWith('11 of')",
                           timeout=TIMEOUT_MS)
    page.wait_for_selector('#branch-table tr[data-element="R2995"]', timeout=TIMEOUT_MS)
    page.click('#branch-table tr[data-element="R2995"]')
    wait_views(page, "R2995")
    # sorting asks the server for the order: by |I| descending the first row is the
    # source's (it carries the whole ladder's current, Kirchhoff's current law)
    page.fill("#branch-find", "")
    page.click('#branch-table th[data-key="current"] button')
    page.click('#branch-table th[data-key="current"] button')
    page.wait_for_function(
        "() => { const r = document.querySelector('#branch-table tbody tr[data-element]');"
        " return r && r.dataset.element === 'V1'; }", timeout=TIMEOUT_MS)
    nodes = page.locator("#node-table tbody tr[data-node]").count()
    assert 0 < nodes < 200                              # of 3,002
    page.screenshot(path=str(artifacts / "workbench-big-table.png"))
