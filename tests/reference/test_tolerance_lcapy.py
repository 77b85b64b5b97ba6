"""Tolerance runs and worst corners re-solved by lcapy, an independent circuit library:
the batched engine's values of a few seeded draws and of the worst-case corner must
agree with lcapy's solve of the circuit with those part values."""

from __future__ import annotations

import dataclasses

import numpy as np

from phasorbench.studies.parameters import draw_scales, element_values
from phasorbench.studies.tolerance import monte_carlo, prepare, run_tolerance
from phasorbench.workflow import read_circuit

FILTER = """frequency 400 Hz
Cb = 2.2 uF tol 10%
V1: voltage in -> 0 10 V phase 20 deg
R1: resistor in -> a 47 ohm tol 5% normal
L1: inductor a -> out 22 mH tol 10%
L2: inductor out -> 0 10 mH tol 5%
K1: coupling L1 L2 k 0.3
C1: capacitor out -> 0 Cb
C2: capacitor a -> 0 Cb
Z1: impedance out -> 0 (30 + j10) tol 2%
"""


def _with_values(circuit, values: dict):
    elements = dict(circuit.elements)
    for name, value in values.items():
        if name in elements:
            elements[name] = dataclasses.replace(elements[name], value=complex(value))
    couplings = {}
    for name, c in circuit.couplings.items():
        m = values.get(name, c.m)
        couplings[name] = dataclasses.replace(c, m=float(np.real(m)),
                                              k=float(np.real(m)) / float(np.sqrt(
                                                  elements[c.inductors[0]].value.real *
                                                  elements[c.inductors[1]].value.real)))
    return dataclasses.replace(circuit, elements=elements, couplings=couplings)


def test_seeded_draws_agree_with_lcapy(lcapy_solve):
    circuit = read_circuit(FILTER)
    batch, *_ = prepare(circuit, ["V(out)", "I(C2)"])
    scales = draw_scales(batch.q, 1, 0, 3)
    got = batch.run(scales).values
    values = element_values(batch.q, scales)
    for k in range(3):
        ref = lcapy_solve(_with_values(circuit, {n: v[k] for n, v in values.items()}))
        # lcapy: the same circuit with this run's part values, 1e-9 relative
        assert abs(got["V(out)"][k] - ref.nodes["out"]) <= 1e-9 * abs(ref.nodes["out"])
        assert abs(got["I(C2)"][k] - ref.currents["C2"]) <= 1e-9 * abs(ref.currents["C2"])


def test_worst_corner_agrees_with_lcapy(lcapy_solve):
    circuit = read_circuit(FILTER)
    r = run_tolerance(circuit, ["V(out)"], runs=100, worst_case=True)
    batch, *_ = prepare(circuit, ["V(out)"])
    for sense in ("max", "min"):
        case = r["probes"]["V(out)"]["worst_case"]["mag"][sense]
        scales = np.array([[case["scales"][p.name] for p in batch.q.params]])
        values = element_values(batch.q, scales)
        ref = lcapy_solve(_with_values(circuit, {n: v[0] for n, v in values.items()}))
        # lcapy: |V(out)| at the reported worst point, 1e-9 relative
        assert abs(case["value"] - abs(ref.nodes["out"])) <= 1e-9 * abs(ref.nodes["out"])
    values, _ = monte_carlo(batch, 100, 1)
    mags = np.abs(values["V(out)"])
    wc = r["probes"]["V(out)"]["worst_case"]["mag"]
    # common practice, no source: no run leaves the worst-case bounds (uniform laws
    # stay in the box; the normal R1 may leave it, rarely, by little)
    assert mags.max() <= wc["max"]["value"] * 1.001 and mags.min() >= wc["min"]["value"] * 0.999
