"""Tests of the whole-file reader (language/parser.py): directives, names, line kinds,
and errors reported all in one pass with their lines and columns.

Behaviour is the language design's (circuit-language.md, marked beside each check);
numbers derived from it are computed with math (`# formula`).
"""

from __future__ import annotations

import math

import pytest

from phasorbench.errors import CircuitSyntaxError, format_diagnostic
from phasorbench.language import parser as parser_module
from phasorbench.language.parser import parse_circuit

SOURCE = "V1: voltage a -> 0 10 V\nR1: resistor a -> 0 5 ohm\n"


def errors_of(text: str, filename: str = "f.circuit"):
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(text, filename)
    return caught.value.errors


def places(text: str):
    return [(e.line, e.column, e.message) for e in errors_of(text)]


SPEC_EXAMPLE = """\
# Workshop feeder with a correction capacitor (invented values)
title Workshop feeder
frequency 60 Hz
amplitudes rms                 # source amplitudes below are RMS (or: peak)

Cpf = 150 uF                   # a named value

Vgrid:  voltage    a -> 0   240 V  phase 0 deg
Rline:  resistor   a -> b   0.15 ohm
Lline:  inductor   b -> c   0.4 mH
Zmotor: impedance  c -> 0   8.2 + j5.1 ohm
Ccorr:  capacitor  c -> 0   Cpf
"""


def test_the_whole_example_of_the_design_reads():
    # circuit-language.md, "A whole example"
    c = parse_circuit(SPEC_EXAMPLE, "feeder.circuit")
    assert (c.title, c.frequency, c.amplitudes) == ("Workshop feeder", 60.0, "rms")
    assert {n: (e.kind, e.nodes, e.value, e.line) for n, e in c.elements.items()} == {
        "Vgrid": ("voltage", ("a", "0"), 240, 8),
        "Rline": ("resistor", ("a", "b"), 0.15, 9),
        "Lline": ("inductor", ("b", "c"), 0.4e-3, 10),
        "Zmotor": ("impedance", ("c", "0"), 8.2 + 5.1j, 11),
        "Ccorr": ("capacitor", ("c", "0"), 150e-6, 12),
    }
    assert c.values == {"Cpf": 150e-6}


# --- directives ----------------------------------------------------------------------

def test_title_frequency_amplitudes():
    c = parse_circuit("title Workshop feeder  \nfrequency 60 Hz\namplitudes peak\n" + SOURCE)
    assert (c.title, c.frequency, c.amplitudes) == ("Workshop feeder", 60.0, "peak")
    c = parse_circuit("frequency 50\n" + SOURCE)       # circuit-language.md: default rms
    assert (c.title, c.amplitudes) == (None, "rms")


@pytest.mark.parametrize("spelling, hz", [
    ("60 Hz", 60.0), ("60Hz", 60.0), ("60", 60.0), ("1 kHz", 1e3), ("2.5k", 2.5e3),
    ("(2*25) Hz", 50.0),
])                                           # circuit-language.md: frequency VALUE, unit Hz
def test_frequency_spellings(spelling, hz):
    assert parse_circuit(f"frequency {spelling}\n" + SOURCE).frequency == hz


def test_frequency_from_a_named_value():
    # circuit-language.md: a named value is usable wherever a value goes
    c = parse_circuit("f0 = 400 Hz\nfrequency f0\n" + SOURCE)
    assert c.frequency == 400.0


@pytest.mark.parametrize("spelling, message", [
    ("0 Hz", "the frequency must be a real number greater than zero"),  # circuit-language.md
    ("-50", "the frequency must be a real number greater than zero"),
    ("50 + j1", "the frequency must be a real number greater than zero"),
    ("1e999", "the value is not finite"),
    ("50 ohm", "a frequency takes hertz (Hz); '50 ohm' is in ohms"),
    ("60 Hz 5", "unexpected '5' after the frequency"),
    ("", "missing frequency"),
])
def test_frequency_errors(spelling, message):
    [(line, column, got)] = places(f"frequency {spelling}\n" + SOURCE)
    assert (line, got) == (1, message)
    assert column >= 1


def test_directive_errors_name_their_lines():
    text = ("title\nfrequency 50\nfrequency 60\namplitudes both\namplitudes rms\n"
            "frquency 50\nhello world\n" + SOURCE)
    assert places(text) == [
        (1, 1, "title needs a text"),
        (3, 1, "'frequency' is given twice (first at line 2)"),
        (4, 12, "amplitudes must be 'rms' or 'peak'"),
        (5, 1, "'amplitudes' is given twice (first at line 4)"),
        (6, 1, "'frquency' is not a directive"),
        (7, 1, "'hello' is not a directive"),
    ]
    assert "did you mean 'frequency'?" in errors_of(text)[4].hint


