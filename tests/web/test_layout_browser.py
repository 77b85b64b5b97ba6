"""The workbench's layout as a person meets it, in a real headless Chromium.

At 1366×768, 1024×768 and 683×768 (a 1366 screen at 200 % zoom): nothing runs off the
side of the page, Solve and Export stay in reach, no table cell is cut, the safety
cautions lie in the flow and never over a panel, the editor shows that a line goes on
past its edge and opens a note whole. Every text meets WCAG 2.2's contrast minimum,
and printing gives a short summary. Screenshots and PDFs land in test-artifacts/.
"""

from __future__ import annotations

import re

import pytest

from ..sheet.pdftext import pdf_pages
from .test_browser import TIMEOUT_MS, open_page, solve, type_circuit

pytestmark = pytest.mark.browser

#: check-values C22: 400 V line, 50 Hz, a wye load of 16 + j12 Ω a phase, 4-wire:
#: PF = 16/20 = 0.8 lagging; here with a feeder resistance and a long comment, so the
#: page shows a three-phase block, its phases, the block table and a line longer than
#: the editor is wide.
WIDE_CIRCUIT = """\
title Workshop feeder, three-phase: motors and heaters lumped on one board (invented for the layout tests)
frequency 50 Hz
Grid: voltage3  a b c -> 0   400 V line     # the supply transformer's secondary, star point earthed
Load: load3 wye a b c -> 0   16 + j12 ohm   # motors and heaters lumped per phase, as measured at the board
Heat: resistor  a -> 0       40 ohm
"""

#: Three values of the wrong unit: three errors, each with a note and a hint.
ERROR_CIRCUIT = """\
frequency 50 Hz
V1: voltage a -> 0 230 V
C9: capacitor a -> 0 10 uH   # a comment that runs on past the edge of the editor at any width
R9: resistor a -> 0 10 A
L9: inductor a -> 0 3 F
"""

SIZES = [(1366, 768), (1024, 768), (683, 768)]


def solved(new_page, live_server, width, height, text=WIDE_CIRCUIT):
    page = new_page(width, height)
    open_page(page, live_server)
    type_circuit(page, text)
    solve(page)
    page.wait_for_selector('#branch-table tr[data-element="Heat"]', timeout=TIMEOUT_MS)
    page.wait_for_selector("#phasor-drawing svg", timeout=TIMEOUT_MS)
    return page


#: Cells whose content is wider than the cell (cut or spilling), and tables wider than
#: the box that holds them (cut at its edge, to be scrolled to).
CLIPPED_JS = """() => {
  const cells = [...document.querySelectorAll('td, th')].filter(c => c.offsetParent)
    .filter(c => c.scrollWidth > c.clientWidth + 1).map(c => c.innerText);
  const tables = [...document.querySelectorAll('.results table')].filter(t => t.offsetParent)
    .filter(t => t.scrollWidth > t.parentElement.clientWidth + 1).map(t => t.id || t.className);
  return {cells, tables};
}"""

#: The part of each panel that can be seen (its box cut by every scrolling ancestor and
#: the window), and whether any of it lies under the cautions notice.
OVERLAP_JS = """() => {
  const notice = document.getElementById('cautions').getBoundingClientRect();
  const seen = (e) => {
    let r = e.getBoundingClientRect();
    let box = {l: r.left, t: r.top, r: r.right, b: r.bottom};
    for (let a = e.parentElement; a; a = a.parentElement) {
      const cs = getComputedStyle(a);
      if (cs.overflowX === 'visible' && cs.overflowY === 'visible') continue;
      const ar = a.getBoundingClientRect();
      box = {l: Math.max(box.l, ar.left), t: Math.max(box.t, ar.top),
             r: Math.min(box.r, ar.right), b: Math.min(box.b, ar.bottom)};
    }
    box = {l: Math.max(box.l, 0), t: Math.max(box.t, 0), r: Math.min(box.r, innerWidth),
           b: Math.min(box.b, innerHeight)};
    return box;
  };
  const hits = [];
  for (const e of document.querySelectorAll('.panel, .editor-pane, .topbar, .facts')) {
    if (!e.offsetParent && getComputedStyle(e).position !== 'sticky') continue;
    const b = seen(e);
    if (b.r <= b.l || b.b <= b.t) continue;
    const overlap = Math.min(b.r, notice.right) - Math.max(b.l, notice.left) > 0.5 &&
                    Math.min(b.b, notice.bottom) - Math.max(b.t, notice.top) > 0.5;
    if (overlap) hits.push(e.id || e.className);
  }
  // And what is drawn at points of the notice is the notice itself.
  const strays = [];
  for (const fx of [0.1, 0.5, 0.9]) for (const fy of [0.2, 0.8]) {
    const x = notice.left + fx * notice.width, y = notice.top + fy * notice.height;
    if (y < 0 || y >= innerHeight) continue;
    const at = document.elementFromPoint(x, y);
    if (at && !at.closest('#cautions')) strays.push(at.className || at.tagName);
  }
  return {hits, strays};
}"""


