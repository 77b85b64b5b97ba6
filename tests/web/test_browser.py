"""What a person sees in the workbench page, checked in a real headless Chromium.

One browser for the session (conftest.py); each test gets a fresh context, so an
empty localStorage, and fails on any JS error or console error of the page.
"""

from __future__ import annotations

import math

import pytest

from .conftest import (BENCH_CIRCUIT, BENCH_I_DEG, CAP_CIRCUIT, CHROMIUM, CHROMIUM_ARGS)

pytestmark = pytest.mark.browser

TIMEOUT_MS = 10_000

UNIT_ERROR = """\
frequency 50 Hz
V1: voltage a -> 0 230 V
# the next line gives a capacitor in henries
C1: capacitor a -> 0 10 uH
"""


def open_page(page, live_server):
    page.goto(live_server.url + "/")
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)


def type_circuit(page, text):
    """Replace the editor's text in one input event, as a paste does."""
    page.fill("#editor-text", text)
    page.focus("#editor-text")


def solve(page):
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.keyboard.press("Control+Enter")


def wait_views(page, element):
    # "attached", not "visible": a horizontal shaft has a zero-height box.
    page.wait_for_selector(f'#phasor-drawing line.pb-shaft[data-element="{element}"]',
                           state="attached", timeout=TIMEOUT_MS)
    page.wait_for_selector("#waveform-drawing svg polyline", timeout=TIMEOUT_MS)
    page.wait_for_function(
        "name => document.getElementById('waveform-element').textContent.includes(name)",
        arg=element, timeout=TIMEOUT_MS)


def branch_texts(page):
    return page.eval_on_selector_all(
        "#branch-table tbody tr[data-element]",
        "rows => rows.map(r => [r.dataset.element, ...[...r.cells].map(c => c.innerText)])")


def test_first_visit_loads_the_chosen_sample_and_solves(new_page, live_server):
    page = new_page()
    open_page(page, live_server)
    # The server was started with initial_sample="rc-bench" and the profile is empty.
    assert page.input_value("#editor-text") == BENCH_CIRCUIT
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    assert [row[0] for row in branch_texts(page)] == ["V1", "R1", "C1"]
    assert "RC bench" in page.inner_text("#fact-title")
    balance = page.locator("#fact-balance")
    # The check reads as words and a symbol, not only a colour.
    assert "closes" in balance.inner_text() and "✓" in balance.inner_text()
    assert page.locator("#cautions").is_visible()


def test_paste_a_circuit_and_read_the_branch_table(new_page, live_server):
    page = new_page()
    open_page(page, live_server)
    type_circuit(page, CAP_CIRCUIT)
    solve(page)
    page.wait_for_function("() => document.querySelectorAll('#branch-table tr[data-element]').length === 2"
                           " && document.getElementById('fact-title').textContent.includes('Capacitor')",
                           timeout=TIMEOUT_MS)
    rows = {row[0]: row[1:] for row in branch_texts(page)}
    c1 = " | ".join(rows["C1"])
    # check-values C1 (formula Xc = 1/(2πfC)): 0.722566 A at +90°, Q = −166.19 var, P = 0.
    assert "722.6 mA ∠90.00°" in c1
    assert "-166.2 var" in c1
    assert "318.3 Ω ∠-90.00°" in c1
    assert "0 W" in c1 and "leading" in c1
    assert page.inner_text("#fact-frequency") == "f = 50 Hz"
    nodes = page.inner_text("#node-table")
    assert "230 V ∠0.00°" in nodes


def arrow_geometry(page, element, quantity):
    """Screen coordinates (px) of an arrow's origin and tip, and the phasor's own angle."""
    return page.eval_on_selector(
        f'#phasor-drawing line.pb-shaft[data-element="{element}"][data-quantity="{quantity}"]',
        """line => {
            const m = line.getScreenCTM();
            const at = (x, y) => { const p = new DOMPoint(x, y).matrixTransform(m); return [p.x, p.y]; };
            return {origin: at(line.x1.baseVal.value, line.y1.baseVal.value),
                    tip: at(line.x2.baseVal.value, line.y2.baseVal.value),
                    deg: Number(line.dataset.deg)};
        }""")


