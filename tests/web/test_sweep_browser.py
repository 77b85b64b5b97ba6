"""The frequency-response tab in a real headless Chromium: probes picked with the filter
box, the plot, the cursor by keyboard and pointer, the scale switch, resonance rows, the
CSV download, and a 100,000-point sweep that still draws a light picture."""

from __future__ import annotations

import csv
import io
import math
import re
from pathlib import Path

import numpy as np
import pytest

from .test_browser import TIMEOUT_MS, open_page, solve, type_circuit

pytestmark = pytest.mark.browser

#: check-values C7: R = 1 kΩ, C = 159.155 nF, fc = 1 kHz; at fc |H| = -3.0103 dB ∠-45°.
RC = """title RC low-pass
frequency 50 Hz
Vs: voltage in -> 0 1 V
R1: resistor in -> out 1 kohm
C1: capacitor out -> 0 159.155 nF
"""

#: check-values C5: series RLC, f0 = 7957.75 Hz, Q = 25.
RLC = """title Series RLC
frequency 50 Hz
Vs: voltage a -> 0 20 V
R1: resistor a -> b 2 ohm
L1: inductor b -> c 1 mH
C1: capacitor c -> 0 0.4 uF
"""


def open_sweep(page, live_server, text):
    open_page(page, live_server)
    type_circuit(page, text)
    solve(page)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    page.click("#tab-sweep")
    page.wait_for_selector("#tool-sweep:not([hidden])", timeout=TIMEOUT_MS)


def pick_only(page, probes, typed=()):
    for box in page.query_selector_all("#sweep-list input:checked"):
        box.uncheck()
    for probe in probes:
        page.fill("#sweep-filter", probe[2:-1])          # filter by the name inside
        page.check(f'#sweep-list input[value="{probe}"]')
    page.fill("#sweep-filter", "")
    for probe in typed:
        page.fill("#sweep-custom", probe)
        page.click("#sweep-add")


def run_sweep(page, start, stop, points):
    page.fill("#sweep-from", str(start))
    page.fill("#sweep-to", str(stop))
    page.fill("#sweep-points", str(points))
    with page.expect_response(lambda r: r.url.endswith("/api/sweep")):
        page.click("#sweep-form button[type=submit]")
    page.wait_for_selector("#sweep-drawing svg.pb-response", timeout=TIMEOUT_MS)


def readout(page):
    return page.inner_text("#sweep-readout")


def test_filter_box_narrows_the_probes(new_page, live_server):
    page = new_page()
    open_sweep(page, live_server, RC)
    offered = page.eval_on_selector_all("#sweep-list input", "xs => xs.map(x => x.value)")
    # every node's Z and V and every element's I (studies.md, "Probes")
    assert {"Z(in)", "Z(out)", "V(in)", "V(out)", "I(Vs)", "I(R1)", "I(C1)"} <= set(offered)
    page.fill("#sweep-filter", "c1")
    shown = page.eval_on_selector_all("#sweep-list input", "xs => xs.map(x => x.value)")
    assert shown == ["I(C1)"]                       # common practice: a case-blind filter
    page.fill("#sweep-filter", "zzz")
    assert "no probe matches" in page.inner_text("#sweep-list")


