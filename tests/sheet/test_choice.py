"""Which elements the sheet draws by default (sheet/choice.py)."""

from __future__ import annotations

import pytest

from phasorbench.errors import CircuitError
from phasorbench.sheet.choice import candidates, choose
from phasorbench.workflow import solve_text

MIXED = """\
frequency 50 Hz
Rs: resistor   a -> b   1 ohm
Vs: voltage    a -> 0   230 V
Zr: impedance  b -> 0   10 ohm
Zl: impedance  b -> c   3 + j4 ohm
G1: vccs       c -> 0   0.01 S  sense b -> 0
Cc: capacitor  c -> 0   10 uF
"""


def test_candidates_are_sources_then_reactive_elements():
    result = solve_text(MIXED)
    # Independent sources, then controlled ones, then elements that store energy: an
    # impedance counts when it has a reactive part (Q ≠ 0), a real one does not
    # (common practice, no source).
    assert candidates(result) == ["Vs", "G1", "Zl", "Cc"]


def test_default_keeps_the_first_few_and_counts_the_rest():
    # common practice, no source: a capped list says how much it left out
    chosen = choose(solve_text(MIXED), default=3, limit=48, what="waveforms")
    assert chosen == {"names": ["Vs", "G1", "Zl"], "chosen_by": "default", "candidates": 4,
                      "left_out": 1, "cap": 3}


def test_resistors_only_still_draw_one_element():
    # common practice, no source: a record always shows one picture
    result = solve_text("frequency 50 Hz\nI1: current a -> 0 1 A\nR1: resistor a -> 0 5 ohm\n")
    assert choose(result, default=12, limit=48, what="waveforms")["names"] == ["I1"]
    result = {"elements": {"R1": {"kind": "resistor"}, "R2": {"kind": "resistor"}}}
    assert choose(result, default=12, limit=48, what="waveforms")["names"] == ["R1"]


def test_reader_choice_checked_and_capped():
    # common practice, no source: every bad name reported at once, as the reader does
    result = solve_text(MIXED)
    chosen = choose(result, ["Rs", "Cc", "Rs"], default=3, limit=48, what="waveforms", cap=1)
    assert chosen["names"] == ["Rs"] and chosen["candidates"] == 2 and chosen["left_out"] == 1
    with pytest.raises(CircuitError) as info:
        choose(result, ["Rs"] * 1 + [f"X{k}" for k in range(3)], default=3, limit=2,
               what="waveforms")
    messages = [d.message for d in info.value.diagnostics]
    assert messages[0] == ("4 elements were asked for the sheet's waveforms, more than its "
                           "limit of 2")
    assert "the circuit has no element named 'X0'" in messages
