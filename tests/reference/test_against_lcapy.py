"""phasorbench's solver against lcapy, an independent circuit library.

Two parts. First the oracle itself (lcapy_oracle.py) is held to hand formulas on
circuits built directly from the model, so a convention slip in the translation
(peak vs RMS, current directions, dot ends, the resistor-only trap, a floating part)
cannot pass as agreement. Then circuits written in phasorbench's own language are
solved by phasorbench and by lcapy, and every node voltage, element voltage and
element current must agree to 1e-9.
"""

from __future__ import annotations

import cmath
import math

import pytest

from phasorbench.model import CONTROLLED_KINDS, ELEMENT_KINDS, Circuit, Coupling, Element
from phasorbench.workflow import read_circuit, solve_text

from .lcapy_oracle import part_references

# --- the oracle against hand formulas ------------------------------------------------

RTOL = 1e-9


def _close(got: complex, want: complex, scale: float) -> bool:
    """Equal to RTOL relative; values far below ``scale`` (the largest magnitude of
    their kind in the circuit) are judged on a floor of a thousandth of it."""
    return abs(got - want) <= RTOL * max(abs(want), 1e-3 * scale)


def _circuit(frequency, amplitudes, elements, couplings=()):
    return Circuit(
        title=None,
        frequency=frequency,
        amplitudes=amplitudes,
        elements={e.name: e for e in elements},
        couplings={c.name: c for c in couplings},
    )


def _polar(mag, deg):
    return cmath.rect(mag, math.radians(deg))


def test_oracle_resistor_only_divider_keeps_the_source_phase(lcapy_solve):
    # lcapy solves resistor-only circuits in the time domain, where .phasor() drops
    # the sine part; the oracle must still return 5 V at 30 degrees.
    c = _circuit(50.0, "rms", [
        Element("V1", "voltage", ("a", "0"), _polar(10.0, 30.0)),
        Element("R1", "resistor", ("a", "b"), 5.0),
        Element("R2", "resistor", ("b", "0"), 5.0),
    ])
    ref = lcapy_solve(c)
    want = _polar(5.0, 30.0)                      # voltage divider, formula
    assert _close(ref.nodes["b"], want, 10.0)     # common practice, no source
    assert _close(ref.currents["R1"], _polar(1.0, 30.0), 1.0)   # Ohm's law, formula
    # A source's current runs + to - through it: the negative of the load current.
    assert _close(ref.currents["V1"], -_polar(1.0, 30.0), 1.0)  # passive sign, circuit-language.md


def test_oracle_series_rlc_at_resonance_in_peak_amplitudes(lcapy_solve):
    # Check value C5: Alexander & Sadiku, Fundamentals of Electric Circuits, ch. 14
    # series-resonance example (from memory): 20 V peak, R 2, L 1 mH, C 0.4 uF,
    # w0 = 50000 rad/s, I = 10 A peak, V_L = V_C = 500 V peak.
    c = _circuit(50000.0 / (2 * math.pi), "peak", [
        Element("V1", "voltage", ("a", "0"), 20.0),
        Element("R1", "resistor", ("a", "b"), 2.0),
        Element("L1", "inductor", ("b", "c"), 1e-3),
        Element("C1", "capacitor", ("c", "0"), 0.4e-6),
    ])
    ref = lcapy_solve(c)
    assert _close(ref.currents["L1"], 10.0, 10.0)                    # Alexander & Sadiku ch. 14
    assert _close(ref.voltage("b", "c"), 500j, 500.0)                # Alexander & Sadiku ch. 14
    assert _close(ref.nodes["c"], -500j, 500.0)                      # Alexander & Sadiku ch. 14


def test_oracle_current_source_and_vccs_push_into_their_second_node(lcapy_solve):
    # circuit-language.md: `current a -> b` pushes its current into b; a vccs too.
    c = _circuit(60.0, "rms", [
        Element("I1", "current", ("0", "a"), _polar(2.0, 90.0)),
        Element("R1", "resistor", ("a", "0"), 5.0),
        Element("G1", "vccs", ("0", "b"), 0.1, sense_nodes=("a", "0")),
        Element("L1", "inductor", ("b", "0"), 10e-3),
    ])
    ref = lcapy_solve(c)
    va = _polar(10.0, 90.0)                                     # Ohm's law, formula
    ig = 0.1 * va
    xl = 2 * math.pi * 60.0 * 10e-3
    assert _close(ref.nodes["a"], va, 10.0)                     # common practice, no source
    assert _close(ref.currents["I1"], _polar(2.0, 90.0), 2.0)   # common practice, no source
    assert _close(ref.currents["G1"], ig, 2.0)                  # common practice, no source
    assert _close(ref.nodes["b"], ig * 1j * xl, 10.0)           # X_L = wL, formula


