"""Tests of sampling v(t), i(t), p(t) (waveforms.py)."""

import cmath
import json
import math

import numpy as np
import pytest

from phasorbench.waveforms import MAX_SAMPLES, instantaneous, returned_energy, sample_element
from phasorbench.workflow import solve_text

CAPACITOR_50 = """frequency 50 Hz
Vs: voltage a -> 0 230 V
C1: capacitor a -> 0 10 uF
"""
INDUCTOR_60 = """frequency 60 Hz
Vs: voltage a -> 0 120 V
L1: inductor a -> 0 100 mH
"""
RL_LOAD = """frequency 50 Hz
Vs: voltage a -> 0 230 V
Rl: resistor a -> b 30 ohm
Ll: inductor b -> 0 (40/(2*pi*50)) H
Zl: impedance a -> 0 30 + j40 ohm
"""


def _one_period(samples):
    """The samples of exactly one period of a default two-period sampling, no endpoint."""
    n = (len(samples["t_s"]) - 1) // 2
    return {k: np.array(samples[k][:n]) for k in ("t_s", "v", "i", "p")}


@pytest.mark.parametrize("text, name, q_abs", [
    (CAPACITOR_50, "C1", 166.19),   # check-values C3 (C1 at 50 Hz): amplitude |Q| = 166.19 VA
    (INDUCTOR_60, "L1", 381.972),   # check-values C3 (C2, 100 mH at 60 Hz): 381.972 VA
])
def test_ideal_reactance_takes_no_mean_power(text, name, q_abs):
    samples = sample_element(solve_text(text), name)
    one = _one_period(samples)
    # check-values C3 (general physics): mean 0 within 1e-9·|S|, amplitude |Q|
    assert abs(one["p"].mean()) <= 1e-9 * samples["s_va"]
    assert abs(samples["p_avg"]) <= 1e-9 * samples["s_va"]
    amplitude = (max(samples["p"]) - min(samples["p"])) / 2
    assert math.isclose(amplitude, q_abs, rel_tol=1e-5)  # table value has 6 digits
    assert math.isclose(samples["s_va"], q_abs, rel_tol=1e-5)


def test_rl_load_power_wave():
    samples = sample_element(solve_text(RL_LOAD), "Zl", samples_per_period=400)
    one = _one_period(samples)
    # check-values C4 (IEEE Std 1459-2010 single-phase sinusoidal definitions):
    # mean 634.8 W, max 1692.8 W, min -423.2 W
    assert math.isclose(one["p"].mean(), 634.8, rel_tol=1e-9)
    assert math.isclose(samples["p_avg"], 634.8, rel_tol=1e-9)
    assert math.isclose(samples["p_max"], 1692.8, rel_tol=1e-9)
    assert math.isclose(samples["p_min"], -423.2, rel_tol=1e-9)
    # sampled extremes sit within the closed-form ones and close to them
    assert samples["p_min"] - 1e-9 <= min(samples["p"]) <= samples["p_min"] + 1e-3 * 1058
    assert samples["p_max"] - 1e-3 * 1058 <= max(samples["p"]) <= samples["p_max"] + 1e-9
    # check-values C4: the dominant frequency of p(t) is 2f = 100 Hz
    spectrum = np.abs(np.fft.rfft(one["p"] - one["p"].mean()))
    freqs = np.fft.rfftfreq(len(one["p"]), d=one["t_s"][1] - one["t_s"][0])
    assert math.isclose(freqs[int(np.argmax(spectrum))], 100.0, rel_tol=1e-9)


def test_product_matches_the_closed_form():
    result = solve_text(RL_LOAD)
    for name in result["elements"]:
        s = sample_element(result, name, periods=1.5, samples_per_period=64)
        el = result["elements"][name]
        th_v, th_i = math.radians(el["voltage"]["deg"]), math.radians(el["current"]["deg"])
        w = 2 * math.pi * s["frequency_hz"]
        t = np.array(s["t_s"])
        # IEEE Std 1459-2010 (sinusoidal single phase): p = P + S·cos(2ωt + θv + θi)
        closed = el["p_w"] + el["s_va"] * np.cos(2 * w * t + th_v + th_i)
        product = np.array(s["v"]) * np.array(s["i"])
        assert np.allclose(product, closed, rtol=0, atol=1e-9 * el["s_va"] + 1e-12)
        assert np.allclose(s["p"], product, rtol=1e-12, atol=1e-12)
        # common practice, no source: mean of p equals the element's P of the contract
        assert math.isclose(s["p_avg"], el["p_w"], rel_tol=1e-9, abs_tol=1e-9 * el["s_va"])


def test_capacitor_current_leads_by_a_quarter_period():
    result = solve_text(CAPACITOR_50)
    el = result["elements"]["C1"]
    f = result["frequency_hz"]
    voltage = complex(el["voltage"]["re"], el["voltage"]["im"])
    current = complex(el["current"]["re"], el["current"]["im"])
    t = np.linspace(0, 2 / f, 801)
    v, i, _ = instantaneous(voltage, current, f, "rms", t)
    v_later, _, _ = instantaneous(voltage, current, f, "rms", t + 0.25 / f)
    # common practice, no source: a capacitor's current leads its voltage by 90°, so
    # i(t) has the shape of v a quarter period later
    assert np.allclose(i / abs(current), v_later / abs(voltage), atol=1e-9)
    assert not np.allclose(i / abs(current), v / abs(voltage), atol=1e-3)


