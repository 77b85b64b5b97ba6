"""Tests of the value grammar (language/values.py) through whole element lines.

Every spelling comes from the language design (circuit-language.md, section "Values");
expected numbers are computed here with math/cmath (`# formula`). SI prefix factors are
the SI Brochure's (BIPM, 9th ed. 2019, table of prefixes; from memory).
"""

from __future__ import annotations

import cmath
import math

import pytest

from phasorbench.errors import CircuitSyntaxError, format_diagnostic
from phasorbench.language.parser import parse_circuit


def value_of(value: str, kind: str = "impedance", before: str = "") -> complex:
    text = f"frequency 50 Hz\n{before}\nX1: {kind} a -> 0 {value}\n"
    return parse_circuit(text).elements["X1"].value


def error_of(value: str, kind: str = "impedance", before: str = ""):
    """The single diagnostic of a one-element circuit whose value is wrong (line 3)."""
    line = f"X1: {kind} a -> 0 {value}"
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(f"frequency 50 Hz\n{before}\n{line}\n")
    errors = caught.value.errors
    assert len(errors) == 1, errors
    return errors[0], line


def close(a: complex, b: complex, rel: float = 1e-12) -> bool:
    return abs(a - b) <= rel * abs(b) + 1e-300


# --- numbers and SI prefixes ---------------------------------------------------------

@pytest.mark.parametrize("text, expected", [
    ("12", 12.0),               # circuit-language.md
    ("-3.5", -3.5),
    ("1.5e-3", 1.5 * 10 ** -3),
    (".5", 0.5),
    ("5.", 5.0),
])
def test_plain_numbers(text, expected):
    assert close(value_of(text, "resistor"), expected)


@pytest.mark.parametrize("prefix, power", [
    ("f", -15), ("p", -12), ("n", -9), ("u", -6), ("µ", -6), ("m", -3), ("k", 3),
    ("M", 6), ("G", 9), ("T", 12),
])                              # circuit-language.md prefix list; SI Brochure (from memory)
def test_every_prefix_glued_to_the_number_and_to_the_unit(prefix, power):
    expected = 2.5 * 10.0 ** power
    assert close(value_of(f"2.5{prefix}", "resistor"), expected)
    assert close(value_of(f"2.5 {prefix}ohm", "resistor"), expected)
    assert close(value_of(f"2.5{prefix}ohm", "resistor"), expected)


@pytest.mark.parametrize("text, kind, expected", [
    ("4.7k", "resistor", 4.7 * 10 ** 3),       # circuit-language.md, each spelling
    ("150u", "capacitor", 150 * 10 ** -6),
    ("150µ", "capacitor", 150 * 10 ** -6),
    ("2.2 mH", "inductor", 2.2 * 10 ** -3),
    ("0.15 Ω", "resistor", 0.15),
    ("33 nF", "capacitor", 33 * 10 ** -9),
    ("150 uF", "capacitor", 150 * 10 ** -6),
    ("0.15 ohm", "resistor", 0.15),
    ("0.15 ohms", "resistor", 0.15),
    ("1 kΩ", "resistor", 10 ** 3),
    ("1 k\u2126", "resistor", 10 ** 3),   # common practice, no source: the ohm sign U+2126
    ("150 μF", "capacitor", 150 * 10 ** -6),  # common practice, no source: Greek mu U+03BC
    ("2 S", "admittance", 2.0),
    ("240 V", "voltage", 240.0),
    ("3 mA", "current", 3 * 10 ** -3),
    ("1e3k", "resistor", 10 ** 6),        # formula: the prefix multiplies the whole number
])
def test_spec_spellings(text, kind, expected):
    assert close(value_of(text, kind), expected)


def test_prefixes_are_case_sensitive():
    # circuit-language.md: case-sensitive (m milli, M mega)
    assert close(value_of("1m", "resistor"), 1e-3)
    assert close(value_of("1M", "resistor"), 1e6)
    assert close(value_of("1 mohm", "resistor"), 1e-3)
    assert close(value_of("1 Mohm", "resistor"), 1e6)
    error, line = error_of("4.7K", "resistor")
    assert error.message == "'4.7K' is not a number with a known prefix or unit"
    assert error.column == line.index("4.7K") + 1 and error.length == 4


def test_unknown_prefix_error_and_hint():
    # style-examples.md: messages quote the input and say what to do
    error, line = error_of("4.7q", "resistor")
    assert error.message == "'4.7q' is not a number with a known prefix or unit"
    assert "4.7k" in error.hint
    assert (error.column, error.length) == (line.index("4.7q") + 1, 4)


# --- units checked against the kind ------------------------------------------------

