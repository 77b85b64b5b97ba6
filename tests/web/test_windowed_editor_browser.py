"""The editor with a long circuit, in a real headless Chromium: the textarea holds only
a window of lines around the view (static/js/textwindow.js), and every edit, mark,
copy, undo and reload still works on the whole text. Counted and compared, never timed
(the timings are benchmarks/bench_page.py's)."""

from __future__ import annotations

import pytest

from .conftest import BENCH_CIRCUIT
from .test_big_circuits import ladder
from .test_big_page_browser import paste
from .test_browser import TIMEOUT_MS, open_page

pytestmark = pytest.mark.browser

TEXT = ladder(5000)                  # 10,001 elements on 10,003 lines (and the empty last)
LINES = TEXT.split("\n")             # the editor's lines, the empty one after the last newline
FAR = 8000                           # a line far down, out of any first window
SAVED = "phasorbench.netlist.v1"     # where store.js keeps the circuit's text

#: The textarea's window (its first line, from 1, and its lines), the scroll box's
#: height and the line height.
WINDOW_JS = """() => {
  const t = document.getElementById("editor-text");
  const s = document.getElementById("editor-scroll");
  return {first: Number(t.dataset.firstLine), lines: t.value.split("\\n"),
          height: s.scrollHeight, line: parseFloat(getComputedStyle(t).lineHeight),
          pad: parseFloat(getComputedStyle(t).paddingTop) + parseFloat(getComputedStyle(t).paddingBottom)};
}"""

#: Page y of the top of the line the textarea draws as line ``line`` (of the whole text).
LINE_Y_JS = """line => {
  const t = document.getElementById("editor-text");
  const h = parseFloat(getComputedStyle(t).lineHeight);
  return t.getBoundingClientRect().top + parseFloat(getComputedStyle(t).paddingTop) +
         (line - Number(t.dataset.firstLine)) * h;
}"""

#: The line (from 1, of the whole text) the caret is on.
CARET_LINE_JS = """() => {
  const t = document.getElementById("editor-text");
  return Number(t.dataset.firstLine) + t.value.slice(0, t.selectionStart).split("\\n").length - 1;
}"""


def long_page(new_page, live_server):
    page = new_page()
    page.context.grant_permissions(["clipboard-read", "clipboard-write"], origin=live_server.url)
    open_page(page, live_server)
    paste(page, TEXT)
    page.wait_for_function(f"() => localStorage.getItem('{SAVED}')?.length === {len(TEXT)}",
                           timeout=TIMEOUT_MS)
    return page


def scroll_to(page, line: int) -> None:
    """Bring ``line`` to the top of the view, as the scroll bar would."""
    page.evaluate("""line => { const s = document.getElementById("editor-scroll");
        s.scrollTop = (line - 1) * parseFloat(getComputedStyle(s).lineHeight); }""", line)
    page.wait_for_timeout(200)            # the scroll event has run


def click_line(page, line: int) -> None:
    """Click on ``line`` where the textarea draws it, then go to its end."""
    box = page.locator("#editor-scroll").bounding_box()
    h = page.evaluate(WINDOW_JS)["line"]
    y = page.evaluate(LINE_Y_JS, line) + h / 2
    assert box["y"] < y < box["y"] + box["height"] - 12        # in view
    page.mouse.click(box["x"] + 40, y)
    page.keyboard.press("End")


def sent_text(page) -> str:
    """The circuit text the page sends to the server when the person solves."""
    with page.expect_request(lambda r: r.url.endswith("/api/solve"), timeout=TIMEOUT_MS) as req:
        page.keyboard.press("Control+Enter")
    return req.value.post_data_json["netlist"]


def saved_text(page, expected: str) -> str:
    """The text kept in localStorage, once it is written (idle time, after typing)."""
    try:
        page.wait_for_function("e => localStorage.getItem(e.key) === e.text",
                               arg={"key": SAVED, "text": expected}, timeout=TIMEOUT_MS)
    except Exception:
        pass                                  # the comparison below says what differs
    return page.evaluate("key => localStorage.getItem(key)", SAVED)


def with_line(lines: list[str], at: int, text: str) -> str:
    """The whole text with line ``at`` (from 1) replaced."""
    changed = list(lines)
    changed[at - 1] = text
    return "\n".join(changed)