def reachable(page, selector, width, height):
    box = page.locator(selector).bounding_box()
    return (box is not None and box["x"] >= 0 and box["x"] + box["width"] <= width + 0.5
            and box["y"] >= 0 and box["y"] + box["height"] <= height + 0.5)


@pytest.mark.parametrize("width, height", SIZES)
def test_nothing_runs_off_the_side_and_solve_stays_in_reach(new_page, live_server, artifacts,
                                                           width, height):
    page = solved(new_page, live_server, width, height)
    if page.get_attribute('#branch-table tr[data-group="Load"]', "aria-expanded") != "true":
        page.click('#branch-table tr[data-group="Load"]')            # open the block's phases
    page.wait_for_selector('#branch-table tr.phase[data-in-group="Load"]', timeout=TIMEOUT_MS)
    # common practice, no source (WCAG 2.2, 1.4.10 Reflow): no sideways scrolling of
    # the document at 1366 and 1024 px, nor at 683 px (a 1366 screen at 200 %).
    assert page.evaluate("document.documentElement.scrollWidth") <= width
    for selector in ("#solve", "#export-sheet", "#samples"):
        assert reachable(page, selector, width, height), selector
    if width >= 1366:
        # A long title gives way (cut with an ellipsis) before the bar takes a second
        # row (common practice, no source).
        assert page.locator(".topbar").bounding_box()["height"] < 50
    page.screenshot(path=str(artifacts / f"layout-{width}x{height}.png"))
    # Scrolled to the foot of the page, the bar with Solve and Export is still there.
    page.evaluate("window.scrollTo(0, document.documentElement.scrollHeight)")
    page.wait_for_timeout(100)
    for selector in ("#solve", "#export-sheet"):
        assert reachable(page, selector, width, height), selector
    page.screenshot(path=str(artifacts / f"layout-{width}x{height}-foot.png"))
    clipped = page.evaluate(CLIPPED_JS)
    # common practice, no source: every value is read whole ("0.8 lagging", not "laggin").
    assert clipped["cells"] == []
    if width >= 1024:
        assert clipped["tables"] == []
    else:
        # At 683 px the ten columns of the branch table scroll sideways inside their
        # panel (a value is never broken from its unit); every other table fits.
        assert clipped["tables"] in ([], ["branch-table"])
    pf = page.locator("#group-table tbody tr").first.locator("td").nth(5)
    assert pf.inner_text().strip().endswith("lagging")


