"""Tests of element lines (language/elements.py): every kind, options, couplings,
transformers and three-phase blocks.

Shapes, kinds, options and names are the language design's (circuit-language.md,
marked beside each check); numbers derived from it are computed with math/cmath
(`# formula`).
"""

from __future__ import annotations

import cmath
import itertools
import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from phasorbench.errors import CircuitSyntaxError
from phasorbench.language.parser import parse_circuit
from phasorbench.model import Element

HEAD = "frequency 50 Hz\n"


def read(body: str, head: str = HEAD):
    return parse_circuit(head + body)


def errors_of(body: str, head: str = HEAD):
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(head + body)
    return caught.value.errors


def only_error(body: str):
    [error] = errors_of(body)
    return error


def close(a: complex, b: complex) -> bool:
    return abs(a - b) <= 1e-12 * max(1.0, abs(b))


# --- two-terminal kinds ------------------------------------------------------------------

@pytest.mark.parametrize("kind, value, expected", [
    ("resistor", "10 ohm", 10),               # circuit-language.md, table of kinds
    ("capacitor", "150 uF", 150e-6),
    ("inductor", "0.4 mH", 0.4e-3),
    ("impedance", "8.2 + j5.1 ohm", 8.2 + 5.1j),
    ("admittance", "0.1 - j0.2 S", 0.1 - 0.2j),
    ("voltage", "240 V", 240),
    ("current", "2 A", 2),
])
def test_two_terminal_kinds(kind, value, expected):
    element = read(f"X1: {kind} p -> n {value}\n").elements["X1"]
    assert (element.kind, element.nodes, element.line) == (kind, ("p", "n"), 2)
    assert close(element.value, expected)


@pytest.mark.parametrize("body, message", [
    ("C1: capacitor a -> 0 0", "a capacitor value must be greater than zero"),
    ("C1: capacitor a -> 0 -1u", "a capacitor value must be greater than zero"),
    ("L1: inductor a -> 0 0", "an inductor value must be greater than zero"),
    ("C1: capacitor a -> 0 1 + j1", "a capacitor value must be real; this one is complex"),
    ("R1: resistor a -> 0 1 + j1", "a resistor value must be real; this one is complex"),
    ("R1: resistor", "element 'R1' has no terminals"),
    ("R1:", "element 'R1' has no kind"),
    ("R1: resistor a ->", "missing second terminal"),
    ("R1: resistor a b 1", "expected '->' between the terminals"),
    ("R1: resistor a -> b", "missing value"),
    ("R1: resistr a -> b 1", "'resistr' is not an element kind"),
])                                        # circuit-language.md: kinds, terminals, values
def test_element_line_errors(body, message):
    error = only_error(body)
    assert error.message == message and error.line == 2
    assert 1 <= error.column <= len(body) + 1
    assert error.hint


def test_unknown_kind_suggests_the_closest():
    # style-examples.md: messages quote the input and say what to do
    assert only_error("R1: resistr a -> b 1").hint == "did you mean 'resistor'?"


# --- controlled sources --------------------------------------------------------------------

def test_controlled_sources_and_their_sense():
    # circuit-language.md: vcvs/vccs sense c -> d; ccvs/cccs sense ELEMENT
    c = read("Stage: vcvs out -> 0 20 sense in -> 0\nG1: vccs p -> 0 0.1 S sense in -> gnd\n"
             "H1: ccvs q -> 0 50 ohm sense Rsense\nMirror: cccs a -> b 0.98 sense Rsense\n"
             "Rsense: resistor in -> 0 1\n")
    e = c.elements
    assert (e["Stage"].value, e["Stage"].sense_nodes) == (20, ("in", "0"))
    assert (e["G1"].value, e["G1"].sense_nodes) == (0.1, ("in", "0"))   # gnd is ground
    assert (e["H1"].value, e["H1"].sense_element) == (50, "Rsense")
    assert (e["Mirror"].value, e["Mirror"].sense_element) == (0.98, "Rsense")
    assert e["Mirror"].nodes == ("a", "b")


def test_sense_of_a_three_phase_element():
    # circuit-language.md: any two-terminal element may be sensed (BLOCK.a is one)
    c = read("G: voltage3 a b c -> 0 230 V\nL: load3 wye a b c -> 0 10 ohm\n"
             "F1: cccs x -> 0 2 sense L.a\nRx: resistor x -> 0 1\n")
    assert c.elements["F1"].sense_element == "L.a"


