"""The RMS / peak switch reaches what leaves the page, in headless Chromium
(testing-recipes.md): with the switch on peak, the tables' CSV download and Copy and the
exported sheet hold peak magnitudes and say so; powers and angles stay as they were.
The files are read back with Python's csv module and html.parser (the outside readers)."""

from __future__ import annotations

import csv
import io
import math
import re

import pytest

from .test_browser import TIMEOUT_MS, open_page, solve, type_circuit
from .test_rms_peak_browser import switch

pytestmark = pytest.mark.browser

#: Invented: a 120 V, 60 Hz supply through 30 Ω into a 40 Ω reactance. Ohm's law (any
#: circuits textbook): |Z| = 50 Ω, |I| = 2.4 A RMS at −53.13°, V(b) = j40·I = 96 V RMS
#: at 36.87°, P = I²R = 172.8 W, Q = I²X = 230.4 var, |S| = 288 VA.
KILN = ("title Kiln blower\nfrequency 60 Hz\nV1: voltage a -> 0 120 V\n"
        "R1: resistor a -> b 30 ohm\nZ1: impedance b -> 0 j40 ohm\n")
#: Alexander & Sadiku, Fundamentals of Electric Circuits, ch. 11, effective or RMS value
#: (chapter from memory): a sinusoid's peak is √2 times its RMS value.
ROOT2 = math.sqrt(2)


def _by_name(text, delimiter=","):
    rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=delimiter))
    return rows[0], {r[0]: dict(zip(rows[0], r)) for r in rows[1:]}


def _download(page, selector, tmp_path, name):
    with page.expect_download(timeout=TIMEOUT_MS) as info:
        page.click(selector)
    target = tmp_path / name
    info.value.save_as(target)
    return target.read_text(encoding="utf-8")


def _copied(page, table):
    # the banner's text names the table, so an earlier banner is not taken for this one
    page.click(f"button[data-table-out='copy'][data-table='{table}']")
    page.wait_for_selector(f"#result-banner:has-text('Copied the {table} table')",
                           timeout=TIMEOUT_MS)
    return page.evaluate("navigator.clipboard.readText()")


def _sheet_cell(html, name, key):
    row = re.search(rf'<tr><th scope="row"><a href="#L\d+">{name}</a></th>(.*?)</tr>',
                    html).group(1)
    cell = re.search(rf'<td class="c-{key}">(.*?)</td>', row).group(1)
    return re.sub(r"<[^>]+>.*", "", cell).strip()        # the cell before any sub-line


def _volts_or_amps(cell):
    return float(re.match(r"([0-9.]+)\s[AV]", cell).group(1))    # a no-break space


def test_peak_exports_say_what_the_screen_shows(new_page, live_server, tmp_path, artifacts):
    page = new_page()
    page.context.grant_permissions(["clipboard-read", "clipboard-write"],
                                   origin=live_server.url)
    open_page(page, live_server)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    type_circuit(page, KILN)
    solve(page)
    page.wait_for_selector("#fact-title:not(.stale):has-text('Kiln blower')", timeout=TIMEOUT_MS)
    page.wait_for_selector('#branch-table tr[data-element="Z1"]', timeout=TIMEOUT_MS)

    # As the circuit says (RMS): the reference files.
    heads, rms = _by_name(_download(page, "button[data-table-out='csv'][data-table='branches']",
                                    tmp_path, "rms.csv"))
    assert "|I| RMS (A)" in heads
    assert float(rms["R1"]["|I| RMS (A)"]) == pytest.approx(2.4, rel=1e-12)   # Ohm's law
    rms_sheet = _download(page, "#export-sheet", tmp_path, "rms.html")

    switch(page, "peak")
    page.wait_for_selector("#branch-table thead th:has-text('|I| peak')", timeout=TIMEOUT_MS)

    # CSV download: peak magnitudes, headings that say so, powers and angles unchanged.
    heads, peak = _by_name(_download(page, "button[data-table-out='csv'][data-table='branches']",
                                     tmp_path, "peak.csv"))
    assert "|I| peak (A)" in heads and "|V| peak (V)" in heads     # the page's words
    for name, v_rms in (("V1", 120.0), ("R1", 72.0), ("Z1", 96.0)):
        # peak = √2 × RMS (Alexander & Sadiku, above)
        assert float(peak[name]["|V| peak (V)"]) == pytest.approx(v_rms * ROOT2, rel=1e-12)
        assert float(peak[name]["|I| peak (A)"]) == pytest.approx(
            float(rms[name]["|I| RMS (A)"]) * ROOT2, rel=1e-12)
        # P, Q, |S|, PF and angles are the same either way (S = V·I* with RMS phasors,
        # ½·V·I* with peak ones: Alexander & Sadiku, ch. 11, complex power)
        for key in ("P (W)", "Q (var)", "|S| (VA)", "PF", "∠V (°)", "∠I (°)"):
            assert peak[name][key] == rms[name][key], (name, key)
    assert float(peak["V1"]["|S| (VA)"]) == pytest.approx(288, rel=1e-12)     # 120 V × 2.4 A

    # Copy (tab-separated, on the clipboard): the node table as peak values.
    node_heads, nodes = _by_name(_copied(page, "nodes"), "\t")
    assert node_heads[:2] == ["Node", "|V| peak (V)"]
    # V(b) = 96 V RMS (Ohm's law, above), so 96·√2 peak (Alexander & Sadiku)
    assert float(nodes["b"]["|V| peak (V)"]) == pytest.approx(96 * ROOT2, rel=1e-12)
    assert float(nodes["b"]["∠V (°)"]) == pytest.approx(36.8698976458, abs=1e-9)  # atan(3/4)

    # The exported sheet: peak magnitudes, saying so, and the same powers.
    sheet = _download(page, "#export-sheet", tmp_path, "peak.html")
    assert "shown as peak phasors; input in RMS" in sheet
    assert "magnitudes peak (input in RMS)" in sheet
    for name in ("V1", "R1", "Z1"):
        a = _volts_or_amps(_sheet_cell(rms_sheet, name, "current"))
        b = _volts_or_amps(_sheet_cell(sheet, name, "current"))
        # 4 significant digits on the sheet: √2 to the last of them (Alexander & Sadiku)
        assert b == pytest.approx(a * ROOT2, rel=5e-4), name
        assert _volts_or_amps(_sheet_cell(sheet, name, "voltage")) == pytest.approx(
            _volts_or_amps(_sheet_cell(rms_sheet, name, "voltage")) * ROOT2, rel=5e-4)
        for key in ("p", "q", "s", "pf"):
            assert _sheet_cell(sheet, name, key) == _sheet_cell(rms_sheet, name, key)
    assert "3.394" in _sheet_cell(sheet, "R1", "current")     # 2.4·√2 = 3.3941 A
    page.screenshot(path=str(artifacts / "exports-peak-1366x768.png"))
