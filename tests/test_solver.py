"""The solver against textbook cases, standard relations and facts of the trade.

Expected numbers come from outside the project: the worked examples and formulas named
beside each case (most are listed with their sources in the project's check-values
reference), or scipy.signal for frequency responses.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from scipy import signal

from phasorbench.errors import AnalysisError, CircuitError
from tests.helpers import current, node, polar, solve, voltage

REL = 1e-6


def close(a: complex, b: complex, rel: float = REL, abs_: float = 1e-12) -> bool:
    return abs(a - b) <= rel * abs(b) + abs_


# --- A. reactance and phase --------------------------------------------------------


@pytest.mark.parametrize("f, xc, i_mag, q", [
    (50, 318.31, 0.722566, -166.19),      # check-values C1, formula Xc = 1/(2πfC)
    (60, 265.258, 0.86708, -199.428),
])
def test_capacitor_reactance_current_leads_by_90(f, xc, i_mag, q):
    r = solve(f"frequency {f} Hz\nV1: voltage a -> 0 230 V\nC1: capacitor a -> 0 10 uF")
    c = r["elements"]["C1"]
    assert c["impedance"]["mag"] == pytest.approx(xc, rel=1e-5)
    assert c["current"]["mag"] == pytest.approx(i_mag, rel=1e-5)
    # common practice, no source: a capacitor's current leads its voltage by 90°
    assert c["current"]["deg"] - c["voltage"]["deg"] == pytest.approx(90.0, abs=1e-6)
    assert c["q_var"] == pytest.approx(q, rel=1e-5)
    # common practice, no source: an ideal capacitor's average power is zero
    assert abs(c["p_w"]) <= 1e-9 * c["s_va"]
    assert c["pf_sense"] == "leading"


def test_capacitor_reactance_falls_as_frequency_rises():
    # common practice, no source: Xc = 1/(2πfC)
    xs = []
    for f in (50, 100, 400, 1000):
        r = solve(f"frequency {f} Hz\nV1: voltage a -> 0 1 V\nC1: capacitor a -> 0 2.2 uF")
        xs.append(r["elements"]["C1"]["impedance"]["mag"])
        assert xs[-1] == pytest.approx(1 / (2 * math.pi * f * 2.2e-6), rel=1e-12)
    assert xs == sorted(xs, reverse=True)


def test_inductor_reactance_and_lag():
    # check-values C2, formula XL = 2πfL: 100 mH at 60 Hz, 120 V
    r = solve("frequency 60 Hz\nV1: voltage a -> 0 120 V\nL1: inductor a -> 0 100 mH")
    el = r["elements"]["L1"]
    assert el["impedance"]["im"] == pytest.approx(37.6991, rel=1e-5)
    assert current(r, "L1") == pytest.approx(polar(3.1831, -90), rel=1e-5)
    assert el["q_var"] == pytest.approx(381.972, rel=1e-5)
    assert el["pf_sense"] == "lagging"


def test_rl_power_triangle():
    # check-values C4 (IEEE Std 1459-2010 single-phase definitions, clause from memory)
    r = solve("frequency 50 Hz\nV1: voltage a -> 0 230 V\nZ1: impedance a -> 0 30 + j40 ohm")
    z = r["elements"]["Z1"]
    assert current(r, "Z1") == pytest.approx(polar(4.6, -53.1301), rel=1e-5)
    assert (z["p_w"], z["q_var"], z["s_va"]) == pytest.approx((634.8, 846.4, 1058), rel=1e-9)
    assert z["pf"] == pytest.approx(0.6, rel=1e-12)
    assert z["pf_sense"] == "lagging"
    source = r["elements"]["V1"]
    # results-contract.md: a supply quotes the sense of the load it feeds
    assert source["p_w"] == pytest.approx(-634.8) and source["pf_sense"] == "lagging"


# --- B. resonance and frequency response -----------------------------------------------

SERIES_RLC = """frequency {f} Hz
amplitudes peak
Vs: voltage a -> 0 20 V
R: resistor a -> b 2 ohm
L: inductor b -> c 1 mH
C: capacitor c -> 0 0.4 uF
"""


def test_series_resonance():
    # check-values C5: Alexander & Sadiku, Fundamentals of Electric Circuits, ch. 14
    # series-resonance example (values from memory): ω0 = 50 krad/s, Q = 25
    f0 = 50000 / (2 * math.pi)
    r = solve(SERIES_RLC.format(f=repr(f0)))
    assert current(r, "R") == pytest.approx(10 + 0j, rel=1e-9)
    assert r["elements"]["L"]["voltage"]["mag"] == pytest.approx(500, rel=1e-9)
    assert r["elements"]["C"]["voltage"]["mag"] == pytest.approx(500, rel=1e-9)
    # half-power frequency (exact root of the quadratic): |I| = 10/√2 at 45°
    a = 2 / (2 * 1e-3)
    w1 = -a + math.sqrt(a * a + 1 / (1e-3 * 0.4e-6))
    assert w1 == pytest.approx(49010, rel=1e-4)
    r1 = solve(SERIES_RLC.format(f=repr(w1 / (2 * math.pi))))
    assert current(r1, "R") == pytest.approx(polar(7.07107, 45), rel=1e-5)


def test_parallel_resonance():
    # check-values C6 (formula; R, L, C as in an Alexander & Sadiku example, from memory)
    f0 = 25000 / (2 * math.pi)
    text = f"""frequency {f0!r} Hz
