"""The ``spectrum`` option of sources (language/spectrum.py).

Shape and rules are studies.md's ("Harmonic spectra": ORDER: PERCENT [@ ANGLE], ORDER
above 1 and once, ANGLE in degrees by default, the phase turning with the fundamental);
the limits of issue 14 (0–1000 %); numbers derived with cmath (`# formula`).
"""

from __future__ import annotations

import cmath
import math

import pytest

from phasorbench.errors import CircuitSyntaxError
from phasorbench.language.parser import parse_circuit
from phasorbench.language.spectrum import component
from phasorbench.workflow import check_text

HEAD = "frequency 50 Hz\n"
TAIL = "\nR1: resistor a -> 0 1 ohm\n"


def errors_of(source_line: str):
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(HEAD + source_line + TAIL)
    return caught.value.errors


def test_the_design_example_reads():
    # studies.md's example line, word for word
    line = ("Drive: current a -> 0  42 A phase -30 deg  spectrum 5: 18 %, 7: 11 % @ 180 deg, "
            "11: 6 %, 13: 4 %")
    e = parse_circuit(HEAD + line + TAIL).elements["Drive"]
    assert [(o, f) for o, f, _ in e.spectrum] == [(5, 0.18), (7, 0.11), (11, 0.06), (13, 0.04)]
    assert e.spectrum[1][2] == pytest.approx(math.pi)         # 180 deg
    # formula (studies.md): the 7th at 180° + 7·(−30°) = −30°, 11 % of 42 A
    assert component(e.value, 7, 0.11, math.pi) == pytest.approx(
        cmath.rect(0.11 * 42, math.radians(-30)), abs=1e-12)


def test_angle_units_interharmonics_and_options_after():
    e = parse_circuit(HEAD + "V1: voltage a -> 0 10 V spectrum 2.5: 3 @ 0.5 rad, 3: 1% ∠ 90 "
                      "freq 60 Hz" + TAIL).elements["V1"]
    # studies.md: an angle without a unit is degrees; '%' may be left out; options follow
    assert e.spectrum == ((2.5, 0.03, 0.5), (3.0, 0.01, pytest.approx(math.pi / 2)))
    assert e.frequency == 60.0


def test_every_value_problem_of_one_spectrum_in_one_pass():
    line = "V1: voltage a -> 0 10 V spectrum 1: 5 %, 5: 2000 %, 5: 3 %, 0.5: 1 %"
    errors = errors_of(line)
    # common practice, no source: all problems of the line reported together, each
    # with its own column
    assert [e.column for e in errors] == [line.index(" 1:") + 2, line.index("2000") + 1,
                                         line.index("5: 3") + 1, line.index("0.5") + 1]
    assert "not above 1" in errors[0].message and "given twice" in errors[2].message
    assert "from 0 % to 1000 %" in errors[1].message
    assert all(e.line == 2 and e.hint for e in errors)


@pytest.mark.parametrize("tail, message", [
    ("spectrum 5 18 %", "expected ':' after the order 5"),
    ("spectrum 5 = 18 %", "expected ':' after the order 5"),
    ("spectrum", "needs at least one entry"),
    ("spectrum 5: 18 %,", "ends with a comma"),
    ("spectrum 5: 18 % 7: 3 %", "unexpected '7' after the spectrum"),
    ("spectrum 5: 18 V", "unexpected 'V' after the percentage"),
    ("spectrum 5: j3 %", "must be a real number"),
    ("spectrum 5: -2 %", "from 0 % to 1000 %"),
    ("spectrum 5: 18 % @ 3 V", "unexpected 'V' after the spectrum"),
    ("spectrum 5: 18 % @ 3Hz", "an angle takes deg"),
    ("spectrum 5: 1 %, spectrum 7: 1 %", "ends with a comma"),
    ("spectrum 5: 1 % spectrum 7: 1 %", "'spectrum' is given twice"),
])
def test_shape_errors_point_into_the_line(tail, message):
    (error,) = errors_of("V1: voltage a -> 0 10 V " + tail)
    assert message in error.message and error.hint and error.column > 20


def test_only_sources_take_a_spectrum():
    (error,) = errors_of("R2: resistor a -> 0 5 ohm spectrum 5: 3 %")
    assert "'spectrum' does not apply to a resistor" in error.message


def test_three_phase_fifth_is_negative_sequence():
    c = parse_circuit(HEAD + "G: voltage3 a b c -> 0 230 V spectrum 5: 4 %\n"
                      "L: load3 wye a b c -> 0 10 ohm\n")
    fifths = [component(c.elements[f"G.{p}"].value, 5, 0.04, 0.0) for p in "abc"]
    # from memory (common practice): the 5th of a balanced abc set turns acb —
    # phase b's 5th leads phase a's by 120°
    assert cmath.phase(fifths[1] / fifths[0]) == pytest.approx(math.radians(120))
    assert cmath.phase(fifths[2] / fifths[0]) == pytest.approx(math.radians(-120))


def test_check_text_never_raises_on_a_broken_spectrum():
    # common practice, no source: diagnostics, not a traceback
    for junk in ("spectrum :::", "spectrum 5: (", "spectrum @", "spectrum 5: 3 @", "spectrum 1e999: 3"):
        found = check_text(HEAD + "V1: voltage a -> 0 10 V " + junk + TAIL)
        assert found and all(d.severity == "error" and d.line == 2 for d in found), junk
