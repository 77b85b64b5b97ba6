"""``tol`` with its distribution on elements and named values (circuit-language.md,
studies.md "Tolerance"), and named values re-read with their scale (revalue.py)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from phasorbench.errors import CircuitError
from phasorbench.language.parser import parse_circuit
from phasorbench.language.revalue import Revaluer
from phasorbench.workflow import read_circuit


def _errors(body: str):
    with pytest.raises(CircuitError) as info:
        read_circuit("frequency 50 Hz\nV1: voltage a -> 0 1\n" + body + "\n")
    return info.value.diagnostics


@pytest.mark.parametrize("spelling, fraction, law", [
    ("tol 10%", 0.10, "uniform"), ("tol 1% normal", 0.01, "normal"),
    ("tol 2 % uniform", 0.02, "uniform"), ("tol 5 NORMAL", 0.05, "normal"),
])                           # studies.md: tol PCT [uniform | normal], uniform by default
def test_distribution_word(spelling, fraction, law):
    c = parse_circuit(f"frequency 50 Hz\nY1: admittance a -> 0 2 m {spelling}\n")
    y = c.elements["Y1"]
    assert math.isclose(y.tolerance, fraction) and y.distribution == law


@pytest.mark.parametrize("body, message, hint", [
    ("R1: resistor a -> 0 5 tol 5% gaussian", "'gaussian' is not a distribution",
     "did you mean 'normal'?"),
    ("R1: resistor a -> 0 5 tol 5% unifrom", "'unifrom' is not a distribution",
     "did you mean 'uniform'?"),
    ("R1: resistor a -> 0 5 tol -3%", "a tolerance must be between 0 % and 100 %", ""),
    ("R1: resistor a -> 0 5 tol 100%", "a tolerance must be between 0 % and 100 %", ""),
    ("R1: resistor a -> 0 5 tol 5 uF", "a tolerance value takes no unit; '5 uF' is in "
     "farads", ""),
    ("E1: vcvs a -> 0 5 sense a -> 0 tol 5%", "'tol' does not apply to a vcvs", "admittance"),
    ("Cb = 10 uF tol 120%", "a tolerance must be between 0 % and 100 %", ""),
    ("Cb = 10 uF tol 5% gauss", "'gauss' is not a distribution", "normal"),
])                            # circuit-language.md: errors with line, column and a hint
def test_tolerance_errors(body, message, hint):
    (d,) = [d for d in _errors(body) if d.severity == "error"]
    assert d.message == message and hint in d.hint
    assert d.line == 3 and d.column >= 1


def test_named_value_tolerance_and_its_users():
    c = read_circuit("frequency 50 Hz\nCb = 100 uF tol 10% normal\nC2 = (Cb*2)\n"
                     "V1: voltage a -> 0 1\nC1: capacitor a -> 0 Cb\n"
                     "Cx: capacitor a -> 0 C2 tol 1%\nR1: resistor a -> 0 5\n"
                     "M1: load3 wye a b c -> 0 (1/Cb)\n")
    # studies.md: a named value's tolerance is one batch shared by every user
    assert c.value_tolerances == {"Cb": (0.1, "normal", 2)}
    assert c.value_users["Cb"] == ("C1", "Cx", "M1.a", "M1.b", "M1.c")


def test_revaluer_reads_expressions_again():
    c = read_circuit("frequency 50 Hz\nCb = 100 uF tol 10%\nK = 2\nC2 = (Cb*K + 1u)\n"
                     "V1: voltage a -> 0 1\nC1: capacitor a -> 0 Cb\n"
                     "Cx: capacitor a -> 0 C2\nZ1: impedance a -> 0 (1/(2*pi*50*Cb))\n")
    r = Revaluer(c)
    laws = r.laws()
    # arithmetic (formula): C1 = Cb·s, Z1 ∝ 1/Cb; Cx = 2·Cb·s + 1 µF is not a power law
    assert laws["C1"][1] == {"Cb": 1.0} and laws["Z1"][1] == {"Cb": -1.0}
    assert laws["Cx"] is None
    got = r.arrays({"Cb": np.array([0.9, 1.1])})
    assert np.allclose(got["Cx"], [2 * 90e-6 + 1e-6, 2 * 110e-6 + 1e-6], rtol=1e-14)
    assert np.allclose(got["Z1"], [1 / (2 * math.pi * 50 * 100e-6 * s) for s in (0.9, 1.1)],
                       rtol=1e-14)
