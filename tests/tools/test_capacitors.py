"""Shunt-capacitor duty formulas against check-values.md, section D (C18–C21) and H.

check-values quotes 6 significant figures: ``figures(x) == quoted`` means the result
rounds to exactly the quoted figures.
"""

from __future__ import annotations

import math

import pytest

from phasorbench.tools import capacitors as cap

from .quoting import figures


def _c_from_rating(q_var: float, v: float, f: float) -> float:
    return q_var / (2 * math.pi * f * v * v)          # Q = ωCV², formula


@pytest.mark.parametrize("v, f, want_kvar", [
    (460.0, 60.0, 45.9201),      # check-values C18 (formula Q = ωCV²)
    (480.0, 50.0, 41.6667),      # check-values C18
    (400.0, 50.0, 28.9352),      # check-values C18
    (480.0, 60.0, 50.0),         # the rating itself, C18
])
def test_reactive_power_scales_with_v_squared_and_f(v, f, want_kvar):
    c = _c_from_rating(50e3, 480.0, 60.0)   # a 50 kvar, 480 V, 60 Hz unit (C18)
    assert figures(cap.reactive_power(c, v, f) / 1e3) == want_kvar


# C19: 1000 kVA, 5.75 % transformer on a 480 V 60 Hz bus, S_sc = 17.3913 MVA;
# rule h = √(S_sc/Q_c) (IEEE 519 / IEEE 1036 application guidance, from memory).
S_SC = 1000e3 / 0.0575
V_BUS = 480.0


@pytest.mark.parametrize("q_kvar, want_h", [
    (300.0, 7.61387), (100.0, 13.1876), (200.0, 9.32505), (400.0, 6.5938),
    (600.0, 5.38382), (695.652, 5.0), (354.925, 7.0),
])
def test_resonance_order_matches_the_short_circuit_power_rule(q_kvar, want_h):
    x_network = V_BUS ** 2 / S_SC          # 0.013248 Ω, check-values C19
    x_c = V_BUS ** 2 / (q_kvar * 1e3)      # 0.768 Ω for 300 kvar, C19
    assert figures(S_SC / 1e6) == 17.3913                               # C19
    assert figures(cap.resonance_order(x_c, x_network)) == want_h       # C19


def test_resonance_order_of_300_kvar_is_the_lc_resonance():
    # check-values C19 explicit per-phase LC check: X_L 0.013248 Ω, X_C 0.768 Ω, 456.832 Hz.
    w = 2 * math.pi * 60.0
    inductance, capacitance = 0.013248 / w, 1 / (w * 0.768)
    f_r = 1 / (2 * math.pi * math.sqrt(inductance * capacitance))
    h = cap.resonance_order(0.768, 0.013248)
    assert figures(f_r) == 456.832                            # C19
    assert h * 60.0 == pytest.approx(f_r, rel=1e-12)          # same model, formula


def test_resonance_order_is_none_without_an_inductive_network():
    assert cap.resonance_order(0.768, 0.0) is None            # common practice, no source
    assert cap.resonance_order(0.768, -0.2) is None           # common practice, no source


@pytest.mark.parametrize("h, want", [
    (7.61387, 7), (6.5938, 7), (5.38382, 5), (9.32505, None), (13.1876, 13),
    (2.71, 3), (3.31, None), (4.49, None), (4.51, 5),
])
def test_near_characteristic_harmonic_uses_a_ten_percent_band(h, want):
    # check-values section H: warn within about ±10 % of 5, 7, 11, 13 (and the 3rd).
    assert cap.near_characteristic_harmonic(h) == want


def test_ieee18_duty_passing_case():
    # check-values C20, pass case: V1 1.05, V5 0.06, V7 0.03 pu, peaks coinciding.
    duty = cap.capacitor_duty({1: 1.05, 5: 0.06, 7: 0.03})
    assert figures(duty["voltage_rms"]) == 1.05214    # C20
    assert figures(duty["voltage_peak"]) == 1.14      # C20
    assert figures(duty["current_rms"]) == 1.11203    # C20
    assert figures(duty["kvar"]) == 1.1268            # C20
    check = cap.ieee18_check(duty)
    assert check["ok"] and check["exceeded"] == []    # C20: all within
    assert check["edition"] == "IEEE Std 18-2002"


