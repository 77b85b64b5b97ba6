"""Find in the circuit (static/js/findbar.js), in a real headless Chromium: the editor's
own find bar searches every line of a long text, though the textarea holds only a window
of them (the browser's own find sees only that window). Counted and compared against
Python's re module on the same text, never timed."""

from __future__ import annotations

import re

import pytest

from .test_big_page_browser import paste
from .test_browser import TIMEOUT_MS, open_page
from .test_windowed_editor_browser import CARET_LINE_JS, LINES, TEXT, WINDOW_JS, saved_text

pytestmark = pytest.mark.browser

FAR_NAME = "C4321:"                  # on one line far down the 10,003-line text


def count(query: str, case: bool = False) -> int:
    """Literal matches of ``query`` in the text's lines (Python's re, the reference)."""
    pattern = re.compile(re.escape(query), 0 if case else re.IGNORECASE)
    return sum(len(pattern.findall(line)) for line in LINES)


def line_of(query: str) -> int:
    """The line (from 1) of the only line holding ``query``."""
    found = [k + 1 for k, line in enumerate(LINES) if query in line]
    assert len(found) == 1
    return found[0]


def long_page(new_page, live_server):
    page = new_page()
    open_page(page, live_server)
    paste(page, TEXT)
    page.wait_for_function(f"() => localStorage.getItem('phasorbench.netlist.v1')?.length === "
                           f"{len(TEXT)}", timeout=TIMEOUT_MS)
    return page


def state(page) -> str:
    return page.inner_text("#find-state").strip()


def test_find_reaches_a_line_outside_the_window_and_selects_it(new_page, live_server,
                                                              artifacts):
    page = long_page(new_page, live_server)
    target = line_of(FAR_NAME)
    at = page.evaluate(WINDOW_JS)
    assert not (at["first"] <= target < at["first"] + len(at["lines"]))   # out of the window
    page.focus("#editor-text")
    page.keyboard.press("Control+f")
    assert page.is_visible("#find-bar")
    assert page.evaluate("document.activeElement.id") == "find-text"
    page.keyboard.type(FAR_NAME.lower())
    # common practice, no source: a find matches the literal text, case folded, over the
    # whole document; the count is Python's re on the same lines
    assert count(FAR_NAME) == 1
    assert state(page) == "1 of 1"
    at = page.evaluate(WINDOW_JS)
    assert at["first"] <= target < at["first"] + len(at["lines"])         # brought in
    hit = page.locator("#backdrop .find-hit")
    assert hit.count() == 1 and hit.get_attribute("data-line") == str(target)
    box = page.locator("#editor-scroll").bounding_box()
    mark = hit.bounding_box()
    assert box["y"] <= mark["y"] and mark["y"] + mark["height"] <= box["y"] + box["height"]
    page.screenshot(path=str(artifacts / "find-far-down.png"))
    # Esc: back in the editor with the match selected (the next key types over it)
    page.keyboard.press("Escape")
    assert page.is_hidden("#find-bar")
    assert page.locator("#backdrop .find-hit").count() == 0
    assert page.evaluate(CARET_LINE_JS) == target
    page.keyboard.type("Cnew:")
    expected = "\n".join(LINES[:target - 1] + [LINES[target - 1].replace(FAR_NAME, "Cnew:")]
                         + LINES[target:])
    assert saved_text(page, expected) == expected


def test_next_previous_wrap_count_and_match_case(new_page, live_server):
    page = long_page(new_page, live_server)
    page.click("#find-open")
    page.fill("#find-text", "n4501 ")
    n = count("n4501 ")
    assert n == 3                                  # the three lines at node n4501
    assert state(page) == f"1 of {n}"
    lines_hit = []
    for _ in range(n):
        lines_hit.append(int(page.get_attribute("#backdrop .find-hit", "data-line")))
        page.keyboard.press("Enter")
    # common practice, no source: Enter steps down through the matches in text order
    # and wraps from the last to the first; Shift+Enter steps back
    expected = [k + 1 for k, line in enumerate(LINES) if "n4501 " in line]
    assert lines_hit == expected
    assert state(page) == f"1 of {n}"
    page.keyboard.press("Shift+Enter")
    assert state(page) == f"{n} of {n}"
    assert int(page.get_attribute("#backdrop .find-hit", "data-line")) == expected[-1]
    # a new query searches on from the selection (the last "n4501 "): "r49" folds to
    # the R49… names, the first of them after it is R4900
    page.fill("#find-text", "r49")
    folded = count("r49")
    assert folded > 100
    found = [(k + 1, m.start()) for k, line in enumerate(LINES)
             for m in re.finditer("r49", line, re.IGNORECASE)]
    start = (expected[-1], LINES[expected[-1] - 1].index("n4501 "))
    first_after = next(k for k, f in enumerate(found) if f >= start)
    assert state(page) == f"{first_after + 1} of {folded:,}"
    assert int(page.get_attribute("#backdrop .find-hit", "data-line")) == found[first_after][0]
    assert LINES[found[first_after][0] - 1].startswith("R4900:")
    page.check("#find-case")
    assert count("r49", case=True) == 0
    assert state(page) == "no match"
    assert page.locator("#backdrop .find-hit").count() == 0


def test_what_is_typed_is_matched_literally(new_page, live_server):
    page = long_page(new_page, live_server)
    page.click("#find-open")
    # common practice, no source: a find box matches characters, not a pattern; "." and
    # "->" are the text's own dots and arrows (Python's re.escape is the reference)
    for query in (".", "->", "n1 -> n2 ", "(", "[a-z]+"):
        page.fill("#find-text", query)
        n = count(query)
        assert state(page) == (f"1 of {n:,}" if n else "no match"), query


def test_a_new_text_clears_the_bars_matches(new_page, live_server):
    page = long_page(new_page, live_server)
    page.click("#find-open")
    page.fill("#find-text", FAR_NAME)
    assert state(page) == "1 of 1"
    # another circuit in the editor (a sample picked): the old match is not kept, and
    # stepping on finds in the new text, never a line the old one had (a page error
    # fails the test through the page_errors fixture)
    sample = page.eval_on_selector("#samples", "m => [...m.options].map(o => o.value).find(v => v)")
    page.select_option("#samples", sample)
    page.wait_for_function(f"() => document.getElementById('editor-text').value.length < {len(TEXT)}",
                           timeout=TIMEOUT_MS)
    assert page.locator("#backdrop .find-hit").count() == 0
    assert state(page) == ""
    page.focus("#find-text")
    page.keyboard.press("Enter")
    # common practice, no source: a find searches the text shown, not an earlier one
    text = page.evaluate("() => document.getElementById('editor-text').value")
    assert FAR_NAME not in text and state(page) == "no match"
    page.fill("#find-text", "frequency")
    assert state(page).startswith("1 of ")
