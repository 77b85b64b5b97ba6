"""The circuit surgery under the tools: new circuits only, exact probe coefficients."""

from __future__ import annotations

import doctest
import math

import pytest

from phasorbench.tools import _network, capacitors, correction, port
from phasorbench.tools._correction_report import capacitance_text
from phasorbench.tools._network import (derived, fresh_name, killed, port_model,
                                        voltage_joined)
from phasorbench.model import Element
from phasorbench.workflow import read_circuit

TEXT = """frequency 50 Hz
Vs: voltage s -> 0 100 V
Is: current 0 -> m 2 A
R1: resistor s -> m 10 ohm
R2: resistor m -> 0 10 ohm
Cpf1: capacitor m -> 0 1 uF
"""


def test_killed_and_derived_leave_the_input_alone():
    c = read_circuit(TEXT)
    quiet = killed(c)
    assert quiet.elements["Vs"].value == 0 and quiet.elements["Is"].value == 0
    assert c.elements["Vs"].value == 100 and c.elements["Is"].value == 2
    more = derived(c, add=(Element("R9", "resistor", ("m", "0"), 5.0),))
    assert "R9" in more.elements and "R9" not in c.elements


def test_fresh_names_skip_used_ones():
    c = read_circuit(TEXT)
    assert fresh_name(c, "Cpf") == "Cpf2"
    assert fresh_name(c, "probe") == "probe1"


def test_voltage_joined_follows_sources_and_ideal_transformers():
    c = read_circuit("""frequency 50 Hz
V1: voltage a -> 0 10 V
T1: transformer a -> 0, s -> r ratio 2:1
R1: resistor s -> r 4 ohm
R2: resistor a -> b 1 ohm
R3: resistor b -> 0 1 ohm
""")
    assert voltage_joined(c, "a", "0") and voltage_joined(c, "s", "r")
    assert not voltage_joined(c, "b", "0")


def test_port_model_is_the_divider_formula():
    # Superposition and Thevenin for a two-resistor divider with both sources (formula):
    # V_oc = (100/10 + 2)/(1/10 + 1/10 + jωC), Z = 1/(2/10 + jωC).
    c = read_circuit(TEXT)
    model, _ = port_model(c, [("m", "0")], ["Vs"])
    y = 0.2 + 1j * 2 * math.pi * 50 * 1e-6
    assert complex(model.z[0, 0]) == pytest.approx(1 / y, rel=1e-12)
    assert complex(model.v_oc[0]) == pytest.approx(12 / y, rel=1e-12)
    # Drawing 1 A at m (sources at zero) pulls V(m) to −Z, so R1 carries Z/10 from s to m,
    # which the zeroed source supplies: its own current (s → 0 through it) is −Z/10.
    assert complex(model.ki[0, 0]) == pytest.approx(-(1 / y) / 10, rel=1e-12)
    assert complex(model.kv[0, 0]) == 0


@pytest.mark.parametrize("c, text", [(310.437533629e-6, "310.437533629 uF"),
                                     (2.2e-9, "2.2 nF"), (4.7e-12, "4.7 pF"),
                                     (1.5, "1.5 F"), (0.0011006, "1100.6 uF")])
def test_capacitance_text_reads_back(c, text):
    assert capacitance_text(c) == text
    circuit = read_circuit(f"frequency 50 Hz\nV: voltage a -> 0 1\nC: capacitor a -> 0 {text}\n")
    assert circuit.elements["C"].value.real == pytest.approx(c, rel=1e-11)


@pytest.mark.parametrize("module", [_network, capacitors, correction, port])
def test_docstring_examples(module):
    failures, _ = doctest.testmod(module)
    assert failures == 0
