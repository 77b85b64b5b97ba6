"""Thevenin/Norton port equivalents against check-values.md C29/C30, the open-circuit /
short-circuit definition (solved with the circuit language itself), and lcapy.
"""

from __future__ import annotations

import math

import pytest

from phasorbench.errors import CircuitError
from phasorbench.model import Element
from phasorbench.tools import port_equivalent
from phasorbench.workflow import read_circuit, solve_text

from tests.helpers import current, node

from .quoting import figures

# check-values C29: 120∠0° V → Z1 = 4+j3 → m; Z2 = −j10 m→0; Z3 = 2+j5 m → terminal t.
C29 = """frequency 50 Hz
Vs: voltage s -> 0 120 V
Z1: impedance s -> m 4 + j3 ohm
Z2: impedance m -> 0 -j10 ohm
Z3: impedance m -> t 2 + j5 ohm
"""


def _c(ph: dict) -> complex:
    return complex(ph["re"], ph["im"])


def test_thevenin_and_norton_of_the_check_network():
    # check-values C29 (formula): V_th = 148.842 V∠-29.7449° (129.231 − j73.8462),
    # Z_th = 8.15385 + j5.76923 Ω (9.98845∠35.2812°), I_N = 14.9014 A∠-65.0261°.
    r = port_equivalent(read_circuit(C29), "t", "0")
    assert r["equivalent"] == "finite"
    assert figures(r["thevenin_v"]["mag"]) == 148.842           # C29
    assert figures(r["thevenin_v"]["deg"]) == -29.7449          # C29
    assert figures(r["thevenin_v"]["re"]) == 129.231            # C29
    assert figures(r["thevenin_v"]["im"]) == -73.8462           # C29
    assert figures(r["thevenin_z"]["re"]) == 8.15385            # C29
    assert figures(r["thevenin_z"]["im"]) == 5.76923            # C29
    assert figures(r["thevenin_z"]["mag"]) == 9.98845           # C29
    assert figures(r["thevenin_z"]["deg"]) == 35.2812           # C29
    assert figures(r["norton_i"]["mag"]) == 14.9014             # C29
    assert figures(r["norton_i"]["deg"]) == -65.0261            # C29
    assert _c(r["norton_y"]) == pytest.approx(1 / _c(r["thevenin_z"]), rel=1e-12)


def test_maximum_power_transfer_of_the_check_network():
    # check-values C30 (conjugate-match theorem): Z_L = Z_th* = 8.15385 − j5.76923 Ω takes
    # P_max = |V_th|²/(4R_th) = 679.245 W; R_L = |Z_th| = 9.98845 Ω takes 610.558 W.
    r = port_equivalent(read_circuit(C29), "t", "0")
    assert figures(r["matched_load_z"]["re"]) == 8.15385        # C30
    assert figures(r["matched_load_z"]["im"]) == -5.76923       # C30
    assert figures(r["max_power_w"]) == 679.245                 # C30
    assert figures(r["resistive_load_ohm"]) == 9.98845          # C30
    assert figures(r["resistive_power_w"]) == 610.558           # C30
    # Solving the circuit with each load attached gives those powers (C30).
    z = _c(r["matched_load_z"])
    matched = solve_text(C29 + f"ZL: impedance t -> 0 {z.real!r} - j{-z.imag!r} ohm\n")
    assert matched["elements"]["ZL"]["p_w"] == pytest.approx(r["max_power_w"], rel=1e-9)
    resistive = solve_text(C29 + f"RL: resistor t -> 0 {r['resistive_load_ohm']!r} ohm\n")
    assert resistive["elements"]["RL"]["p_w"] == pytest.approx(r["resistive_power_w"],
                                                               rel=1e-9)


BRIDGE = """frequency 1 kHz
Vs: voltage s -> 0 10 V phase 30 deg
R1: resistor s -> a 100 ohm
C1: capacitor a -> 0 1 uF
L1: inductor a -> b 10 mH
R2: resistor b -> 0 47 ohm
G1: vccs b -> 0 0.01 sense a -> 0
Is: current 0 -> b 20 mA phase -45 deg
R3: resistor a -> c 220 ohm
R4: resistor c -> b 330 ohm
"""