def test_ratio_plot_cursor_scale_and_csv(new_page, live_server, artifacts):
    page = new_page(1366, 900)
    open_sweep(page, live_server, RC)
    pick_only(page, [], typed=["V(out)/V(in)"])
    run_sweep(page, 10, 100000, 401)
    svg = page.locator("#sweep-drawing svg")
    # a ratio of like quantities draws in dB first (studies.md; issue: dB for ratios)
    assert svg.get_attribute("data-magnitude") == "db"
    assert page.locator('#sweep-drawing g.pb-mag[data-scale="db"]').get_attribute("display") is None
    assert page.locator('#sweep-drawing g.pb-mag[data-scale="units"]').get_attribute("display") == "none"
    # the analysis frequency (50 Hz) and its harmonics are marked
    assert page.locator("#sweep-drawing line.pb-base").count() == 2      # both panels
    assert page.locator("#sweep-drawing line.pb-harmonic").count() > 10

    # keyboard: Home, then 20 steps of 10 points: index 200 = 1 kHz on a 100-per-decade grid
    page.focus("#sweep-drawing")
    page.keyboard.press("Home")
    assert readout(page).startswith("10 Hz")
    for _ in range(20):
        page.keyboard.press("Shift+ArrowRight")
    text = readout(page)
    # check-values C7: at fc = 1 kHz, |H| = -3.0103 dB, ∠-45°
    assert text.startswith("1 kHz") and "-3.01 dB" in text and "∠-45.00°" in text, text
    page.keyboard.press("End")
    assert readout(page).startswith("100 kHz")
    # check-values C7: 10 kHz is -20.0432 dB; at 100 kHz one more decade of -20 dB/decade
    assert "-40.00 dB" in readout(page)
    page.keyboard.press("Home")
    page.keyboard.press("ArrowRight")
    assert page.get_attribute("#sweep-readout", "data-index") == "1"

    # pointer: the middle of the plot frame is the middle of the log range (1 kHz)
    box = svg.bounding_box()
    left = float(svg.get_attribute("data-plot-left"))
    right = float(svg.get_attribute("data-plot-right"))
    width = float(svg.get_attribute("width"))
    scale = box["width"] / width
    page.mouse.move(box["x"] + (left + right) / 2 * scale, box["y"] + box["height"] * 0.3)
    assert page.get_attribute("#sweep-readout", "data-index") == "200"
    assert page.locator("#sweep-drawing g.pb-cursor").get_attribute("display") == "inline"
    page.screenshot(path=str(artifacts / "sweep-ratio-db.png"), full_page=True)

    # the scale switch shows the units group without a new request
    page.check('input[name="sweep-scale"][value="units"]')
    assert page.locator('#sweep-drawing g.pb-mag[data-scale="units"]').get_attribute("display") == "inline"
    assert page.locator('#sweep-drawing g.pb-mag[data-scale="db"]').get_attribute("display") == "none"
    page.locator("#tool-sweep").screenshot(path=str(artifacts / "sweep-ratio-units.png"))

    # CSV: every point, not the drawn ones (the numbers are never decimated)
    with page.expect_download() as info:
        page.click("#sweep-csv")
    rows = list(csv.reader(io.StringIO(Path(info.value.path()).read_text(encoding="utf-8"))))
    assert rows[0][:3] == ["frequency_hz", "V(out)/V(in) mag", "V(out)/V(in) deg"]
    assert len(rows) == 402
    f, mag = float(rows[201][0]), float(rows[201][1])
    # check-values C7 at 1 kHz: |H| = 0.707107
    assert math.isclose(f, 1000, rel_tol=1e-9) and math.isclose(mag, 0.707107, rel_tol=1e-5)


def test_resonance_rows_markers_and_overlay(new_page, live_server, artifacts):
    page = new_page(1366, 900)
    open_sweep(page, live_server, RLC)
    pick_only(page, ["I(R1)"], typed=["V(a)/I(R1)"])
    run_sweep(page, 1000, 50000, 300)
    # overlaid: each probe has a magnitude curve on each scale and a phase curve
    assert page.locator("#sweep-drawing path.pb-curve[data-probe='I(R1)']").count() == 3
    assert page.locator("#sweep-drawing path.pb-curve[data-probe='V(a)/I(R1)']").count() == 3
    # probes in A and Ω: the units scale is chosen
    assert page.get_attribute("#sweep-drawing svg", "data-magnitude") == "units"
    rows = page.eval_on_selector_all("#sweep-out tbody tr",
                                     "rs => rs.map(r => [...r.cells].map(c => c.innerText))")
    # check-values C5: the current peaks and the input impedance dips at f0 = 7957.75 Hz,
    # Q = 25 (textbook: Q = (1/R)√(L/C))
    assert len(rows) == 2
    for row in rows:
        assert row[3] == "7.95775 kHz" and row[6] == "25", row
    assert sorted(row[2] for row in rows) == ["dip", "peak"]
    markers = page.locator('#sweep-drawing g.pb-resonance[data-scale="units"]')
    assert markers.count() == 2
    page.click("#sweep-out tbody tr >> nth=0")
    text = readout(page)
    assert "resonance 1:" in text and "Q 25" in text
    # the cursor goes to the grid point nearest the resonance (numpy.logspace, same grid)
    grid = np.logspace(3, math.log10(50000), 300)
    near = grid[np.argmin(np.abs(np.log(grid / 7957.75)))]
    shown = float(re.match(r"([\d.]+) kHz", text).group(1)) * 1e3
    assert math.isclose(shown, near, rel_tol=1e-5), text
    page.locator("#tool-sweep").screenshot(path=str(artifacts / "sweep-resonance.png"))