@pytest.mark.parametrize("width, height", SIZES + [(1920, 1080)])
def test_cautions_lie_in_the_flow_and_never_over_a_panel(new_page, live_server, artifacts,
                                                        width, height):
    page = solved(new_page, live_server, width, height)
    for state in ("closed", "open"):
        if state == "open":
            page.click("#cautions-toggle")
            assert page.get_attribute("#cautions-toggle", "aria-expanded") == "true"
        for scroll in (0, 10 ** 6):
            page.evaluate(f"window.scrollTo(0, {scroll})")
            page.evaluate("document.getElementById('results').scrollTop = 1e6")
            page.wait_for_timeout(50)
            overlap = page.evaluate(OVERLAP_JS)
            # common practice, no source: a notice never hides what it sits beside.
            assert overlap == {"hits": [], "strays": []}, (state, scroll, overlap)
        # No caution is cut short with an ellipsis: each title (closed) or each whole
        # text (open) is as wide as its box.
        cut = page.eval_on_selector_all(
            "#caution-list li", "items => items.filter(li => li.offsetParent)"
            ".filter(li => li.scrollWidth > li.clientWidth + 1).map(li => li.innerText)")
        assert cut == [], state
        assert page.evaluate("getComputedStyle(document.getElementById('cautions')).position") \
            in ("static", "relative")
        shown = page.inner_text("#caution-list")
        assert "Stored charge can kill" in shown and "Codes and licensed practice" in shown
        if state == "open":
            # The whole text of the first caution, as cautions.py words it.
            assert "verify zero voltage at every terminal" in shown
        page.evaluate("window.scrollTo(0, 0)")
        page.screenshot(path=str(artifacts / f"layout-cautions-{state}-{width}x{height}.png"))


@pytest.mark.parametrize("width, height", [(1366, 768), (683, 768)])
def test_editor_marks_long_lines_and_opens_notes_whole(new_page, live_server, artifacts,
                                                      width, height):
    page = new_page(width, height)
    open_page(page, live_server)
    type_circuit(page, ERROR_CIRCUIT)
    page.wait_for_selector("#diagnostics li.error >> nth=2", timeout=TIMEOUT_MS)
    # The badge "✖ 3 errors" is one line (one box, no wrap).
    badge = page.locator("#check-state")
    assert re.search(r"3 errors", badge.inner_text())
    assert page.eval_on_selector("#check-state", "e => e.getClientRects().length") == 1
    line_height = page.eval_on_selector("#check-state", "e => parseFloat(getComputedStyle(e).lineHeight)")
    assert badge.bounding_box()["height"] <= 1.5 * line_height
    # Line 3 goes on past the editor's edge: sideways scrolling (of the text's scroll
    # box, textwindow.js) is there and drawn, and the line carries a mark at the edge.
    area = page.eval_on_selector("#editor-scroll", """t => ({sw: t.scrollWidth, cw: t.clientWidth,
        ox: getComputedStyle(t).overflowX, bar: t.offsetHeight - t.clientHeight})""")
    assert area["sw"] > area["cw"] and area["ox"] == "scroll"
    assert page.locator('.overlay [data-line="3"].cut').count() == 1
    # Every note shown on its line is whole inside the editor.
    code = page.locator("#editor .code").bounding_box()
    notes = page.eval_on_selector_all(".overlay .note", "ns => ns.map(n => { const r = n.getBoundingClientRect();"
                                      " return {l: r.left, r: r.right, t: r.top, b: r.bottom,"
                                      " sw: n.scrollWidth, cw: n.clientWidth, open: n.classList.contains('open')}; })")
    for note in notes:
        assert note["l"] >= code["x"] - 0.5 and note["r"] <= code["x"] + code["width"] + 0.5, note
    # The caret on an error line opens its note whole: wrapped, inside the editor.
    page.click("#diagnostics li.error >> nth=1")                      # line 4
    page.wait_for_selector('.overlay .note.open[data-line="4"]', timeout=TIMEOUT_MS)
    box = page.evaluate("""() => { const n = document.querySelector('.overlay .note.open');
        const r = n.getBoundingClientRect();
        return {l: r.left, r: r.right, t: r.top, b: r.bottom, sw: n.scrollWidth, cw: n.clientWidth,
                sh: n.scrollHeight, ch: n.clientHeight, text: n.innerText}; }""")
    assert box["sw"] <= box["cw"] and box["sh"] <= box["ch"] + 1
    assert box["l"] >= code["x"] - 0.5 and box["r"] <= code["x"] + code["width"] + 0.5
    assert box["t"] >= code["y"] - 0.5 and box["b"] <= code["y"] + code["height"] + 0.5
    # The note's whole text, hint included (the checker's words for a value in amperes).
    assert "takes ohms" in box["text"] and "hint:" in box["text"]
    page.screenshot(path=str(artifacts / f"layout-editor-notes-{width}x{height}.png"))
    # The caret moved to a clean line closes it again.
    page.evaluate("() => { const t = document.getElementById('editor-text'); t.focus();"
                  " t.setSelectionRange(0, 0); }")
    page.wait_for_selector(".overlay .note.open", state="detached", timeout=TIMEOUT_MS)


