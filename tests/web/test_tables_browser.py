"""The tables' CSV and Copy buttons in a real headless Chromium (testing-recipes.md),
the files read back with Python's csv module."""

from __future__ import annotations

import csv
import io

import pytest

from .conftest import BENCH_I_MAG
from .test_browser import TIMEOUT_MS, open_page

pytestmark = pytest.mark.browser


def test_branch_csv_downloads_and_copy_fills_the_clipboard(new_page, live_server, tmp_path):
    page = new_page()
    page.context.grant_permissions(["clipboard-read", "clipboard-write"],
                                   origin=live_server.url)
    open_page(page, live_server)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    with page.expect_download(timeout=TIMEOUT_MS) as info:
        page.click("button[data-table-out='csv'][data-table='branches']")
    assert info.value.suggested_filename == "branches.csv"
    target = tmp_path / "branches.csv"
    info.value.save_as(target)
    rows = list(csv.reader(io.StringIO(target.read_text(encoding="utf-8"), newline="")))
    r1 = dict(zip(rows[0], next(r for r in rows if r[0] == "R1")))
    # R = Xc on 230 V (check-values C1): I = 230 / (√2 · 318.31 Ω)
    assert float(r1["|I| RMS (A)"]) == pytest.approx(BENCH_I_MAG, rel=1e-6)

    page.click("button[data-table-out='copy'][data-table='nodes']")
    # a selector, not a polled script: the page's CSP forbids eval
    page.wait_for_selector("#result-banner:has-text('Copied')", timeout=TIMEOUT_MS)
    pasted = page.evaluate("navigator.clipboard.readText()")
    cells = list(csv.reader(io.StringIO(pasted, newline=""), delimiter="\t"))
    assert cells[0][:2] == ["Node", "|V| RMS (V)"]
    assert {r[0] for r in cells[1:]} >= {"0", "a", "b"}
    # no three-phase block in this circuit: its buttons stay hidden
    assert page.is_hidden("#blocks-csv")
    page.screenshot(path=str(tmp_path / "tables-out.png"))


def test_tab_title_edited_header_and_sample_menu(new_page, live_server):
    # common practice, no source: a browser tab names its document; a header that no
    # longer matches the editor says so; a menu shows what was picked
    from .test_browser import solve, type_circuit
    page = new_page()
    open_page(page, live_server)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    assert page.title() == "RC bench — phasorbench"
    assert "stale" not in (page.get_attribute("#fact-title", "class") or "")
    page.select_option("#samples", "rc-bench")
    assert page.input_value("#samples") == "rc-bench"
    type_circuit(page, "title Other bench\nfrequency 60 Hz\nV1: voltage a -> 0 1\nR1: resistor a -> 0 1\n")
    page.wait_for_selector("#fact-title.stale", timeout=TIMEOUT_MS)
    assert page.input_value("#samples") == ""
    solve(page)
    page.wait_for_selector("#fact-title:not(.stale):has-text('Other bench')", timeout=TIMEOUT_MS)
    assert page.title() == "Other bench — phasorbench"