def test_the_spec_example_error_with_column_and_caret():
    # circuit-language.md, "Errors": the exact message, place and caret
    lines = ["# Workshop feeder", "title Workshop feeder", "frequency 60 Hz",
             "amplitudes rms", "", "Cpf = 150 uF", "", "Vgrid:  voltage    a -> 0   240 V",
             "Ccorr:  capacitor  c -> 0   150 uH", "Rline:  resistor   a -> c   0.15 ohm"]
    text = "\n".join(lines)
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(text, "feeder.circuit")
    [error] = caught.value.errors
    shown = format_diagnostic(error, "feeder.circuit", text).splitlines()
    assert shown[:3] == [
        "feeder.circuit:9:29: error: a capacitor takes farads (F); '150 uH' is in henries",
        "  Ccorr:  capacitor  c -> 0   150 uH",
        "                              ^^^^^^",
    ]
    assert shown[3].startswith("  hint: ")


@pytest.mark.parametrize("value, kind, takes, given", [
    # circuit-language.md, table of kinds and their units
    ("5 V", "resistor", "ohms (Ω)", "volts"),
    ("3 F", "impedance", "ohms (Ω)", "farads"),
    ("10 mH", "capacitor", "farads (F)", "henries"),
    ("10 uF", "inductor", "henries (H)", "farads"),
    ("2 ohm", "admittance", "siemens (S)", "ohms"),
    ("10 A", "voltage", "volts (V)", "amperes"),
    ("10 V", "current", "amperes (A)", "volts"),
    ("10 Hz", "resistor", "ohms (Ω)", "hertz"),
    ("5 deg", "resistor", "ohms (Ω)", "degrees"),
])
def test_units_must_fit_the_kind(value, kind, takes, given):
    error, line = error_of(value, kind)
    article = "an" if kind[0] in "aeiou" else "a"
    assert error.message == f"{article} {kind} takes {takes}; '{value}' is in {given}"
    assert (error.column, error.length) == (line.index(value) + 1, len(value))
    assert error.hint


@pytest.mark.parametrize("value, kind", [
    ("20 ohm", "vcvs"), ("0.98 A", "cccs"),   # circuit-language.md: gains with no unit
])
def test_unitless_gains_refuse_units(value, kind):
    sense = "sense in -> 0" if kind == "vcvs" else "sense Rs"
    error, _ = error_of(f"{value} {sense}", kind,
                        before="Rs: resistor in -> 0 1\nRi: resistor a -> 0 1")
    assert error.message.startswith(f"a {kind} value takes no unit; '{value}'")


@pytest.mark.parametrize("value, kind, expected", [
    ("0.1 S", "vccs", 0.1),             # circuit-language.md: vccs gain in S
    ("50 ohm", "ccvs", 50.0),           # ccvs gain in ohm
    ("50 Ω", "ccvs", 50.0),
])
def test_gains_with_their_units(value, kind, expected):
    sense = "sense in -> 0" if kind == "vccs" else "sense Rs"
    assert close(value_of(f"{value} {sense}", kind, before="Rs: resistor in -> 0 1"),
                 expected)


# --- rectangular and polar complex values --------------------------------------------

@pytest.mark.parametrize("text, expected", [
    ("8.2 + j5.1", 8.2 + 5.1j),         # circuit-language.md
    ("8.2+5.1j", 8.2 + 5.1j),
    ("-j40 ohm", -40j),
    ("-j40", -40j),
    ("8.2 - j5.1", 8.2 - 5.1j),
    ("-8.2-j5.1", -8.2 - 5.1j),
    ("8.2 + j5.1 ohm", 8.2 + 5.1j),      # circuit-language.md whole example (Zmotor)
    ("8.2 ohm + j5.1 ohm", 8.2 + 5.1j),
    ("8.2 + j5.1 kohm", (8.2 + 5.1j) * 1e3),   # formula: a unit ending the value scales it all
    ("j4.7k", 4.7e3j),
    ("j1e-3", 1e-3j),
    ("4.7kj", 4.7e3j),
    ("5.1j", 5.1j),
])
def test_rectangular(text, expected):
    assert close(value_of(text), expected)


_Z = cmath.rect(10, math.radians(36.87))     # formula: 10∠36.87° = 10·e^(j·36.87°)


@pytest.mark.parametrize("text, expected", [
    ("10 ohm @ 36.87 deg", _Z),             # circuit-language.md, each polar spelling
    ("10∠36.87°", _Z),
    ("10∠36.87° Ω", _Z),
    ("10∠36.87°Ω", _Z),
    ("10 @ 36.87 deg ohm", _Z),             # unit at the end of the value
    ("10 ohm ∠ 36.87°", _Z),                # unit after the magnitude
    ("10∠36.87", _Z),                       # an angle without a unit is in degrees
    ("10 @ 36.87deg", _Z),
    ("10∠-36.87°", _Z.conjugate()),
    ("10∠(-36.87)", _Z.conjugate()),
    ("10 @ 0.5 rad", cmath.rect(10, 0.5)),  # formula
    ("10∠0.5rad", cmath.rect(10, 0.5)),
    ("2k∠90°", cmath.rect(2e3, math.pi / 2)),
    ("-10∠0", -10),
])
def test_polar(text, expected):
    assert close(value_of(text), expected, rel=1e-12)


