"""The page's Export sheet button saves the same sheet the command line writes.

Checked in a real headless Chromium (testing-recipes.md); the expected hash is computed
with Python's hashlib, independent of the product.
"""

from __future__ import annotations

import hashlib
import re

import pytest

from .conftest import BENCH_CIRCUIT
from .test_browser import TIMEOUT_MS, open_page

pytestmark = pytest.mark.browser


def test_export_sheet_downloads_the_solved_sheet(new_page, live_server, tmp_path):
    page = new_page()
    open_page(page, live_server)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    with page.expect_download(timeout=TIMEOUT_MS) as info:
        page.click("#export-sheet")
    download = info.value
    assert download.suggested_filename.endswith(".html")
    target = tmp_path / download.suggested_filename
    download.save_as(target)
    html = target.read_text(encoding="utf-8")
    # the sheet records the input's SHA-256 (hashlib is the outside reference)
    assert hashlib.sha256(BENCH_CIRCUIT.encode("utf-8")).hexdigest() in html
    for name in ("V1", "R1", "C1"):
        assert re.search(rf">\s*{name}\s*<", html), name
    assert "http:" not in html and "https:" not in html
    assert page.is_enabled("#export-sheet")


def test_export_is_the_sheet_the_command_line_writes(new_page, live_server, tmp_path, capsys):
    # common practice, no source: one request, one sheet — the button's file equals
    # `phasorbench sheet FILE` for the same text, apart from the moment each was made,
    # even with a row selected in the branch table
    from phasorbench.cli import main
    from tests.sheet.conftest import STAMP

    page = new_page()
    open_page(page, live_server)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    page.click("#branch-table tbody tr[data-element='R1']")
    with page.expect_download(timeout=TIMEOUT_MS) as info:
        page.click("#export-sheet")
    exported = tmp_path / "page.html"
    info.value.save_as(exported)
    source = tmp_path / "bench.circuit"
    source.write_text(BENCH_CIRCUIT, encoding="utf-8")
    written = tmp_path / "cli.html"
    assert main(["sheet", str(source), "-o", str(written)]) == 0
    capsys.readouterr()
    page_html = STAMP.sub("", exported.read_text(encoding="utf-8"))
    cli_html = STAMP.sub("", written.read_text(encoding="utf-8"))
    # the file name the page gives its circuit differs from the CLI's path
    page_html = page_html.replace("&lt;workbench&gt;", "FILE").replace("<workbench>", "FILE")
    cli_html = cli_html.replace(str(source), "FILE")
    assert page_html == cli_html
