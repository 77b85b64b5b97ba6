"""The RMS / peak switch on the page, in headless Chromium: the tables, the summary and
the phasor diagram read the magnitudes the other way; the circuit's `amplitudes` line
stays the input's truth; the choice survives a reload."""

from __future__ import annotations

import math

import pytest

from .conftest import BENCH_I_MAG, CAP_CIRCUIT

pytestmark = pytest.mark.browser

TIMEOUT_MS = 15_000

#: The same mains capacitor given in peak values (check-values C1 at 230 V RMS is
#: 325.27 V peak; textbook V_peak = √2·V_RMS).
PEAK_INPUT = CAP_CIRCUIT.replace("frequency 50 Hz", "frequency 50 Hz\namplitudes peak").replace(
    "230 V", f"{230 * math.sqrt(2)!r} V")


def open_bench(new_page, live_server):
    page = new_page()
    page.goto(live_server.url + "/")
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    return page


def switch(page, kind):
    with page.expect_response(lambda r: r.url.endswith("/api/phasors")):
        page.click(f'#amps-switch button[data-amps="{kind}"]')
    page.wait_for_function("k => document.querySelector(`#amps-switch [data-amps=${k}]`)"
                           ".getAttribute('aria-pressed') === 'true'", arg=kind, timeout=TIMEOUT_MS)


def cell(page, table, name, key):
    heads = page.eval_on_selector_all(f"#{table} thead th", "ths => ths.map(t => t.textContent)")
    return heads, page.inner_text(f'#{table} tr[data-{"element" if table == "branch-table" else "node"}="{name}"]')


def test_the_switch_rereads_the_answer(new_page, live_server, artifacts):
    page = open_bench(new_page, live_server)
    # rc-bench: 230 V RMS; |I| = 230/(318.31·√2) = 0.510932 A (conftest, formula)
    assert page.get_attribute('#amps-switch [data-amps="rms"]', "aria-pressed") == "true"
    heads, row = cell(page, "branch-table", "R1", "current")
    assert any("|I| RMS" in h for h in heads)
    assert f"{BENCH_I_MAG * 1000:.1f} mA" in row
    power = page.inner_text('#source-table tr[data-element="V1"]')

    switch(page, "peak")
    heads, row = cell(page, "branch-table", "R1", "current")
    assert any("|I| peak" in h for h in heads) and any("|V| peak" in h for h in heads)
    # textbook: peak = √2 × RMS: 0.510932·√2 = 722.6 mA
    assert f"{BENCH_I_MAG * math.sqrt(2) * 1000:.1f} mA" in row
    node_heads, node = cell(page, "node-table", "a", "voltage")
    assert any("peak" in h for h in node_heads)
    assert "325.3 V" in node                             # 230·√2 (textbook)
    # the same power either way (contract: V·I* for RMS, ½·V·I* for peak)
    assert page.inner_text('#source-table tr[data-element="V1"]') == power
    assert "shown as peak" in page.inner_text("#fact-amplitudes")
    assert "input in RMS" in page.inner_text("#fact-amplitudes")
    page.wait_for_function("() => document.querySelector('#phasor-drawing svg')"
                           "?.textContent.includes('peak magnitudes')", timeout=TIMEOUT_MS)
    # the circuit's own line is untouched: the switch reads the answer, not the input
    assert "amplitudes" not in page.input_value("#editor-text")
    page.screenshot(path=str(artifacts / "amplitudes-peak-1366x768.png"))

    # The choice is kept over a reload.
    page.reload()
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    page.wait_for_function("() => document.querySelector('#amps-switch [data-amps=peak]')"
                           ".getAttribute('aria-pressed') === 'true'", timeout=TIMEOUT_MS)
    assert f"{BENCH_I_MAG * math.sqrt(2) * 1000:.1f} mA" in cell(page, "branch-table", "R1", "current")[1]


def test_a_peak_circuit_shown_as_rms(new_page, live_server):
    page = open_bench(new_page, live_server)
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.fill("#editor-text", PEAK_INPUT)
        page.keyboard.press("Control+Enter")
    page.wait_for_selector('#branch-table tr[data-element="C1"]', timeout=TIMEOUT_MS)
    assert page.get_attribute('#amps-switch [data-amps="peak"]', "aria-pressed") == "true"
    # check-values C1 at 230 V RMS: 0.722566 A RMS, so 1.0219 A peak (textbook √2)
    assert "1.022 A ∠90.00°" in page.inner_text('#branch-table tr[data-element="C1"]')
    switch(page, "rms")
    # peak/√2: 325.27/√2 = 230 V and 1.0219/√2 = 722.6 mA (textbook)
    assert "230 V ∠0.00°" in page.inner_text('#node-table tr[data-node="a"]')
    assert "722.6 mA ∠90.00°" in page.inner_text('#branch-table tr[data-element="C1"]')
    assert "-166.2 var" in page.inner_text('#branch-table tr[data-element="C1"]')   # C1