def test_hundred_thousand_points_stay_light(new_page, live_server, artifacts):
    page = new_page(1366, 900)
    open_sweep(page, live_server, RC)
    pick_only(page, ["V(out)"])
    run_sweep(page, 1, 1e6, 100000)
    # decimated for drawing: a few points per pixel column, not 100,000
    d = page.get_attribute("#sweep-drawing path.pb-curve[data-probe='V(out)']", "d")
    assert d.count("L") < 6000
    # the cursor still moves at once, over the readout's evenly spread points
    page.focus("#sweep-drawing")
    page.keyboard.press("End")
    assert readout(page).startswith("1 MHz")
    index = int(page.get_attribute("#sweep-readout", "data-index"))
    assert index == 99999
    page.locator("#tool-sweep").screenshot(path=str(artifacts / "sweep-100k.png"))


#: check-values C5 with the file's own sweep line (circuit-language.md).
RLC_SWEPT = RLC.replace("frequency 50 Hz\n", "frequency 50 Hz\nsweep 1 kHz to 50 kHz, 201 points\n")


def test_export_carries_the_frequency_response_section(new_page, live_server, artifacts,
                                                        tmp_path):
    page = new_page(1366, 900)
    open_sweep(page, live_server, RLC_SWEPT)
    # the empty range fields show the circuit's sweep line as their placeholders
    assert page.get_attribute("#sweep-from", "placeholder") == "1000"
    assert page.get_attribute("#sweep-to", "placeholder") == "50000"
    assert page.get_attribute("#sweep-points", "placeholder") == "201"
    assert "sweep line: 1 kHz to 50 kHz, 201 points log" in page.inner_text("#sweep-form .hint")
    pick_only(page, ["I(R1)"])
    with page.expect_response(lambda r: r.url.endswith("/api/sweep")):
        page.click("#sweep-form button[type=submit]")
    page.wait_for_selector("#sweep-drawing svg.pb-response", timeout=TIMEOUT_MS)
    with page.expect_request(lambda r: r.url.endswith("/api/sheet")) as asked:
        with page.expect_download(timeout=TIMEOUT_MS) as info:
            page.click("#export-sheet")
    sent = asked.value.post_data_json
    assert sent["sweep"]["probes"] == ["I(R1)"] and sent["sweep"]["magnitude"] == "units"
    target = tmp_path / "sheet.html"
    info.value.save_as(target)
    html = target.read_text(encoding="utf-8")
    assert '<section id="sweep"' in html and html.count('class="pb-response"') == 1
    # check-values C5: the current peaks at f0 = 7957.75 Hz with Q = 25
    assert "7.95775 kHz" in html and ">25<" in html
    # the range came from the circuit's sweep line (line 3)
    assert "sweep line (line 3)" in html.replace("&#39;", "'")
    assert "single-frequency solve" in html and "Harmonic resonance" in html
    sheet = new_page(1000, 1400)
    sheet.goto(target.as_uri())
    sheet.locator("#sweep").screenshot(path=str(artifacts / "sheet-sweep-section.png"))
