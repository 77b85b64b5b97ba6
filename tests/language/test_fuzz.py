"""Fuzz tests: no input, however malformed, ends in anything but a solution or a clean
``CircuitError`` whose diagnostics have sane places.

circuit-language.md: "No input, however malformed, ends in a traceback"; errors carry a
line and column that count from 1 (or no line at all) and a hint. Inputs are derived from
valid circuits (the samples and one circuit per kind below) by character insertions,
deletions and replacements, random unicode, token shuffles, line edits, huge numbers and
deep parentheses; the runs are derandomised so CI sees the same inputs every time.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from phasorbench.errors import CircuitError, format_diagnostic, source_lines
from phasorbench.workflow import check_text, solve_text

SAMPLES = Path(__file__).resolve().parents[2] / "samples"

#: One valid circuit per kind and shape of the language (circuit-language.md).
OWN_SEEDS = [
    "title Every two-terminal kind\nfrequency 60 Hz\namplitudes rms\nCpf = 150 uF\n"
    "Vgrid: voltage a -> 0 240 V phase 0 deg\nRline: resistor a -> b 0.15 ohm tol 5%\n"
    "Lline: inductor b -> c 0.4 mH\nZmotor: impedance c -> 0 8.2 + j5.1 ohm\n"
    "Ccorr: capacitor c -> 0 (2*Cpf)\nYleak: admittance c -> gnd 1m - j2m S\n"
    "Iaux: current 0 -> c 2 A @ 30 deg peak\n",
    "frequency 1 kHz\namplitudes peak\nVin: voltage in -> 0 10 mV\nRg: resistor in -> g 600\n"
    "Rs: resistor g -> 0 1k\nStage: vcvs out -> 0 20 sense g -> 0\nRo: resistor out -> 0 10k\n"
    "Gm: vccs x -> 0 5 mS sense g -> 0\nRx: resistor x -> 0 2k\n"
    "Hm: ccvs y -> 0 50 ohm sense Rs\nRy: resistor y -> 0 1k\n"
    "Mirror: cccs z -> 0 0.98 sense Rs\nRz: resistor z -> 0 1k\n",
    "frequency 50 Hz\nVs: voltage a -> 0 10∠30° V\nR1: resistor a -> b 10\n"
    "L1: inductor b -> 0 10 mH\nL2: inductor c -> 0 40 mH\nRl: resistor c -> 0 50\n"
    "K1: coupling L1 L2 k 0.5\nL3: inductor a -> 0 1 mH\nL4: inductor d -> 0 4 mH\n"
    "Rd: resistor d -> 0 5\nK2: coupling L3 L4 M 1 mH\n"
    "T1: transformer a -> 0, s -> t ratio 10:1\nRt: resistor s -> t 8 ohm\n",
    "frequency 50 Hz\nGsup: voltage3 A B C -> 0 400 V line sequence acb phase 30\n"
    "Ra: resistor A -> a 0.05\nRb: resistor B -> b 0.05\nRc: resistor C -> c 0.05\n"
    "Mload: load3 wye a b c -> 0 8 + j6 ohm\nHload: load3 delta a b c 24 + j18 ohm\n"
    "Uload: load3 wye a b c 10 ohm, 8+j6 ohm, 6-j8 ohm\n",
]
SEEDS = [p.read_text(encoding="utf-8") for p in sorted(SAMPLES.glob("*.circuit"))] + OWN_SEEDS

#: Pieces of the language (and of near-misses) to insert.
PIECES = ["->", "→", "∠", "@", "°", "µ", "Ω", "j", "e", "E", "#", ":", "=", ",", "%", "(", ")",
          "^", "*", "/", "+", "-", ".", "0", "gnd", "GND", "k", "M", "m", "u", "ohm", "deg",
          "rad", "Hz", "F", "H", "S", "V", "A", "sense", "phase", "rms", "peak", "freq", "tol",
          "line", "sequence acb", "ratio", "voltage3", "load3 wye", "delta", "transformer",
          "coupling", "vcvs", "cccs", "sqrt(", "pi", "frequency", "title", "amplitudes",
          "\t", "\r", "\n", "\r\n", "\x00", "\x0c", "\u2028", "\ufeff", "\u200b", "R1", "L1",
          "Cpf", "  ", "1", "-1", "4.7k", "j5.1", "5.1j", "1e-3", ":1", "10:1"]
#: Numbers no circuit can use: the reader must refuse them with a place.
HUGE = ["1e999", "9" * 400, "-1e400", "(10^400)", "(1e200*1e200)", "(1/0)", "(0^-1)",
        "1e99999999999999999999"]
_NUMBER = re.compile(r"\d+(?:\.\d+)?(?:e-?\d+)?")

FUZZ = settings(deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])


def _at(draw, text: str) -> int:
    return draw(st.integers(0, len(text)))


def _insert(draw, text):
    piece = draw(st.one_of(st.sampled_from(PIECES), st.characters(), st.text(max_size=4)))
    i = _at(draw, text)
    return text[:i] + piece + text[i:]


def _delete(draw, text):
    i = _at(draw, text)
    return text[:i] + text[i + draw(st.integers(1, 8)):]


def _replace(draw, text):
    i = _at(draw, text)
    return text[:i] + draw(st.one_of(st.sampled_from(PIECES), st.characters())) + text[i + 1:]


def _shuffle_tokens(draw, text):
    lines = text.split("\n")
    k = draw(st.integers(0, len(lines) - 1))
    lines[k] = " ".join(draw(st.permutations(lines[k].split())))
    return "\n".join(lines)


def _edit_lines(draw, text):
    lines = text.split("\n")
    k = draw(st.integers(0, len(lines) - 1))
    how = draw(st.sampled_from(["drop", "repeat", "swap"]))
    if how == "drop":
        del lines[k]
    elif how == "repeat":
        lines.insert(k, lines[k])
    else:
        j = draw(st.integers(0, len(lines) - 1))
        lines[k], lines[j] = lines[j], lines[k]
    return "\n".join(lines)


def _huge_number(draw, text):
    spots = list(_NUMBER.finditer(text))
    if not spots:
        return text
    spot = draw(st.sampled_from(spots))
    return text[:spot.start()] + draw(st.sampled_from(HUGE)) + text[spot.end():]


def _deep_parentheses(draw, text):
    spots = list(_NUMBER.finditer(text))
    if not spots:
        return text
    spot = draw(st.sampled_from(spots))
    opening, closing = draw(st.integers(0, 150)), draw(st.integers(0, 150))
    return (text[:spot.start()] + "(" * opening + spot.group() + ")" * closing
            + text[spot.end():])


MUTATIONS = [_insert, _delete, _replace, _shuffle_tokens, _edit_lines, _huge_number,
             _deep_parentheses]


@st.composite
def mutated_circuits(draw):
    text = draw(st.sampled_from(SEEDS))
    for _ in range(draw(st.integers(1, 6))):
        text = draw(st.sampled_from(MUTATIONS))(draw, text)
    return text


@st.composite
def token_soup(draw):
    """Lines of language words in random order: exercises the grammar, not the alphabet."""
    words = st.one_of(st.sampled_from(PIECES), st.sampled_from(HUGE),
                      st.from_regex(r"[A-Za-z][A-Za-z0-9_.]{0,4}", fullmatch=True),
                      st.floats(allow_nan=True, allow_infinity=True).map(repr))
    head = draw(st.sampled_from(["", "frequency 50 Hz\n", "frequency 50 Hz\namplitudes peak\n"]))
    lines = []
    for _ in range(draw(st.integers(1, 8))):
        name = draw(st.sampled_from(["R1", "V1", "X", "G", "K1", "T1", "L1", "L2", "F1"]))
        kind = draw(st.sampled_from(["resistor", "voltage", "current", "inductor", "vcvs",
                                     "cccs", "coupling", "transformer", "voltage3", "load3",
                                     "impedance", "=", "frequency"]))
        body = " ".join(draw(st.lists(words, max_size=10)))
        lines.append(f"{name}: {kind} {body}" if kind != "=" else f"{name} = {body}")
    return head + "\n".join(lines)


# --- what every outcome must satisfy -----------------------------------------------------------

_HEAD = re.compile(r"fuzz\.circuit(?::\d+:\d+)?: (?:error|warning): \S")


def assert_sane(diagnostic, text: str) -> None:
    """A diagnostic a person can act on: a message, a hint, and a place inside the text."""
    assert diagnostic.severity in ("error", "warning")
    assert isinstance(diagnostic.message, str) and diagnostic.message.strip()
    assert isinstance(diagnostic.hint, str) and diagnostic.hint.strip()
    if diagnostic.line is None:
        assert diagnostic.column is None
    else:
        lines = source_lines(text)
        assert 1 <= diagnostic.line <= len(lines)
        width = len(lines[diagnostic.line - 1])
        assert 1 <= diagnostic.column <= width + 1
        assert diagnostic.length >= 1
        assert diagnostic.column - 1 + diagnostic.length <= width + 1
    shown = format_diagnostic(diagnostic, "fuzz.circuit", text)
    assert _HEAD.match(shown), shown
    assert "\x00" not in shown and "\x1b" not in shown


def assert_clean_outcome(text: str) -> None:
    """solve_text returns a contract dict or raises CircuitError; nothing else."""
    try:
        result = solve_text(text, "fuzz.circuit")
    except CircuitError as exc:
        assert exc.errors, "a CircuitError holds at least one error"
        for diagnostic in exc.diagnostics:
            assert_sane(diagnostic, text)
    else:
        assert isinstance(result, dict)
        json.dumps(result, allow_nan=False)      # results-contract.md: no NaN or infinity
        for warning in result["warnings"]:
            assert warning["message"] and warning["hint"]
            if warning["line"] is not None:
                assert 1 <= warning["line"] <= len(source_lines(text))
    found = check_text(text, "fuzz.circuit")     # never raises for input problems
    assert isinstance(found, list)


def test_every_seed_solves_cleanly():
    # the fuzz starts from valid circuits; if a seed did not solve, mutations would test
    # only the error path (circuit-language.md: these are all valid spellings)
    assert len(SEEDS) >= len(OWN_SEEDS) + 5
    for text in SEEDS:
        result = solve_text(text)
        assert result["elements"]


@settings(FUZZ, max_examples=2000)
@given(mutated_circuits())
def test_mutated_circuits_end_cleanly(text):
    assert_clean_outcome(text)


@settings(FUZZ, max_examples=800)
@given(token_soup())
def test_token_soup_ends_cleanly(text):
    assert_clean_outcome(text)


@settings(FUZZ, max_examples=1000)
@given(st.text(max_size=300))
def test_random_unicode_ends_cleanly(text):
    assert_clean_outcome(text)


@pytest.mark.parametrize("text", [
    "",
    "\x00",
    "\ufeff",
    "(" * 10000,
    ")" * 10000,
    "frequency 50\nR: resistor a -> 0 (" + "(" * 5000 + "1" + ")" * 5000 + ")",
    "frequency 50\nR: resistor a -> 0 " + "-" * 20000 + "1",
    "frequency 50\nR: resistor a -> 0 (" + "2^" * 20000 + "2)",
    "frequency 50\nR: resistor a -> 0 " + "1" * 100000,
    "frequency 50\n" + "R: resistor a -> 0 1\n" * 2000,
    "frequency 50\nV: voltage a -> 0 1\n" + "".join(f"X{k} = (X{k + 1})\n" for k in range(2000)),
])
def test_pathological_inputs(text):
    # common practice, no source: worst cases a fuzzer rarely reaches (deep recursion,
    # long chains, huge lines, many duplicates, long chains of named values)
    assert_clean_outcome(text)


# Finite values the language must accept (circuit-language.md: every value must be
# finite, and these are) whose products overflow a float inside the solver: they must be
# solved or refused with a clean CircuitError, never a traceback or infinity in the JSON.
@pytest.mark.parametrize("text", [
    "frequency 50\nV: voltage a -> 0 230\nC: capacitor a -> 0 1e308\nR: resistor a -> 0 1\n",
    "frequency 50\nV: voltage a -> 0 1e308\nR: resistor a -> 0 1\n",
    "frequency 1e-300\nV: voltage a -> 0 1e300 V\nC: capacitor a -> 0 1e-300\n"
    "R: resistor a -> 0 1\n",
    "frequency 50\nG: voltage3 a b c -> 0 1.5e308 V\nY: load3 wye a b c -> 0 1 ohm\n",
    "frequency 50\nV: voltage a -> 0 230\nR: resistor a -> 0 1e-320\n",
])
def test_extreme_finite_values_are_solved_or_refused(text):
    assert_clean_outcome(text)
