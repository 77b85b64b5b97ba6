"""The sweep engine (studies/engine.py) against the single-frequency solve: the same
circuit solved at one frequency through the sweep and through solver.py (SuperLU on the
assembled system) must agree to 1e-12 relative, on the stacked dense path and on the
sparse path, for voltages, currents and Z probes (issue 13)."""

from __future__ import annotations

import numpy as np
import pytest

from phasorbench.studies.engine import DENSE_LIMIT, SweepEngine
from phasorbench.studies.probes import parse_probes
from phasorbench.workflow import read_circuit, solve_text


#: Sections of the test ladder whose system is solved banded (unknowns ≥ BAND_MIN).
BANDED = 30


def _ladder(sections: int) -> str:
    lines = ["Vs: voltage n0 -> 0 230 V phase 10 deg", "Is: current 0 -> n3 2 A phase -40 deg"]
    for k in range(sections):
        lines += [f"R{k}: resistor n{k} -> m{k} {1 + k % 4} ohm",
                  f"L{k}: inductor m{k} -> n{k + 1} {3 + k % 5} mH",
                  f"C{k}: capacitor n{k + 1} -> 0 {20 + 7 * (k % 3)} uF",
                  f"G{k}: resistor n{k + 1} -> 0 {300 + k} ohm"]
    lines += [f"F1: cccs 0 -> n2 0.3 sense R1", f"E1: vcvs e -> 0 2 sense n1 -> 0",
              "Re: resistor e -> n4 50 ohm", "K1: coupling L0 L2 k 0.4"]
    return "\n".join(lines) + "\n"


def _phasor(entry):
    return complex(entry["re"], entry["im"])


# stacked dense path; banded path; sparse path with the first point's ordering kept
@pytest.mark.parametrize("sections, frequencies", [
    (4, [37.0, 50.0, 411.3]), (BANDED, [37.0, 50.0, 411.3]),
    (DENSE_LIMIT, [37.0, 50.0, 411.3]),
    (DENSE_LIMIT, list(np.geomspace(20.0, 2000.0, 9)))])
def test_sweep_at_each_frequency_equals_the_single_solve(sections, frequencies):
    body = _ladder(sections)
    probes = ["V(n2)", f"V(n{sections})", "V(n1, n3)", "I(L1)", "I(Vs)", "I(F1)", "I(E1)",
              f"V(n{sections})/V(n1)"]
    circuit = read_circuit("frequency 50 Hz\n" + body)
    engine = SweepEngine(circuit, parse_probes(probes, circuit))
    assert engine.dense == (sections != DENSE_LIMIT)
    assert (engine._band is not None) == (sections == BANDED)
    response = engine.response(frequencies)
    for k, f in enumerate(frequencies):
        solved = solve_text(f"frequency {float(f)!r} Hz\n" + body)
        node, element = solved["nodes"], solved["elements"]
        want = {"V(n2)": _phasor(node["n2"]), f"V(n{sections})": _phasor(node[f"n{sections}"]),
                "V(n1, n3)": _phasor(node["n1"]) - _phasor(node["n3"]),
                "I(L1)": _phasor(element["L1"]["current"]),
                "I(Vs)": _phasor(element["Vs"]["current"]),
                "I(F1)": _phasor(element["F1"]["current"]),
                "I(E1)": _phasor(element["E1"]["current"])}
        want[f"V(n{sections})/V(n1)"] = want[f"V(n{sections})"] / _phasor(node["n1"])
        for probe, value in want.items():
            got = response.values[probe][k]
            # numpy/scipy numerics: one system solved two ways, 1e-12 relative
            assert abs(got - value) <= 1e-12 * abs(value), (probe, f, got, value)