def test_oracle_controlled_sources_follow_their_definitions(lcapy_solve):
    # circuit-language.md kinds table: V = gain*V(c,d), V = gain*I(E), I = gain*I(E).
    w = 2 * math.pi * 1000.0
    c = _circuit(1000.0, "peak", [
        Element("V1", "voltage", ("a", "0"), _polar(3.0, -20.0)),
        Element("R1", "resistor", ("a", "b"), 100.0),
        Element("C1", "capacitor", ("b", "0"), 1e-6),
        Element("E1", "vcvs", ("e", "0"), -4.0, sense_nodes=("b", "0")),
        Element("Re", "resistor", ("e", "0"), 50.0),
        Element("H1", "ccvs", ("h", "0"), 20.0, sense_element="C1"),
        Element("Rh", "resistor", ("h", "0"), 10.0),
        Element("F1", "cccs", ("0", "f"), 3.0, sense_element="R1"),
        Element("Rf", "resistor", ("f", "0"), 7.0),
    ])
    ref = lcapy_solve(c)
    zc = 1 / (1j * w * 1e-6)
    i1 = _polar(3.0, -20.0) / (100.0 + zc)          # series RC, formula
    vb = i1 * zc
    scale = 100.0
    assert _close(ref.nodes["b"], vb, scale)                    # common practice, no source
    assert _close(ref.nodes["e"], -4.0 * vb, scale)             # vcvs definition
    assert _close(ref.currents["E1"], -(-4.0 * vb) / 50.0, 1.0)  # + to - through the source
    assert _close(ref.nodes["h"], 20.0 * i1, scale)             # ccvs definition
    assert _close(ref.currents["F1"], 3.0 * i1, 1.0)            # cccs definition
    assert _close(ref.nodes["f"], 3.0 * i1 * 7.0, scale)        # pushed into f, through Rf


def test_oracle_impedance_and_admittance(lcapy_solve):
    c = _circuit(50.0, "rms", [
        Element("V1", "voltage", ("a", "0"), 100.0),
        Element("Z1", "impedance", ("a", "b"), 3 + 4j),
        Element("Y1", "admittance", ("b", "0"), 0.1 - 0.2j),
    ])
    ref = lcapy_solve(c)
    i = 100.0 / (3 + 4j + 1 / (0.1 - 0.2j))                     # series Z, formula
    assert _close(ref.currents["Z1"], i, abs(i))                # common practice, no source
    assert _close(ref.currents["Y1"], i, abs(i))                # common practice, no source
    assert _close(ref.nodes["b"], i / (0.1 - 0.2j), 100.0)      # common practice, no source


@pytest.mark.parametrize("by", ["k", "M"])
def test_oracle_coupled_inductors(by, lcapy_solve):
    # Check value C34 (formula): L1 10 mH, L2 40 mH, k 0.5 (M 10 mH), 10 V RMS 1 kHz
    # through R1 10 ohm into L1, L2 loaded by 50 ohm: Z_in = 13.006+47.7219j ohm,
    # |I1| = 0.202173 A, |I2| = 0.0495719 A.
    coupling = Coupling("K1", ("Lp", "Ls"), k=0.5) if by == "k" else Coupling("K1", ("Lp", "Ls"), m=10e-3)
    c = _circuit(1000.0, "rms", [
        Element("V1", "voltage", ("a", "0"), 10.0),
        Element("R1", "resistor", ("a", "b"), 10.0),
        Element("Lp", "inductor", ("b", "0"), 10e-3),
        Element("Ls", "inductor", ("c", "0"), 40e-3),
        Element("RL", "resistor", ("c", "0"), 50.0),
    ], [coupling])
    ref = lcapy_solve(c)
    w = 2 * math.pi * 1000.0
    zm = 1j * w * 10e-3
    z_in = 10.0 + 1j * w * 10e-3 - zm * zm / (50.0 + 1j * w * 40e-3)   # reflected impedance, formula
    i1 = 10.0 / z_in
    i2 = -zm * i1 / (50.0 + 1j * w * 40e-3)      # into the dotted end of Ls
    assert abs(z_in - (13.006 + 47.7219j)) < 1e-3                      # C34 check value
    assert _close(ref.currents["Lp"], i1, abs(i1))                      # C34 formula
    assert _close(ref.currents["Ls"], i2, abs(i1))                      # C34 formula, dots on first nodes
    assert abs(abs(ref.currents["Lp"]) - 0.202173) < 1e-6               # C34 check value
    assert abs(abs(ref.currents["Ls"]) - 0.0495719) < 1e-7              # C34 check value


