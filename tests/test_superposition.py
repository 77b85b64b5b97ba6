"""Sources at several frequencies, solved one frequency at a time and added.

Checks against IEEE Std 1459-2010's non-sinusoidal definitions (RMS values root-sum-
square, P the sum of the harmonic powers, PF = P/S; clause numbers from memory) with the
values of the project's check-values reference (C10, C13).
"""

from __future__ import annotations

import math

import pytest

from phasorbench.superposition import circuit_at, source_frequencies
from phasorbench.workflow import read_circuit
from tests.helpers import solve

RL_HARMONICS = """frequency 50 Hz
V1: voltage a -> 0 230 V
V5: voltage b -> a 11.5 V freq 250 Hz
V7: voltage c -> b 6.9 V freq 350 Hz
R: resistor c -> d 10 ohm
L: inductor d -> 0 20 mH
"""


def test_harmonic_voltages_into_an_rl_load():
    # check-values C13 (formula, linear superposition): I_rms 19.4786 A, P = 3794.15 W
    r = solve(RL_HARMONICS)
    assert r["frequency_hz"] == 50.0
    assert [h["frequency_hz"] for h in r["harmonics"]] == [250.0, 350.0]
    assert r["elements"]["R"]["current"]["mag"] == pytest.approx(19.4749, rel=1e-5)
    fifth = r["harmonics"][0]["elements"]["R"]["current"]
    assert (fifth["mag"], fifth["deg"]) == pytest.approx((0.348812, -72.3432), rel=1e-5)
    totals = r["rms_totals"]["R"]
    assert totals["i_rms"] == pytest.approx(19.4786, rel=1e-5)
    assert totals["p_w"] == pytest.approx(3794.15, rel=1e-6)
    # P = I_rms²·R for a resistor (formula)
    assert totals["p_w"] == pytest.approx(totals["i_rms"] ** 2 * 10, rel=1e-12)
    assert any("3 frequencies" in w["message"] for w in r["warnings"])


def test_sinusoidal_voltage_distorted_current():
    # check-values C10 (IEEE Std 1459-2010): I_rms 11.1803 A, P = 1991.86 W,
    # S = 2571.48 VA, PF = 0.774597 = cos 30° / √(1 + THD²)
    r = solve("""frequency 50 Hz
V: voltage a -> 0 230 V
I1: current a -> 0 10 A phase -30 deg
I3: current a -> 0 4 A freq 150 Hz
I5: current a -> 0 3 A freq 250 Hz
""")
    supply = r["rms_totals"]["V"]
    assert supply["v_rms"] == pytest.approx(230, rel=1e-12)
    assert supply["i_rms"] == pytest.approx(11.1803, rel=1e-5)
    assert -supply["p_w"] == pytest.approx(1991.86, rel=1e-6)
    assert supply["s_va"] == pytest.approx(2571.48, rel=1e-6)
    assert supply["pf"] == pytest.approx(0.774597, rel=1e-6)
    assert supply["pf"] == pytest.approx(math.cos(math.radians(30)) / math.sqrt(1 + 0.25))


def test_each_frequency_keeps_only_its_own_sources():
    circuit = read_circuit(RL_HARMONICS)
    assert source_frequencies(circuit) == [50.0, 250.0, 350.0]
    at_250 = circuit_at(circuit, 250.0)
    assert at_250.elements["V1"].value == 0 and at_250.elements["V7"].value == 0
    assert at_250.elements["V5"].value == 11.5
    assert circuit.elements["V1"].value == 230         # the input circuit is untouched
    # Tellegen's theorem holds at every frequency (common practice, no source)
    r = solve(RL_HARMONICS)
    for part in [r] + r["harmonics"]:
        assert part["balance"]["ok"]


def test_peak_circuit_totals_are_rms():
    # formula: an RMS value is the peak over √2 for each sinusoidal component
    r = solve("frequency 50 Hz\namplitudes peak\nV1: voltage a -> 0 100 V\n"
              "V3: voltage b -> a 10 V freq 150 Hz\nR: resistor b -> 0 1 ohm")
    assert r["rms_totals"]["R"]["v_rms"] == pytest.approx(math.hypot(100, 10) / math.sqrt(2))


def test_waveform_adds_every_frequency():
    # formula: a linear circuit's response is the sum of its responses at each frequency;
    # the mean of v·i over a fundamental period is the sum of the harmonic powers
    import numpy as np

    from phasorbench.waveforms import sample_element
    r = solve(RL_HARMONICS)
    samples = sample_element(r, "R", periods=1, samples_per_period=4000)
    assert samples["harmonics_hz"] == [250.0, 350.0]
    t, p = np.array(samples["t_s"]), np.array(samples["p"])
    mean = np.trapezoid(p, t) / t[-1]
    assert mean == pytest.approx(r["rms_totals"]["R"]["p_w"], rel=1e-6)
    assert samples["p_avg"] == pytest.approx(r["rms_totals"]["R"]["p_w"], rel=1e-12)
    i = np.array(samples["i"])
    assert np.sqrt(np.trapezoid(i * i, t) / t[-1]) == pytest.approx(
        r["rms_totals"]["R"]["i_rms"], rel=1e-6)


def test_an_analysis_frequency_no_source_runs_at_is_warned():
    # circuit-language.md: 'frequency' is the analysis frequency; with every source at its
    # own freq elsewhere, nothing is driven there and the result must say so
    r = solve("frequency 60 Hz\nV1: voltage a -> 0 1 V freq 50 Hz\nR: resistor a -> 0 1")
    assert r["elements"]["R"]["current"]["mag"] == 0
    assert any("no source runs at the analysis frequency 60 Hz" in w["message"]
               for w in r["warnings"])
