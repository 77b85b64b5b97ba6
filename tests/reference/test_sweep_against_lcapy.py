"""The frequency response against lcapy: its transfer function or impedance of the same
circuit, solved once symbolically with the element values as numbers (a rational
function of s, tests/reference/lcapy_oracle.py ``response_with_lcapy``), evaluated at
every point of the sweep's grid in 60-digit arithmetic, must equal the sweep's value
to 1e-9 relative (issue 13). lcapy's expressions come nested, unsimplified (a ladder's
has some 50,000 operations): evaluated with common subexpressions shared they take
milliseconds, and in the stop band they cancel away some 30 digits, hence 60 digits
and a second evaluation at 90 that must agree, so the reference itself is known good.

Circuits of at most 12 nodes: first- and second-order filters, notches, a twin-T, a
bridge, a ladder, coupled inductors (by k and by M), an ideal transformer, controlled
source stages and Z probes, including a plant bus with a detuned bank. One lcapy solve
per circuit, 20 points each.
"""

from __future__ import annotations

import mpmath
import numpy as np
import pytest
import sympy as sp

from phasorbench.studies.sweep import run_sweep
from phasorbench.workflow import read_circuit

from .lcapy_oracle import load_lcapy, response_with_lcapy

RTOL = 1e-9
POINTS = 20
V_IN = "frequency 1 kHz\nVin: voltage in -> 0 1 V\n"
TRANSFER = ("transfer", ("in", "0"), ("out", "0"))

# name: (circuit text, our probe, lcapy query, from Hz, to Hz)
CASES = {
    "rc_low_pass": (V_IN + "R1: resistor in -> out 1 kohm\nC1: capacitor out -> 0 100 nF\n",
                    "V(out)/V(in)", TRANSFER, 10, 100e3),
    "rl_high_pass": (V_IN + "R1: resistor in -> out 50 ohm\nL1: inductor out -> 0 10 mH\n",
                     "V(out)/V(in)", TRANSFER, 10, 100e3),
    "series_rlc_band_pass": (V_IN + "L1: inductor in -> a 10 mH\nC1: capacitor a -> out 1 uF\n"
                             "R1: resistor out -> 0 100 ohm\n",
                             "V(out)/V(in)", TRANSFER, 100, 10e3),
    "parallel_tank_notch": (V_IN + "R1: resistor in -> t 10 ohm\nL1: inductor t -> out 10 mH\n"
                            "C1: capacitor t -> out 1 uF\nR2: resistor out -> 0 100 ohm\n",
                            "V(out)/V(in)", TRANSFER, 100, 10e3),
    "loaded_twin_t": (V_IN + "Ra: resistor in -> m 1 kohm\nRb: resistor m -> out 1 kohm\n"
                      "Cc: capacitor m -> 0 200 nF\nCa: capacitor in -> k 100 nF\n"
                      "Cb: capacitor k -> out 100 nF\nRc: resistor k -> 0 500 ohm\n"
                      "RL: resistor out -> 0 47 kohm\n",
                      "V(out)/V(in)", TRANSFER, 10, 100e3),
    # an unbalanced inductance bridge read across its detector
    "inductance_bridge": (V_IN + "R1: resistor in -> a 1 kohm\nR2: resistor a -> x 200 ohm\n"
                          "Lx: inductor x -> 0 50 mH\nR3: resistor in -> b 500 ohm\n"
                          "R4: resistor b -> 0 150 ohm\nC4: capacitor b -> 0 220 nF\n"
                          "Rd: resistor a -> b 10 kohm\n",
                          "V(a, b)/V(in)", ("transfer", ("in", "0"), ("a", "b")), 10, 100e3),
    "lc_ladder_ten_nodes": (V_IN + "Rs: resistor in -> n1 50 ohm\n"
                            + "".join(f"C{k}: capacitor n{k} -> 0 {1 + k % 3} uF\n"
                                      f"L{k}: inductor n{k} -> n{k + 1} {2 + k % 2} mH\n"
                                      for k in range(1, 9))
                            + "RL: resistor n9 -> 0 50 ohm\n",
                            "V(n9)/V(in)", ("transfer", ("in", "0"), ("n9", "0")), 100, 20e3),
    "tuned_coils_by_k": (V_IN + "Cp: capacitor in -> p 100 nF\nLp: inductor p -> 0 25.33 uH\n"
                         "Rp: resistor s -> 0 0.2 ohm\nLs: inductor s -> r 25.33 uH\n"
                         "Cs: capacitor r -> out 100 nF\nRL: resistor out -> 0 8 ohm\n"
                         "K1: coupling Lp Ls k 0.35\n",
                         "V(out)/V(in)", TRANSFER, 30e3, 300e3),
    "coupled_coils_by_m_impedance": ("frequency 1 kHz\nIs: current 0 -> a 1 A\n"
                                     "R1: resistor a -> b 10 ohm\nLp: inductor b -> 0 10 mH\n"
                                     "Ls: inductor c -> 0 40 mH\nRL: resistor c -> 0 50 ohm\n"
                                     "CL: capacitor c -> 0 2 uF\nK1: coupling Lp Ls M 10 mH\n",
                                     "Z(a)", ("impedance", "a", "0"), 10, 100e3),
    "transformer_to_floating_load": (V_IN + "R1: resistor in -> p 5 ohm\n"
                                     "T1: transformer p -> 0, s1 -> s2 ratio 10:1\n"
                                     "RL: resistor s1 -> out 0.1 ohm\n"
                                     "CL: capacitor out -> s2 5 mF\n",
                                     "V(p)/V(in)", ("transfer", ("in", "0"), ("p", "0")),
                                     10, 10e3),
    "common_source_with_miller_capacitance": (
        V_IN + "Rs: resistor in -> g 600 ohm\nRg: resistor g -> 0 47 kohm\n"
        "Cgs: capacitor g -> 0 10 pF\nCgd: capacitor g -> out 2 pF\n"
        "Gm: vccs out -> 0 38 mS sense g -> 0\nRd: resistor out -> 0 4.7 kohm\n"
        "CL: capacitor out -> 0 22 pF\n",
        "V(out)/V(in)", TRANSFER, 1e3, 1e9),
    "current_and_transresistance_stages": (
        V_IN + "R1: resistor in -> a 1 kohm\nC1: capacitor a -> 0 10 nF\n"
        "F1: cccs 0 -> b 0.98 sense R1\nRb: resistor b -> 0 2 kohm\n"
        "Cb: capacitor b -> 0 4.7 nF\nH1: ccvs c -> 0 150 ohm sense Rb\n"
        "Rc: resistor c -> out 1 kohm\nCo: capacitor out -> 0 10 nF\n"
        "E1: vcvs d -> 0 2 sense out -> 0\nRo: resistor d -> 0 10 kohm\n",
        "V(d)/V(in)", ("transfer", ("in", "0"), ("d", "0")), 10, 1e6),
    "pi_network_between_nodes": ("frequency 1 kHz\nVs: voltage s -> 0 10 V\n"
                                 "Rs: resistor s -> a 10 ohm\nC1: capacitor a -> 0 1 uF\n"
                                 "L1: inductor a -> b 1 mH\nC2: capacitor b -> 0 2 uF\n"
                                 "R1: resistor b -> 0 10 ohm\n",
                                 "Z(a, b)", ("impedance", "a", "b"), 100, 100e3),
    "plant_bus_with_detuned_bank": ("frequency 50 Hz\nGrid: voltage src -> 0 231 V\n"
                                    "Rt: resistor src -> t 1.5 mohm\n"
                                    "Lt: inductor t -> bus 30.6 uH\n"
                                    "Rload: resistor bus -> m 0.137 ohm\n"
                                    "Lload: inductor m -> 0 326 uH\n"
                                    "Drives: current bus -> 0 260 A phase -20 deg\n"
                                    "Lr: inductor bus -> k 57 uH\n"
                                    "Rr: resistor k -> kc 1 mohm\n"
                                    "Cbank: capacitor kc -> 0 12.4 mF\n",
                                    "Z(bus)", ("impedance", "bus", "0"), 50, 2500),
}


