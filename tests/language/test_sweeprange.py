"""The ``sweep`` directive (language/sweeprange.py): its grammar, its defaults in the
sweep study, and every bad-input case as a diagnostic with line, column, caret and hint,
all problems of a file in one pass.

The grammar and limits are circuit-language.md's directive table
(``sweep FROM to TO[, N points] [log|linear]``) and studies.md, "Frequency response"
(frequencies > 0, FROM < TO, 2 ≤ points ≤ 100,000, log spacing and 200 points by
default), marked beside each check; responses are checked against scipy.signal.freqs
on the analytic H(s) of an RC low-pass.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy import signal

from phasorbench.errors import CircuitError, CircuitSyntaxError, format_diagnostic
from phasorbench.language.parser import parse_circuit
from phasorbench.studies.sweep import run_sweep
from phasorbench.workflow import read_circuit

BASE = ("frequency 50 Hz\nFtop = 2.5 kHz\nVs: voltage in -> 0 1 V\n"
        "R1: resistor in -> out 1 kohm\nC1: capacitor out -> 0 159.155 nF\n")
LINE = 6       # the sweep line's number after BASE


def sweep_of(line: str):
    return parse_circuit(BASE + line + "\n", "f.circuit").sweep


def errors_of(text: str):
    with pytest.raises(CircuitSyntaxError) as caught:
        parse_circuit(text, "f.circuit")
    return caught.value.errors


@pytest.mark.parametrize("line, expected", [
    # the two examples of studies.md, "Frequency response"
    ("sweep 10 Hz to 10 kHz, 400 points log", (10.0, 10e3, 400, "log")),
    ("sweep 45 Hz to 65 Hz, 81 points linear", (45.0, 65.0, 81, "linear")),
    # circuit-language.md: the points and the spacing are optional; the unit Hz too
    ("sweep 50 to 2.5k", (50.0, 2500.0, None, None)),
    ("sweep 50 Hz to 2.5 kHz linear", (50.0, 2500.0, None, "linear")),
    # a named value where a value goes (circuit-language.md, named values)
    ("sweep 50 Hz to Ftop log", (50.0, 2500.0, None, "log")),
    # keywords ignore case (README, "The circuit language"); units do not
    ("SWEEP 1 kHz TO 2 kHz, 11 POINTS LINEAR", (1e3, 2e3, 11, "linear")),
    # the limits of studies.md: 2 and 100,000 points are both allowed
    ("sweep 1 Hz to 2 Hz, 2 points", (1.0, 2.0, 2, None)),
    ("sweep 1 Hz to 1 MHz, 100000 points", (1.0, 1e6, 100_000, None)),
])
def test_a_sweep_line_reads(line, expected):
    s = sweep_of(line)
    assert (s.start, s.stop, s.points, s.spacing) == expected   # circuit-language.md
    assert s.line == LINE


def test_no_sweep_line_is_none():
    assert parse_circuit(BASE).sweep is None        # circuit-language.md: optional


@pytest.mark.parametrize("line, column, message, hint", [
    # studies.md: FROM < TO
    ("sweep 1 kHz to 10 Hz", 7, "lowest frequency (1000 Hz) must be below its highest "
                                "(10 Hz)", "swap the two ends"),
    ("sweep 10 to 10", 7, "must be below its highest", "two different frequencies"),
    # studies.md: frequencies > 0 and finite
    ("sweep 0 Hz to 1 kHz", 7, "lowest frequency must be a real number greater than zero",
     "above 0"),
    ("sweep 10 Hz to -5 Hz", 16, "highest frequency must be a real number greater", "Hz"),
    ("sweep 1e400 Hz to 1 kHz", 7, "not finite", "finite number"),
    ("sweep 10 Hz to 1 kHz + j1 kHz", 16, "real number", "above 0"),
    ("sweep 10 V to 1 kHz", 7, "a frequency takes hertz (Hz); '10 V' is in volts", "hertz"),
    # studies.md: 2 ≤ points ≤ 100,000, a whole number
    ("sweep 10 Hz to 1 kHz, 1 points", 23, "2 to 100,000 points, not 1", "at least 2"),
    ("sweep 10 Hz to 1 kHz, 200000 points", 23, "not 200,000", "400 points"),
    ("sweep 10 Hz to 1 kHz, 2.5 points", 23, "a whole number", "400 points"),
    ("sweep 10 Hz to 1 kHz, 5 Hz points", 23, "takes no unit", "400 points"),
    ("sweep 10 Hz to 1 kHz, 400", 23, "the word 'points' is missing", "400 points"),
    ("sweep 10 Hz to 1 kHz, log", 23, "number of points is missing", "drop the comma"),
    # circuit-language.md: the spacing is log or linear
    ("sweep 10 Hz to 1 kHz, 40 points lin", 33, "'lin' is not a spacing", "'linear'"),
    ("sweep 10 Hz to 1 kHz logarithmic", 22, "'logarithmic' is not a spacing",
     "log or linear"),
    # the shape of the line
    ("sweep", 1, "needs a range", "sweep 10 Hz to 10 kHz"),
    ("sweep 10 Hz 1 kHz", 7, "needs 'to' between its two frequencies", "to 10 kHz"),
    ("sweep to 1 kHz", 7, "lowest frequency is missing", "sweep 10 Hz"),
    ("sweep 10 Hz to 1 kHz 400 points", 22, "unexpected '400'", "put a comma"),
    ("sweep 10 Hz to Ftp", 16, "'Ftp' is not a number, a unit or a named value",
     "did you mean 'Ftop'?"),
])
def test_bad_sweep_lines_point_at_the_problem(line, column, message, hint):
    (error,) = errors_of(BASE + line)
    # circuit-language.md / studies.md: the line, the column, a message and a hint
    assert (error.line, error.column) == (LINE, column)
    assert message in error.message and hint in error.hint
    shown = format_diagnostic(error, "f.circuit", BASE + line)
    caret = shown.splitlines()[2]
    assert caret.index("^") == column + 1          # two spaces indent, then the caret


def test_every_problem_of_a_line_in_one_pass():
    # studies.md: all problems in one pass — both ends, the points and the spacing
    errors = errors_of(BASE + "sweep 0 Hz to -5 Hz, 1 points logarithmic")
    assert [(e.line, e.column) for e in errors] == [(LINE, 7), (LINE, 15), (LINE, 22),
                                                    (LINE, 31)]


def test_twice_is_an_error_and_other_lines_still_report():
    # circuit-language.md: a directive is given once; every error of the file in one pass
    errors = errors_of(BASE + "sweep 10 Hz to 1 kHz\nsweep 1 Hz to 2 Hz\n"
                       "R2: resistor out -> 0 1 kohn\n")
    assert [(e.line, e.column) for e in errors] == [(LINE + 1, 1), (LINE + 2, 25)]
    assert "'sweep' is given twice (first at line 6)" in errors[0].message
    assert errors[0].hint == "keep one"


def test_a_misspelt_directive_suggests_sweep():
    (error,) = errors_of(BASE + "swep 10 Hz to 1 kHz")
    assert "did you mean 'sweep'" in error.hint          # circuit-language.md directives


def _rc(f):
    # scipy.signal.freqs on the analytic H(s) = 1 / (sRC + 1) of the RC low-pass
    return signal.freqs([1], [1e3 * 159.155e-9, 1], worN=2 * np.pi * np.asarray(f))[1]


def test_the_sweep_study_takes_the_line_as_its_default():
    circuit = read_circuit(BASE + "sweep 50 Hz to 2.5 kHz, 41 points log\n")
    r = run_sweep(circuit, ["V(out)/V(in)"])
    f = np.array(r["frequencies_hz"])
    # studies.md: log grids hit both ends exactly
    assert (f[0], f[-1], len(f)) == (50.0, 2500.0, 41)
    assert np.allclose(f, np.logspace(np.log10(50), np.log10(2500), 41), rtol=1e-12)
    h = np.array(r["probes"]["V(out)/V(in)"]["re"]) + 1j * np.array(
        r["probes"]["V(out)/V(in)"]["im"])
    assert np.allclose(h, _rc(f), rtol=1e-9)           # scipy.signal.freqs
    assert r["range"] == {"from_hz": 50.0, "to_hz": 2500.0, "points": 41, "spacing": "log"}


def test_a_request_overrides_each_part_on_its_own():
    circuit = read_circuit(BASE + "sweep 50 Hz to 2.5 kHz, 41 points linear\n")
    # studies.md: the command line, API and page may override the directive
    r = run_sweep(circuit, ["V(out)"], start=100, stop=200)
    assert r["range"] == {"from_hz": 100.0, "to_hz": 200.0, "points": 41,
                          "spacing": "linear"}
    assert np.allclose(np.diff(r["frequencies_hz"]), 2.5)        # 100 Hz / 40 steps
    r = run_sweep(circuit, ["V(out)"], points=3, spacing="log")
    assert r["frequencies_hz"] == pytest.approx([50, np.sqrt(50 * 2500), 2500], rel=1e-12)
    # without a line: 200 points, two decades either side of frequency (studies.md)
    r = run_sweep(read_circuit(BASE), ["V(out)"])
    assert r["range"] == {"from_hz": 0.5, "to_hz": 5000.0, "points": 200, "spacing": "log"}


def test_a_bad_request_is_still_an_error_with_a_line():
    circuit = read_circuit(BASE + "sweep 50 Hz to 2.5 kHz\n")
    with pytest.raises(CircuitError) as caught:
        run_sweep(circuit, ["V(out)"], start=3000.0)
    # studies.md: both ends or neither
    assert "both ends" in caught.value.diagnostics[0].message


SAMPLES = Path(__file__).resolve().parents[2] / "samples"


@pytest.mark.parametrize("name", ["plant-bus-harmonics", "plant-bus-detuned"])
def test_the_plant_samples_open_their_sweep_at_the_fundamental_to_the_50th(name):
    text = (SAMPLES / f"{name}.circuit").read_text(encoding="utf-8")
    circuit = read_circuit(text)
    r = run_sweep(circuit, ["Z(bus)"])
    # the sample: scanned from 50 Hz to 2.5 kHz (the 50th harmonic of 50 Hz)
    assert (r["range"]["from_hz"], r["range"]["to_hz"]) == (50.0, 2500.0)
    assert r["range"]["to_hz"] / circuit.frequency == 50
    if name == "plant-bus-detuned":
        # the detuned bank's parallel resonance sits near order 3.1 (the sample's own
        # comment); the warning names the order as English does (common practice)
        assert any("within 10 % of the 3rd harmonic" in w for w in r["warnings"])
    if name == "plant-bus-harmonics":
        # textbook f0 = 1/(2π√(LC)) with the supply and load inductances in parallel
        # seen from the bus (resistances neglected, so within 1 %)
        lt, lload, c = 30.6e-6, 326e-6, 12.4e-3
        f0 = 1 / (2 * np.pi * np.sqrt(lt * lload / (lt + lload) * c))
        (peak,) = [x for x in r["resonances"] if x["kind"] == "peak"]
        assert peak["frequency_hz"] == pytest.approx(f0, rel=1e-2)


_WORDS = st.sampled_from(["to", "TO", ",", "points", "point", "log", "linear", "lin", "Hz",
                          "kHz", "KHZ", "10", "2.5k", "0", "-1", "1e400", "1e3", "(", ")",
                          "*", "Ftop", "Fx", "j2", "@", "%", "V", "400", "2.5", "°", "∠"])


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(_WORDS, max_size=9))
def test_any_sweep_line_is_read_or_reported_at_a_column(words):
    # common practice, no source: bad input is a diagnostic with a place, never a crash
    text = BASE + "sweep " + " ".join(words) + "\n"
    try:
        circuit = parse_circuit(text, "f.circuit")
    except CircuitSyntaxError as exc:
        for e in exc.errors:
            assert e.line == LINE and e.column is not None and e.column >= 1
            assert e.message and e.hint
        return
    s = circuit.sweep
    # studies.md: a line that reads is a valid range
    assert 0 < s.start < s.stop and (s.points is None or 2 <= s.points <= 100_000)
    assert s.spacing in (None, "log", "linear")