def test_select_an_element_and_see_its_phasors_and_waveform(new_page, live_server, artifacts):
    page = new_page()
    open_page(page, live_server)
    type_circuit(page, BENCH_CIRCUIT)
    solve(page)
    page.click('#branch-table tr[data-element="C1"]')
    wait_views(page, "C1")
    assert page.get_attribute('#branch-table tr[data-element="C1"]', "aria-selected") == "true"
    # One arrow (a shaft line and a head polygon) per phasor: V and I of C1.
    assert page.locator("#phasor-drawing line.pb-shaft").count() == 2
    assert page.locator("#phasor-drawing .pb-arrow polygon").count() == 2
    # Three traces and the mean-power line in the waveform panel.
    assert page.locator("#waveform-drawing polyline").count() == 3
    assert page.locator("#waveform-drawing line.pb-mean").count() == 1
    # C1 returns energy each cycle, so the p(t) < 0 region is shaded.
    assert page.locator("#waveform-drawing polygon.pb-returned").count() >= 1

    geo = arrow_geometry(page, "C1", "current")
    # R = Xc: the current leads the source by 45° (conftest, formula); the drawn arrow
    # must point that way on screen, to within a pixel at its tip.
    assert geo["deg"] == pytest.approx(BENCH_I_DEG, abs=1e-6)
    (x0, y0), (x1, y1) = geo["origin"], geo["tip"]
    length = math.hypot(x1 - x0, y1 - y0)
    assert length > 40
    th = math.radians(BENCH_I_DEG)
    expected = (x0 + length * math.cos(th), y0 - length * math.sin(th))   # screen y points down
    assert math.dist(expected, (x1, y1)) < 1.0
    v = arrow_geometry(page, "C1", "voltage")
    # The capacitor's voltage lags its current by 90°: V(C1) at 45° − 90° = −45°.
    assert v["deg"] == pytest.approx(-45.0, abs=1e-6)

    # Hovering an arrow (before R1's arrow lies on it: same series current) shows its exact value in the readout.
    page.hover('#phasor-drawing .pb-arrow:has(line.pb-shaft[data-element="C1"][data-quantity="current"])',
               timeout=TIMEOUT_MS)
    assert "I(C1) = 510.9 mA ∠45.00°" in page.inner_text("#phasor-readout")

    # Adding R1 in the picker draws its two arrows as well.
    with page.expect_response(lambda r: r.url.endswith("/api/phasors")):
        page.check('#phasor-picker input[value="R1"]')
    page.wait_for_selector('#phasor-drawing line.pb-shaft[data-element="R1"]', state="attached",
                           timeout=TIMEOUT_MS)
    assert page.locator("#phasor-drawing line.pb-shaft").count() == 4

    facts = page.inner_text("#waveform-facts")
    assert "mean power P" in facts and "energy returned / cycle" in facts
    page.screenshot(path=str(artifacts / "workbench-selected-1366x768.png"))


def test_keyboard_selects_and_sorts(new_page, live_server):
    page = new_page()
    open_page(page, live_server)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    first = page.locator('#branch-table tbody tr[tabindex="0"]')
    first.focus()
    start = first.get_attribute("data-element")
    page.keyboard.press("ArrowDown")
    page.wait_for_function("s => document.activeElement.dataset.element && document.activeElement.dataset.element !== s",
                           arg=start, timeout=TIMEOUT_MS)
    focused = page.evaluate("document.activeElement.dataset.element")
    assert page.get_attribute(f'#branch-table tr[data-element="{focused}"]', "aria-selected") == "true"
    wait_views(page, focused)
    # Sort by |S| descending with two activations of its heading.
    head = page.locator('#branch-table th[data-key="s"] button')
    head.click()
    page.locator('#branch-table th[data-key="s"] button').click()
    assert page.get_attribute('#branch-table th[data-key="s"]', "aria-sort") == "descending"
    values = page.evaluate("""() => [...document.querySelectorAll('#branch-table tbody tr[data-element]')]
                              .map(r => r.dataset.element)""")
    # In a series loop every element carries the same current, so |S| ranks by |V|:
    # the source (230 V) first (common practice, no source).
    assert values[0] == "V1"


def test_an_error_is_shown_at_its_line(new_page, live_server, artifacts):
    page = new_page()
    open_page(page, live_server)
    type_circuit(page, UNIT_ERROR)
    page.wait_for_selector("#gutter .error", timeout=TIMEOUT_MS)
    marked = page.eval_on_selector_all("#gutter .error", "ns => ns.map(n => n.textContent)")
    assert page.locator("#edit-state").is_visible()      # the sample's results are now stale
    assert marked == ["4"]                      # the capacitor line, counted from 1
    item = page.locator("#diagnostics li.error").first
    assert "line 4" in item.inner_text()
    assert "F" in item.locator(".msg").inner_text()
    assert item.locator(".fix").inner_text().startswith("hint") or item.locator(".fix").count() == 1
    # The marked line of the backdrop sits level with line 4 of the gutter.
    line_box = page.locator('#backdrop .ln.error').bounding_box()
    gutter_box = page.locator("#gutter .error").bounding_box()
    assert abs(line_box["y"] - gutter_box["y"]) < 1.0
    assert "✖" in page.inner_text("#check-state")
    page.screenshot(path=str(artifacts / "workbench-error-1366x768.png"))
    # Solving anyway says why it did not solve.
    solve(page)
    page.wait_for_selector("#result-banner:not([hidden])", timeout=TIMEOUT_MS)
    assert "Not solved" in page.inner_text("#result-banner")
    # Clicking the problem puts the caret on its line.
    item.click()
    caret_line = page.evaluate("""() => { const t = document.getElementById('editor-text');
                                  return t.value.slice(0, t.selectionStart).split('\\n').length; }""")
    assert caret_line == 4


