"""Frequency response against scipy.signal.freqs, check-values.md C5–C9 and C19, and the
single-frequency solve."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import signal

from phasorbench.errors import CircuitError
from phasorbench.studies.sweep import grid, run_sweep
from phasorbench.workflow import read_circuit, solve_text


def _h(result, probe):
    data = result["probes"][probe]
    return np.array(data["re"]) + 1j * np.array(data["im"])


def _freqs(b, a, f):
    return signal.freqs(b, a, worN=2 * np.pi * np.asarray(f))[1]


CASES = {
    # name: (circuit, probe, b, a) with H(s) = b(s)/a(s) of the textbook network
    "rc_low": ("R1: resistor in -> out 1 kohm\nC1: capacitor out -> 0 159.155 nF",
               [1], [1e3 * 159.155e-9, 1]),
    "rc_high": ("C1: capacitor in -> out 100 nF\nR1: resistor out -> 0 2 kohm",
                [2e3 * 100e-9, 0], [2e3 * 100e-9, 1]),
    "rl_low": ("L1: inductor in -> out 10 mH\nR1: resistor out -> 0 50 ohm",
               [50], [10e-3, 50]),
    "rl_high": ("R1: resistor in -> out 50 ohm\nL1: inductor out -> 0 10 mH",
                [10e-3, 0], [10e-3, 50]),
    "series_bandpass": ("L1: inductor in -> a 10 mH\nC1: capacitor a -> out 1 uF\n"
                        "R1: resistor out -> 0 100 ohm",
                        [100 / 10e-3, 0], [1, 100 / 10e-3, 1 / (10e-3 * 1e-6)]),
    "series_notch": ("R1: resistor in -> out 100 ohm\nL1: inductor out -> a 10 mH\n"
                     "C1: capacitor a -> 0 1 uF",
                     [1, 0, 1 / (10e-3 * 1e-6)], [1, 100 / 10e-3, 1 / (10e-3 * 1e-6)]),
    # parallel LC tank in series with R into the output: band-stop (parallel notch)
    "parallel_notch": ("L1: inductor in -> out 10 mH\nC1: capacitor in -> out 1 uF\n"
                       "R1: resistor out -> 0 100 ohm",
                       [1, 0, 1 / (10e-3 * 1e-6)], [1, 1 / (100 * 1e-6), 1 / (10e-3 * 1e-6)]),
    # parallel RLC tank to ground behind R: band-pass
    "parallel_bandpass": ("R1: resistor in -> out 1 kohm\nL1: inductor out -> 0 10 mH\n"
                          "C1: capacitor out -> 0 1 uF",
                          [1 / (1e3 * 1e-6), 0], [1, 1 / (1e3 * 1e-6), 1 / (10e-3 * 1e-6)]),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_transfer_functions_match_scipy_signal_freqs(name):
    body, b, a = CASES[name]
    circuit = read_circuit(f"frequency 1 kHz\nVs: voltage in -> 0 1 V\n{body}\n")
    r = run_sweep(circuit, ["V(out)/V(in)"], start=10, stop=100e3, points=301)
    expected = _freqs(b, a, r["frequencies_hz"])     # scipy.signal.freqs, analytic H(s)
    assert np.allclose(_h(r, "V(out)/V(in)"), expected, rtol=1e-9, atol=1e-12)


def test_twin_t_notch_matches_scipy_signal_freqs():
    # twin-T: R, R, C/2... standard form with R=1k, C=100n: H(s) = (s²+w²)/(s²+4ws+w²)
    # with w = 1/RC (textbook twin-T with equal arms, unloaded) — scipy.signal.freqs
    R, C = 1e3, 100e-9
    circuit = read_circuit(f"""frequency 1 kHz
Vs: voltage in -> 0 1 V
Ra: resistor in -> m {R} ohm
Rb: resistor m -> out {R} ohm
Cc: capacitor m -> 0 {2 * C} F
Ca: capacitor in -> k {C} F
Cb: capacitor k -> out {C} F
Rc: resistor k -> 0 {R / 2} ohm
""")
    w = 1 / (R * C)
    r = run_sweep(circuit, ["V(out)/V(in)"], start=10, stop=100e3, points=201)
    expected = _freqs([1, 0, w * w], [1, 4 * w, w * w], r["frequencies_hz"])
    assert np.allclose(_h(r, "V(out)/V(in)"), expected, rtol=1e-9, atol=1e-12)
    (dip,) = [x for x in r["resonances"] if x["kind"] == "dip"]
    assert dip["frequency_hz"] == pytest.approx(w / (2 * math.pi), rel=1e-6)  # f0 = 1/2πRC


def test_series_resonance_c5():
    # check-values C5: f0 = 7957.75 Hz, Q = 25, B = 2000 rad/s; Z(f0) = 2 Ω
    circuit = read_circuit("""frequency 50 Hz