@pytest.mark.parametrize("value, message", [
    ("10 @ 30 V", "an impedance takes ohms (Ω); '10 @ 30 V' is in volts"),
    ("10 ohm @ 30 deg V", "'V' does not match the unit given before"),
    ("10 @ (3j)", "an angle must be real"),
    ("10 @", "missing angle after the polar sign"),
    ("10 @ 30Hz", "an angle takes deg, ° or rad, not hertz (Hz)"),
    ("10 @ 30 Hz", "an impedance takes ohms (Ω); '10 @ 30 Hz' is in hertz"),
    ("10 @ 1e999", "the angle is not finite"),
    ("8.2 j5.1", "'j5.1' needs a + or - before it"),
    ("8.2 +", "a value ends with an operator"),
    ("8.2 ohm + j5.1 V", "the parts of this value carry different units"),
    ("5ohm ohm", "two units on one number ('ohm')"),
])                                               # circuit-language.md: values and errors
def test_complex_value_errors(value, message):
    error, line = error_of(value)
    assert error.message == message
    assert error.hint
    assert line.index(value) + 1 <= error.column <= len(line) + 1


# --- named values and expressions ------------------------------------------------------

def test_named_value_with_unit_is_checked_where_used():
    # circuit-language.md: `Cpf = 150 uF` ... checked where it is used
    assert close(value_of("Cpf", "capacitor", before="Cpf = 150 uF"), 150e-6)
    error, line = error_of("Cpf", "resistor", before="Cpf = 150 uF")
    assert error.message == "a resistor takes ohms (Ω); 'Cpf' is in farads"
    assert error.column == line.index("Cpf") + 1


@pytest.mark.parametrize("value, before, expected", [
    ("(2*Cpf)", "Cpf = 150 uF", 2 * 150e-6),                        # circuit-language.md
    ("(1/(2*pi*60*Xc))", "Xc = 10 ohm", 1 / (2 * math.pi * 60 * 10)),  # formula
    ("(sqrt(Cpf*Cpf))", "Cpf = 150 uF", 150e-6),
    ("(2^-1*Cpf)", "Cpf = 150 uF", 75e-6),
])
def test_parenthesised_expressions(value, before, expected):
    assert close(value_of(value, "capacitor", before=before), expected)


def test_named_values_chain_and_may_come_after_use():
    # circuit-language.md: a named value is usable wherever a value goes
    text = ("frequency 50 Hz\nZ1: impedance a -> 0 Zl\nR1: resistor a -> 0 (2*R0)\n"
            "Zl = R0 + jX\nR0 = 4 ohm\nX = 3\njX = (X*j)\n")
    circuit = parse_circuit(text)
    assert close(circuit.elements["Z1"].value, 4 + 3j)        # formula
    assert close(circuit.elements["R1"].value, 8)


def test_named_polar_value_and_angle():
    before = "Zm = 10 ohm @ A\nA = 36.87 deg"
    assert close(value_of("Zm", before=before), _Z)          # formula


def test_value_errors_of_named_values():
    text = ("frequency 50 Hz\nA = (B)\nB = (A)\nV1: voltage a -> 0 1\n"
            "R1: resistor a -> 0 Cfp\nCpf = 1 uF\nR2: resistor a -> 0 V1\n")
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(text)
    messages = [(e.line, e.message) for e in caught.value.errors]
    assert messages == [
        (3, "named value 'A' is defined in terms of itself (A -> B -> A)"),
        (5, "'Cfp' is not a number, a unit or a named value"),
        (7, "'V1' is an element, not a named value"),
    ]
    assert "did you mean 'Cpf'?" in caught.value.errors[1].hint


def test_an_error_inside_a_named_value_is_reported_on_its_own_line():
    # circuit-language.md: errors point at the offending text (line and column)
    text = "frequency 50 Hz\nA = (B)\nB =      (1/0)\nR1: resistor a -> 0 A\nV1: voltage a -> 0 1\n"
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(text)
    assert [(e.line, e.column, e.message) for e in caught.value.errors] == [
        (3, text.splitlines()[2].index("/") + 1, "division by zero")]


