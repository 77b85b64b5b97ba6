"""The resonance finder (studies/resonance.py) against the textbook resonance formulas
and check-values.md C19: f0 = 1/(2π√(LC)); series Q = (1/R)√(L/C), parallel
Q = R√(C/L); half-power bandwidth f0/Q; the bank resonance order h = √(S_sc/Q_c).

Each network is one where the formulas are exact (series RLC current or impedance,
parallel RLC impedance), so the finder is held to its own 1e-6 relative refinement."""

from __future__ import annotations

import math

import pytest

from phasorbench.studies.sweep import run_sweep
from phasorbench.workflow import read_circuit

SERIES = [(2.0, 1e-3, 0.4e-6), (50.0, 10e-3, 1e-6), (0.5, 2e-3, 47e-6)]   # R, L, C


@pytest.mark.parametrize("r, l, c", SERIES)
def test_series_rlc_current_peak(r, l, c):
    circuit = read_circuit(f"frequency 50 Hz\nVs: voltage a -> 0 10 V\n"
                           f"R1: resistor a -> b {r!r} ohm\nL1: inductor b -> m {l!r} H\n"
                           f"C1: capacitor m -> 0 {c!r} F\n")
    f0 = 1 / (2 * math.pi * math.sqrt(l * c))              # textbook f0 = 1/(2π√(LC))
    q = math.sqrt(l / c) / r                                # textbook series Q = (1/R)√(L/C)
    result = run_sweep(circuit, ["I(R1)"], start=f0 / 20, stop=f0 * 20, points=101)
    (peak,) = result["resonances"]
    assert peak["kind"] == "peak"
    assert peak["frequency_hz"] == pytest.approx(f0, rel=1e-6)       # textbook f0
    assert peak["q"] == pytest.approx(q, rel=1e-6)                     # textbook Q
    assert peak["bandwidth_hz"] == pytest.approx(f0 / q, rel=1e-6)     # textbook B = f0/Q
    assert peak["value"]["mag"] == pytest.approx(10 / r, rel=1e-9)    # I = V/R at f0


@pytest.mark.parametrize("r, l, c", SERIES)
def test_series_rlc_impedance_dip(r, l, c):
    # |Z| of a series RLC is R at f0 and √2·R where X = ±R: B = R/(2πL) = f0/Q exactly
    circuit = read_circuit(f"frequency 50 Hz\nIs: current 0 -> a 1 A\n"
                           f"R1: resistor a -> b {r!r} ohm\nL1: inductor b -> m {l!r} H\n"
                           f"C1: capacitor m -> 0 {c!r} F\n")
    f0 = 1 / (2 * math.pi * math.sqrt(l * c))              # textbook f0
    q = math.sqrt(l / c) / r                                # textbook series Q
    result = run_sweep(circuit, ["Z(a)"], start=f0 / 20, stop=f0 * 20, points=101)
    (dip,) = result["resonances"]
    assert dip["kind"] == "dip"
    assert dip["frequency_hz"] == pytest.approx(f0, rel=1e-6)        # textbook f0
    assert dip["bandwidth_hz"] == pytest.approx(f0 / q, rel=1e-6)    # textbook B = f0/Q
    assert dip["q"] == pytest.approx(q, rel=1e-6)                      # textbook Q
    assert dip["value"]["mag"] == pytest.approx(r, rel=1e-9)         # Z(f0) = R


@pytest.mark.parametrize("r, l, c", [(8e3, 0.2e-3, 8e-6), (1e3, 10e-3, 1e-6),
                                     (50.0, 1e-3, 100e-6)])
def test_parallel_rlc_impedance_peak(r, l, c):
    circuit = read_circuit(f"frequency 50 Hz\nIs: current 0 -> a 1 A\n"
                           f"R1: resistor a -> 0 {r!r} ohm\nL1: inductor a -> 0 {l!r} H\n"
                           f"C1: capacitor a -> 0 {c!r} F\n")
    f0 = 1 / (2 * math.pi * math.sqrt(l * c))              # textbook f0
    q = r * math.sqrt(c / l)                                # textbook parallel Q = R√(C/L)
    result = run_sweep(circuit, ["Z(a)"], start=f0 / 10, stop=f0 * 10, points=400)
    (peak,) = result["resonances"]
    assert peak["kind"] == "peak"
    assert peak["frequency_hz"] == pytest.approx(f0, rel=1e-6)       # textbook f0
    assert peak["q"] == pytest.approx(q, rel=1e-6)                     # textbook Q
    assert peak["bandwidth_hz"] == pytest.approx(f0 / q, rel=1e-6)    # textbook B = f0/Q
    # Z(f0) = R; near f0, |Z| ≈ R(1 − 2Q²δ²) with δ ≤ 1e-6 the frequency tolerance
    assert peak["value"]["mag"] == pytest.approx(r, rel=max(1e-9, 4 * q * q * 1e-12))


# check-values.md C19: 1000 kVA, 5.75 % transformer on a 480 V 60 Hz bus, S_sc =
# 17.3913 MVA; bank size in kvar → h
C19 = {300: 7.61387, 100: 13.1876, 200: 9.32505, 400: 6.5938, 600: 5.38382}


@pytest.mark.parametrize("kvar", sorted(C19))
def test_bank_resonance_order_c19(kvar):
    s_sc = 1000e3 / 0.0575                                  # C19: S_sc = S_t / z
    assert s_sc == pytest.approx(17.3913e6, rel=1e-6)       # C19
    x_l, x_c = 480 ** 2 / s_sc, 480 ** 2 / (kvar * 1e3)     # three-phase ohms, V_LL²/S
    w = 2 * math.pi * 60
    # one phase: the transformer's reactance from the shorted source to the bus, the bank
    # and a light resistive load across the bus (a parallel RLC: its peak is exactly at
    # 1/(2π√(LC)) whatever the load)
    circuit = read_circuit(f"frequency 60 Hz\nVs: voltage s -> 0 277 V\n"
                           f"Lt: inductor s -> bus {x_l / w!r} H\n"
                           f"Cb: capacitor bus -> 0 {1 / (w * x_c)!r} F\n"
                           f"Rl: resistor bus -> 0 100 ohm\n")
    result = run_sweep(circuit, ["Z(bus)"], start=60, stop=3000, points=300)
    (peak,) = [x for x in result["resonances"] if x["kind"] == "peak"]
    h = math.sqrt(s_sc / (kvar * 1e3))                      # C19: h = √(S_sc/Q_c)
    assert peak["harmonic_order"] == pytest.approx(h, rel=1e-6)            # C19 rule
    assert peak["harmonic_order"] == pytest.approx(C19[kvar], rel=1e-5)    # C19 values
    odd = 2 * round((h - 1) / 2) + 1
    near = abs(h - odd) <= 0.1 * odd
    # studies.md: a Z resonance within ±10 % of an odd order is a warning
    assert any(f"{odd}th harmonic" in w for w in result["warnings"]) == near