@pytest.mark.parametrize("body, message", [
    ("E1: vcvs o -> 0 2", "vcvs 'E1' needs a 'sense' option (what controls it)"),
    ("F1: cccs o -> 0 2", "cccs 'F1' needs a 'sense' option (what controls it)"),
    ("E1: vcvs o -> 0 2 sense R1", "a vcvs senses a voltage: write 'sense c -> d'"),
    ("G1: vccs o -> 0 2 sense R1", "a vccs senses a voltage: write 'sense c -> d'"),
    ("H1: ccvs o -> 0 2 sense a -> 0", "a ccvs senses an element's current: write "
                                       "'sense ELEMENT'"),
    ("F1: cccs o -> 0 2 sense a -> 0", "a cccs senses an element's current: write "
                                       "'sense ELEMENT'"),
    ("E1: vcvs o -> 0 2 sense", "missing sensed element or nodes"),
    ("E1: vcvs o -> 0 2 sense a ->", "missing second sensed node"),
])                                  # circuit-language.md: sense is a required option
def test_sense_errors(body, message):
    assert only_error(body).message == message


# --- coupling and transformer ----------------------------------------------------------------

def test_coupling_by_k_and_by_m():
    # circuit-language.md: coupling L1 L2 with `k 0.95` or `M 3 mH`
    c = read("L1: inductor a -> 0 10 mH\nL2: inductor b -> 0 40 mH\nL3: inductor c -> 0 1 mH\n"
             "K1: coupling L1 L2 k 0.95\nK2: coupling L2 L3 M 3 mH\nK3: coupling L1 L3 K -0.5\n"
             "K4: coupling L3 L1 m 1 mH\n")
    k = c.couplings
    assert (k["K1"].inductors, k["K1"].k, k["K1"].m) == (("L1", "L2"), 0.95, None)
    assert (k["K2"].inductors, k["K2"].k) == (("L2", "L3"), None)
    assert close(k["K2"].m, 3e-3)
    assert k["K3"].k == -0.5           # keywords are case-insensitive: K and m
    assert close(k["K4"].m, 1e-3)
    assert "K1" not in c.elements      # couplings are not branches (results-contract.md)


@pytest.mark.parametrize("body, message", [
    ("K1: coupling L1 L2 0.5", "give the coupling as 'k VALUE' or 'M VALUE'"),
    ("K1: coupling L1 L2 k 0.5 H", "a coupling factor k value takes no unit; '0.5 H' is in "
                                   "henries"),
    ("K1: coupling L1 L2 M 0.5 F", "a mutual inductance M takes henries (H); '0.5 F' is in "
                                   "farads"),
    ("K1: coupling L1 L2 k 0.5 + j0.1", "a coupling value must be real"),
    ("K1: coupling L1", "missing the second inductor's name"),
    ("K1: coupling L1 L2 k 0.5 tol 5", "unexpected 'tol'"),
])                                            # circuit-language.md: coupling
def test_coupling_errors(body, message):
    assert only_error(body).message == message


@pytest.mark.parametrize("spelling, ratio", [
    ("ratio 10:1", 10.0),                     # circuit-language.md: ideal V1 = 10·V2
    ("ratio 11000:415", 11000 / 415),         # formula
    ("RATIO 1:4", 0.25),
    ("10:1", 10.0),
    ("ratio 2", 2.0),
    ("ratio (2*5):1", 10.0),
])
def test_transformer_ratio(spelling, ratio):
    t = read(f"T1: transformer a -> 0, b -> gnd {spelling}\n").elements["T1"]
    assert t.kind == "transformer" and t.nodes == ("a", "0", "b", "0")
    assert close(t.value, ratio)


@pytest.mark.parametrize("body, message", [
    ("T1: transformer a -> 0 b -> 0 ratio 2:1", "a transformer has two windings: write "
                                                "p1 -> n1, p2 -> n2"),
    ("T1: transformer a -> 0, b -> 0 ratio 0:1", "a turns ratio must be real and not zero"),
    ("T1: transformer a -> 0, b -> 0 ratio 2 V:1", "a turns ratio value takes no unit; "
                                                   "'2 V:1' is in volts"),
    ("T1: transformer a -> 0, b -> 0 ratio 2:1 tol 5", "unexpected 'tol'"),
    ("T1: transformer a -> 0, b -> 0", "missing turns ratio"),
    ("T1: transformer a -> 0, b -> 0 ratio 1e300:1e-300", "this turns ratio is out of range "
                                                          "(infinite or zero)"),
])
def test_transformer_errors(body, message):
    assert only_error(body).message == message      # circuit-language.md: transformer


# --- options ---------------------------------------------------------------------------------