@pytest.fixture(scope="module")
def lcapy_ready():
    load_lcapy()


def _evaluate(function, frequencies, digits):
    """lcapy's expression in s at s = j2πf, in ``digits``-digit arithmetic."""
    with mpmath.workdps(digits):
        return np.array([complex(function(2j * mpmath.pi * mpmath.mpf(float(f))))
                         for f in frequencies])


@pytest.mark.parametrize("name", sorted(CASES))
def test_sweep_equals_lcapy_response(name, lcapy_ready):
    text, probe, query, start, stop = CASES[name]
    circuit = read_circuit(text, name)
    assert len(circuit.nodes()) <= 12
    result = run_sweep(circuit, [probe], start=start, stop=stop, points=POINTS)
    data = result["probes"][probe]
    ours = np.array(data["re"], dtype=float) + 1j * np.array(data["im"], dtype=float)
    expr = response_with_lcapy(circuit, query)     # one lcapy solve per circuit
    assert expr.free_symbols and {x.name for x in expr.free_symbols} == {"s"}
    function = sp.lambdify(list(expr.free_symbols), expr, modules="mpmath", cse=True)
    theirs = _evaluate(function, result["frequencies_hz"], 60)
    again = _evaluate(function, result["frequencies_hz"], 90)
    assert np.all(np.abs(again - theirs) <= 1e-15 * np.abs(again))   # the reference holds
    # lcapy's transfer function / impedance at the same points, 1e-9 relative (issue 13)
    error = np.abs(ours - theirs) / np.abs(theirs)
    assert error.max() <= RTOL, (name, float(error.max()))
    # the response is not flat: a slip in a frequency-dependent stamp would show
    assert np.ptp(np.abs(theirs)) > 1e-3 * np.abs(theirs).max()
