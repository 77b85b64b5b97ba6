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