def test_options_in_any_order():
    # circuit-language.md: options after the value, any order
    options = ["phase -30 deg", "peak", "freq 50 Hz"]
    seen = set()
    for order in itertools.permutations(options):
        v = read(f"V1: voltage a -> 0 10 V {' '.join(order)}\n").elements["V1"]
        seen.add((round(v.value.real, 12), round(v.value.imag, 12), v.frequency))
    assert len(seen) == 1
    [(re, im, f)] = seen
    expected = 10 / math.sqrt(2) * cmath.exp(1j * math.radians(-30))   # formula
    assert close(complex(re, im), expected) and f == 50


@pytest.mark.parametrize("angle, radians", [
    ("30 deg", math.radians(30)), ("30°", math.radians(30)), ("30", math.radians(30)),
    ("0.5 rad", 0.5), ("0.5rad", 0.5), ("-90 deg", -math.pi / 2), ("(90/2)", math.pi / 4),
])                                 # circuit-language.md: deg, ° or rad; no unit is degrees
def test_phase_spellings(angle, radians):
    v = read(f"V1: voltage a -> 0 2 V phase {angle}\n").elements["V1"]
    assert close(v.value, cmath.rect(2, radians))                 # formula


def test_complex_and_polar_source_amplitudes():
    # circuit-language.md: a source amplitude may be real, complex or polar; phase adds
    c = read("V1: voltage a -> 0 3 + j4 V\nI1: current a -> 0 2 A @ 30 deg phase 15\n")
    assert close(c.elements["V1"].value, 3 + 4j)
    assert close(c.elements["I1"].value, cmath.rect(2, math.radians(45)))   # formula


@pytest.mark.parametrize("spelling, fraction", [
    ("tol 10%", 0.10), ("tol 10 %", 0.10), ("tol 5", 0.05), ("tol T", 0.20),
])                                  # circuit-language.md: tol PCT, e.g. tol 10%
def test_tolerance(spelling, fraction):
    r = read(f"T = 20\nR1: resistor a -> 0 1 ohm {spelling}\n").elements["R1"]
    assert close(r.tolerance, fraction)


@pytest.mark.parametrize("body, message", [
    ("R1: resistor a -> 0 5 phase 10", "'phase' does not apply to a resistor"),
    ("V1: voltage a -> 0 5 tol 5%", "'tol' does not apply to a voltage"),
    ("R1: resistor a -> 0 5 sense a -> 0", "'sense' does not apply to a resistor"),
    ("V1: voltage a -> 0 5 line", "'line' does not apply to a voltage"),
    ("V1: voltage a -> 0 5 sequence acb", "'sequence' does not apply to a voltage"),
    ("C1: capacitor a -> 0 5u peak", "'peak' does not apply to a capacitor"),
    ("E1: vcvs a -> 0 5 sense b -> 0 freq 50", "'freq' does not apply to a vcvs"),
])                                          # circuit-language.md, table of options
def test_option_on_a_wrong_kind(body, message):
    error = only_error(body)
    assert error.message == message
    assert error.column == body.index(message.split("'")[1]) + 1


@pytest.mark.parametrize("body, message, word", [
    ("R1: resistor a -> 0 5 tol 5 tol 5", "'tol' is given twice", "tol 5\n"),
    ("V1: voltage a -> 0 1 rms peak", "'peak' is given twice", "peak"),
    ("V1: voltage a -> 0 1 phase 3 phase 4", "'phase' is given twice", "phase 4"),
    ("V1: voltage a -> 0 1 freq 50 freq 50", "'freq' is given twice", "freq 50\n"),
])                                         # common practice, no source: say it, don't pick one
def test_duplicate_options(body, message, word):
    error = only_error(body)
    assert error.message == message
    assert error.column == (body + "\n").rindex(word) + 1


@pytest.mark.parametrize("body, message", [
    ("R1: resistor a -> 0 5 tol 150", "a tolerance must be between 0 % and 100 %"),
    ("R1: resistor a -> 0 5 tol", "tol needs a percentage"),
    ("R1: resistor a -> 0 5 tol 5 ohm", "a tolerance value takes no unit; '5 ohm' is in ohms"),
    ("V1: voltage a -> 0 5 freq 0", "freq must be a real number greater than zero"),
    ("V1: voltage a -> 0 5 freq 50 ohm", "a frequency takes hertz (Hz); '50 ohm' is in ohms"),
    ("V1: voltage a -> 0 5 phase", "missing angle"),
    ("V1: voltage a -> 0 5 phase 3 ohm", "unexpected 'ohm'"),
    ("V1: voltage a -> 0 5 phse 3", "unexpected 'phse' after the value"),
])
def test_option_value_errors(body, message):
    assert only_error(body).message == message          # circuit-language.md: options