def test_printing_the_workbench_gives_a_short_summary(new_page, live_server, artifacts):
    page = solved(new_page, live_server, 1366, 768)
    for paper, (width_pt, height_pt) in {"A4": (595.28, 841.89), "Letter": (612.0, 792.0)}.items():
        pdf = page.pdf(format=paper, print_background=True)
        (artifacts / f"workbench-print-{paper}.pdf").write_bytes(pdf)
        pages = pdf_pages(pdf)
        # ISO 216 A4 and ANSI Letter in points (1/72 in), Chromium rounding to 1.5 pt.
        assert abs(pages[0]["width"] - width_pt) < 1.5 and abs(pages[0]["height"] - height_pt) < 1.5
        assert 1 <= len(pages) <= 2, (paper, len(pages))
        text = " ".join(" ".join(p["text"] for p in pages).split())
        for wanted in ("Workshop feeder", "BRANCHES", "PHASOR DIAGRAM", "POWER SUMMARY",
                       "Stored charge can kill", "verify zero voltage at every terminal",
                       "Grid", "Heat", "0.8 lagging"):
            assert wanted in text, (paper, wanted)
        # No editor, no buttons: the circuit's own text and the controls stay off paper.
        for unwanted in ("400 V line", "Export sheet", "Copy blocks", "Frequency response"):
            assert unwanted not in text, (paper, unwanted)
    page.emulate_media(media="print")
    size = page.eval_on_selector("#phasor-drawing svg", "s => s.getBoundingClientRect().height")
    # 80 mm at 96 CSS px per inch (CSS Values 4, 6.2): a diagram that leaves room for the rest.
    assert size <= 80 / 25.4 * 96 + 1
    page.set_viewport_size({"width": 794, "height": 1123})
    page.screenshot(path=str(artifacts / "workbench-print-media.png"), full_page=True)