def test_the_textarea_holds_a_window_and_the_scroll_bar_is_the_whole_text(new_page, live_server,
                                                                          artifacts):
    page = long_page(new_page, live_server)
    at = page.evaluate(WINDOW_JS)
    # common practice, no source: a long text is laid out a window at a time (a textarea
    # holding all 10,004 lines was laid out whole on every key), while the scroll bar
    # measures the whole text: one line height per line
    assert at["first"] == 1 and 20 < len(at["lines"]) < 1000
    assert at["lines"] == LINES[:len(at["lines"])]
    assert at["height"] == pytest.approx(at["pad"] + len(LINES) * at["line"], abs=1)
    scroll_to(page, FAR)
    at = page.evaluate(WINDOW_JS)
    assert at["first"] < FAR < at["first"] + len(at["lines"]) - 20
    assert len(at["lines"]) < 1000
    assert at["lines"] == LINES[at["first"] - 1:at["first"] - 1 + len(at["lines"])]
    # the gutter's number beside the line drawn at the top of the view is that line's
    numbers = page.eval_on_selector("#gutter .numbers", "n => n.textContent.trim().split('\\n').map(Number)")
    assert numbers[0] <= FAR <= numbers[-1]
    page.screenshot(path=str(artifacts / "editor-window-far-down.png"))
    # the end of the text: its last lines are the window's last lines
    page.eval_on_selector("#editor-scroll", "s => { s.scrollTop = s.scrollHeight; }")
    page.wait_for_timeout(200)
    at = page.evaluate(WINDOW_JS)
    assert at["first"] - 1 + len(at["lines"]) == len(LINES)
    assert at["lines"][-2:] == LINES[-2:]


def test_typing_far_down_edits_that_line_and_a_reload_keeps_it(new_page, live_server, artifacts):
    page = long_page(new_page, live_server)
    scroll_to(page, FAR - 5)
    click_line(page, FAR)
    assert page.evaluate(CARET_LINE_JS) == FAR
    page.keyboard.type(" # far")
    expected = with_line(LINES, FAR, LINES[FAR - 1] + " # far")
    # common practice, no source: the key lands on the line clicked, and the whole text
    # (not the window) is what is solved and kept
    assert sent_text(page) == expected
    assert saved_text(page, expected) == expected
    page.screenshot(path=str(artifacts / "editor-typed-far-down.png"))
    page.reload()
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    at = page.evaluate(WINDOW_JS)
    assert len(at["lines"]) < 1000                      # a window again, after the reload
    assert sent_text(page) == expected


def test_undo_and_redo_restore_the_whole_text(new_page, live_server):
    page = long_page(new_page, live_server)
    scroll_to(page, FAR - 5)
    click_line(page, FAR)
    page.keyboard.type("xyz")
    page.keyboard.press("Enter")
    page.keyboard.type("# a new line")
    typed = LINES[:FAR - 1] + [LINES[FAR - 1] + "xyz", "# a new line"] + LINES[FAR:]
    assert sent_text(page) == "\n".join(typed)
    # the view goes elsewhere (the window moves away from the edit), then Ctrl+Z: each
    # undo takes back one step (the typing on a line is one step) and shows where
    scroll_to(page, 1)
    assert page.evaluate(WINDOW_JS)["first"] == 1
    page.focus("#editor-text")
    page.keyboard.press("Control+z")                   # the new line's text
    page.keyboard.press("Control+z")                   # the line break
    page.keyboard.press("Control+z")                   # "xyz"
    # common practice, no source: undo restores the text as it was, the caret where
    # the edit was
    assert sent_text(page) == TEXT
    assert page.evaluate(CARET_LINE_JS) == FAR
    at = page.evaluate(WINDOW_JS)
    assert at["first"] <= FAR < at["first"] + len(at["lines"])
    for _ in range(3):
        page.keyboard.press("Control+Shift+Z")
    assert sent_text(page) == "\n".join(typed)
    assert saved_text(page, "\n".join(typed)) == "\n".join(typed)