def test_rms_and_peak_amplitudes():
    t = np.array([0.0])
    # common practice, no source: an RMS phasor of 230 V has the peak √2·230 V
    v, _, _ = instantaneous(230, 1, 50, "rms", t)
    assert math.isclose(v[0], 230 * math.sqrt(2), rel_tol=1e-12)
    v, _, _ = instantaneous(230, 1, 50, "peak", t)
    assert v[0] == 230
    with pytest.raises(ValueError):
        instantaneous(230, 1, 50, "average", t)


def test_peak_circuit_series_resonance():
    # check-values C5 (Alexander & Sadiku, series resonance): 20 V peak across
    # R = 2 Ω, L = 1 mH, C = 0.4 µF at ω0 = 50 krad/s gives I = 10 A peak, P = 100 W
    f0 = 50000 / (2 * math.pi)
    result = solve_text(f"""frequency {f0!r} Hz
amplitudes peak
V1: voltage a -> 0 20 V
R: resistor a -> b 2 ohm
L: inductor b -> c 1 mH
C: capacitor c -> 0 0.4 uF
""")
    s = sample_element(result, "R")
    assert math.isclose(s["i_peak"], 10.0, rel_tol=1e-9)
    assert math.isclose(max(s["i"]), 10.0, rel_tol=1e-9)
    assert math.isclose(s["p_avg"], 100.0, rel_tol=1e-9)
    assert math.isclose(s["p_avg"], result["elements"]["R"]["p_w"], rel_tol=1e-9)


def _numeric_returned(p_w, s_va, f, phase=0.3, n=200_000):
    t = np.linspace(0, 1 / f, n, endpoint=False)
    p = p_w + s_va * np.cos(4 * math.pi * f * t + phase)
    return np.maximum(0.0, -p).mean() / f


@pytest.mark.parametrize("p_w, s_va", [
    (634.8, 1058.0),    # check-values C4 RL load
    (0.0, 166.19),      # check-values C3 capacitor
    (529.0, 529.0),     # a resistor: p never negative (common practice, no source)
    (-5290.0, 5290.0),  # a source feeding a resistor, passive sign
    (-100.0, 300.0),
])
def test_returned_energy_closed_form_against_numeric(p_w, s_va):
    # common practice, no source: numeric integral of max(0, -p) over one period
    f = 50.0
    closed = returned_energy(p_w, s_va, f)
    assert math.isclose(closed, _numeric_returned(p_w, s_va, f), rel_tol=1e-6,
                        abs_tol=1e-9 * s_va / f)


def test_returned_energy_special_cases():
    w = 2 * math.pi * 50
    # common practice, no source: a pure reactance returns 2|Q|/ω per cycle
    assert math.isclose(returned_energy(0.0, 166.19, 50), 2 * 166.19 / w, rel_tol=1e-12)
    assert returned_energy(529.0, 529.0, 50) == 0.0
    assert math.isclose(returned_energy(-5290.0, 5290.0, 50), 5290.0 / 50, rel_tol=1e-12)


def test_sample_fields_and_json_safety():
    result = solve_text(RL_LOAD)
    s = sample_element(result, "Zl", periods=2, samples_per_period=50)
    assert len(s["t_s"]) == len(s["v"]) == len(s["i"]) == len(s["p"]) == 101
    assert math.isclose(s["t_s"][-1], 2 / 50, rel_tol=1e-12)
    json.dumps(s, allow_nan=False)  # raises on NaN or infinity
    assert all(type(x) is float for key in ("t_s", "v", "i", "p") for x in s[key])
    # check-values C4: absorbed − returned = P·T
    assert math.isclose(s["absorbed_energy_j"] - s["returned_energy_j"], 634.8 / 50,
                        rel_tol=1e-9)
    # check-values C4: I = 4.6 A rms, so 4.6·√2 A peak
    assert math.isclose(s["i_peak"], 4.6 * math.sqrt(2), rel_tol=1e-9)
    assert s["units"]["p"] == "W" and s["port"] is None


def test_transformer_samples_its_primary():
    result = solve_text("""frequency 50 Hz
Vs: voltage a -> 0 240 V
T1: transformer a -> 0, b -> 0 ratio 10:1
ZL: impedance b -> 0 8 + j6 ohm
""")
    s = sample_element(result, "T1")
    # check-values C33: S1 = 46.08 W + j34.56 var at the primary port
    assert s["port"] == "primary"
    assert math.isclose(s["p_avg"], 46.08, rel_tol=1e-9)
    assert math.isclose(s["q_var"], 34.56, rel_tol=1e-9)
    assert math.isclose(cmath.polar(complex(s["p_avg"], s["q_var"]))[0], s["s_va"])


def test_bad_requests():
    result = solve_text(RL_LOAD)
    with pytest.raises(ValueError, match="no element named 'Nope'"):
        sample_element(result, "Nope")
    with pytest.raises(ValueError):
        sample_element(result, "Zl", periods=MAX_SAMPLES, samples_per_period=200)
    with pytest.raises(ValueError):
        sample_element(result, "Zl", periods=0)