@pytest.mark.parametrize("floating", [False, True])
def test_oracle_ideal_transformer(floating, lcapy_solve):
    # Check value C33 (formula): 10:1, 240 V primary, load 8+j6 ohm: V2 = 24 V,
    # I2 = 2.4 A at -36.8699 deg, I1 = 0.24 A at -36.8699 deg.
    n2 = "s2" if floating else "0"
    c = _circuit(50.0, "rms", [
        Element("V1", "voltage", ("p", "0"), 240.0),
        Element("T1", "transformer", ("p", "0", "s1", n2), 10.0),
        Element("ZL", "impedance", ("s1", n2), 8 + 6j),
    ])
    ref = lcapy_solve(c)
    i_load = _polar(2.4, -36.8699)
    assert _close(ref.voltage("s1", n2), 24.0, 240.0)                       # C33
    assert abs(ref.currents["ZL"] - i_load) < 1e-5                          # C33, 6 figures
    assert _close(ref.currents["T1"], 24.0 / (8 + 6j) / 10.0, 2.4)          # C33: I1 = I2/n
    # The secondary current runs from p2 through the winding: -(load current).
    assert _close(ref.secondary_currents["T1"], -24.0 / (8 + 6j), 2.4)      # C33: I1 = -I2/n
    # circuit-language.md: a part with no path to ground is measured from one of its nodes.
    assert ref.reference["s1"] == ("s1" if floating else "0")


# --- phasorbench against lcapy --------------------------------------------------------