def test_named_values_nested_too_deeply_end_in_a_message():
    # common practice, no source: a chain of named values nests like parentheses and must
    # end in a message, not in Python's RecursionError
    chain = "".join(f"X{k} = (X{k + 1})\n" for k in range(100)) + "X100 = 1\n"
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit("frequency 50 Hz\nR1: resistor a -> 0 X0\n" + chain)
    assert {e.message for e in caught.value.errors} == {"expression nested too deeply"}
    short = "".join(f"X{k} = (X{k + 1})\n" for k in range(10)) + "X10 = 7\n"
    assert parse_circuit("frequency 50 Hz\nR1: resistor a -> 0 X0\n" + short
                         ).elements["R1"].value == 7


def test_a_failed_named_value_is_reported_once():
    # circuit-language.md: all errors in one pass, and each once
    text = "frequency 50 Hz\nRb = 4.7q\nR1: resistor a -> 0 Rb\nR2: resistor a -> 0 (2*Rb)\n"
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(text)
    assert [(e.line, e.message) for e in caught.value.errors] == [
        (2, "'4.7q' is not a number with a known prefix or unit")]


@pytest.mark.parametrize("value, message, start", [
    # circuit-language.md: every value must be finite
    ("1e999", "the value is not finite", "1e999"),
    ("9" * 400, "the value is not finite", "9" * 400),
    ("(1e200*1e200)", "the value is not finite", "1e200*"),
    ("1e308 + 1e308", "the value is not finite", "1e308 +"),
    ("(1/0)", "division by zero", "/0"),
    ("(1/(2-2))", "division by zero", "/(2"),
    ("(10^400)", "this power cannot be computed", "^400"),
    ("(" * 100 + "1" + ")" * 100, "expression nested too deeply", None),
    ("(" + "-" * 3000 + "1)", "expression nested too deeply", None),
])
def test_bad_values_are_errors_with_a_place(value, message, start):
    error, line = error_of(value, "resistor")
    assert error.message.startswith(message)
    if start is not None:
        assert error.column == line.index(start) + 1
    assert error.hint


def test_non_finite_span_covers_the_number():
    error, line = error_of("1e999", "resistor")
    assert (error.column, error.length) == (line.index("1e999") + 1, 5)   # circuit-language.md


def test_reserved_and_imaginary_looking_names_are_refused():
    # circuit-language.md: j, pi and sqrt are words of expressions; a named value spelt
    # j5 would be read as the imaginary number 5j where used (a silent wrong value)
    text = "frequency 50 Hz\npi = 3\nj5 = 2\nsqrt = 1\nV1: voltage a -> 0 1\n"
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(text)
    assert [(e.line, e.column) for e in caught.value.errors] == [(2, 1), (3, 1), (4, 1)]
    assert "imaginary" in caught.value.errors[1].message


@pytest.mark.parametrize("spelling, expected", [
    ("8 + j-5 ohm", 8 - 5j),      # a sign glued after j belongs to j's number
    ("8+j-5", 8 - 5j),
    ("j-2.5k", -2500j),
    ("8 + j -5", 3 + 1j),         # spaced apart it is plain arithmetic: 8 + j - 5
])
def test_sign_glued_after_j(spelling, expected):
    # formula: j·(-5) = -5j; circuit-language.md lets a unit end the value
    from phasorbench.language.parser import parse_circuit
    circuit = parse_circuit(f"frequency 50\nZ: impedance a -> 0 {spelling}")
    assert circuit.elements["Z"].value == pytest.approx(expected)


@pytest.mark.parametrize("spelling, farads", [("(2*Cpf) F", 300e-6), ("Cpf F", 150e-6)])
def test_unit_repeated_after_a_named_value_is_a_check(spelling, farads):
    # circuit-language.md: a named value may carry a unit, checked where it is used
    from phasorbench.language.parser import parse_circuit
    c = parse_circuit(f"frequency 50\nCpf = 150 uF\nC: capacitor a -> 0 {spelling}")
    assert c.elements["C"].value == pytest.approx(farads)


def test_prefixed_unit_after_a_named_value_is_refused():
    from phasorbench.errors import CircuitError
    from phasorbench.language.parser import parse_circuit
    with pytest.raises(CircuitError) as info:
        parse_circuit("frequency 50\nCpf = 150 uF\nC: capacitor a -> 0 Cpf uF")
    assert "already carries farads" in str(info.value)


@pytest.mark.parametrize("value, hint", [
    ("10 uf", "did you mean 'uF'?"),
    ("2.2mh", "did you mean 'mH'?"),
    ("3 −j4", "'−' only looks like '-'"),
    ("10∠30º", "'º' only looks like '°'"),
])
def test_look_alikes_and_wrong_case_get_a_pointed_hint(value, hint):
    # circuit-language.md: messages quote the input and say what to do; prefixes and
    # units are case-sensitive
    from phasorbench.workflow import check_text
    [error] = [d for d in check_text(f"frequency 50 Hz\nV: voltage a -> 0 1\n"
                                     f"Z: impedance a -> 0 {value}") if d.severity == "error"]
    assert hint in error.hint
