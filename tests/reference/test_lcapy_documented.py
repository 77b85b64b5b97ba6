"""Circuits from lcapy's own documentation, translated into phasorbench's language and
solved both ways (reference library: lcapy, exact arithmetic), compared at 1e-12.

Each circuit names the page it comes from. Symbolic values of the originals are given
numbers here (said beside each); lcapy's default ω0 becomes a written frequency.
"""

from __future__ import annotations

import pytest

from phasorbench.workflow import read_circuit, solve_text

RTOL = 1e-12

DOCUMENTED = {
    # lcapy documentation, "Circuit analysis for novices", DC voltage divider
    # (https://lcapy.readthedocs.io/en/latest/novice.html): V 6, R1 2, R2 4; the page
    # gives V(2) = 4 and 1 A through each part. Here as a 50 Hz source (resistive: same).
    "novice_voltage_divider": """
frequency 50 Hz
V: voltage n1 -> 0 6
R1: resistor n1 -> n2 2
R2: resistor n2 -> 0 4
""",
    # same page, "AC voltage divider steady state response": V ac 6, R 2, C 4 (farads);
    # lcapy's symbolic ω0 is given as 1/(2π) Hz, so ω = 1 rad/s.
    "novice_ac_divider": """
frequency (1/(2*pi)) Hz
amplitudes peak
V: voltage n1 -> 0 6
R: resistor n1 -> n2 2
C: capacitor n2 -> 0 4
""",
    # lcapy documentation, module lcapy.circuit
    # (https://lcapy.readthedocs.io/en/latest/_autosummary/lcapy.circuit.html):
    # V_s fred 0, R_a fred 1, R_b 1 0, symbolic; here V_s = 10∠30° V, R_a = 3, R_b = 7.
    "circuit_module_divider": """
frequency 60 Hz
Vs: voltage fred -> 0 10 phase 30
Ra: resistor fred -> n1 3
Rb: resistor n1 -> 0 7
""",
    # lcapy documentation, class lcapy.circuit.Circuit
    # (https://lcapy.readthedocs.io/en/stable/_autosummary/lcapy.circuit.Circuit.html):
    # V1 1 0 V, R1 1 2 R, C1 2 0 C, symbolic; here V = 5 V, R = 1 kΩ, C = 1 µF, 159 Hz.
    "circuit_class_rc": """
frequency 159 Hz
V1: voltage n1 -> 0 5
R1: resistor n1 -> n2 1k
C1: capacitor n2 -> 0 1u
""",
}

#: Circuits of our own that used to lose digits, held to lcapy's exact answer too.
HARD = {
    "tiny_series_resistor": """
frequency 50 Hz
V1: voltage a -> 0 1
Rp: resistor a -> b 1 pΩ
R1: resistor b -> 0 1
""",
    "nano_ohm_and_pico_henry": """
frequency 50 Hz
V1: voltage a -> 0 1
Rn: resistor a -> b 1 nΩ
Lp: inductor b -> c 1 pH
R1: resistor c -> 0 1
""",
}
DOCUMENTED_AND_HARD = {**DOCUMENTED, **HARD}


def _phasor(d: dict) -> complex:
    return complex(d["re"], d["im"])


@pytest.mark.parametrize("name", list(DOCUMENTED_AND_HARD))
def test_documented_circuit_agrees_with_lcapy_to_1e12(name, lcapy_solve):
    text = DOCUMENTED_AND_HARD[name]
    circuit = read_circuit(text)
    result = solve_text(text)
    ref = lcapy_solve(circuit)                     # reference library: lcapy
    bad = []
    v_scale = max(abs(v) for v in ref.nodes.values())
    for node, want in ref.nodes.items():
        got = _phasor(result["nodes"][node])
        if abs(got - want) > RTOL * max(abs(want), 1e-3 * v_scale):
            bad.append(f"V({node}): {got!r} vs {want!r}")
    i_scale = max(abs(i) for i in ref.currents.values())
    for ename in circuit.elements:
        got = _phasor(result["elements"][ename]["current"])
        want = ref.currents[ename]
        if abs(got - want) > RTOL * max(abs(want), 1e-3 * i_scale):
            bad.append(f"I({ename}): {got!r} vs {want!r}")
    assert not bad, "\n".join(bad)


def test_documented_divider_values():
    # lcapy documentation, novice page: V(2) = 4 V and 1 A through R1 (as printed there)
    r = solve_text(DOCUMENTED["novice_voltage_divider"])
    assert _phasor(r["nodes"]["n2"]) == pytest.approx(4 + 0j, rel=1e-15)
    assert _phasor(r["elements"]["R1"]["current"]) == pytest.approx(1 + 0j, rel=1e-15)