amplitudes peak
Is: current 0 -> a 10 mA
R: resistor a -> 0 8k
L: inductor a -> 0 0.2 mH
C: capacitor a -> 0 8 uF
"""
    r = solve(text)
    assert node(r, "a") == pytest.approx(80 + 0j, rel=1e-9)
    assert r["elements"]["R"]["p_w"] == pytest.approx(0.4, rel=1e-9)


@pytest.mark.parametrize("f", [10.0, 100.0, 1000.0, 3000.0, 10000.0])
def test_rc_low_pass_matches_scipy_signal(f):
    # reference library: scipy.signal.freqs; check-values C7 (fc = 1 kHz)
    R, C = 1e3, 159.155e-9
    r = solve(f"frequency {f} Hz\nVin: voltage i -> 0 1 V\nR: resistor i -> o 1k\n"
              f"C: capacitor o -> 0 159.155 nF")
    _, h = signal.freqs([1], [R * C, 1], worN=[2 * math.pi * f])
    assert node(r, "o") == pytest.approx(complex(h[0]), rel=1e-9)


@pytest.mark.parametrize("R", [100.0, 10.0])
@pytest.mark.parametrize("w", [5000.0, 9000.0, 10000.0, 11000.0, 20000.0, 100000.0])
def test_series_rlc_band_pass_matches_scipy_signal(R, w):
    # reference library: scipy.signal.freqs; check-values C8/C9 (output across R)
    L, C = 10e-3, 1e-6
    text = (f"frequency {w / (2 * math.pi)!r} Hz\nVin: voltage i -> 0 1 V\n"
            f"L: inductor i -> m 10 mH\nC: capacitor m -> o 1 uF\nR: resistor o -> 0 {R!r}")
    _, h = signal.freqs([R / L, 0], [1, R / L, 1 / (L * C)], worN=[w])
    assert node(solve(text), "o") == pytest.approx(complex(h[0]), rel=1e-9)


def test_band_pass_half_power_golden_ratio():
    # check-values C8: R = 100 Ω gives Q = 1 and half-power ω1 = 6180.34 rad/s, |H| = 1/√2
    w1 = 6180.339887498949
    text = (f"frequency {w1 / (2 * math.pi)!r} Hz\nVin: voltage i -> 0 1 V\n"
            "L: inductor i -> m 10 mH\nC: capacitor m -> o 1 uF\nR: resistor o -> 0 100")
    h = node(solve(text), "o")
    assert abs(h) == pytest.approx(1 / math.sqrt(2), rel=1e-9)
    assert math.degrees(cmath.phase(h)) == pytest.approx(45, abs=1e-6)


# --- E. three-phase ------------------------------------------------------------------


def test_balanced_wye_four_wire():
    # check-values C22 (formula, standard 3-phase relations): 400 V line, 16 + j12 Ω
    r = solve("frequency 50 Hz\nG: voltage3 a b c -> 0 400 V line\n"
              "M: load3 wye a b c -> n 16 + j12 ohm\nRn: resistor n -> 0 1 mohm")
    assert current(r, "M.a") == pytest.approx(polar(11.547, -36.8699), rel=1e-5)
    assert current(r, "M.b") == pytest.approx(polar(11.547, -156.87), rel=1e-5)
    assert current(r, "M.c") == pytest.approx(polar(11.547, 83.1301), rel=1e-5)
    g = r["groups"]["M"]
    assert (g["p_w"], g["q_var"], g["s_va"]) == pytest.approx((6400, 4800, 8000), rel=1e-9)
    # common practice, no source: a balanced load has no neutral current
    assert g["neutral_current"]["mag"] <= 1e-9
    # common practice, no source: V_L = √3·V_ph, leading by 30° in abc sequence
    assert node(r, "a") - node(r, "b") == pytest.approx(polar(400, 30), rel=1e-12)


def test_wye_wye_with_line_impedance():
    # check-values C23: Alexander & Sadiku balanced Y-Y example (6.81∠-21.8° A, from memory)
    r = solve("frequency 60 Hz\nG: voltage3 A B C -> 0 110 V\n"
              "La: impedance A -> a 5 - j2 ohm\nLb: impedance B -> b 5 - j2 ohm\n"
              "Lc: impedance C -> c 5 - j2 ohm\nY: load3 wye a b c -> 0 10 + j8 ohm")
    for name, deg in (("La", -21.8014), ("Lb", -141.801), ("Lc", 98.1986)):
        assert current(r, name) == pytest.approx(polar(6.80883, deg), rel=1e-5)


def test_balanced_delta():
    # check-values C24 (formula): 480 V line, 30 + j40 Ω, V_ab at 0°
    r = solve("frequency 60 Hz\nG: voltage3 a b c -> 0 480 V line phase -30 deg\n"
              "D: load3 delta a b c 30 + j40 ohm")
    assert current(r, "D.ab") == pytest.approx(polar(9.6, -53.1301), rel=1e-5)
    g = r["groups"]["D"]
    assert g["line_current"]["a"]["mag"] == pytest.approx(16.6277, rel=1e-5)
    assert g["line_current"]["a"]["deg"] == pytest.approx(-83.1301, abs=1e-3)
    assert (g["p_w"], g["q_var"]) == pytest.approx((8294.4, 11059.2), rel=1e-9)
    # the line current of the block equals the source phase current
    assert current(r, "G.a") == pytest.approx(-polar(16.6277, -83.1301), rel=1e-5)


def test_unbalanced_wye_sequence_currents():
    # check-values C26: Fortescue (1918) on an unbalanced 4-wire wye, solid neutral
    r = solve("frequency 50 Hz\nG: voltage3 a b c -> 0 230 V\n"
              "U: load3 wye a b c -> 0 20 ohm, 10 + j10 ohm, -j15 ohm")
    assert current(r, "U.a") == pytest.approx(polar(11.5, 0), rel=1e-6)
    assert current(r, "U.b") == pytest.approx(polar(16.2635, -165), rel=1e-5)
    assert current(r, "U.c") == pytest.approx(polar(15.3333, -150), rel=1e-5)
    g = r["groups"]["U"]
    seq = {k: complex(v["re"], v["im"]) for k, v in g["sequence_current"].items()}
    assert seq["zero"] == pytest.approx(polar(7.04652, -145.82), rel=1e-5)
    assert seq["positive"] == pytest.approx(polar(7.77242, 9.46232), rel=1e-5)
    assert seq["negative"] == pytest.approx(polar(10.0278, 15.5063), rel=1e-5)
    neutral = complex(g["neutral_current"]["re"], g["neutral_current"]["im"])
    assert neutral == pytest.approx(3 * seq["zero"], rel=1e-12)      # Fortescue: I_N = 3·I0
    assert (g["p_w"], g["q_var"]) == pytest.approx((5290, -881.667), rel=1e-6)


def test_voltage_unbalance_factor():
    # check-values C28: VUF = |V2|/|V1| = 1.13658 % (IEC 61000 practice, from memory)
    r = solve("frequency 50 Hz\nVa: voltage a -> 0 1 V\nVb: voltage b -> 0 0.95 V phase -123\n"
              "Vc: voltage c -> 0 1.02 V phase 118\nY: load3 wye a b c -> 0 10 ohm")
    assert r["groups"]["Y"]["voltage_unbalance"] == pytest.approx(0.0113658, rel=1e-5)


# --- F. theorems, bridges, magnetics ---------------------------------------------------

THEVENIN_NET = """frequency 50 Hz
V1: voltage s -> 0 120 V
Z1: impedance s -> m 4 + j3 ohm
Z2: impedance m -> 0 -j10 ohm
Z3: impedance m -> t 2 + j5 ohm
"""


def test_thevenin_open_circuit_and_short_circuit():
    # check-values C29 (formula): V_th = 148.842∠-29.7449° V, I_N = 14.9014∠-65.0261° A
    r = solve(THEVENIN_NET + "Rmeter: resistor t -> 0 1 Gohm")
    assert node(r, "t") == pytest.approx(polar(148.842, -29.7449), rel=1e-5)
    shorted = solve(THEVENIN_NET + "Short: resistor t -> 0 0 ohm")
    assert current(shorted, "Short") == pytest.approx(polar(14.9014, -65.0261), rel=1e-5)


def test_maximum_power_transfer():
    # check-values C30 (conjugate-match theorem): Z_L = Z_th* takes 679.245 W
    r = solve(THEVENIN_NET + "ZL: impedance t -> 0 8.15385 - j5.76923 ohm")
    assert r["elements"]["ZL"]["p_w"] == pytest.approx(679.245, rel=1e-5)


@pytest.mark.parametrize("f", [50, 1000, 10000])
def test_maxwell_bridge_balance_is_frequency_independent(f):
    # check-values C31 (Maxwell bridge): Lx = R2·R3·C1, Rx = R2·R3/R1 balances at any f
    r = solve(f"""frequency {f} Hz