@pytest.mark.parametrize("text, a, b", [(C29, "t", "0"), (BRIDGE, "c", "0"),
                                        (BRIDGE, "a", "b")])
def test_thevenin_agrees_with_the_open_and_short_circuit_definition(text, a, b):
    # Thevenin's theorem (any circuit-theory textbook, e.g. Alexander & Sadiku ch. 4 and
    # 10): V_th is the open-circuit voltage, I_N the short-circuit current, Z_th = V_th/I_N.
    # Both are solved here with a plain 0 V source written in the circuit language.
    r = port_equivalent(read_circuit(text), a, b)
    open_circuit = solve_text(text)
    v_oc = node(open_circuit, a) - node(open_circuit, b)
    shorted = solve_text(text + f"Vshort: voltage {a} -> {b} 0 V\n")
    i_sc = current(shorted, "Vshort")
    assert _c(r["thevenin_v"]) == pytest.approx(v_oc, rel=1e-10)
    assert _c(r["norton_i"]) == pytest.approx(i_sc, rel=1e-9)
    assert _c(r["thevenin_z"]) == pytest.approx(v_oc / i_sc, rel=1e-9)


def test_peak_amplitudes_halve_the_power():
    # results-contract.md: S = ½·V·I* for peak phasors; the same network at 120√2 V peak.
    text = C29.replace("frequency 50 Hz", "frequency 50 Hz\namplitudes peak").replace(
        "120 V", f"{120 * math.sqrt(2)!r} V")
    rms = port_equivalent(read_circuit(C29), "t", "0")
    peak = port_equivalent(read_circuit(text), "t", "0")
    assert peak["max_power_w"] == pytest.approx(rms["max_power_w"], rel=1e-12)   # C30
    assert peak["thevenin_v"]["mag"] == pytest.approx(rms["thevenin_v"]["mag"] * math.sqrt(2),
                                                      rel=1e-12)


def test_a_port_across_an_ideal_source_has_no_norton_equivalent():
    r = port_equivalent(read_circuit(C29), "s", "0")
    assert r["equivalent"] == "ideal-voltage"
    assert r["thevenin_z"]["mag"] == 0.0
    assert r["thevenin_v"]["mag"] == pytest.approx(120.0, rel=1e-12)
    assert r["norton_i"] is None and r["matched_load_z"] is None and r["max_power_w"] is None
    assert r["notes"]


def test_a_port_through_an_ideal_transformer_on_an_ideal_source():
    # check-values C33: 10:1 ideal transformer on 240 V gives 24 V on the secondary.
    text = """frequency 50 Hz
V1: voltage a -> 0 240 V
T1: transformer a -> 0, s -> r ratio 10:1
RL: resistor s -> r 8 ohm
"""
    r = port_equivalent(read_circuit(text), "s", "r")
    assert r["equivalent"] == "ideal-voltage" and r["norton_i"] is None
    assert r["thevenin_v"]["mag"] == pytest.approx(24.0, rel=1e-12)        # C33


def test_a_port_with_no_conductive_path_is_an_open_circuit():
    # A transformer secondary has no conductive path to the primary side: a load from the
    # secondary to ground has no return path (common practice, no source).
    text = """frequency 50 Hz
V1: voltage a -> 0 240 V
Rs: resistor a -> p 2 ohm
T1: transformer p -> 0, s -> r ratio 10:1
RL: resistor s -> r 8 ohm
"""
    r = port_equivalent(read_circuit(text), "s", "0")
    assert r["equivalent"] == "no-path"
    assert r["thevenin_v"] is None and r["thevenin_z"] is None
    assert r["norton_i"]["mag"] == 0.0 and r["norton_y"]["mag"] == 0.0
    assert "no conductive path" in r["notes"][0]
    # By definition: a 0 V source from s to ground carries (round-off of) nothing.
    shorted = solve_text(text + "Vshort: voltage s -> 0 0 V\n")
    assert abs(current(shorted, "Vshort")) < 1e-12 * abs(current(shorted, "RL"))


