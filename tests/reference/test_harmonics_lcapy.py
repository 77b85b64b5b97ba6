"""The harmonic study's per-order solves against lcapy, an independent circuit library.

Each order of a spectrum is its own circuit (superposition.circuit_at: every source at
its component there, elements following frequency); lcapy solves each of them from its
own component models, and every node voltage of every order must agree to 1e-9.
"""

from __future__ import annotations

import cmath
import math

from phasorbench.studies.harmonics import run_harmonics
from phasorbench.superposition import circuit_at, source_frequencies
from phasorbench.workflow import read_circuit

RTOL = 1e-9

PLANT = """frequency 50 Hz
Grid: voltage src -> 0 231 V spectrum 5: 1.5 %, 7: 1 % @ 180 deg
Rt: resistor src -> t 1.5 mohm
Lt: inductor t -> bus 30.6 uH
Load: impedance bus -> 0 0.62 + j0.38 ohm
Lr: inductor bus -> k 54 uH
Cb: capacitor k -> 0 13 mF
Drive: current bus -> 0 120 A phase -25 deg spectrum 5: 18 %, 7: 11 % @ 180 deg, 11: 6 %, 13: 4 %
"""


def test_every_order_agrees_with_lcapy(lcapy_solve):
    circuit = read_circuit(PLANT)
    result = run_harmonics(circuit, scan=False)
    frequencies = sorted(source_frequencies(circuit))
    assert len(frequencies) == 5
    for f in frequencies:
        key = str(round(f / 50))
        reference = lcapy_solve(circuit_at(circuit, f))           # lcapy, one order
        scale = max(abs(v) for v in reference.nodes.values())
        for node, data in result["nodes"].items():
            got = complex(data["orders"][key]["v"]["re"], data["orders"][key]["v"]["im"])
            want = reference.nodes[node]
            assert abs(got - want) <= RTOL * max(abs(want), 1e-3 * scale), (key, node)
        got_i = result["elements"]["Cb"]["orders"][key]["i"]
        want_i = reference.currents["Cb"]
        assert abs(complex(got_i["re"], got_i["im"]) - want_i) <= RTOL * abs(want_i)


def test_spectrum_components_turn_with_the_fundamental():
    # studies.md rule (common practice in harmonic studies): the 5th of a source at
    # phase −25° with '@ 0' sits at 5·(−25°) = −125°, the 7th '@ 180' at 180 − 175 = 5°;
    # magnitudes are the percent of the source's own magnitude.
    circuit = read_circuit(PLANT)
    fifth = circuit_at(circuit, 250.0).elements["Drive"].value
    seventh = circuit_at(circuit, 350.0).elements["Drive"].value
    assert abs(fifth - cmath.rect(0.18 * 120, math.radians(-125))) <= 1e-12 * 120
    assert abs(seventh - cmath.rect(0.11 * 120, math.radians(5))) <= 1e-12 * 120
    assert circuit_at(circuit, 550.0).elements["Grid"].value == 0