def test_overflow_after_the_rms_peak_conversion_is_an_error():
    # circuit-language.md: every value must be finite (1.5e308·√2 is not)
    [error] = errors_of("V1: voltage a -> 0 1.5e308 V rms\n",
                        head="frequency 50\namplitudes peak\n")
    assert error.message == "the value is not finite" and error.line == 3


# --- three-phase blocks -------------------------------------------------------------------------

def _abc(magnitude: float, phase_deg: float, sequence: str = "abc") -> list[complex]:
    """Phase a at phase_deg, b and c lagging by 120° and 240° (formula)."""
    step = -120 if sequence == "abc" else 120
    return [cmath.rect(magnitude, math.radians(phase_deg + k * step)) for k in range(3)]


def test_voltage3_wye_source():
    # circuit-language.md: BLOCK.a, BLOCK.b, BLOCK.c, line -> star, b and c lag by 120/240°
    c = read("Gsup: voltage3 a b c -> n 230 V\n")
    names = ["Gsup.a", "Gsup.b", "Gsup.c"]
    assert list(c.elements) == names
    for name, line, expected in zip(names, "abc", _abc(230, 0)):
        e = c.elements[name]
        assert (e.kind, e.nodes, e.group) == ("voltage", (line, "n"), "Gsup")
        assert close(e.value, expected)
    g = c.groups["Gsup"]
    assert (g.kind, g.connection, g.lines, g.neutral, g.elements) == (
        "voltage3", "wye", ("a", "b", "c"), "n", tuple(names))


@pytest.mark.parametrize("options, magnitude, phase, sequence", [
    ("line", 400 / math.sqrt(3), 0, "abc"),         # circuit-language.md: line → value/√3
    ("phase 30", 400, 30, "abc"),
    ("sequence acb", 400, 0, "acb"),                # acb reverses the order
    ("SEQUENCE ACB line phase -10 deg", 400 / math.sqrt(3), -10, "acb"),
    ("peak", 400 / math.sqrt(2), 0, "abc"),         # formula: peak in an rms circuit
])
def test_voltage3_options(options, magnitude, phase, sequence):
    c = read(f"G: voltage3 a b c -> 0 400 V {options}\n")
    got = [c.elements[f"G.{p}"].value for p in "abc"]
    for value, expected in zip(got, _abc(magnitude, phase, sequence)):
        assert close(value, expected)


def test_wye_blocks_without_star_get_their_own_star_point():
    # circuit-language.md: a wye block without -> n has an internal star point BLOCK.n
    c = read("G: voltage3 a b c 230 V\nMload: load3 wye a b c 8 + j6 ohm\n")
    assert [c.elements[f"Mload.{p}"].nodes for p in "abc"] == [
        ("a", "Mload.n"), ("b", "Mload.n"), ("c", "Mload.n")]
    assert c.elements["G.a"].nodes == ("a", "G.n")
    assert c.groups["Mload"].neutral == "Mload.n"


def test_load3_wye_and_delta():
    # circuit-language.md: wye BLOCK.a runs a -> n; delta BLOCK.ab runs a -> b, bc, ca
    c = read("Mload: load3 wye a b c -> n 8 + j6 ohm\nHload: load3 delta a b c 24 + j18 ohm\n"
             "Uload: load3 WYE a b c -> 0 10 ohm, 8+j6 ohm, 6-j8 ohm\n")
    e = c.elements
    assert [(e[f"Mload.{p}"].nodes, e[f"Mload.{p}"].value) for p in "abc"] == [
        (("a", "n"), 8 + 6j), (("b", "n"), 8 + 6j), (("c", "n"), 8 + 6j)]
    assert [(e[f"Hload.{p}"].nodes, e[f"Hload.{p}"].value) for p in ("ab", "bc", "ca")] == [
        (("a", "b"), 24 + 18j), (("b", "c"), 24 + 18j), (("c", "a"), 24 + 18j)]
    assert [e[f"Uload.{p}"].value for p in "abc"] == [10, 8 + 6j, 6 - 8j]
    assert [e[f"Uload.{p}"].kind for p in "abc"] == ["impedance"] * 3
    assert c.groups["Hload"].connection == "delta" and c.groups["Hload"].neutral is None
    assert c.groups["Uload"].neutral == "0"


def test_three_phase_delta_with_three_impedances():
    # circuit-language.md: one impedance per phase, branches ab, bc, ca
    c = read("D: load3 delta a b c 1 ohm, 2 ohm, 3 ohm\n")
    assert [c.elements[f"D.{p}"].value for p in ("ab", "bc", "ca")] == [1, 2, 3]