def test_keywords_and_kinds_are_case_insensitive():
    # circuit-language.md: keywords and kinds are case-insensitive
    text = ("TITLE Loud\nFrequency 50 Hz\nAMPLITUDES PEAK\n"
            "V1: VOLTAGE a -> GND 10 V PHASE 90 deg RMS\nR1: Resistor a -> 0 5 TOL 5%\n"
            "L1: Inductor a -> b 1 mH\nL2: INDUCTOR b -> 0 1 mH\nK1: Coupling L1 L2 K 0.5\n"
            "T1: TRANSFORMER a -> 0, s -> 0 RATIO 2:1\nRs: resistor s -> 0 1\n")
    c = parse_circuit(text)
    assert c.title == "Loud" and c.amplitudes == "peak"
    v1 = c.elements["V1"]
    assert v1.kind == "voltage" and v1.nodes == ("a", "0")
    # an RMS source in a peak circuit is multiplied by √2; phase 90°: formula
    assert abs(v1.value - 10 * math.sqrt(2) * 1j) < 1e-12
    assert c.elements["R1"].tolerance == 0.05
    assert c.couplings["K1"].k == 0.5
    assert c.elements["T1"].value == 2


def test_source_amplitude_conventions():
    # circuit-language.md: amplitudes rms/peak, and `rms`/`peak` override it per source
    text = ("frequency 50\nVa: voltage a -> 0 10 V peak\nVb: voltage b -> 0 10 V\n"
            "Vc: voltage c -> 0 10 V rms phase -30 deg\nRa: resistor a -> b 1\n"
            "Rb: resistor b -> c 1\nRc: resistor c -> 0 1\n")
    c = parse_circuit(text)
    assert abs(c.elements["Va"].value - 10 / math.sqrt(2)) < 1e-12    # formula: peak/√2
    assert c.elements["Vb"].value == 10
    assert abs(c.elements["Vc"].value - 10 * complex(math.cos(math.radians(-30)),
                                                     math.sin(math.radians(-30)))) < 1e-12
    peak = parse_circuit(text.replace("frequency 50", "frequency 50\namplitudes peak"))
    assert peak.elements["Va"].value == 10
    assert abs(peak.elements["Vb"].value - 10) < 1e-12
    assert abs(abs(peak.elements["Vc"].value) - 10 * math.sqrt(2)) < 1e-12   # formula


# --- the missing-frequency rule ------------------------------------------------------

def test_missing_frequency_is_an_error_of_no_line():
    [error] = errors_of(SOURCE)
    assert (error.line, error.column) == (None, None)
    # circuit-language.md: an error that belongs to no line is written FILE: error: ...
    assert format_diagnostic(error, "f.circuit", SOURCE).splitlines()[0] == \
        "f.circuit: error: no analysis frequency: add a 'frequency' line"


def test_every_source_with_its_own_freq_needs_no_frequency_line():
    # circuit-language.md: frequency is required unless every source has its own freq
    text = ("V1: voltage a -> 0 1 freq 60 Hz\nI1: current 0 -> a 1 A freq 60\n"
            "R1: resistor a -> 0 1\n")
    assert parse_circuit(text).frequency == 60.0
    [error] = errors_of(text.replace(" freq 60\n", "\n"))
    assert error.line is None and "frequency" in error.message


def test_sources_at_different_frequencies_take_the_lowest_as_analysis_frequency():
    # circuit-language.md: freq is a source's own frequency, for several frequencies at
    # once; with no 'frequency' line the lowest is the one the tables show
    c = parse_circuit("V1: voltage a -> 0 1 freq 60\nV2: voltage b -> 0 1 freq 50\n"
                      "R1: resistor a -> b 1\n")
    assert c.frequency == 50.0
    assert (c.elements["V1"].frequency, c.elements["V2"].frequency) == (60.0, 50.0)
    c = parse_circuit("frequency 50\nV1: voltage a -> 0 1 freq 60\nR1: resistor a -> 0 1")
    assert c.frequency == 50.0 and c.elements["V1"].frequency == 60.0


# --- names -----------------------------------------------------------------------------

def test_names_are_case_sensitive():
    # circuit-language.md: names are case-sensitive
    c = parse_circuit("frequency 50\nv1: voltage a -> 0 1\nV1: voltage b -> 0 2\n"
                      "r1: resistor a -> b 1\nR1: resistor b -> 0 1\n")
    assert set(c.elements) == {"v1", "V1", "r1", "R1"}
    [error] = errors_of("frequency 50\nCpf = 1 uF\n" + SOURCE + "C1: capacitor a -> 0 cpf\n")
    assert error.message == "'cpf' is not a number, a unit or a named value"
    assert error.hint == "did you mean 'Cpf'?"