def test_ieee18_duty_failing_case_names_the_exceeded_limits():
    # check-values C20, fail case: 1.10/0.08/0.05 pu; limits IEEE Std 18-2002
    # 110 % rms V, 120 % peak V, 135 % I, 135 % kvar.
    duty = cap.capacitor_duty({1: 1.10, 5: 0.08, 7: 0.05})
    assert figures(duty["voltage_rms"]) == 1.10404    # C20
    assert figures(duty["voltage_peak"]) == 1.23      # C20
    assert figures(duty["current_rms"]) == 1.22168    # C20
    assert figures(duty["kvar"]) == 1.2595            # C20
    check = cap.ieee18_check(duty)
    assert sorted(check["exceeded"]) == ["voltage_peak", "voltage_rms"]   # C20
    assert not check["ok"]
    assert check["limits"] == {"voltage_rms": 1.10, "voltage_peak": 1.20,
                               "current_rms": 1.35, "kvar": 1.35}      # IEEE Std 18-2002


def test_a_value_at_its_limit_passes():
    check = cap.ieee18_check(cap.capacitor_duty({1: 1.10}))     # IEEE Std 18-2002: ≤ 110 %
    assert check["ok"]


def test_stored_energy_and_discharge_resistors():
    # check-values C21: 50 kvar 480 V 60 Hz unit, C = 575.647 µF, crest 678.823 V.
    c = _c_from_rating(50e3, 480.0, 60.0)
    v_peak = 480.0 * math.sqrt(2)
    assert figures(c * 1e6) == 575.647                              # C21
    assert figures(v_peak) == 678.823                               # C21
    assert figures(cap.stored_energy(c, v_peak)) == 132.629         # C21: ½CV̂²
    r_1min = cap.discharge_resistor_max(c, v_peak, 50.0, 60.0)
    assert figures(r_1min) == 39960.5                               # C21
    assert figures(r_1min * c) == 23.0032                           # C21: τ
    assert figures(cap.discharge_resistor_max(c, v_peak, 50.0, 300.0)) == 199803.0   # C21
    assert figures(cap.discharge_resistor_max(c, v_peak, 75.0, 180.0)) == 141947.0   # C21
    c2 = _c_from_rating(25e3, 400.0, 50.0)
    assert figures(c2 * 1e6) == 497.359                             # C21
    assert figures(cap.discharge_resistor_max(c2, 400.0 * math.sqrt(2), 75.0, 180.0)) == \
        179115.0                                                    # C21


def test_no_discharge_resistor_below_the_residual_voltage():
    assert cap.discharge_resistor_max(1e-3, 40.0) is None    # common practice, no source


def test_discharge_rule_follows_the_nec_clauses():
    # check-values section H: NEC 460.6 — 50 V within 1 min (≤ 600 V; ≤ 1000 V from 2020);
    # NEC 460.28 over 1000 V — 50 V within 5 min (from memory).
    low = cap.discharge_requirement(480.0)
    assert (low["clause"], low["residual_v"], low["seconds"]) == \
        ("NEC (NFPA 70) 460.6", 50.0, 60.0)
    high = cap.discharge_requirement(4160.0)
    assert (high["clause"], high["seconds"]) == ("NEC (NFPA 70) 460.28", 300.0)


def test_correction_duty_counts_every_order_in_the_circuit():
    # IEEE Std 18-2002 (check-values C20): peak voltage is the sum of the components'
    # peaks, rms voltage the root-sum-square. The corrected circuit, written out and
    # studied order by order (studies/harmonics.py), gives the same duty.
    import math

    from phasorbench.studies.harmonics import run_harmonics
    from phasorbench.tools import correct_power_factor
    from phasorbench.workflow import read_circuit
    text = ("frequency 50 Hz\nGrid: voltage src -> 0 230 V\nLt: inductor src -> bus 0.2 mH\n"
            "Load: impedance bus -> 0 4 + j3 ohm\nH5: current bus -> 0 8 A freq 250 Hz\n")
    r = correct_power_factor(read_circuit(text), "Grid", 0.95, at="bus", rated_voltage=240)
    duty = r["ieee18"]["duty"]
    assert r["ieee18"]["orders_hz"] == [50.0, 250.0]
    corrected = text + "\n".join(r["circuit_lines"]) + "\n"
    name = r["capacitors"][0]["name"]
    orders = run_harmonics(read_circuit(corrected), scan=False)["elements"][name]["orders"]
    mags = [o["v"]["mag"] for o in orders.values()]
    assert duty["voltage_peak"] == pytest.approx(sum(mags) / 240, rel=1e-6)
    assert duty["voltage_rms"] == pytest.approx(math.hypot(*mags) / 240, rel=1e-6)
    # the 5th adds to the peak: above the fundamental's own share
    assert duty["voltage_peak"] > orders["1"]["v"]["mag"] / 240 * (1 + 1e-3)
