"""The sheet on paper: A4 and Letter printed by headless Chromium, read back page by page.

What a reader of a printed calculation checks: a heading never sits at the foot of a
page with its text on the next, a small table or a picture is never cut in two, and
Letter costs no more pages than its shorter paper explains. The PDFs and page images
land in test-artifacts/sheet/ to be looked at.
"""

from __future__ import annotations

import math
import re

import pytest

from phasorbench.sheet import render_sheet

from .conftest import NOW, ROOT, ladder
from .pdftext import pdf_pages
from .test_sheet_browser import Opened

pytestmark = pytest.mark.browser

#: Paper heights in mm: ISO 216 A4 is 210 × 297 mm, ANSI Letter 8.5 × 11 in (279.4 mm).
HEIGHT_MM = {"A4": 297.0, "Letter": 279.4}
#: The sheet's @page margins, top and bottom (templates/_sheet_style.css), in mm.
MARGINS_MM = 15 + 14

#: For each heading (h2, h3) and each table caption in the printed flow: its text, and
#: the start of what follows it (the note under a heading and the block after that; a
#: figure is found by its caption, the last thing on it). Text is compared with every
#: space removed, as the PDF's runs are joined with spaces of their own.
BLOCKS_JS = r"""() => {
  const squash = (s) => (s || "").replace(/\s+/g, "");
  const shown = (e) => e && getComputedStyle(e).display !== "none";
  const snippet = (e) => {
    if (!e) return "";
    const cap = e.matches("figure") ? e.querySelector("figcaption") : null;
    if (e.matches("table")) {
      const cell = e.querySelector("tbody tr td, tbody tr th");
      return squash(cell && cell.textContent).slice(0, 12);
    }
    return squash((cap || e).textContent).slice(0, 16);
  };
  const out = [];
  for (const h of document.querySelectorAll("h2, h3")) {
    if (!shown(h) || !shown(h.closest("section") || h)) continue;
    const follow = [];
    let next = h.nextElementSibling;
    while (next && !shown(next)) next = next.nextElementSibling;
    if (next) follow.push(snippet(next));
    if (next && next.matches(".note")) {
      let after = next.nextElementSibling;
      while (after && !shown(after)) after = after.nextElementSibling;
      if (after) follow.push(snippet(after));
    }
    out.push({heading: squash(h.textContent), follow: follow.filter((s) => s.length >= 4)});
  }
  return out;
}"""


class _Printed:
    """Every page's text with spaces removed, as one string, and where each page starts."""

    def __init__(self, pages):
        texts = [re.sub(r"\s+", "", page["text"]) for page in pages]
        self.text = "".join(texts)
        self.starts = [sum(len(t) for t in texts[:k]) for k in range(len(texts))]

    def find(self, text, after=0):
        """(position, page index) of the first ``text`` at or after ``after``."""
        at = self.text.find(text, after)
        if at < 0:
            return None, None
        return at, max(k for k, start in enumerate(self.starts) if start <= at)


def _print(sheet, paper, artifacts, name):
    pdf = sheet.page.pdf(format=paper, print_background=True)
    (artifacts / f"{name}-{paper}.pdf").write_bytes(pdf)
    return pdf_pages(pdf)


@pytest.fixture
def printed(sheet_browser, tmp_path, artifacts):
    opened = []

    def make(text, name):
        path = tmp_path / f"{name}.html"
        path.write_text(render_sheet(text, now=NOW), encoding="utf-8")
        sheet = Opened(sheet_browser, path)
        opened.append(sheet)
        blocks = sheet.page.evaluate(BLOCKS_JS)
        return sheet, blocks, {paper: _print(sheet, paper, artifacts, name) for paper in HEIGHT_MM}
    yield make
    for sheet in opened:
        sheet.close()


def _check_headings_keep_their_text(blocks, pages, paper):
    printed = _Printed(pages)
    cursor, checked = 0, 0
    for block in blocks:
        at, page = printed.find(block["heading"], cursor)
        assert at is not None, (paper, block["heading"])
        cursor = at + len(block["heading"])
        for follow in block["follow"]:
            # common practice, no source: a heading is printed on the page that carries
            # the start of its text (CSS Fragmentation 3, 3.2: break-after: avoid).
            _, where = printed.find(follow, cursor)
            assert where == page, (paper, block["heading"], follow, page + 1, where and where + 1)
            checked += 1
    assert checked >= len(blocks) // 2


@pytest.mark.parametrize("name", ["bakery-feeder", "plant-three-phase", "pump-station-transformer"])
def test_sample_sheets_print_without_stranded_headings(printed, name):
    text = (ROOT / "samples" / f"{name}.circuit").read_text(encoding="utf-8")
    sheet, blocks, papers = printed(text, name)
    assert len(blocks) > 8
    for paper, pages in papers.items():
        _check_headings_keep_their_text(blocks, pages, paper)
    a4, letter = len(papers["A4"]), len(papers["Letter"])
    # Letter's text block is shorter than A4's by the ratio of the usable heights
    # (ISO 216 and ANSI paper sizes, less the sheet's margins): it may need that many
    # more pages, rounded up, and no more (common practice, no source).
    ratio = (HEIGHT_MM["A4"] - MARGINS_MM) / (HEIGHT_MM["Letter"] - MARGINS_MM)
    assert a4 <= letter <= math.ceil(a4 * ratio), (a4, letter)
    assert letter <= 12


def test_long_table_never_leaves_one_row_alone(printed):
    # A ladder of 120 elements: a branch table over several pages.
    sheet, blocks, papers = printed(ladder(120), "ladder-120")
    row = re.compile(r"^([RLC]\d+|Vs) (resistor|inductor|capacitor|voltage)\b")
    for paper, pages in papers.items():
        counts = [sum(1 for line in page["text"].splitlines() if row.match(line.strip()))
                  for page in pages]
        spread = [c for c in counts if c]
        assert len(spread) >= 2, (paper, counts)
        # common practice, no source: a table continued on a page carries at least two
        # of its rows there (CSS Fragmentation 3, 3.1: break-before: avoid on the last).
        assert min(spread) >= 2, (paper, counts)
        _check_headings_keep_their_text(blocks, pages, paper)