def test_duplicate_name_names_the_first_line():
    # circuit-language.md, "Errors": feeder.circuit:4:1: error: 'Rline' is defined twice
    # (first at line 3)
    text = ("frequency 60 Hz\nVgrid: voltage a -> 0 240 V\nRline: resistor a -> b 0.15 ohm\n"
            "Rline: resistor b -> 0 1 ohm\n")
    [error] = errors_of(text, "feeder.circuit")
    assert format_diagnostic(error, "feeder.circuit", text).splitlines()[0] == \
        "feeder.circuit:4:1: error: 'Rline' is defined twice (first at line 3)"


def test_elements_and_named_values_share_one_namespace():
    # circuit-language.md: element names and named values share one namespace
    assert places("frequency 50\nR1 = 5 ohm\n" + SOURCE) == [
        (4, 1, "'R1' is defined twice (first at line 2)")]
    assert places("frequency 50\n" + SOURCE + "V1 = 5 V\n") == [
        (4, 1, "'V1' is defined twice (first at line 2)")]


def test_node_names_are_their_own_namespace():
    # circuit-language.md: node names are a namespace of their own
    c = parse_circuit("frequency 50\nR1: resistor R1 -> V1 1\nV1: voltage V1 -> 0 1\n")
    assert c.elements["R1"].nodes == ("R1", "V1")


@pytest.mark.parametrize("spelling", ["0", "gnd", "GND", "Gnd"])
def test_ground_spellings(spelling):
    # circuit-language.md: 0 and gnd (any case) both name the reference node
    c = parse_circuit(f"frequency 50\nV1: voltage a -> {spelling} 1\n"
                      f"R1: resistor {spelling} -> a 1\n")
    assert c.elements["V1"].nodes == ("a", "0") and c.elements["R1"].nodes == ("0", "a")
    assert c.nodes() == ["0", "a"]


def test_node_names_with_dots_digits_and_underscores():
    # circuit-language.md: node names are letters, digits, _ and .
    c = parse_circuit("frequency 50\nV1: voltage bus.1 -> 0 1\nR1: resistor bus.1 -> 3a 1\n"
                      "R2: resistor 3a -> n_2 1\nR3: resistor n_2 -> 0 1\n")
    assert c.nodes() == ["0", "bus.1", "3a", "n_2"]


@pytest.mark.parametrize("line, name", [
    ("R-1: resistor a -> 0 1", "R-1"),       # circuit-language.md: NAME is letters,
    ("1R: resistor a -> 0 1", "1R"),         # digits and _, starting with a letter
    ("R.1: resistor a -> 0 1", "R.1"),
    ("_R: resistor a -> 0 1", "_R"),
    ("2x = 5", "2x"),
])
def test_invalid_names(line, name):
    [(ln, column, message)] = places("frequency 50\n" + SOURCE + line + "\n")
    assert (ln, column, message) == (4, 1, f"'{name}' is not a valid name")


# --- line kinds and comments --------------------------------------------------------

def test_line_kinds_and_comments():
    # circuit-language.md: '#' comments, blank lines ignored; ':' element, '=' assignment
    text = ("# a comment\n\n   \nfrequency 50 # Hz\nX = 5 ohm # named\n"
            "R1: resistor a -> 0 X   # 10 ohm would be wrong\nV1: voltage a -> 0 1\n")
    c = parse_circuit(text)
    assert c.elements["R1"].value == 5 and c.elements["R1"].line == 6
    assert c.values == {"X": 5}


def test_element_written_without_colon():
    # circuit-language.md: an element line's first word ends in ':'
    [error] = errors_of("frequency 50\n" + SOURCE + "R2 resistor a -> 0 1\n")
    assert (error.line, error.column) == (4, 1)
    assert error.message == "'R2' looks like an element but has no ':' after its name"


# --- all errors in one pass -----------------------------------------------------------

def test_five_different_errors_in_one_pass():
    # circuit-language.md: all errors of a file are reported in one pass
    lines = [
        "frequency 50 Hz",
        "V1: voltage a -> 0 1 X",                 # 2: a stray word after the value
        "R1: resistor a b 1",                     # 3: no arrow
        "C1: capacitor a -> 0 150 uH",            # 4: wrong unit
        "L1: foo a -> 0 1",                       # 5: unknown kind
        "R2: resistor a -> 0 4.7q",               # 6: unknown prefix
        "R3: resistor a -> 0 1",
    ]
    text = "\n".join(lines)
    got = places(text)
    at = lambda n, s: lines[n - 1].index(s) + 1          # noqa: E731 (the column of s)
    assert [(line, column) for line, column, _ in got] == [
        (2, at(2, "X")), (3, at(3, "b")), (4, at(4, "150")), (5, at(5, "foo")),
        (6, at(6, "4.7q"))]
    assert [m for _, _, m in got] == [
        "unexpected 'X' after the value",
        "expected '->' between the terminals",
        "a capacitor takes farads (F); '150 uH' is in henries",
        "'foo' is not an element kind",
        "'4.7q' is not a number with a known prefix or unit",
    ]