#: Circuits in phasorbench's language; invented values, small enough for lcapy.
CIRCUITS = {
    "rc_divider_rms_phase": """
title RC divider
frequency 50 Hz
amplitudes rms
Vs: voltage a -> 0 230 V phase 30 deg
R1: resistor a -> b 100 ohm
C1: capacitor b -> 0 10 uF
""",
    # Resistors only: the case lcapy solves in the time domain.
    "resistor_bridge_peak": """
frequency 60 Hz
amplitudes peak
Vb: voltage top -> 0 12 V phase -40 deg
Ra: resistor top -> l 1k
Rb: resistor top -> r 2.2k
Rc: resistor l -> 0 3.3k
Rd: resistor r -> 0 1.5k
Rm: resistor l -> r 470 ohm
""",
    # Resistors only again (time domain in lcapy), with current-sensing sources and a
    # floating transformer secondary: zero-volt sensing sources and ties in that path.
    "resistive_controlled_floating": """
frequency 50 Hz
amplitudes peak
Vs: voltage a -> 0 10 V phase 35 deg
Ra: resistor a -> b 100 ohm
Rb: resistor b -> 0 50 ohm
Hc: ccvs c -> 0 20 ohm sense Rb
T1: transformer c -> 0, s1 -> s2 ratio 2:1
Rs: resistor s1 -> s2 8 ohm
Fm: cccs 0 -> d 3 sense Rs
Rd: resistor d -> 0 4 ohm
""",
    "rlc_impedance_admittance_peak": """
frequency 1 kHz
amplitudes peak
Vs: voltage in -> 0 10 V phase 15 deg
Zs: impedance in -> a 4 + j3 ohm
L1: inductor a -> b 2.2 mH
C1: capacitor b -> c 4.7 uF
Ya: admittance c -> 0 0.02 - j0.01 S
Rp: resistor c -> 0 150 ohm
""",
    "parallel_rlc_current_source_rad": """
frequency 3978.87 Hz
Is: current 0 -> top 10 mA phase 0.5 rad
Rp: resistor top -> 0 8k
Lp: inductor top -> 0 0.2 mH
Cp: capacitor top -> 0 8 uF
Rs: resistor top -> mid 100 ohm
Cs: capacitor mid -> 0 1 uF
""",
    "vcvs_stage_with_feedback": """
frequency 400 Hz
amplitudes rms
Vin: voltage src -> 0 1 V phase 45 deg
Rin: resistor src -> in 1k
Cin: capacitor in -> 0 100 nF
Amp: vcvs out -> 0 -20 sense in -> 0
Rf: resistor out -> fb 10k
Cf: capacitor fb -> in 47 nF
Rl: resistor out -> 0 2k
""",
    "vccs_differential_sense": """
frequency 10 kHz
amplitudes peak
V1: voltage p -> 0 2 V phase 10 deg
V2: voltage q -> 0 1.5 V phase -70 deg
Ra: resistor p -> g1 1k
Rb: resistor q -> g2 1k
Rg: resistor g1 -> g2 2k
Gm: vccs 0 -> d 5 mS sense g1 -> g2
Rd: resistor d -> 0 4.7k
Cd: capacitor d -> 0 2.2 nF
""",
    "ccvs_sensing_a_resistor": """
frequency 50 Hz
Vs: voltage a -> 0 100 V
Rsh: resistor a -> b 2 ohm
Lload: inductor b -> 0 50 mH
Tr: ccvs c -> 0 25 ohm sense Rsh
Rout: resistor c -> d 10 ohm
Cout: capacitor d -> 0 200 uF
""",
    "cccs_sensing_a_capacitor_peak": """
frequency 2 kHz
amplitudes peak
Vs: voltage a -> 0 5 V phase 60 deg
Rs: resistor a -> b 330 ohm
Cx: capacitor b -> 0 220 nF
Mir: cccs 0 -> c 0.98 sense Cx
Rc: resistor c -> 0 1k
Lc: inductor c -> 0 10 mH
""",
    "coupling_by_k": """
frequency 1 kHz
amplitudes rms
Vs: voltage a -> 0 10 V
R1: resistor a -> b 10 ohm
Lp: inductor b -> 0 10 mH
Ls: inductor c -> 0 40 mH
Link: coupling Lp Ls k 0.5
RL: resistor c -> 0 50 ohm
""",
    # The secondary's dotted end is at ground: the winding is reversed.
    "coupling_by_m_reversed_dot_peak": """
frequency 60 Hz
amplitudes peak
Vs: voltage a -> 0 170 V phase -30 deg
R1: resistor a -> b 1.5 ohm
Lp: inductor b -> 0 120 mH
Ls: inductor 0 -> c 30 mH
Link: coupling Lp Ls M 45 mH
Zl: impedance c -> 0 6 + j2 ohm
Cl: capacitor c -> 0 100 uF
""",
    "coupled_floating_secondary": """
frequency 400 Hz
Vs: voltage a -> 0 115 V phase 90 deg
Rs: resistor a -> b 1 ohm
Lp: inductor b -> 0 20 mH
Ls: inductor x -> y 5 mH
Link: coupling Lp Ls k 0.9
Zl: impedance x -> m 2 + j1 ohm
Cl: capacitor m -> y 47 uF
Rl: resistor m -> y 20 ohm
""",
    "transformer_grounded_secondary": """
frequency 50 Hz
Vs: voltage a -> 0 240 V
Rs: resistor a -> p 2 ohm
T1: transformer p -> 0, s -> 0 ratio 10:1
Zl: impedance s -> 0 8 + j6 ohm
""",
    "transformer_floating_secondary_peak": """
frequency 50 Hz
amplitudes peak
Vs: voltage a -> 0 325 V phase 20 deg
Lsrc: inductor a -> p 5 mH
T1: transformer p -> 0, s1 -> s2 ratio 4:1
R1: resistor s1 -> m 3 ohm
C1: capacitor m -> s2 470 uF
R2: resistor m -> s2 12 ohm
""",
    # Three-phase blocks reach the oracle as their per-phase elements; the unbalanced
    # wye load has a star point of its own (node Uload.n).
    "three_phase_unbalanced_blocks": """
frequency 50 Hz
amplitudes rms
Gsup: voltage3 a b c -> 0 230 V phase 10 deg
La: inductor a -> la 1 mH
Lb: inductor b -> lb 1 mH
Lc: inductor c -> lc 1 mH
Uload: load3 wye la lb lc 10 ohm, 8+j6 ohm, 6-j8 ohm
Hload: load3 delta la lb lc 24 + j18 ohm
""",
    # Every controlled kind at once, sensing a voltage source and a current source,
    # two voltage sources at different phases and a step-up transformer.
    "mixed_controlled_and_transformer": """
frequency 250 Hz
amplitudes rms
V1: voltage a -> 0 12 V phase 0 deg
V2: voltage e -> 0 8 V phase -120 deg
I1: current 0 -> c 50 mA phase 75 deg
Ra: resistor a -> b 47 ohm
Cb: capacitor b -> c 10 uF
Rc: resistor c -> 0 220 ohm
Le: inductor e -> c 33 mH
Hx: ccvs f -> 0 15 ohm sense V1
Rf: resistor f -> g 100 ohm
Fx: cccs 0 -> g 2.5 sense I1
Yg: admittance g -> 0 0.005 + j0.002 S
Ex: vcvs h -> 0 0.5 sense b -> c
Tx: transformer h -> 0, t -> 0 ratio 1:3
Rt: resistor t -> 0 600 ohm
Ct: capacitor t -> g 1 uF
""",
}