Vd: voltage top -> 0 1 V
R1: resistor top -> left 100k
C1: capacitor top -> left 0.1 uF
R2: resistor left -> 0 1k
R3: resistor top -> right 500
Lx: inductor right -> mid 0.05 H
Rx: resistor mid -> 0 5 ohm
Det: resistor left -> right 1 Mohm
""")
    assert abs(voltage(r, "Det")) < 1e-12


def test_wien_network_gain():
    # check-values C32 (formula): f0 = 1 kHz, gain 1/3 at f0 and 0.298142∠±26.5651° an octave off
    for f, expected in ((500, polar(0.298142, 26.5651)), (1000, 1 / 3),
                        (2000, polar(0.298142, -26.5651))):
        r = solve(f"""frequency {f} Hz
Vin: voltage i -> 0 1 V
Rs: resistor i -> x 10k
Cs: capacitor x -> o 15.9155 nF
Rp: resistor o -> 0 10k
Cp: capacitor o -> 0 15.9155 nF
""")
        assert node(r, "o") == pytest.approx(expected, rel=1e-5)


def test_ideal_transformer_reflects_n_squared():
    # check-values C33 (formula): 10:1, 240 V, load 8 + j6 Ω → Z_in = n²·Z_L = 800 + j600 Ω
    r = solve("frequency 50 Hz\nV1: voltage p -> 0 240 V\n"
              "T: transformer p -> 0, s -> 0 ratio 10:1\nZL: impedance s -> 0 8 + j6 ohm")
    t = r["elements"]["T"]
    assert voltage(r, "V1") / -current(r, "V1") == pytest.approx(800 + 600j, rel=1e-12)
    assert voltage(r, "ZL") == pytest.approx(24 + 0j, rel=1e-12)
    assert current(r, "ZL") == pytest.approx(polar(2.4, -36.8699), rel=1e-5)
    assert complex(t["current"]["re"], t["current"]["im"]) == pytest.approx(
        polar(0.24, -36.8699), rel=1e-5)
    # ideal: I1 = -I2/n, and the power into the two ports sums to zero
    i2 = complex(t["secondary"]["current"]["re"], t["secondary"]["current"]["im"])
    assert i2 == pytest.approx(-10 * polar(0.24, -36.8699), rel=1e-5)
    assert abs(complex(t["p_w"], t["q_var"])) < 1e-9
    assert (r["elements"]["ZL"]["p_w"], r["elements"]["ZL"]["q_var"]) == pytest.approx(
        (46.08, 34.56), rel=1e-9)


def test_coupled_inductors_reflected_load():
    # check-values C34 (formula): M = k·√(L1·L2) = 10 mH, Z_r = (ωM)²/(R_L + jωL2)
    r = solve("""frequency 1 kHz