@pytest.mark.parametrize("sections", [4, BANDED, DENSE_LIMIT])
def test_z_probe_equals_the_single_solve_with_a_test_current(sections):
    # studies.md: Z(a, b) is V(a, b) for 1 A pushed into a and drawn from b with every
    # independent source zeroed; the single solve of exactly that circuit is the check
    body = _ladder(sections)
    circuit = read_circuit("frequency 50 Hz\n" + body)
    engine = SweepEngine(circuit, parse_probes(["Z(n2)", "Z(n1, n3)"], circuit))
    zeroed = body.replace("230 V phase 10 deg", "0 V").replace("2 A phase -40 deg", "0 A")
    for f in (50.0, 733.0):
        values = engine.response([f]).values
        one = solve_text(f"frequency {f!r} Hz\n{zeroed}Itest: current 0 -> n2 1 A\n")
        two = solve_text(f"frequency {f!r} Hz\n{zeroed}Itest: current n3 -> n1 1 A\n")
        z1 = _phasor(one["nodes"]["n2"])
        z2 = _phasor(two["nodes"]["n1"]) - _phasor(two["nodes"]["n3"])
        assert abs(values["Z(n2)"][0] - z1) <= 1e-12 * abs(z1)     # numpy/scipy numerics
        assert abs(values["Z(n1, n3)"][0] - z2) <= 1e-12 * abs(z2)  # numpy/scipy numerics


@pytest.mark.parametrize("beside", [0, 30])           # stacked dense; banded
def test_a_singular_frequency_is_reported_and_the_rest_solved(beside):
    # an LC tank with nothing else at the node: singular exactly at 1/(2π√(LC)) (textbook)
    chain = "".join(f"Rc{k}: resistor r{k} -> r{k + 1} 1 ohm\nCc{k}: capacitor r{k + 1} -> 0 1 uF\n"
                    for k in range(beside))
    circuit = read_circuit("frequency 50 Hz\nIs: current 0 -> a 1 A\n"
                           "L1: inductor a -> 0 1 H\nC1: capacitor a -> 0 1 F\n" +
                           (f"Vs: voltage r0 -> 0 1 V\n{chain}" if beside else ""))
    engine = SweepEngine(circuit, parse_probes(["V(a)"], circuit))
    assert (engine._band is not None) == bool(beside)
    f0 = 1 / (2 * np.pi)
    response = engine.response([f0 / 2, f0, 2 * f0])
    assert response.singular == [1]
    v = response.values["V(a)"]
    assert np.isnan(v[1])
    for k, f in ((0, f0 / 2), (2, 2 * f0)):
        w = 2 * np.pi * f
        want = 1 / (1 / (1j * w) + 1j * w)         # Z of L ∥ C, formula
        assert abs(v[k] - want) <= 1e-12 * abs(want)


@pytest.mark.parametrize("sections", [4, BANDED, DENSE_LIMIT])
def test_an_engine_for_other_probes_gives_a_new_engines_bits(sections):
    # The scan's engine asked for one of its probes alone (the harmonic study's peak
    # refinement) after it solved other frequencies, its column order kept from them.
    body = _ladder(sections)
    circuit = read_circuit("frequency 50 Hz\n" + body)
    scan = SweepEngine(circuit, parse_probes(["Z(n2)", "Z(n1, n3)", "V(n2)"], circuit))
    scan.response(list(np.geomspace(20.0, 2000.0, 7)))
    zeroed = body.replace("230 V phase 10 deg", "0 V").replace("2 A phase -40 deg", "0 A")
    for probe in parse_probes(["Z(n1, n3)", "V(n2)"], circuit):
        alone = scan.for_probes([probe])
        assert alone.probes == [probe] and list(alone.response([50.0]).values) == [probe.text]
        for f in (50.0, 733.0, 1234.5):
            got = alone.response([f]).values[probe.text][0]
            new = SweepEngine(circuit, [probe]).response([f]).values[probe.text][0]
            # common practice, no source: the same arithmetic, so the same bits
            assert (got.real.hex(), got.imag.hex()) == (new.real.hex(), new.imag.hex())
            if probe.text == "V(n2)":
                want = _phasor(solve_text(f"frequency {f!r} Hz\n" + body)["nodes"]["n2"])
            else:
                two = solve_text(f"frequency {f!r} Hz\n{zeroed}Itest: current n3 -> n1 1 A\n")
                want = _phasor(two["nodes"]["n1"]) - _phasor(two["nodes"]["n3"])
            assert abs(got - want) <= 1e-12 * abs(want)      # numpy/scipy numerics
