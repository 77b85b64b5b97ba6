"""Shown values carry no more digits than the solve trusts, and those digits are right.

The reference is the exact answer in 50-digit arithmetic (mpmath): a 1 A current source
feeding an inductor and a capacitor in parallel has V = I / (jωC − j/(ωL)), the
admittance of a parallel L-C (textbook, any circuits text's parallel resonance). Tuned
ever closer to resonance, the solve loses digits; what the tables show must stay right
to its last shown digit (a significant digit is right when the shown value is within
one unit of that digit of the exact value: common practice, no source).
"""

from __future__ import annotations

import math
import re

import mpmath
import pytest

from phasorbench.presentation import display
from phasorbench.presentation.formatting import (LIMITED, SHOWN_DIGITS, element_rows,
                                                 node_rows, shown_digits)
from phasorbench.workflow import solve_text

PREFIX = {"p": -12, "n": -9, "µ": -6, "u": -6, "m": -3, "": 0, "k": 3, "M": 6, "G": 9,
          "T": 12}
SHOWN = re.compile(r"^(≈?)(-?\d+(?:\.(\d+))?)(?:e([+-]?\d+))?\s*([pnµumkMGT]?)(V|A)\b")


def _read(text: str):
    """(value, one unit of its last digit, marked) of a shown magnitude like '≈9.7e16 V'."""
    m = SHOWN.match(text)
    assert m, text
    mark, number, decimals, exp, prefix = m.group(1, 2, 3, 4, 5)
    scale = 10.0 ** ((int(exp) if exp else 0) + PREFIX[prefix])
    return float(number) * scale, 10.0 ** -len(decimals or "") * scale, bool(mark)


def _significant(text: str) -> int:
    digits = re.match(r"^≈?-?([\d.]+)", text).group(1).replace(".", "").lstrip("0")
    return max(len(digits), 1)


def _circuit(detune: float) -> tuple[str, float, float]:
    f, L = 50.0, 1.0
    C = 1 / ((2 * math.pi * f) ** 2 * L) * (1 + detune)
    text = (f"frequency {f!r} Hz\nI1: current 0 -> a 1\n"
            f"L1: inductor a -> 0 {L!r} H\nC1: capacitor a -> 0 {C!r} F\n")
    return text, L, C


@pytest.mark.parametrize("detune", [1e-6, 1e-12, 1e-13, 1e-14, 3e-15, 2e-15])
def test_every_shown_digit_of_a_near_resonant_node_is_right(detune):
    text, L, C = _circuit(detune)
    result = solve_text(text)
    mpmath.mp.dps = 50
    w = 2 * mpmath.pi * 50
    exact = 1 / abs(w * mpmath.mpf(C) - 1 / (w * mpmath.mpf(L)))   # |V| for I = 1 A
    row = {r["name"]: r for r in node_rows(result)}["a"]
    shown, unit, marked = _read(row["text"]["voltage"])
    assert abs(shown - float(exact)) <= unit, (row["text"]["voltage"], float(exact))
    trusted = result["node_digits"].get("a", 15)
    assert _significant(row["text"]["voltage"]) <= min(trusted, SHOWN_DIGITS)
    assert marked == (trusted < SHOWN_DIGITS)
    # the inductor's current |V|/(ωL) likewise, in the element table
    el = {r["name"]: r for r in element_rows(result)}["L1"]
    shown_i, unit_i, marked_i = _read(el["text"]["current"])
    exact_i = exact / (w * mpmath.mpf(L))
    assert abs(shown_i - float(exact_i)) <= unit_i, (el["text"]["current"], float(exact_i))
    assert _significant(el["text"]["current"]) <= min(result["elements"]["L1"]["digits"],
                                                      SHOWN_DIGITS)
    assert marked_i == (result["elements"]["L1"]["digits"] < SHOWN_DIGITS)


def test_closest_tuning_is_reported_short_of_digits():
    # the cases above must include ones that are short of the usual four digits, or the
    # test above proves nothing about the cut
    result = solve_text(_circuit(3e-15)[0])
    assert result["node_digits"]["a"] < SHOWN_DIGITS
    assert any("lost digits" in w["message"]
               for w in result["warnings"])


def test_the_cut_follows_the_trusted_count_and_marks_it():
    # significant figures: a value known to d digits is written with d (common
    # practice, no source); the angle of a phasor right to 10⁻ᵈ relative is right to
    # about 57·10⁻ᵈ degrees, so its decimals shrink with d
    base = {"kind": "resistor", "from": "a", "to": "0",
            "voltage": {"mag": 123.456789, "deg": 12.3456, "re": 0, "im": 0},
            "current": {"mag": 0.987654321, "deg": 12.3456, "re": 0, "im": 0},
            "impedance": None, "p_w": 121.932631, "q_var": 0.0, "s_va": 121.932631,
            "pf": 1.0, "pf_sense": "unity"}
    full = element_rows({"elements": {"R": {**base, "digits": 15}}})[0]["text"]
    assert full["voltage"] == "123.5 V ∠12.35°" and full["p"] == "121.9 W"
    two = element_rows({"elements": {"R": {**base, "digits": 2}}})[0]["text"]
    assert two["voltage"] == LIMITED + "120 V ∠12°"
    assert two["current"] == LIMITED + "990 mA ∠12°"
    assert two["p"] == LIMITED + "120 W"
    zero = element_rows({"elements": {"R": {**base, "digits": 0}}})[0]["text"]
    assert zero["voltage"] == LIMITED + "100 V ∠12°"       # one digit at least
    assert shown_digits(None) == SHOWN_DIGITS and shown_digits(40) == SHOWN_DIGITS


def test_a_source_row_is_cut_like_its_element_row():
    result = solve_text(_circuit(3e-15)[0])
    row = display.power_summary(result)["sources"][0]
    d = result["elements"]["I1"]["digits"]
    assert d < SHOWN_DIGITS
    assert row["text"]["q"].startswith(LIMITED)
    assert _significant(row["text"]["q"]) <= d