V1: voltage s -> 0 10 V
R1: resistor s -> p 10 ohm
L1: inductor p -> 0 10 mH
L2: inductor q -> 0 40 mH
RL: resistor q -> 0 50 ohm
K: coupling L1 L2 k 0.5
""")
    assert r["couplings"]["K"]["m_h"] == pytest.approx(0.01, rel=1e-12)
    assert abs(current(r, "R1")) == pytest.approx(0.202173, rel=1e-5)
    assert abs(current(r, "RL")) == pytest.approx(0.0495719, rel=1e-5)
    assert r["elements"]["RL"]["p_w"] == pytest.approx(0.122869, rel=1e-5)
    assert -r["elements"]["V1"]["p_w"] == pytest.approx(0.531609, rel=1e-5)


@pytest.mark.parametrize("sign, total_mh", [("0.5", 70.0), ("-0.5", 30.0)])
def test_coupled_inductors_in_series_aiding_and_opposing(sign, total_mh):
    # check-values C34 (formula): L = L1 + L2 ± 2M, 70 mH aiding, 30 mH opposing
    r = solve(f"""frequency 1 kHz
V1: voltage a -> 0 1 V
L1: inductor a -> b 10 mH
L2: inductor b -> 0 40 mH
K: coupling L1 L2 k {sign}
""")
    z = voltage(r, "V1") / -current(r, "V1")
    assert z == pytest.approx(1j * 2 * math.pi * 1000 * total_mh * 1e-3, rel=1e-12)


def test_coupling_by_mutual_inductance_equals_coupling_by_k():
    # formula: M = k·√(L1·L2) (common practice, no source)
    base = ("frequency 50 Hz\nV1: voltage a -> 0 10 V\nL1: inductor a -> 0 20 mH\n"
            "L2: inductor b -> 0 45 mH\nR2: resistor b -> 0 3 ohm\n")
    by_k = solve(base + "K: coupling L1 L2 k 0.8")
    by_m = solve(base + "K: coupling L1 L2 M 24 mH")
    assert current(by_m, "R2") == pytest.approx(current(by_k, "R2"), rel=1e-12)


# --- controlled sources -----------------------------------------------------------------


def test_vcvs_gain():
    # formula: an ideal voltage amplifier loaded by R: V_out = A·V_in
    r = solve("frequency 1 kHz\nVi: voltage in -> 0 0.1 V\nRi: resistor in -> 0 1k\n"
              "E: vcvs out -> 0 -50 sense in -> 0\nRo: resistor out -> 0 100")
    assert node(r, "out") == pytest.approx(-5 + 0j, rel=1e-12)


def test_ccvs_and_cccs_follow_the_sensed_current():
    # formula: V = r·I(sensed), I = β·I(sensed), each in its own reference direction
    r = solve("""frequency 50 Hz
