"""Labels of the pictures never cover one another, measured by Chromium: getBBox of every
text of each SVG, on the page, from the API and in the sheet, for circuits that crowd
them (in-phase V and I, many short phasors, twelve elements, a three-phase block)."""

from __future__ import annotations

import itertools

import pytest

from tests.presentation.drawing.test_labels import IN_PHASE, SHORT, THREE, TWELVE, WAVES

pytestmark = pytest.mark.browser

TIMEOUT_MS = 15_000

#: Every text's box in each SVG under `root`, in the picture's own units.
BOXES = """(root) => [...document.querySelectorAll(root + ' svg')].map((svg) =>
  [...svg.querySelectorAll('text')].map((t) => { const b = t.getBBox();
    return [t.textContent, b.x, b.y, b.x + b.width, b.y + b.height]; }))"""


def overlaps(pictures):
    """Pairs of texts of one picture whose boxes overlap (common practice, no source:
    a label that covers another cannot be read)."""
    bad = []
    for boxes in pictures:
        assert boxes, "a picture without any text"
        for a, b in itertools.combinations(boxes, 2):
            if a[1] < b[3] and b[1] < a[3] and a[2] < b[4] and b[2] < a[4]:
                bad.append((a[0], b[0]))
    return bad


def open_bench(new_page, live_server, width=1366, height=768):
    page = new_page(width, height)
    page.goto(live_server.url + "/")
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    return page


def post(page, route, body):
    return page.evaluate("""async ([route, body]) => {
        const r = await fetch(route, {method: 'POST', headers: {'Content-Type': 'application/json'},
                                      body: JSON.stringify(body)});
        return {status: r.status, text: await r.text()}; }""", [route, body])


def test_the_page_diagram_of_in_phase_v_and_i(new_page, live_server, artifacts):
    page = open_bench(new_page, live_server)
    with page.expect_response(lambda r: r.url.endswith("/api/phasors")):
        page.fill("#editor-text", IN_PHASE)
        page.keyboard.press("Control+Enter")
    page.wait_for_selector('#phasor-drawing line.pb-shaft[data-element="R1"]', state="attached",
                           timeout=TIMEOUT_MS)
    pictures = page.evaluate(BOXES, "#phasor-drawing")
    words = [w for w, *_ in pictures[0]]
    # textbook: a resistor's V and I are in phase; both named, neither over the other
    assert any("V(R1" in w for w in words) and any("I(R1" in w for w in words)
    assert overlaps(pictures) == []
    page.locator("#phasor-drawing").screenshot(path=str(artifacts / "labels-in-phase.png"))


@pytest.mark.parametrize("width, height", [(520, 520), (320, 320), (900, 500)])
def test_crowded_diagrams_from_the_api(new_page, live_server, artifacts, width, height):
    page = open_bench(new_page, live_server)
    cases = [(SHORT, ["V1", "Rbig", "R1", "R2", "R3", "C1", "L1", "R4", "R5"]),
             (TWELVE, None), (IN_PHASE, ["R1", "V1"])]
    html = []
    for circuit, names in cases:
        if names is None:
            solved = post(page, "/api/solve", {"netlist": circuit})
            assert solved["status"] == 200
            names = [n for n in __import__("json").loads(solved["text"])["elements"]][:12]
        answer = post(page, "/api/phasors", {"netlist": circuit, "elements": names,
                                             "width": width, "height": height})
        assert answer["status"] == 200, answer["text"]
        html.append(__import__("json").loads(answer["text"])["svg"])
    answer = post(page, "/api/three-phase", {"netlist": THREE, "group": "M",
                                             "width": width, "height": height})
    html.append(__import__("json").loads(answer["text"])["svg"])
    for name in ("Zl", "C1", "R1", "Vs"):
        answer = post(page, "/api/waveforms", {"netlist": WAVES, "elements": [name],
                                               "width": max(width, 360), "height": max(280, height // 2)})
        html.append(__import__("json").loads(answer["text"])["elements"][name]["svg"])
    page.evaluate("""(pictures) => { const box = document.createElement('div');
        box.id = 'label-test'; box.innerHTML = pictures.join('');
        document.body.prepend(box); }""", html)
    assert overlaps(page.evaluate(BOXES, "#label-test")) == []
    page.locator("#label-test svg").first.screenshot(
        path=str(artifacts / f"labels-short-phasors-{width}x{height}.png"))


def test_the_sheet_of_many_short_phasors(new_page, live_server, artifacts):
    page = open_bench(new_page, live_server)
    answer = post(page, "/api/sheet", {"netlist": SHORT})
    assert answer["status"] == 200
    page.set_content(answer["text"])
    pictures = page.evaluate(BOXES, "body")
    assert len(pictures) >= 2
    assert overlaps(pictures) == []
    # the key names every element the sheet draws (the caption named one of six)
    keys = page.evaluate("""() => [...document.querySelectorAll('svg.pb-phasor')].map((svg) =>
        [...svg.querySelectorAll('g.pb-key')].map((g) => g.dataset.entry))""")
    shafts = page.evaluate("""() => [...document.querySelectorAll('svg.pb-phasor')].map((svg) =>
        [...new Set([...svg.querySelectorAll('line.pb-shaft, circle[data-zero]')].map((l) => l.dataset.element))])""")
    assert keys == shafts
    page.locator("svg.pb-phasor").first.screenshot(path=str(artifacts / "labels-sheet-short.png"))