def test_a_port_reflected_through_a_transformer():
    # check-values C33: Z seen through n:1 is n²·Z; here the secondary sees the source
    # resistance divided by n² (2 Ω / 100) in parallel with nothing else.
    text = """frequency 50 Hz
V1: voltage a -> 0 240 V
Rs: resistor a -> p 2 ohm
T1: transformer p -> 0, s -> r ratio 10:1
RL: resistor s -> r 8 ohm
"""
    r = port_equivalent(read_circuit(text), "s", "r")
    z = 1 / (1 / 0.02 + 1 / 8)                                  # n²-rule, C33
    assert _c(r["thevenin_z"]) == pytest.approx(z, rel=1e-12)


def test_negative_resistance_has_no_maximum_power():
    # A vccs feeding current back in proportion to the port voltage acts as a negative
    # conductance: the conjugate match is unbounded (common practice, no source).
    text = """frequency 50 Hz
Vs: voltage s -> 0 10 V
R1: resistor s -> a 10 ohm
G1: vccs 0 -> a 0.2 sense a -> 0
"""
    r = port_equivalent(read_circuit(text), "a", "0")
    assert r["thevenin_z"]["re"] == pytest.approx(1 / (0.1 - 0.2), rel=1e-12)  # 1/(G − g)
    assert r["max_power_w"] is None and r["resistive_power_w"] is None
    assert r["notes"]


@pytest.mark.parametrize("a, b, words", [("t", "t", "same node"), ("x", "0", "not a node"),
                                         ("gnd", "tt", "did you mean")])
def test_bad_ports_are_input_errors(a, b, words):
    with pytest.raises(CircuitError) as info:
        port_equivalent(read_circuit(C29), a, b)
    d = info.value.diagnostics[0]
    assert words in d.message + " " + d.hint


def test_ground_may_be_written_gnd():
    assert port_equivalent(read_circuit(C29), "t", "GND")["b"] == "0"


# --- lcapy, an independent symbolic solver -------------------------------------------------

@pytest.fixture(scope="module")
def lcapy_solve():
    from tests.reference.lcapy_oracle import load_lcapy, solve_with_lcapy
    load_lcapy()
    return solve_with_lcapy


# Small on purpose: lcapy's symbolic solve of BRIDGE alone takes about ten seconds.
AMPLIFIER = """frequency 1 kHz
Vs: voltage s -> 0 2 V phase 20 deg
R1: resistor s -> a 1 kohm
C1: capacitor a -> 0 100 nF
E1: vcvs e -> 0 -5 sense a -> 0
Ro: resistor e -> out 50 ohm
Rf: resistor out -> a 10 kohm
"""


@pytest.mark.parametrize("text, a, b", [(C29, "t", "0"), (AMPLIFIER, "out", "0")])
def test_thevenin_against_lcapy(lcapy_solve, text, a, b):
    # lcapy (reference library) solves the open circuit and the circuit with a 1 A test
    # current drawn from a to b: V_th = V_oc, Z_th = V_oc − V(1 A).
    circuit = read_circuit(text)
    r = port_equivalent(circuit, a, b)
    open_circuit = lcapy_solve(circuit)
    probed = read_circuit(text)
    probed.elements["Iprobe"] = Element("Iprobe", "current", (a, b), 1.0 + 0j)
    loaded = lcapy_solve(probed)
    v_oc = open_circuit.voltage(a, b)
    z_th = v_oc - loaded.voltage(a, b)
    assert _c(r["thevenin_v"]) == pytest.approx(v_oc, rel=1e-9)       # lcapy
    assert _c(r["thevenin_z"]) == pytest.approx(z_th, rel=1e-9)       # lcapy
