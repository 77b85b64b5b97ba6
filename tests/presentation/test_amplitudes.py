"""The RMS / peak switch of presentation/amplitudes.py against the textbook relation
V_peak = √2·V_RMS for a sinusoid, with powers unchanged."""

from __future__ import annotations

import math

import pytest

from phasorbench.presentation.amplitudes import shown_as
from phasorbench.presentation.display import group_detail, solve_display
from phasorbench.workflow import solve_text

#: check-values C1: 10 µF across 230 V RMS at 50 Hz: I = 0.722566 A leading by 90°.
C1 = """frequency 50 Hz
V1: voltage a -> 0 230 V
C1: capacitor a -> 0 10 uF
"""
THREE = """frequency 50 Hz
G: voltage3 A B C -> 0 400 V line
M: load3 wye A B C -> 0 16 + j12 ohm
"""


def test_rms_shown_as_peak_and_back():
    result = solve_text(C1)
    peak = shown_as(result, "peak")
    # textbook: the peak of a sinusoid is √2 times its RMS value
    assert peak["nodes"]["a"]["mag"] == pytest.approx(230 * math.sqrt(2), rel=1e-12)
    assert peak["elements"]["C1"]["current"]["mag"] == pytest.approx(0.722566 * math.sqrt(2),
                                                                     rel=1e-6)   # C1
    assert peak["elements"]["C1"]["current"]["deg"] == pytest.approx(90.0, abs=1e-9)
    # the same power whichever way it is read: V·I* of RMS = ½·V·I* of peak (contract)
    assert peak["elements"]["C1"]["q_var"] == result["elements"]["C1"]["q_var"]
    assert peak["elements"]["C1"]["impedance"] == result["elements"]["C1"]["impedance"]
    assert peak["amplitudes"] == "peak" and peak["amplitudes_input"] == "rms"
    assert result["nodes"]["a"]["mag"] == pytest.approx(230.0)     # the shared one unchanged
    assert shown_as(result, "rms") is result and shown_as(result, None) is result
    back = shown_as(shown_as(solve_text("amplitudes peak\n" + C1.replace("230 V", "325 V")),
                             "rms"), "rms")
    assert back["nodes"]["a"]["mag"] == pytest.approx(325 / math.sqrt(2), rel=1e-12)


def test_the_display_says_which_and_switches_every_magnitude():
    shown = solve_display(shown_as(solve_text(C1), "peak"))
    heads = {c["key"]: c["heading"] for c in shown["element_columns"]}
    assert heads["voltage"] == "|V| peak ∠" and heads["current"] == "|I| peak ∠"
    assert "shown as peak" in shown["facts"]["amplitudes"]
    assert "input in RMS" in shown["facts"]["amplitudes"]
    rows = {r["name"]: r["text"] for r in shown["elements"]}
    # 230·√2 = 325.27 V; 0.722566·√2 = 1.0219 A (textbook, check-values C1)
    assert rows["C1"]["voltage"] == "325.3 V ∠0.00°"
    assert rows["C1"]["current"] == "1.022 A ∠90.00°"
    assert rows["C1"]["q"] == "-166.2 var"                     # check-values C1, unchanged
    plain = solve_display(solve_text(C1))
    assert {c["key"]: c["heading"] for c in plain["element_columns"]}["voltage"] == "|V| RMS ∠"


def test_three_phase_values_switch_too():
    result = solve_text(THREE)
    peak = shown_as(result, "peak")
    # check-values C22: 400 V line, 230.94 V phase; √2 × each (textbook)
    line = peak["groups"]["M"]["line_voltage"]["ab"]["mag"]
    assert line == pytest.approx(400 * math.sqrt(2), rel=1e-9)
    assert peak["groups"]["M"]["sequence_voltage"]["positive"]["mag"] == \
        pytest.approx(400 / math.sqrt(3) * math.sqrt(2), rel=1e-9)
    assert peak["groups"]["M"]["p_w"] == result["groups"]["M"]["p_w"]
    assert group_detail(peak, "M")["magnitudes"] == "peak"