def test_samples_menu_loads_a_sample(new_page, live_server):
    page = new_page()
    open_page(page, live_server)
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.select_option("#samples", "cap-mains")
    assert page.input_value("#editor-text") == CAP_CIRCUIT
    page.wait_for_function("() => document.getElementById('fact-title').textContent.includes('Capacitor')",
                           timeout=TIMEOUT_MS)


def test_the_menu_names_the_sample_in_the_editor_until_it_is_edited(new_page, live_server):
    # common practice, no source: a menu shows what is loaded — the server's start-up
    # sample on a fresh page and after a reload, nothing once the text is edited
    page = new_page()
    open_page(page, live_server)
    assert page.input_value("#editor-text") == BENCH_CIRCUIT
    assert page.input_value("#samples") == "rc-bench"
    page.reload()
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    assert page.input_value("#samples") == "rc-bench"
    type_circuit(page, BENCH_CIRCUIT + "# edited\n")
    page.wait_for_function("() => document.getElementById('samples').value === ''",
                           timeout=TIMEOUT_MS)


def test_reload_keeps_the_circuit_and_the_view(playwright_driver, live_server, tmp_path):
    """A persistent profile: the circuit and the selection survive a reload and a restart."""
    profile = tmp_path / "profile"
    errors = []

    def launch():
        context = playwright_driver.chromium.launch_persistent_context(
            str(profile), executable_path=CHROMIUM, args=CHROMIUM_ARGS,
            viewport={"width": 1366, "height": 768})
        page = context.pages[0] if context.pages else context.new_page()
        page.on("pageerror", lambda exc: errors.append(str(exc)))
        return context, page

    context, page = launch()
    open_page(page, live_server)
    type_circuit(page, CAP_CIRCUIT)
    solve(page)
    page.click('#branch-table tr[data-element="V1"]')
    wait_views(page, "V1")
    page.reload()
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    assert page.input_value("#editor-text") == CAP_CIRCUIT
    page.wait_for_selector('#branch-table tr.selected[data-element="V1"]', timeout=TIMEOUT_MS)
    context.close()

    context, page = launch()                       # a new browser process, same profile
    open_page(page, live_server)
    assert page.input_value("#editor-text") == CAP_CIRCUIT
    page.wait_for_selector('#branch-table tr.selected[data-element="V1"]', timeout=TIMEOUT_MS)
    context.close()
    assert errors == []


@pytest.mark.parametrize("width, height", [(1366, 768), (1920, 1080)])
def test_layout_fits_the_screen(new_page, live_server, artifacts, width, height):
    page = new_page(width, height)
    open_page(page, live_server)
    wait_views(page, "R1")
    # No horizontal scrolling of the page, the branch table fits its panel, and the
    # facts line and cautions stay on screen.
    assert page.evaluate("document.documentElement.scrollWidth") <= width
    fits = page.eval_on_selector("#branch-table", "t => t.scrollWidth <= t.parentElement.clientWidth + 1")
    assert fits
    for selector in ("#facts", "#cautions", "#solve", "#editor-text"):
        box = page.locator(selector).bounding_box()
        assert box and box["y"] >= 0 and box["y"] + box["height"] <= height + 0.5, selector
    page.screenshot(path=str(artifacts / f"workbench-{width}x{height}.png"))
    page.click("#cautions-toggle")
    assert page.get_attribute("#cautions-toggle", "aria-expanded") == "true"
    page.screenshot(path=str(artifacts / f"workbench-cautions-{width}x{height}.png"))


def test_a_long_branch_table_draws_part_then_all(new_page, live_server):
    # 320 resistors in parallel: more rows than the page draws at first.
    text = "frequency 50 Hz\nV1: voltage a -> 0 10 V\n" + "".join(
        f"R{k}: resistor a -> 0 {k + 1} ohm\n" for k in range(320))
    page = new_page()
    open_page(page, live_server)
    type_circuit(page, text)
    solve(page)
    page.wait_for_selector("#branch-table tr.more", timeout=TIMEOUT_MS)
    drawn = page.locator("#branch-table tbody tr[data-element]").count()
    assert 0 < drawn < 321
    assert "of 321 rows" in page.inner_text("#branch-table tr.more")
    page.click("#branch-table tr.more button")
    assert page.locator("#branch-table tbody tr[data-element]").count() == 321
    # Ohm's law (common practice, no source): R320 = 320 Ω takes 10/320 A = 31.25 mA.
    assert "31.25 mA" in page.inner_text('#branch-table tr[data-element="R319"]')
