"""The page with a big circuit, in a real headless Chromium: one solve per action, a
table drawn a window at a time, no lists of thousands of options (counted, not timed:
the timings are benchmarks/bench_page.py's)."""

from __future__ import annotations

import pytest

from phasorbench.presentation import rows
from phasorbench.web import answers

from .test_big_circuits import blocks_circuit, ladder
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


#: Each drawn row of the branch table: what it is, its name, whether hidden, its tree
#: level and its cells' text.
ROWS_JS = """rows => rows.map(r => [r.dataset.group ? "block" : r.dataset.inGroup ? "phase of " +
  r.dataset.inGroup : "element", r.dataset.group || r.dataset.element, r.hidden,
  r.getAttribute("aria-level"), [...r.cells].map(c => c.textContent).join("|")])"""


def shown_rows(page) -> list:
    rows_ = page.eval_on_selector_all(
        "#branch-table tbody tr[data-element], #branch-table tbody tr[data-group]", ROWS_JS)
    return [r for r in rows_ if not r[2]]


def blocks_page(new_page, live_server, text: str, windowed: bool):
    page = new_page()
    open_page(page, live_server)
    paste(page, text)
    with page.expect_response(lambda r: r.url.endswith("/api/solve"), timeout=60_000):
        page.keyboard.press("Control+Enter")
    page.wait_for_selector('#branch-table tr[data-group="L1"]', timeout=60_000)
    assert page.locator("#branch-table.windowed").count() == (1 if windowed else 0)
    return page


def both(pages, action) -> None:
    for page in pages:
        action(page)


def test_a_windowed_table_shows_the_blocks_and_phases_the_full_table_shows(
        new_page, live_server, monkeypatch, artifacts):
    text = blocks_circuit(200)                   # 1,203 elements, 201 three-phase blocks
    monkeypatch.setattr(rows, "FULL_ROWS", 100_000)   # every row sent: the full table
    full = blocks_page(new_page, live_server, text, windowed=False)
    monkeypatch.undo()
    assert 1203 > rows.FULL_ROWS
    win = blocks_page(new_page, live_server, text, windowed=True)
    pages = (full, win)

    def same(wait_for: str, least: int = 20) -> list:
        for page in pages:
            page.wait_for_selector(wait_for, timeout=TIMEOUT_MS)
        page.wait_for_timeout(200)
        a, b = shown_rows(full), shown_rows(win)
        # common practice, no source: the table drawn a window at a time shows the rows,
        # the grouping (tree levels) and the text of the table drawn whole
        assert len(b) >= least and b == a[:len(b)]
        return b

    first = same('#branch-table tr[data-element="Ra1"]')
    # circuit-language.md, three-phase blocks: the supply G and each load block is one
    # row, its phases (BLOCK.a …) under it, closed at first
    assert [r[:2] for r in first[:6]] == [["block", "G"], ["element", "Ra0"], ["element", "Rb0"],
                                          ["element", "Rc0"], ["block", "L0"], ["element", "Ra1"]]
    assert first[0][3] == "1" and first[1][3] == "1"
    # opening a block shows its phases under it, as a second tree level
    both(pages, lambda p: p.click('#branch-table tr[data-group="L1"]'))
    opened = same('#branch-table tr.phase[data-element="L1.ca"]:not([hidden])')
    at = [r[1] for r in opened].index("L1")
    assert [r[:2] for r in opened[at + 1:at + 4]] == [["phase of L1", "L1.ab"],
                                                      ["phase of L1", "L1.bc"],
                                                      ["phase of L1", "L1.ca"]]
    assert {r[3] for r in opened[at + 1:at + 4]} == {"2"}
    win.screenshot(path=str(artifacts / "workbench-windowed-blocks.png"))
    # a find for one phase keeps its whole block; the count says the elements found
    both(pages, lambda p: p.fill("#branch-find", "l19"))
    for page in pages:
        page.wait_for_function(
            "() => document.getElementById('branch-count').textContent === '33 of 1203'",
            timeout=TIMEOUT_MS)
    found = same('#branch-table tr[data-group="L199"]', least=11)
    assert [r[1] for r in found] == ["L19"] + [f"L{k}" for k in range(190, 200)]
    # sorted by P, largest first: blocks move as units, the supply's delivered total first
    both(pages, lambda p: p.fill("#branch-find", ""))
    for _ in range(2):
        both(pages, lambda p: p.click('#branch-table th[data-key="p"] button'))
    for page in pages:
        page.wait_for_function(
            "() => { const r = document.querySelector('#branch-table tbody tr[data-group], "
            "#branch-table tbody tr[data-element]'); return r && r.dataset.group === 'G'; }",
            timeout=TIMEOUT_MS)
    same('#branch-table tbody tr[data-group="G"]')


#: Where the gutter draws line number ``line`` and where the textarea draws that line
#: (page y of each top edge; the textarea holds a window of lines from its
#: data-first-line on), the text it draws there, and the numbers the gutter holds.
GUTTER_JS = """line => {
  const t = document.getElementById("editor-text");
  const numbers = document.querySelector("#gutter .numbers");
  const h = parseFloat(getComputedStyle(t).lineHeight);
  const shown = numbers.textContent.trim().split("\\n").map(Number);
  const pad = (node) => parseFloat(getComputedStyle(node).paddingTop) || 0;
  const gutterY = numbers.getBoundingClientRect().top + pad(numbers) + (line - shown[0]) * h;
  const first = Number(t.dataset.firstLine);
  const textY = t.getBoundingClientRect().top + pad(t) + (line - first) * h - t.scrollTop;
  return {gutterY, textY, first: shown[0], last: shown[shown.length - 1], count: shown.length,
          text: t.value.split("\\n")[line - first]};
}"""


def test_the_gutter_numbers_the_lines_in_view_of_a_long_circuit(new_page, live_server):
    page = new_page()
    open_page(page, live_server)
    text = ladder(3000)
    paste(page, text)
    # 6,003 lines of text and the empty line after its last newline, where the caret
    # can stand (common practice, no source: every editor numbers that line too)
    lines = len(text.splitlines()) + 1
    for line in (5001, lines):
        page.evaluate("line => { const s = document.getElementById('editor-scroll');"
                      " s.scrollTop = (line - 1) * parseFloat(getComputedStyle(s).lineHeight); }",
                      line)
        page.wait_for_timeout(300)                   # the scroll event has run
        at = page.evaluate(GUTTER_JS, line)
        # common practice, no source: the number beside a line is that line's, level
        # with it; the gutter holds the numbers around the view, not all 6,004
        assert at["first"] <= line <= at["last"]
        assert abs(at["gutterY"] - at["textY"]) < 1.0
        assert at["text"] == text.split("\n")[line - 1]
        assert at["count"] < 1000
    assert at["last"] == lines