@pytest.mark.parametrize("body, message", [
    ("L: load3 delta a b c -> n 8 ohm", "a delta block has no star point"),
    ("L: load3 wye a b c -> n 8 ohm, 3 ohm", "give one impedance (balanced) or three "
                                             "(one per phase)"),
    ("L: load3 star a b c 1", "a load3 block is 'wye' or 'delta'"),
    ("L: load3 wye a b c -> n 0", "a load3 impedance cannot be zero"),
    ("L: load3 wye a b c -> n 8 V", "a load3 takes ohms (Ω); '8 V' is in volts"),
    ("G: voltage3 a b c 1 V tol 5", "'tol' does not apply to a voltage3"),
    ("G: voltage3 a b c 1 V sequence bca", "sequence must be abc or acb"),
    ("G: voltage3 a b -> 0 1", "missing line c"),
])                                                  # circuit-language.md: three-phase blocks
def test_three_phase_errors(body, message):
    assert only_error(body).message == message


def test_three_phase_names_appear_in_the_result():
    # circuit-language.md / results-contract.md: phase elements by name, the block as a group
    from phasorbench.workflow import solve_text
    r = solve_text(HEAD + "G: voltage3 a b c -> 0 230 V\nM: load3 wye a b c 8 + j6 ohm\n"
                   "D: load3 delta a b c 24 + j18 ohm\n")
    assert {"G.a", "G.b", "G.c", "M.a", "M.b", "M.c", "D.ab", "D.bc", "D.ca"} <= \
        set(r["elements"])
    assert set(r["groups"]) == {"G", "M", "D"}
    assert "M.n" in r["nodes"]


def test_block_name_clash_is_a_duplicate():
    [error] = errors_of("G: voltage3 a b c -> 0 230 V\nG: load3 wye a b c 1 ohm\n")
    assert error.message == "'G' is defined twice (first at line 2)"   # circuit-language.md


# --- the fast path for plain lines agrees with the full reader ---------------------------------

_KINDS = ["resistor", "capacitor", "inductor", "impedance", "admittance", "voltage", "current"]
_SUFFIXES = ["", "k", "m", "M", "u", "µ", "ohm", "kohm", "Ω", "F", "uF", "H", "mH", "S", "V",
             "kV", "A", "mA", "Hz", "deg", "j", "kj", "e", "q", "K"]


@st.composite
def plain_lines(draw):
    kind = draw(st.sampled_from(_KINDS))
    nodes = st.sampled_from(["a", "b", "0", "gnd", "GND", "n_1", "bus.2", "3a"])
    number = draw(st.one_of(
        st.integers(-1000, 100000).map(str),
        st.floats(-1e6, 1e6, allow_nan=False).map(lambda x: f"{x:g}"),
        st.sampled_from(["0", "-0", ".5", "5.", "1e999", "1e-320", "2.5e3"])))
    gap = draw(st.sampled_from(["", " ", "\t", "  "]))
    suffix = draw(st.sampled_from(_SUFFIXES))
    comment = draw(st.sampled_from(["", " # note", "#x"]))
    return kind, (f"X1: {kind} {draw(nodes)} -> {draw(nodes)} {number}{gap}{suffix}"
                  f"{comment}")


@settings(max_examples=400, deadline=None, derandomize=True, database=None)
@given(plain_lines())
def test_fast_path_matches_the_full_reader(case):
    # common practice, no source: a shortcut must give exactly what the full reader gives;
    # a capitalised kind ('Resistor') is read by the full reader only (kinds are
    # case-insensitive per circuit-language.md)
    kind, line = case
    slow_line = line.replace(kind, kind.capitalize(), 1)

    def outcome(text):
        try:
            circuit = parse_circuit(HEAD + text + "\n")
        except CircuitSyntaxError as exc:
            return [(d.line, d.column, d.length, d.message) for d in exc.diagnostics]
        return {n: (e.kind, e.nodes, e.value, e.line) for n, e in circuit.elements.items()}

    assert outcome(line) == outcome(slow_line)


def test_fast_path_shape_is_really_taken():
    # common practice, no source
    # the differential test above compares two paths only if the plain shape takes the
    # fast one: a line it reads must not need the tokenizer
    from phasorbench.language import parser as parser_module
    p = parser_module.CircuitParser(HEAD + "R1: resistor a -> 0 4.7k\n", "<t>")
    lines = p.classify()
    assert [line.kind for line in lines] == ["directive", "simple"]
    assert isinstance(read("R1: resistor a -> 0 4.7k\n").elements["R1"], Element)
