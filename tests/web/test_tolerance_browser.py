"""The tolerance tab as a person uses it, in headless Chromium: run a study with a
progress bar, read the histograms and the worst case, cancel a long one, export the
sheet with the study on it. Fails on any JS or console error of the page."""

from __future__ import annotations

import shutil

import pytest

from .conftest import ROOT, LiveServer, free_port, make_app

pytestmark = pytest.mark.browser

TIMEOUT_MS = 30_000
BANK = "detuned-bank-tolerance"
#: a chain big enough for a study to still be running when Cancel is pressed
CHAIN = "frequency 50 Hz\nVs: voltage n0 -> 0 1 V\n" + "".join(
    f"R{k}: resistor n{k} -> n{k + 1} 1 ohm tol 1%\n" for k in range(150)) + \
    "Rend: resistor n150 -> 0 1 ohm\n"


@pytest.fixture(scope="module")
def tol_server(tmp_path_factory):
    folder = tmp_path_factory.mktemp("tol-samples")
    shutil.copy(ROOT / "samples" / f"{BANK}.circuit", folder / f"{BANK}.circuit")
    (folder / "long-chain.circuit").write_text(CHAIN, encoding="utf-8")
    port = free_port()
    server = LiveServer(make_app(folder, port=port, initial_sample=BANK), port).start()
    yield server
    server.stop()


def open_tab(page, server):
    page.goto(server.url + "/")
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    page.click("#tab-tolerance")
    assert page.get_attribute("#tab-tolerance", "aria-selected") == "true"


def test_run_a_study_and_read_it(new_page, tol_server, artifacts):
    page = new_page(1366, 900)
    open_tab(page, tol_server)
    page.fill("#tol-probes", "I(Lr)")
    page.fill("#tol-limits", "I(Lr) 290..335")
    page.fill("#tol-runs", "6000")
    page.click("#tol-run")
    page.wait_for_selector("#tol-out .tol-probe svg.pb-histogram", timeout=TIMEOUT_MS)
    out = page.inner_text("#tol-out")
    assert "6,000 runs at 50 Hz, seed 1" in out
    # the probe is a series L-C branch across ~232 V (formula): |I| = |V|/|ωL − 1/(ωC)|
    # with L = 178 µH, C = 3 × 1.33 mF: 312.7 A nominal, the table's first row
    assert "312.7 A" in out
    assert page.locator("#tol-out svg.pb-histogram").count() == 2
    assert page.locator("#tol-out svg.pb-sensitivity").count() == 1
    assert "Worst case of |X| by every corner of the box" in out
    assert "yield" in out and page.locator("#tol-progress").is_hidden()
    # the largest |I| is at Ccan +10 %, Lr +5 %: 1/(ωL − 1/(ωC)) grows with both
    table = page.inner_text("#tol-out .tol-probe table:last-of-type")
    assert "(+10 %)" in table
    page.locator("#tools").screenshot(path=str(artifacts / "tolerance-tab.png"))
    page.locator("#tol-out .tol-yield").scroll_into_view_if_needed()
    page.locator("#tools").screenshot(path=str(artifacts / "tolerance-tab-lower.png"))


def test_cancel_a_long_study(new_page, tol_server, artifacts):
    page = new_page()
    open_tab(page, tol_server)
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.select_option("#samples", "long-chain")
    page.wait_for_function("() => document.getElementById('editor-text').value.includes('Rend')",
                           timeout=TIMEOUT_MS)
    page.fill("#tol-probes", "V(n5)")
    page.fill("#tol-runs", "200000")
    page.uncheck("#tol-worst")
    page.click("#tol-run")
    page.wait_for_selector("#tol-cancel:not([hidden])", timeout=TIMEOUT_MS)
    page.wait_for_function("() => document.getElementById('tol-out').textContent.includes('chunk')",
                           timeout=TIMEOUT_MS)
    page.locator("#tools").screenshot(path=str(artifacts / "tolerance-running.png"))
    page.click("#tol-cancel")
    page.wait_for_function("() => document.getElementById('tol-out').textContent.includes('Cancelled')",
                           timeout=TIMEOUT_MS)
    assert page.locator("#tol-cancel").is_hidden()


def test_bad_probe_is_listed(new_page, tol_server):
    page = new_page()
    open_tab(page, tol_server)
    page.fill("#tol-probes", "I(Lrr)")
    page.fill("#tol-runs", "1")
    page.click("#tol-run")
    page.wait_for_selector("#tol-out .tool-problems", timeout=TIMEOUT_MS)
    text = page.inner_text("#tol-out .tool-problems")
    # studies.md: every problem at once, with a did-you-mean
    assert "did you mean 'Lr'" in text and "runs must be" in text


def test_sheet_carries_the_study(new_page, tol_server, tmp_path):
    page = new_page()
    open_tab(page, tol_server)
    page.fill("#tol-probes", "V(bus)")
    page.fill("#tol-runs", "500")
    page.click("#tol-run")
    page.wait_for_selector("#tol-out svg.pb-histogram", timeout=TIMEOUT_MS)
    with page.expect_download(timeout=TIMEOUT_MS) as info:
        page.click("#export-sheet")
    path = tmp_path / "sheet.html"
    info.value.save_as(path)
    html = path.read_text(encoding="utf-8")
    assert 'id="tolerance"' in html and "500 runs at 50 Hz, seed 1" in html
    assert html.count('class="pb-histogram"') == 2
