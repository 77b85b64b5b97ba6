"""Standard bank ratings beside the exact correction, against the textbook power triangle.

On an ideal bus a bank supplying Q_c leaves the source P + j(Q − Q_c), so its power factor
is P/√(P² + (Q − Q_c)²) (textbook power triangle, the same one behind
Q_c = P(tan φ1 − tan φ2)); a unit rated Q_r at V_r supplies Q_r·(V/V_r)² at V (Q = ωCV²).
"""

from __future__ import annotations

import math

import pytest

from phasorbench.errors import CircuitError
from phasorbench.tools import correct_power_factor
from phasorbench.tools.standard_sizes import DEFAULT_RATINGS_KVAR, parse_ratings
from phasorbench.workflow import read_circuit, solve_text

#: 230 V, 50 Hz into 8 + j6 Ω (invented): |Z| = 10 Ω, so P = V²R/|Z|² = 4232 W and
#: Q = V²X/|Z|² = 3174 var, PF 0.8 lagging (textbook power triangle).
RL = """frequency 50 Hz
V1: voltage a -> 0 230 V
Z1: impedance a -> 0 8 + j6 ohm
"""
P, Q = 4232.0, 3174.0

#: check-values C22: 400 V line, 50 Hz, 16 + j12 Ω per phase, wye: P = 6400 W, Q = 4800 var.
C22 = """frequency 50 Hz
G: voltage3 A B C -> 0 400 V line
M: load3 wye A B C -> 0 16 + j12 ohm
"""


def _pf(p, q):
    """Textbook power triangle: PF = P/|S|."""
    return p / math.hypot(p, q)


def test_rl_load_the_ratings_either_side_give_the_power_triangle():
    r = correct_power_factor(read_circuit(RL), "V1", 0.95)
    sizes = r["standard_sizes"]
    # textbook: Q_c = P(tan φ1 − tan φ2) = 4232·(0.75 − tan(acos 0.95)) = 1783.0 var,
    # rated at the operating 230 V (no rated voltage given)
    qc = P * (0.75 - math.tan(math.acos(0.95)))
    assert sizes["exact_kvar"] == pytest.approx(qc / 1000, rel=1e-9)
    assert sizes["rated_voltage_v"] == pytest.approx(230.0, rel=1e-12)
    assert not sizes["rated_voltage_given"]
    below, above = sizes["below"], sizes["above"]
    assert below["rating_kvar"] == 1.5 and above["rating_kvar"] == 2.0
    for size, qr in ((below, 1500.0), (above, 2000.0)):
        # re-solved with the bank in place equals the closed form P/√(P² + (Q − Qc)²)
        assert size["pf"] == pytest.approx(_pf(P, Q - qr), abs=1e-12)
        assert size["pf_sense"] == "lagging"
        assert size["q_var"] == pytest.approx(qr, rel=1e-12)
        # C = Q/(ωV²) (formula)
        assert size["capacitance_f"] == pytest.approx(qr / (2 * math.pi * 50 * 230 ** 2),
                                                      rel=1e-12)
    assert below["pf"] == pytest.approx(0.92989, abs=5e-6)    # 4232/4551.05, by hand
    assert above["pf"] == pytest.approx(0.96361, abs=5e-6)    # 4232/4391.82
    assert not below["meets_target"] and above["meets_target"]
    # The line the page appends re-reads to the same power factor (solving the text).
    text = RL + "\n".join(above["circuit_lines"]) + "\n"
    again = solve_text(text)["elements"]["V1"]
    assert again["pf"] == pytest.approx(above["pf"], abs=1e-9)


def test_units_rated_above_the_operating_voltage_supply_less():
    r = correct_power_factor(read_circuit(RL), "V1", 0.95, rated_voltage=400.0)
    sizes = r["standard_sizes"]
    # Q = ωCV²: a unit rated Q_r at 400 V supplies Q_r·(230/400)² at 230 V (formula), so
    # the exact correction reads 1783.0·(400/230)² = 5393 var at the rating
    qc = P * (0.75 - math.tan(math.acos(0.95)))
    assert sizes["exact_kvar"] == pytest.approx(qc * (400 / 230) ** 2 / 1000, rel=1e-9)
    assert sizes["below"]["rating_kvar"] == 5.0 and sizes["above"]["rating_kvar"] == 6.0
    supplied = 6000.0 * (230 / 400) ** 2
    assert sizes["above"]["q_var"] == pytest.approx(supplied, rel=1e-12)
    assert sizes["above"]["pf"] == pytest.approx(_pf(P, Q - supplied), abs=1e-12)


def test_a_delta_bank_on_a_three_phase_supply():
    r = correct_power_factor(read_circuit(C22), "G", 0.95, bank="delta")
    sizes = r["standard_sizes"]
    # check-values C22 with the power triangle: Q_c = 6400·(0.75 − 0.328684) = 2696 var,
    # units rated at the 400 V each sees (line to line)
    assert sizes["rated_voltage_v"] == pytest.approx(400.0, rel=1e-9)
    assert sizes["below"]["rating_kvar"] == 2.5 and sizes["above"]["rating_kvar"] == 3.0
    assert sizes["above"]["units"] == 3
    for size in (sizes["below"], sizes["above"]):
        qr = 1000 * size["rating_kvar"]
        assert size["pf"] == pytest.approx(_pf(6400.0, 4800.0 - qr), abs=1e-12)
        assert len(size["circuit_lines"]) == 3


def test_an_edited_list_and_its_ends():
    circuit = read_circuit(RL)
    r = correct_power_factor(circuit, "V1", 0.95, ratings="1, 1.783, 5")
    # none in the list hits 1.7830… exactly: 1.783 is below it (formula above: 1783.03 var)
    assert r["standard_sizes"]["below"]["rating_kvar"] == 1.783
    assert r["standard_sizes"]["above"]["rating_kvar"] == 5.0
    r = correct_power_factor(circuit, "V1", 0.95, ratings=[2.5, 5])
    assert r["standard_sizes"]["below"] is None           # nothing small enough
    r = correct_power_factor(circuit, "V1", 0.95, ratings=[0.5, 1])
    assert r["standard_sizes"]["above"] is None           # nothing big enough
    # a rating past the float range of the solve: that size unsolved, the rest stands
    r = correct_power_factor(circuit, "V1", 0.95, ratings=[1.5, 1e308])
    assert r["standard_sizes"]["below"]["pf"] == pytest.approx(_pf(P, Q - 1500), abs=1e-12)
    assert r["standard_sizes"]["above"]["pf"] is None
    assert "not solved" in r["standard_sizes"]["above"]["error"]
    # common practice, no source: a rating is a positive number of kvar
    with pytest.raises(CircuitError) as info:
        correct_power_factor(circuit, "V1", 0.95, ratings="5, -1, ten")
    assert "'-1'" in str(info.value.diagnostics[0].message)
    assert "'ten'" in str(info.value.diagnostics[0].message)
    with pytest.raises(CircuitError):
        parse_ratings("")
    assert parse_ratings("10 5,5") == (5.0, 10.0)
    assert parse_ratings(None) == DEFAULT_RATINGS_KVAR