def _phasor(d: dict) -> complex:
    return complex(d["re"], d["im"])


def _compare(name: str, lcapy_solve):
    """Solve one circuit both ways; return (mismatches, number of checks)."""
    text = CIRCUITS[name]
    circuit = read_circuit(text)
    result = solve_text(text)
    ref = lcapy_solve(circuit)                     # reference library: lcapy

    got_nodes = {node: _phasor(v) for node, v in result["nodes"].items()}
    assert set(got_nodes) == set(circuit.nodes())  # results-contract.md: every node
    v_scale = max(abs(v) for v in ref.nodes.values())
    voltages = []  # (label, got, want)
    for node, base in ref.reference.items():
        # Floating parts: only voltages relative to a node of the same part are defined.
        voltages.append((f"V({node}) - V({base})", got_nodes[node] - got_nodes[base],
                         ref.nodes[node] - ref.nodes[base]))
    currents = []
    for ename, element in circuit.elements.items():
        entry = result["elements"][ename]
        p, n = element.nodes[0], element.nodes[1]
        voltages.append((f"{ename} voltage", _phasor(entry["voltage"]), ref.voltage(p, n)))
        currents.append((f"{ename} current", _phasor(entry["current"]), ref.currents[ename]))
        if element.kind == "transformer":
            p2, n2 = element.nodes[2], element.nodes[3]
            secondary = entry["secondary"]
            voltages.append((f"{ename} secondary voltage", _phasor(secondary["voltage"]),
                             ref.voltage(p2, n2)))
            currents.append((f"{ename} secondary current", _phasor(secondary["current"]),
                             ref.secondary_currents[ename]))
    i_scale = max(abs(want) for _, _, want in currents)
    bad = [f"{label}: phasorbench {got:.12g}, lcapy {want:.12g}"
           for group, scale in ((voltages, v_scale), (currents, i_scale))
           for label, got, want in group if not _close(got, want, scale)]
    return bad, len(voltages) + len(currents)


@pytest.mark.parametrize("name", list(CIRCUITS))
def test_phasorbench_agrees_with_lcapy(name, lcapy_solve):
    bad, checks = _compare(name, lcapy_solve)
    assert checks > 0
    # reference library: lcapy (every node voltage, element voltage and current)
    assert not bad, f"{name}: {len(bad)} of {checks} disagree:\n" + "\n".join(bad)


def test_comparison_circuits_cover_every_kind_and_convention():
    """The comparison above is only as wide as its circuits: hold them to that."""
    circuits = [read_circuit(text) for text in CIRCUITS.values()]
    kinds = {e.kind for c in circuits for e in c.elements.values()}
    assert kinds >= set(ELEMENT_KINDS)                              # circuit-language.md kinds
    assert kinds >= set(CONTROLLED_KINDS)
    couplings = [k for c in circuits for k in c.couplings.values()]
    assert any(k.k is not None for k in couplings)                  # coupling by k
    assert any(k.m is not None for k in couplings)                  # coupling by M
    assert {c.amplitudes for c in circuits} == {"rms", "peak"}      # both conventions
    phased = [e for c in circuits for e in c.elements.values()
              if e.kind in ("voltage", "current") and cmath.phase(complex(e.value)) != 0.0]
    assert phased                                                   # source phases
    assert any(ref != "0" for c in circuits for ref in part_references(c).values())  # a floating part
    assert all(len(c.nodes()) <= 12 for c in circuits)              # keeps lcapy fast