def test_select_all_copies_and_cuts_the_whole_text(new_page, live_server):
    page = long_page(new_page, live_server)
    scroll_to(page, FAR)
    click_line(page, FAR)
    page.keyboard.press("Control+a")
    page.keyboard.press("Control+c")
    # common practice, no source: "select all" then copy gives the whole text, not the
    # lines the textarea happens to hold
    assert page.evaluate("navigator.clipboard.readText()") == TEXT
    page.keyboard.press("Control+x")
    assert page.evaluate("navigator.clipboard.readText()") == TEXT
    assert page.input_value("#editor-text") == ""
    assert saved_text(page, "") == ""
    page.keyboard.press("Control+z")
    assert sent_text(page) == TEXT
    # select all, then a key typed over it replaces the whole text
    page.focus("#editor-text")
    page.keyboard.press("Control+a")
    page.keyboard.type("frequency 50 Hz")
    assert page.input_value("#editor-text") == "frequency 50 Hz"
    assert saved_text(page, "frequency 50 Hz") == "frequency 50 Hz"


def test_error_marks_land_on_their_line_far_down(new_page, live_server, artifacts):
    page = long_page(new_page, live_server)
    scroll_to(page, FAR - 5)
    click_line(page, FAR)
    bad = "Cx: capacitor n7 -> 0 10 uH"
    with page.expect_response(lambda r: r.url.endswith("/api/check"), timeout=TIMEOUT_MS) as answer:
        page.keyboard.press("Enter")
        page.keyboard.type(bad)
    page.wait_for_selector(f'#gutter .marks .error[data-line="{FAR + 1}"]', timeout=TIMEOUT_MS)
    error = answer.value.json()["errors"][0]
    # the server names the line typed (the one after FAR) and the value in henries
    assert error["line"] == FAR + 1
    span = bad[error["column"] - 1:error["column"] - 1 + error["length"]]
    assert span == "10 uH"
    # common practice, no source: the gutter's mark, the line's shading and its wavy
    # underline are level with the line the textarea draws there, the underline under
    # the characters the server named
    y = page.evaluate(LINE_Y_JS, FAR + 1)
    gutter = page.locator(f'#gutter .marks .error[data-line="{FAR + 1}"]').bounding_box()
    shade = page.locator(f'#backdrop .ln.error[data-line="{FAR + 1}"]').bounding_box()
    assert abs(gutter["y"] - y) < 1 and abs(shade["y"] - y) < 1
    assert page.inner_text(f'#backdrop .ln.error[data-line="{FAR + 1}"] .span') == span
    page.screenshot(path=str(artifacts / "editor-error-far-down.png"))
    # from the top of the text, the problem in the list takes the caret to its line
    scroll_to(page, 1)
    assert page.evaluate(WINDOW_JS)["first"] == 1
    page.click("#diagnostics li.error")
    assert page.evaluate(CARET_LINE_JS) == FAR + 1
    y = page.evaluate(LINE_Y_JS, FAR + 1)
    box = page.locator("#editor-scroll").bounding_box()
    assert box["y"] < y < box["y"] + box["height"] - 20
    page.wait_for_selector(f'.overlay .note.open[data-line="{FAR + 1}"], '
                           f'.overlay .note[data-line="{FAR + 1}"]', timeout=TIMEOUT_MS)


def test_undo_in_a_short_circuit_held_whole(new_page, live_server):
    page = new_page()
    open_page(page, live_server)
    assert page.input_value("#editor-text") == BENCH_CIRCUIT      # the first sample
    page.click("#editor-text")
    page.keyboard.press("Control+End")
    page.keyboard.type("# one")
    page.keyboard.press("Enter")
    page.keyboard.type("# two")
    assert page.input_value("#editor-text") == BENCH_CIRCUIT + "# one\n# two"
    # common practice, no source: undo takes back the typing step by step, redo brings
    # it again (the editor's own history, the same as in a long circuit)
    page.keyboard.press("Control+z")
    assert page.input_value("#editor-text") == BENCH_CIRCUIT + "# one\n"
    page.keyboard.press("Control+z")
    page.keyboard.press("Control+z")
    assert page.input_value("#editor-text") == BENCH_CIRCUIT
    page.keyboard.press("Control+y")
    assert page.input_value("#editor-text") == BENCH_CIRCUIT + "# one"