Vs: voltage a -> 0 20 V
R1: resistor a -> b 2 ohm
L1: inductor b -> c 1 mH
C1: capacitor c -> 0 0.4 uF
""")
    r = run_sweep(circuit, ["I(R1)"], start=1e3, stop=50e3, points=200)
    (peak,) = r["resonances"]
    f0 = 1 / (2 * math.pi * math.sqrt(1e-3 * 0.4e-6))           # textbook f0 = 1/2π√LC
    assert peak["kind"] == "peak" and peak["frequency_hz"] == pytest.approx(f0, rel=1e-6)
    assert f0 == pytest.approx(7957.75, rel=1e-6)                # C5
    assert peak["q"] == pytest.approx(25, rel=1e-5)               # C5: Q = (1/R)√(L/C)
    assert peak["bandwidth_hz"] == pytest.approx(2000 / (2 * math.pi), rel=1e-5)  # C5
    assert peak["value"]["mag"] == pytest.approx(10, rel=1e-9)    # C5: I = 20 V / 2 Ω


def test_parallel_resonance_impedance_c6():
    # check-values C6: R 8 kΩ ∥ L 0.2 mH ∥ C 8 µF: Z peak 8000 Ω at 3978.87 Hz, Q = 1600
    circuit = read_circuit("""frequency 50 Hz
Is: current 0 -> a 10 mA
R1: resistor a -> 0 8 kohm
L1: inductor a -> 0 0.2 mH
C1: capacitor a -> 0 8 uF
""")
    r = run_sweep(circuit, ["Z(a)"], start=3000, stop=5000, points=400, spacing="linear")
    (peak,) = r["resonances"]
    assert peak["frequency_hz"] == pytest.approx(3978.87, rel=1e-6)   # C6
    # C6; at Q = 1600 the 1e-6 frequency tolerance leaves |Z| within about 1e-8
    assert peak["value"]["mag"] == pytest.approx(8000, rel=1e-7)
    assert peak["q"] == pytest.approx(1600, rel=1e-4)                  # C6: Q = R√(C/L)
    # studies.md: a Z resonance within ±10 % of an odd order of 50 Hz (79.58 → 79th)
    assert any("79th harmonic" in w for w in r["warnings"])


def test_a_resonance_near_the_third_order_is_named_in_words():
    # textbook f0 = 1/(2π√(LC)): 1 mH with 1.2 mF resonates at 145.3 Hz, order 2.91 of
    # 50 Hz, within ±10 % of the 3rd (studies.md); common practice, no source: "3rd"
    circuit = read_circuit("""frequency 50 Hz
Is: current 0 -> a 1 A
R1: resistor a -> 0 50 ohm
L1: inductor a -> 0 1 mH
C1: capacitor a -> 0 1.2 mF
""")
    r = run_sweep(circuit, ["Z(a)"], start=50, stop=500, points=200)
    (peak,) = r["resonances"]
    assert peak["frequency_hz"] == pytest.approx(1 / (2 * math.pi * (1e-3 * 1.2e-3) ** 0.5),
                                                 rel=1e-6)
    assert any("of the 3rd harmonic" in w for w in r["warnings"])


def test_band_pass_points_c8_c9():
    # check-values C8 (Q = 1) and C9 (Q = 10) at the listed ω
    for R, points in ((100, {5000: (0.5547, 56.3099), 10000: (1, 0), 20000: (0.5547,
                                                                          -56.3099)}),
                      (10, {9000: (0.428086, 64.6538), 11000: (0.464007, -62.354)})):
        circuit = read_circuit(f"""frequency 50 Hz
Vs: voltage in -> 0 1 V
L1: inductor in -> a 10 mH
C1: capacitor a -> out 1 uF
R1: resistor out -> 0 {R} ohm
""")
        for w, (mag, deg) in points.items():
            f = w / (2 * math.pi)
            r = run_sweep(circuit, ["V(out)/V(in)"], start=f, stop=f * 1.001, points=2)
            assert r["probes"]["V(out)/V(in)"]["mag"][0] == pytest.approx(mag, abs=5e-5)
            assert r["probes"]["V(out)/V(in)"]["deg"][0] == pytest.approx(deg, abs=1e-3)


def test_bank_resonance_order_c19():
    # check-values C19: X_L = 0.013248 Ω, X_C = 0.768 Ω at 60 Hz: h = 7.61387
    xl, xc = 0.013248, 0.768
    L, C = xl / (2 * math.pi * 60), 1 / (2 * math.pi * 60 * xc)
    circuit = read_circuit(f"""frequency 60 Hz
Vs: voltage s -> 0 277 V
Lt: inductor s -> bus {L} H
Cb: capacitor bus -> 0 {C} F
Rl: resistor bus -> 0 10 ohm
""")
    r = run_sweep(circuit, ["Z(bus)"], start=60, stop=3000, points=300)
    (peak,) = [x for x in r["resonances"] if x["kind"] == "peak"]
    assert peak["harmonic_order"] == pytest.approx(7.61387, rel=1e-4)   # C19
    assert any("7th harmonic" in w for w in r["warnings"])  # studies.md: ±10 % of odd


def test_sweep_at_one_frequency_equals_the_single_solve():
    # numpy/scipy numerics: the same system solved two ways agrees to 1e-12
    text = """frequency 50 Hz