def test_errors_are_ordered_and_formatted_with_caret_and_hint():
    text = "frequency 50\nR1: resistor a -> 0 4.7q\n" + "V1: voltage a -> 0 1\n"
    [error] = errors_of(text)
    shown = format_diagnostic(error, "f.circuit", text).splitlines()
    # circuit-language.md: FILE:LINE:COL: error: message, the source line, a caret, a hint
    assert shown == [
        "f.circuit:2:21: error: '4.7q' is not a number with a known prefix or unit",
        "  R1: resistor a -> 0 4.7q",
        "                      ^^^^",
        "  hint: " + error.hint,
    ]


# --- errors of no line ------------------------------------------------------------------

@pytest.mark.parametrize("text, message", [
    ("", "the circuit is empty"),                               # circuit-language.md
    ("  \n\n\t\n", "the circuit is empty"),
    ("# only a comment\n", "the circuit has no elements (nothing to solve)"),
    ("frequency 50 Hz\ntitle Nothing\n", "the circuit has no elements (nothing to solve)"),
    ("frequency 50\nV1: voltage a -> 0 1\x00\n", "the file is not text (it holds NUL bytes)"),
])
def test_file_level_errors(text, message):
    [error] = errors_of(text)
    assert (error.line, error.column, error.message) == (None, None, message)
    assert format_diagnostic(error, "f.circuit", text).startswith(f"f.circuit: error: {message}")
    assert error.hint


def test_too_many_lines_is_refused_before_reading(monkeypatch):
    # common practice, no source: a size guard for pasted junk, a named constant
    monkeypatch.setattr(parser_module, "MAX_LINES", 3)
    [error] = errors_of("frequency 50\n" + SOURCE + "R2: resistor a -> 0 1\n")
    assert error.line is None and "more than 3 lines" in error.message


# --- line numbering -----------------------------------------------------------------------

@pytest.mark.parametrize("newline", ["\n", "\r\n", "\r"])
def test_line_numbers_with_every_line_ending(newline):
    # common practice, no source: editors end lines at LF, CRLF or CR
    text = newline.join(["frequency 50", "", "V1: voltage a -> 0 1", "R1: resistor a -> 0 1q"])
    [error] = errors_of(text)
    assert (error.line, error.column) == (4, 21)


def test_form_feed_and_line_separator_do_not_start_lines():
    # common practice, no source: a form feed or U+2028 inside a line is not a new line
    # for an editor, so it must not shift the line numbers of later errors
    text = "frequency 50\x0c\nV1: voltage a -> 0 1\u2028\nR1: resistor a -> 0 1q\n"
    [error] = errors_of(text)
    assert error.line == 3
    shown = format_diagnostic(error, "f", text).splitlines()
    assert shown[1] == "  R1: resistor a -> 0 1q"


def test_caret_stays_under_the_span_after_a_tab():
    # common practice, no source: one column per character, a tab shown as one space
    text = "frequency 50\nR1:\tresistor a -> 0 1q\nV1: voltage a -> 0 1\n"
    [error] = errors_of(text)
    source, caret = format_diagnostic(error, "f", text).splitlines()[1:3]
    assert source[caret.index("^"):caret.index("^") + 2] == "1q"


def test_non_strict_returns_the_partial_circuit_and_every_diagnostic():
    # common practice, no source: a partial read for tools that show every problem
    circuit, diagnostics = parse_circuit("frequency 50\n" + SOURCE + "R2: resistor a -> 0 x\n",
                                         strict=False)
    assert set(circuit.elements) == {"V1", "R1"}
    assert [d.line for d in diagnostics] == [4]


def test_a_badly_named_element_is_not_also_a_missing_element():
    # common practice, no source: one mistake, one message (no "no elements" echo)
    assert places("frequency 50\nR-1: resistor a -> 0 1\n") == [
        (2, 1, "'R-1' is not a valid name")]
    assert places("frequency 50\nR1:\n") == [(2, 3, "element 'R1' has no kind")]


def test_control_characters_in_messages_are_shown_escaped():
    # common practice, no source: a message quoting the input must not send control
    # characters (a terminal escape) to the terminal; show them as escapes instead
    text = "frequency 50\n\x1b[2J: resistor a -> 0 1\nV1: voltage a -> 0 1\n"
    [error] = errors_of(text)
    shown = format_diagnostic(error, "f", text)
    assert "\x1b" not in shown
    assert shown.splitlines()[0] == "f:2:1: error: '\\x1b[2J' is not a valid name"
    assert shown.splitlines()[1] == "  \ufffd[2J: resistor a -> 0 1"