#: Every text on the page with its contrast against what is behind it (WCAG 2.2, 1.4.3
#: and the definitions of "contrast ratio" and "relative luminance"): colours composited
#: over their ancestors' backgrounds with their alpha and every ancestor's opacity; for a
#: gradient behind a text, the stop that gives the worst ratio. Disabled controls are
#: exempt (1.4.3: "part of an inactive user interface component"), and so are the
#: pictures (SVG), whose labels are checked with the drawings, and the editor's
#: backdrop, whose text is transparent (the textarea above it shows the text).
CONTRAST_JS = r"""() => {
  const parse = (c) => {
    const m = c.match(/rgba?\(([^)]+)\)/);
    if (!m) return null;
    const p = m[1].split(/[ ,/]+/).filter(Boolean).map(Number);
    return {r: p[0], g: p[1], b: p[2], a: p.length > 3 ? p[3] : 1};
  };
  const over = (top, below) => ({r: top.r * top.a + below.r * (1 - top.a),
    g: top.g * top.a + below.g * (1 - top.a), b: top.b * top.a + below.b * (1 - top.a), a: 1});
  const lum = (c) => {
    const ch = (v) => { v /= 255; return v <= 0.04045 ? v / 12.92 : Math.pow((v + 0.055) / 1.055, 2.4); };
    return 0.2126 * ch(c.r) + 0.7152 * ch(c.g) + 0.0722 * ch(c.b);
  };
  const ratio = (a, b) => { const [x, y] = [lum(a), lum(b)].sort((p, q) => q - p); return (x + 0.05) / (y + 0.05); };
  const chain = (e) => { const list = []; for (let a = e; a; a = a.parentElement) list.unshift(a); return list; };
  const out = [];
  const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
  const seen = new Set();
  const candidates = [];
  for (let n = walker.nextNode(); n; n = walker.nextNode()) {
    if (!n.textContent.trim()) continue;
    const e = n.parentElement;
    if (!e || seen.has(e)) continue;
    seen.add(e);
    candidates.push(e);
  }
  for (const e of document.querySelectorAll('input, select, textarea')) candidates.push(e);
  for (const e of candidates) {
    if (e.closest('svg, :disabled, [hidden], .skip')) continue;
    const cs = getComputedStyle(e);
    if (cs.visibility !== 'visible' || !e.getClientRects().length) continue;
    const rect = e.getBoundingClientRect();
    if (rect.width < 1 || rect.height < 1) continue;
    let backs = [{r: 255, g: 255, b: 255, a: 1}];
    let opacity = 1;
    for (const a of chain(e)) {
      const s = getComputedStyle(a);
      opacity *= Number(s.opacity);
      const colour = parse(s.backgroundColor);
      const stops = (s.backgroundImage.match(/rgba?\([^)]+\)/g) || []).map(parse);
      backs = backs.map((b) => colour && colour.a ? over({...colour, a: colour.a * opacity}, b) : b);
      if (stops.length) {
        backs = backs.flatMap((b) => stops.map((st) => over({...st, a: st.a * opacity}, b)));
      }
    }
    const fgColour = parse(cs.color);
    const size = parseFloat(cs.fontSize), weight = Number(cs.fontWeight) || 400;
    const large = size >= 24 || (size >= 18.66 && weight >= 700);
    const need = large ? 3 : 4.5;
    const check = (fg, what) => {
      if (fg.a === 0) return;            // transparent text (the editor's backdrop) is not shown

      const worst = Math.min(...backs.map((b) => ratio(over({...fg, a: fg.a * opacity}, b), b)));
      if (worst < need) out.push({what, text: (e.value || e.innerText || e.placeholder || '').trim().slice(0, 40),
        cls: e.className || e.tagName, id: e.id, ratio: Math.round(worst * 100) / 100, need});
    };
    if (fgColour && (e.innerText || '').trim() || ['INPUT', 'SELECT', 'TEXTAREA'].includes(e.tagName) && e.value) {
      check(fgColour, 'text');
    }
    if (e.placeholder && !e.value) {
      const ph = parse(getComputedStyle(e, '::placeholder').color);
      if (ph) check(ph, 'placeholder');
    }
  }
  return out;
}"""


def low_contrast(page):
    return page.evaluate(CONTRAST_JS)


def test_every_text_meets_the_contrast_minimum(new_page, live_server, artifacts):
    page = solved(new_page, live_server, 1366, 768)
    # WCAG 2.2, 1.4.3 Contrast (Minimum): at least 4.5:1, 3:1 for large text; checked
    # on the solved page, with the cautions open, on a circuit with errors and an open
    # note, and with results that an edit has made stale.
    assert low_contrast(page) == []
    page.click("#cautions-toggle")
    assert low_contrast(page) == []
    type_circuit(page, ERROR_CIRCUIT)
    page.wait_for_selector("#diagnostics li.error >> nth=2", timeout=TIMEOUT_MS)
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.click("#solve")                                          # 422: results now stale
    page.wait_for_selector("#results.stale", timeout=TIMEOUT_MS)
    page.click("#diagnostics li.error >> nth=1")
    page.wait_for_selector(".overlay .note.open", timeout=TIMEOUT_MS)
    assert low_contrast(page) == []
    page.screenshot(path=str(artifacts / "layout-stale-errors-1366x768.png"))
    # The line numbers in particular (their contrast was 2.9:1).
    ratio = page.evaluate("""() => { const g = getComputedStyle(document.querySelector('.gutter'));
        return [g.color, g.backgroundColor]; }""")
    assert ratio == ["rgb(95, 102, 112)", "rgb(245, 241, 231)"]   # 5.3:1 by the formula above
    for tab in ("#tab-correct", "#tab-port", "#tab-sweep", "#tab-harmonics"):
        page.click(tab)
        assert low_contrast(page) == [], tab