Vs: voltage a -> 0 10 V
Rs: resistor a -> 0 5 ohm
H: ccvs h -> 0 3 ohm sense Rs
Rh: resistor h -> 0 1 ohm
F: cccs 0 -> f 2 sense Rs
Rf: resistor f -> 0 4 ohm
""")
    assert node(r, "h") == pytest.approx(6 + 0j, rel=1e-12)      # 3 Ω · 2 A
    assert current(r, "F") == pytest.approx(4 + 0j, rel=1e-12)
    assert node(r, "f") == pytest.approx(16 + 0j, rel=1e-12)     # 4 A pushed into f


def test_sensed_current_source_and_chained_cccs():
    # formula: the sensed current of a current source is its own value
    r = solve("""frequency 50 Hz
I1: current 0 -> a 2 A
Ra: resistor a -> 0 10 ohm
F1: cccs 0 -> b 3 sense I1
Rb: resistor b -> 0 1 ohm
F2: cccs 0 -> c 0.5 sense F1
Rc: resistor c -> 0 2 ohm
""")
    assert current(r, "F1") == pytest.approx(6 + 0j)
    assert node(r, "c") == pytest.approx(6 + 0j)      # 0.5 · 6 A into 2 Ω


# --- RMS and peak ----------------------------------------------------------------------


def test_peak_amplitudes_use_half_v_i_conjugate():
    # results-contract.md: ½·V·I* with peak phasors; the same power as RMS phasors
    rms = solve("frequency 50 Hz\nV1: voltage a -> 0 100 V\nR: resistor a -> 0 10")
    peak = solve("frequency 50 Hz\namplitudes peak\nV1: voltage a -> 0 141.42135623730951 V\n"
                 "R: resistor a -> 0 10")
    assert peak["elements"]["R"]["p_w"] == pytest.approx(rms["elements"]["R"]["p_w"], rel=1e-12)
    assert peak["elements"]["R"]["current"]["mag"] == pytest.approx(14.142135623730951)


def test_per_source_peak_in_an_rms_circuit():
    # circuit-language.md: the source option overrides 'amplitudes'
    r = solve("frequency 50 Hz\nV1: voltage a -> 0 100 V peak\nR: resistor a -> 0 10")
    assert node(r, "a") == pytest.approx(100 / math.sqrt(2) + 0j, rel=1e-12)


# --- singular and ill-posed circuits ---------------------------------------------------


def test_lc_at_exact_resonance_alone_is_singular():
    # formula: an ideal parallel LC at f0 has zero admittance; a current source into it
    # has no solution
    f0 = 1 / (2 * math.pi * math.sqrt(1e-3 * 1e-6))
    with pytest.raises(AnalysisError) as info:
        solve(f"frequency {f0!r} Hz\nI1: current 0 -> a 1 A\nL: inductor a -> 0 1 mH\n"
              "C: capacitor a -> 0 1 uF")
    assert "singular" in str(info.value)


def test_structure_errors_are_circuit_errors():
    with pytest.raises(CircuitError):
        solve("frequency 50 Hz\nV1: voltage a -> 0 1\nV2: voltage a -> 0 2")


def test_large_ladder_power_balance():
    # Tellegen's theorem (common practice, no source): Σ S over all elements is zero
    lines = ["frequency 60 Hz", "V: voltage n0 -> 0 480 V"]
    rng = np.random.default_rng(7)
    for k in range(400):
        lines.append(f"R{k}: resistor n{k} -> n{k + 1} {rng.uniform(0.01, 1):.6f}")
        lines.append(f"C{k}: capacitor n{k + 1} -> 0 {rng.uniform(1, 50):.4f} uF")
        lines.append(f"L{k}: inductor n{k + 1} -> 0 {rng.uniform(10, 500):.3f} mH")
    r = solve("\n".join(lines))
    assert r["balance"]["ok"]
    assert r["balance"]["relative"] < 1e-12


def test_ill_conditioned_equations_give_a_warning():
    # formula: two nodes tied by 1 µΩ, each to ground through 1 GΩ. In nodal form the
    # matrix [[1e6 + 1e-9, -1e6], [-1e6, 1e6 + 1e-9]] has a condition number of about
    # 2e15; the 1 µΩ element gets a current unknown of its own instead, so the answer is
    # exact: V(a) − V(b) = 1e-6·I_ab, I_ab = V(b)/1e9 and the source's 1 A splits evenly
    # to within 1e-15 (common practice, no source: series-parallel reduction)
    r = solve("frequency 50 Hz\nI1: current 0 -> a 1 A\nRab: resistor a -> b 1 uohm\n"
              "Ra: resistor a -> 0 1 Gohm\nRb: resistor b -> 0 1 Gohm")
    rb, rab = 1e9, 1e-6
    i_ab = 1.0 * rb / (rb + (rab + rb))         # current divider, 1 A in
    assert current(r, "Rab").real == pytest.approx(i_ab, rel=1e-13)
    assert voltage(r, "Rab").real == pytest.approx(rab * i_ab, rel=1e-13)
    assert current(r, "Ra").real + current(r, "Rab").real == pytest.approx(1.0, rel=1e-15)
    assert not any("lost digits" in w["message"] for w in r["warnings"])
    tame = solve("frequency 50 Hz\nI1: current 0 -> a 1 A\nRab: resistor a -> b 1 ohm\n"
                 "Ra: resistor a -> 0 1 kohm\nRb: resistor b -> 0 1 kohm")
    assert not any("ill-conditioned" in w["message"] for w in tame["warnings"])


# --- G. numerical trust ------------------------------------------------------------


def test_tiny_series_resistor_keeps_every_digit():
    # Issue case: 1 pΩ in series with 1 Ω on 1 V. Ohm's law: I = 1/(1 + 1e-12) A in both
    # (KCL, common practice, no source); reference value by mpmath at 40 digits
    import mpmath
    mpmath.mp.dps = 40
    exact = float(1 / (1 + mpmath.mpf(1e-12)))
    r = solve("frequency 50 Hz\nV1: voltage a -> 0 1\nRp: resistor a -> b 1 pΩ\n"
              "R1: resistor b -> 0 1")
    assert current(r, "Rp").real == pytest.approx(exact, rel=2e-16)
    assert current(r, "R1").real == pytest.approx(exact, rel=2e-16)
    assert voltage(r, "Rp").real == pytest.approx(1e-12 * exact, rel=1e-15)
    assert r["balance"]["ok"]


def test_tiny_inductor_beside_a_nano_ohm_resistor():
    # Issue case: 1 nΩ and 1 pH in series with 1 Ω: I = 1/(1 + 1e-9 + jω·1e-12) (Ohm's
    # law), the source's Q is negative (it delivers the inductor's vars): mpmath at 40 digits
    import mpmath
    mpmath.mp.dps = 40
    w = 2 * mpmath.pi * 50
    exact = complex(1 / (1 + mpmath.mpf(1e-9) + 1j * w * mpmath.mpf(1e-12)))
    r = solve("frequency 50 Hz\nV1: voltage a -> 0 1\nRn: resistor a -> b 1 nΩ\n"
              "Lp: inductor b -> c 1 pH\nR1: resistor c -> 0 1")
    for name in ("Rn", "Lp", "R1"):
        assert abs(current(r, name) - exact) <= 1e-15 * abs(exact)
    assert r["elements"]["V1"]["q_var"] < 0
    assert r["balance"]["ok"]


def test_near_resonance_is_refined_or_warned():
    # Issue case: parallel L-C fed by 1 A, 1e-9 off resonance: V = 1/(jωC + 1/(jωL)),
    # reference by mpmath at 40 digits (the double values of L, C and f taken as exact)
    import mpmath
    mpmath.mp.dps = 40
    ind = 1e-3
    cap = 1 / ((2 * math.pi * 1000) ** 2 * ind)
    f = 1000.000001
    w = 2 * mpmath.pi * mpmath.mpf(f)
    exact = complex(1 / (1j * w * mpmath.mpf(cap) + 1 / (1j * w * mpmath.mpf(ind))))
    r = solve(f"frequency {f!r} Hz\nI1: current 0 -> a 1\nL1: inductor a -> 0 {ind!r}\n"
              f"C1: capacitor a -> 0 {cap!r}")
    error = abs(node(r, "a") - exact) / abs(exact)
    warned = [w for w in r["warnings"] if "lost digits" in w["message"]]
    trusted = min(r["elements"][n]["digits"] for n in ("L1", "C1"))
    assert error <= 10.0 ** -trusted                  # the stated digits are right
    assert trusted >= 9 or warned                     # and fewer than 10 are warned
    assert warned and "C1" in warned[0]["message"]