Vs: voltage in -> 0 230 V phase 10 deg
R1: resistor in -> a 3 ohm
L1: inductor a -> b 12 mH
C1: capacitor b -> 0 80 uF
Rl: resistor b -> 0 40 ohm
"""
    solved = solve_text(text)
    r = run_sweep(read_circuit(text), ["V(b)", "I(L1)"], start=50, stop=60, points=2)
    v = solved["nodes"]["b"]
    i = solved["elements"]["L1"]["current"]
    assert abs(_h(r, "V(b)")[0] - complex(v["re"], v["im"])) <= 1e-12 * abs(v["mag"])
    assert abs(_h(r, "I(L1)")[0] - complex(i["re"], i["im"])) <= 1e-12 * i["mag"]


def test_grid_ends_exact_and_bad_input_in_one_pass():
    # studies.md: both ends exact; FROM < TO, frequencies > 0, 2 ≤ points ≤ 100,000
    g = grid(45, 65, 81, "linear")
    assert g[0] == 45 and g[-1] == 65 and len(g) == 81
    g = grid(10, 2500, 400)
    assert g[0] == 10 and g[-1] == 2500
    circuit = read_circuit("frequency 50 Hz\nVs: voltage a -> 0 1 V\nR1: resistor a -> 0 1")
    with pytest.raises(CircuitError) as info:
        run_sweep(circuit, ["V(b)"], start=100, stop=10, points=1)
    assert len(info.value.diagnostics) == 3
    r = run_sweep(circuit, ["V(a)"])                        # default: two decades, 200
    assert r["range"] == {"from_hz": 0.5, "to_hz": 5000, "points": 200, "spacing": "log"}


def test_zero_denominator_is_null_with_a_warning_and_own_freq_sources_zeroed():
    # studies.md: a zero denominator is null per point with a warning
    circuit = read_circuit("""frequency 50 Hz
Vs: voltage a -> 0 1 V
Vh: current 0 -> b 1 A freq 250 Hz
R1: resistor a -> 0 1
R2: resistor b -> 0 1
""")
    r = run_sweep(circuit, ["V(a)/V(b)"], start=10, stop=100, points=5)
    assert r["probes"]["V(a)/V(b)"]["mag"] == [None] * 5
    assert any("Vh" in w for w in r["warnings"]) and any("denominator" in w
                                                          for w in r["warnings"])


def test_spectrum_components_are_left_out_of_a_sweep():
    # studies.md ("Harmonic spectra"): during a sweep the spectrum is left out, and the
    # sweep says so; the response is that of the fundamental alone (V = I·R = 5 V)
    from phasorbench.studies.sweep import run_sweep
    from phasorbench.workflow import read_circuit
    c = read_circuit("frequency 50 Hz\nI1: current 0 -> a 1 A spectrum 5: 50 %\n"
                     "R1: resistor a -> 0 5 ohm\n")
    r = run_sweep(c, ["V(a)"], 10, 1000, 3)
    assert r["probes"]["V(a)"]["mag"] == pytest.approx([5.0, 5.0, 5.0], rel=1e-12)
    assert any("spectrum components of I1 are left out" in w for w in r["warnings"])


def test_every_resonance_is_refined_on_the_sweeps_own_set_up(monkeypatch):
    # check-values C5 (f0 = 7957.75 Hz, Z(f0) = 2 Ω) for both probes; common practice,
    # no source: the refinements reuse the sweep's pattern (two assemblies, at 1 Hz and
    # 2 Hz, to learn it), where an engine per probe would assemble twice more for each
    from phasorbench.studies import engine
    counts = {"assemble": 0}
    assemble = engine.assemble

    def counted(*args, **kwargs):
        counts["assemble"] += 1
        return assemble(*args, **kwargs)
    monkeypatch.setattr(engine, "assemble", counted)
    circuit = read_circuit("frequency 50 Hz\nVs: voltage a -> 0 20 V\nR1: resistor a -> b 2 ohm\n"
                           "L1: inductor b -> c 1 mH\nC1: capacitor c -> 0 0.4 uF\n")
    r = run_sweep(circuit, ["I(R1)", "V(a)/I(R1)"], start=1e3, stop=50e3, points=200)
    peak, dip = r["resonances"]
    assert peak["kind"] == "peak" and dip["kind"] == "dip"
    for found in (peak, dip):
        assert found["frequency_hz"] == pytest.approx(7957.75, rel=1e-6)     # C5
    assert peak["value"]["mag"] == pytest.approx(10, rel=1e-9)               # C5: 20 V / 2 Ω
    assert dip["value"]["mag"] == pytest.approx(2, rel=1e-9)                 # C5: Z(f0) = R
    assert counts["assemble"] == 2
