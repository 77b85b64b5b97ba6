"""The sheet as a person sees it: opened offline in headless Chromium, and printed.

Each sheet is opened from a file with the network switched off and every request
refused, as a reviewer opens an archived sheet years later. Screenshots and PDFs land
in test-artifacts/sheet/ (git-ignored) to be looked at.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import pytest

from phasorbench.sheet import render_sheet

from .conftest import HOSTILE, NOW, RC_BENCH, ROOT, STAMP, ladder
from .pdftext import pdf_pages

pytestmark = pytest.mark.browser

#: ISO 216 A4 is 210 × 297 mm and ANSI Letter 8.5 × 11 in, in points (1/72 in).
#: Chromium rounds the paper to whole CSS pixels (1/96 in), so allow 1.5 pt.
PAPER = {"A4": (595.28, 841.89), "Letter": (612.0, 792.0)}


class Opened:
    """A sheet opened from disk, offline, with every request, dialog and error kept."""

    def __init__(self, browser, path, width=1280, height=900):
        self.requests, self.refused, self.dialogs, self.errors = [], [], [], []
        self.context = browser.new_context(viewport={"width": width, "height": height})
        self.context.set_offline(True)
        self.context.route("**/*", self._route)
        page = self.page = self.context.new_page()
        page.on("request", lambda r: self.requests.append(r.url))
        page.on("dialog", self._dialog)
        page.on("pageerror", lambda e: self.errors.append(str(e)))
        page.on("console", lambda m: self.errors.append(m.text) if m.type == "error" else None)
        self.url = path.resolve().as_uri()
        page.goto(self.url)
        page.wait_for_load_state("load")

    def _route(self, route):
        if route.request.url == self.url:
            route.continue_()
        else:
            self.refused.append(route.request.url)
            route.abort()

    def _dialog(self, dialog):
        self.dialogs.append(dialog.message)
        dialog.dismiss()

    def close(self):
        self.context.close()


@pytest.fixture
def open_sheet(sheet_browser, tmp_path):
    opened = []

    def make(html, name="sheet", **kw):
        path = tmp_path / f"{name}.html"
        path.write_text(html, encoding="utf-8")
        sheet = Opened(sheet_browser, path, **kw)
        opened.append(sheet)
        return sheet
    yield make
    for sheet in opened:
        sheet.close()


def test_sheet_opens_fully_drawn_offline(open_sheet, artifacts):
    sample = (ROOT / "samples" / "bakery-feeder.circuit").read_text(encoding="utf-8")
    sheet = open_sheet(render_sheet(sample, now=NOW), "bakery")
    page = sheet.page
    # Nothing but the file itself was asked for (offline, every other request refused).
    assert sheet.requests == [sheet.url] and sheet.refused == [] and sheet.errors == []
    drawn = page.evaluate("""() => [...document.querySelectorAll('svg')].map(svg => {
        const box = svg.getBoundingClientRect();
        return {cls: svg.getAttribute('class'), w: box.width, h: box.height,
                shafts: svg.querySelectorAll('line.pb-shaft').length,
                traces: [...svg.querySelectorAll('polyline[data-quantity]')]
                        .map(p => p.points.numberOfItems)};
    })""")
    phasor, *waves = drawn
    assert phasor["cls"] == "pb-phasor" and phasor["w"] > 300 and phasor["h"] > 300
    # Lcable, Supply, Mixer, Ccorr: a voltage and a current arrow each.
    assert phasor["shafts"] == 8
    assert len(waves) == 4
    for wave in waves:
        # v, i, p over two periods at 100 samples a period: 201 points each.
        assert wave["cls"] == "pb-wave" and wave["w"] > 400 and wave["traces"] == [201, 201, 201]
    page.screenshot(path=str(artifacts / "bakery-screen.png"), full_page=True)
    page.emulate_media(media="print")
    page.screenshot(path=str(artifacts / "bakery-print-media.png"), full_page=True)


def test_arrow_angles_match_their_phasors(open_sheet):
    html = render_sheet(RC_BENCH, now=NOW, phasor_elements=["R1", "C1", "V1"])
    sheet = open_sheet(html, "angles")
    shafts = sheet.page.evaluate("""() =>
        [...document.querySelectorAll('line.pb-shaft')].map(l => ({
        name: l.dataset.element, quantity: l.dataset.quantity,
        x1: l.x1.baseVal.value, y1: l.y1.baseVal.value,
        x2: l.x2.baseVal.value, y2: l.y2.baseVal.value}))""")
    # RC bench with R = Xc (formula, check-values C1): the loop current leads the source
    # voltage by 45°; V(R1) is in phase with it, V(C1) lags it by 90°; the source is
    # drawn with the current it delivers, which is the loop current.
    expected = {("R1", "voltage"): 45.0, ("R1", "current"): 45.0,
                ("C1", "voltage"): -45.0, ("C1", "current"): 45.0,
                ("V1", "voltage"): 0.0, ("V1", "current"): 45.0}
    seen = {}
    for s in shafts:
        # SVG's y axis points down: the drawn angle is atan2(−Δy, Δx).
        seen[(s["name"], s["quantity"])] = math.degrees(math.atan2(-(s["y2"] - s["y1"]),
                                                                   s["x2"] - s["x1"]))
    assert seen.keys() == expected.keys()
    for key, deg in expected.items():
        assert abs((seen[key] - deg + 180) % 360 - 180) < 0.2, (key, seen[key])


def test_markup_in_the_circuit_never_runs(open_sheet):
    sheet = open_sheet(render_sheet(HOSTILE, now=NOW), "hostile")
    page = sheet.page
    page.wait_for_timeout(200)          # time for any injected handler to fire
    assert sheet.dialogs == []
    found = page.evaluate("""() => ({scripts: document.scripts.length,
        images: document.images.length,
        handlers: document.querySelectorAll('[onerror], [onload]').length,
        links: [...document.links].map(a => a.getAttribute('href')).filter(h => !h.startsWith('#')),
        heading: document.querySelector('h1').textContent,
        listing: document.querySelector('pre.source').textContent})""")
    assert found["scripts"] == 0 and found["images"] == 0 and found["handlers"] == 0
    assert found["links"] == []
    assert found["heading"] == "<script>alert(1)</script> & \"quotes\" 'too'"
    assert found["listing"] == HOSTILE
    assert sheet.refused == []


def _lines(page_text):
    return [line.strip() for line in page_text.splitlines() if line.strip()]


ROW_START = re.compile(r"^[RLC]\d+ (resistor|inductor|capacitor)\b|^Vs voltage\b")


@pytest.mark.parametrize("paper", ["A4", "Letter"])
def test_printed_sheet_paginates_cleanly(open_sheet, artifacts, paper):
    text = ladder(300)
    html = render_sheet(text, now=NOW)
    sheet = open_sheet(html, f"ladder-{paper}")
    pdf = sheet.page.pdf(format=paper, print_background=True)
    (artifacts / f"ladder-300-{paper}.pdf").write_bytes(pdf)
    pages = pdf_pages(pdf)
    # Page objects counted in the file itself (ISO 32000-1, 7.7.3.3: /Type /Page).
    assert len(pages) == len(re.findall(rb"/Type\s*/Page\b(?!s)", pdf)) > 10
    width, height = PAPER[paper]
    sha = re.search(r"SHA-256 <code class=\"hash\">([0-9a-f]{64})", html).group(1)
    branch_pages = 0
    for number, page in enumerate(pages, start=1):
        assert abs(page["width"] - width) < 1.5 and abs(page["height"] - height) < 1.5
        # Every page says what it belongs to and where it sits.
        assert f"SHA-256 {sha[:16]}…" in page["text"]
        assert f"page {number} of {len(pages)}" in " ".join(page["text"].split())
        lines = _lines(page["text"])
        rows = [k for k, line in enumerate(lines) if ROW_START.match(line)]
        if not rows:
            continue
        branch_pages += 1
        # The table head is repeated on each page of the branch table ...
        head = next(k for k, line in enumerate(lines) if line.startswith("|V| ∠ |I| ∠"))
        assert head < rows[0]
        # ... and no row is cut: what follows the head is the start of a row, never the
        # wrapped rest (an angle) of a row begun on the page before.
        assert ROW_START.match(lines[head + 1]), lines[head:head + 3]
    assert branch_pages > 3


def test_small_sheet_pdfs_and_page_pictures(open_sheet, artifacts):
    for name in ("bakery-feeder", "plant-three-phase", "pump-station-transformer"):
        text = (ROOT / "samples" / f"{name}.circuit").read_text(encoding="utf-8")
        sheet = open_sheet(render_sheet(text, now=NOW), name)
        for paper in ("A4", "Letter"):
            pdf = sheet.page.pdf(format=paper, print_background=True)
            (artifacts / f"{name}-{paper}.pdf").write_bytes(pdf)
            pages = pdf_pages(pdf)
            assert 3 <= len(pages) <= 12
            everything = "\n".join(p["text"] for p in pages)
            assert "Safety cautions" in everything and "How to check this sheet" in everything
        if name == "plant-three-phase":
            # The print layout as an image, at A4's width in CSS pixels (210 mm at 96 dpi).
            sheet.page.set_viewport_size({"width": 794, "height": 1123})
            sheet.page.emulate_media(media="print")
            sheet.page.screenshot(path=str(artifacts / f"{name}-print-media.png"), full_page=True)


def test_export_module_saves_the_same_sheet(sheet_browser, live_sheet_server):
    context = sheet_browser.new_context(accept_downloads=True)
    errors = []
    page = context.new_page()
    page.on("pageerror", lambda e: errors.append(str(e)))
    try:
        page.goto(live_sheet_server.url + "/docs")
        with page.expect_download() as info:
            answer = page.evaluate("""async (netlist) => {
                const {exportSheet} = await import('/static/js/sheet-export.js');
                return await exportSheet(netlist, ['C1']);
            }""", RC_BENCH)
        download = info.value
        assert answer == {"ok": True, "filename": "rc-bench-sheet.html"}
        assert download.suggested_filename == "rc-bench-sheet.html"
        saved = Path(download.path()).read_text(encoding="utf-8")
        # The page's export is the command line's sheet, apart from its timestamp.
        expected = render_sheet(RC_BENCH, now=NOW, waveform_elements=["C1"],
                                phasor_elements=["C1"])
        assert STAMP.sub("", saved) == STAMP.sub("", expected)
        with page.expect_download() as info:
            answer = page.evaluate("""async (netlist) => {
                const {exportSheet} = await import('/static/js/sheet-export.js');
                return await exportSheet(netlist, [], {port: {a: 'b', b: '0'}});
            }""", RC_BENCH)
        assert answer["ok"] is True
        with_port = Path(info.value.path()).read_text(encoding="utf-8")
        assert 'id="port"' in with_port and "Port b → 0" in with_port
        failed = page.evaluate("""async () => {
            const {exportSheet} = await import('/static/js/sheet-export.js');
            return await exportSheet('frequency 50 Hz\\nR1: resistor a -> 0 5 uH\\n');
        }""")
        assert failed["ok"] is False and failed["status"] == 422
        assert failed["data"]["errors"][0]["line"] == 2
        assert errors == []
    finally:
        context.close()
