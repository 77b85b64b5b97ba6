"""Bounded did-you-mean hints and bounded diagnostic lists."""

from __future__ import annotations

import difflib

from phasorbench.errors import Diagnostic, MAX_LISTED, MAX_TEXT, bounded
from phasorbench.language.suggest import BUDGET, NameIndex
from phasorbench.workflow import check_text


def test_index_agrees_with_a_full_difflib_search_on_a_typo():
    names = [f"R{i}" for i in range(500)] + ["Rload", "Cpf", "Vgrid"]
    # reference: difflib's get_close_matches over every name (the unbounded search)
    assert NameIndex(names).closest("Rlaod") == difflib.get_close_matches("Rlaod", names, n=1)[0]
    assert NameIndex(names).closest("rload") == "Rload"   # common practice, no source
    assert NameIndex(names).closest("zzzzzz") is None       # difflib: no match ≥ 0.6


def test_index_answers_at_most_its_budget():
    index = NameIndex(["Rload"])
    answers = [index.closest("Rlaod") for _ in range(BUDGET + 5)]
    # common practice, no source: later misses get the plain hint
    assert answers[:BUDGET] == ["Rload"] * BUDGET and answers[BUDGET:] == [None] * 5


def test_many_misses_are_listed_up_to_the_cap_with_a_summary():
    text = "frequency 50 Hz\nV1: voltage a -> 0 1 V\nR1: resistor a -> 0 1 ohm\n" + \
        "".join(f"value{i} = missing{i} * 2\n" for i in range(3000))
    found = check_text(text)
    # common practice, no source: a bounded list ends with how many were left out
    assert len(found) == MAX_LISTED + 1
    assert found[-1].message.startswith(f"\u2026 and {3000 - MAX_LISTED:,} more")


def test_long_quoted_text_is_cut():
    d = Diagnostic("x" * 100_000, "y" * 100_000)
    assert len(d.message) == MAX_TEXT and len(d.hint) == MAX_TEXT  # common practice, no source


def test_bounded_keeps_short_lists_whole():
    few = [Diagnostic("a"), Diagnostic("b", severity="warning")]
    assert bounded(few) == few  # common practice, no source
