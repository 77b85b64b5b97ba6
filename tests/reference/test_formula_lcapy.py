"""The formula study against lcapy's own symbolic results: transfer functions and
impedances of small circuits (≤ 12 nodes), every element a symbol on both sides.

lcapy builds its equations from its own component models (tests/reference/
lcapy_oracle.py holds its input format); the two rational functions must be equal: their
difference brought to one fraction in lowest terms (``sympy.cancel``, exact for rational
functions, where ``simplify`` is only slower) is 0, and they agree at random points to
1e-12. Bridges are held to their textbook balance conditions in tests/studies/
test_formula.py instead: lcapy takes over a minute and a half on each here.
"""

from __future__ import annotations

import random

import pytest
import sympy as sp

from phasorbench.studies.formula import run_formula
from phasorbench.workflow import read_circuit

from ..helpers import formula_sympy, plain_symbols
from .lcapy_oracle import formula_with_lcapy

HEAD = "frequency 1 kHz\nVin: voltage in -> 0 1 V\n"
ZHEAD = "frequency 1 kHz\nIs: current 0 -> a 1 mA\n"

# name: (circuit text, our probe, lcapy query)
CASES = {
    "rc_low_pass": (HEAD + "R1: resistor in -> out 1k\nC1: capacitor out -> 0 100 nF\n",
                    "V(out)/V(in)", ("transfer", ("in", "0"), ("out", "0"))),
    "rl_high_pass": (HEAD + "R1: resistor in -> out 50\nL1: inductor out -> 0 10 mH\n",
                     "V(out)/V(in)", ("transfer", ("in", "0"), ("out", "0"))),
    "two_section_rc": (HEAD + "R1: resistor in -> a 1k\nC1: capacitor a -> 0 1 uF\n"
                       "R2: resistor a -> out 10k\nC2: capacitor out -> 0 100 nF\n",
                       "V(out)/V(in)", ("transfer", ("in", "0"), ("out", "0"))),
    "series_rlc_band_pass": (HEAD + "L1: inductor in -> a 10 mH\nC1: capacitor a -> out 1 uF\n"
                             "R1: resistor out -> 0 100\n",
                             "V(out)/V(in)", ("transfer", ("in", "0"), ("out", "0"))),
    "buffered_rc_stage": (HEAD + "R1: resistor in -> a 1k\nC1: capacitor a -> 0 10 nF\n"
                          "E1: vcvs b -> 0 2 sense a -> 0\nR2: resistor b -> out 2k\n"
                          "C2: capacitor out -> 0 5 nF\n",
                          "V(out)/V(in)", ("transfer", ("in", "0"), ("out", "0"))),
    "transconductance_stage": (HEAD + "Rs: resistor in -> g 600\nRg: resistor g -> 0 47k\n"
                               "Gm: vccs out -> 0 38 mS sense g -> 0\n"
                               "Rd: resistor out -> 0 4.7k\nCd: capacitor out -> 0 220 pF\n",
                               "V(out)/V(in)", ("transfer", ("in", "0"), ("out", "0"))),
    "series_rlc_impedance": (ZHEAD + "R1: resistor a -> b 2\nL1: inductor b -> c 1 mH\n"
                             "C1: capacitor c -> 0 0.4 uF\n",
                             "Z(a)", ("impedance", "a", "0")),
    "parallel_rlc_impedance": (ZHEAD + "R1: resistor a -> 0 1k\nL1: inductor a -> 0 1 mH\n"
                               "C1: capacitor a -> 0 1 uF\n",
                               "Z(a)", ("impedance", "a", "0")),
    "lc_ladder_input": (ZHEAD + "L1: inductor a -> b 1 mH\nC1: capacitor b -> 0 1 uF\n"
                        "L2: inductor b -> c 2 mH\nC2: capacitor c -> 0 1 uF\n"
                        "L3: inductor c -> d 1 mH\nR1: resistor d -> 0 50\n",
                        "Z(a)", ("impedance", "a", "0")),
    "pi_network_between_nodes": ("frequency 1 kHz\nIs: current 0 -> a 1 mA\n"
                                 "C1: capacitor a -> 0 1 uF\nL1: inductor a -> b 1 mH\n"
                                 "C2: capacitor b -> 0 2 uF\nR1: resistor b -> 0 10\n",
                                 "Z(a, b)", ("impedance", "a", "b")),
    "bridged_t_with_source_shorted": (HEAD + "R1: resistor in -> a 1k\nC1: capacitor a -> out 1 uF\n"
                                      "C2: capacitor in -> out 1 uF\nR2: resistor a -> 0 100\n"
                                      "R3: resistor out -> 0 2k\n",
                                      "Z(out)", ("impedance", "out", "0")),
}


@pytest.fixture(scope="module")
def lcapy_ready():
    from .lcapy_oracle import load_lcapy
    load_lcapy()


@pytest.mark.parametrize("name", sorted(CASES))
def test_formula_equals_lcapy(name, lcapy_ready):
    text, probe, query = CASES[name]
    circuit = read_circuit(text, name)
    result = run_formula(circuit, probe)
    # every test circuit: the formula at the analysis frequency equals the numeric solve
    # (itself held to lcapy by test_against_lcapy.py) to 1e-12 relative (issue 16)
    assert result["check"]["relative_difference"] <= 1e-12
    ours = formula_sympy(result["formula"]["tree"])
    theirs = plain_symbols(formula_with_lcapy(circuit, query))
    # lcapy's symbolic transfer function / impedance of the same circuit
    assert sp.cancel(sp.together(ours - theirs)) == 0
    rng = random.Random(name)
    symbols = sorted(ours.free_symbols | theirs.free_symbols, key=str)
    for _ in range(3):
        point = {x: sp.Float(rng.uniform(0.5, 2.0), 30) * (1j if x.name == "s" else 1)
                 for x in symbols}
        a, b = complex(sp.N(ours.xreplace(point), 30)), complex(sp.N(theirs.xreplace(point), 30))
        # lcapy at random points, 1e-12 relative (issue 16)
        assert abs(a - b) <= 1e-12 * abs(b)
