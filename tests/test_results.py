"""The contract dict: its shape and conventions, per results-contract.md (the project's
design document), checked on circuits solved end to end."""

from __future__ import annotations

import json
import math

import pytest

from phasorbench.errors import AnalysisError

from phasorbench.results import phasor_dicts, power_factor, sequence_components
from tests.helpers import current, phasor, polar, solve

FEEDER = """title Test feeder
frequency 60 Hz
Vgrid:  voltage    a -> GND   240 V
Rline:  resistor   a -> b     0.15 ohm
Lline:  inductor   b -> c     0.4 mH
Zmotor: impedance  c -> gnd   8.2 + j5.1 ohm
Ccorr:  capacitor  c -> 0     150 uF
"""


def test_contract_fields_and_ground_spelling():
    r = solve(FEEDER)
    # results-contract.md: these fields are the stable contract
    assert {"title", "frequency_hz", "amplitudes", "nodes", "elements", "balance",
            "warnings"} <= set(r)
    assert r["title"] == "Test feeder" and r["frequency_hz"] == 60.0
    assert r["amplitudes"] == "rms"
    # results-contract.md: ground is "0" in nodes and in every from/to
    assert "0" in r["nodes"] and "GND" not in r["nodes"] and "gnd" not in r["nodes"]
    assert r["elements"]["Vgrid"]["to"] == "0" and r["elements"]["Zmotor"]["to"] == "0"
    for e in r["elements"].values():
        assert {"kind", "from", "to", "voltage", "current", "impedance", "p_w", "q_var",
                "s_va", "pf", "pf_sense"} <= set(e)
        for key in ("voltage", "current"):
            assert set(e[key]) == {"re", "im", "mag", "deg"}
    json.dumps(r, allow_nan=False)          # no NaN or infinity anywhere


def test_title_is_null_when_missing():
    r = solve("frequency 50 Hz\nV: voltage a -> 0 1\nR: resistor a -> 0 1")
    assert r["title"] is None                                 # results-contract.md


def test_voltage_is_from_minus_to_and_powers_follow_passive_sign():
    r = solve(FEEDER)
    nodes = {k: phasor(v) for k, v in r["nodes"].items()}
    for e in r["elements"].values():
        # results-contract.md: voltage is V(from) - V(to)
        assert phasor(e["voltage"]) == pytest.approx(nodes[e["from"]] - nodes[e["to"]],
                                                     abs=1e-12)
        s = phasor(e["voltage"]) * phasor(e["current"]).conjugate()
        assert (e["p_w"], e["q_var"]) == pytest.approx((s.real, s.imag), abs=1e-9)
        assert e["s_va"] == pytest.approx(abs(s), abs=1e-9)
    assert r["elements"]["Vgrid"]["p_w"] < 0                  # a source feeding reports P < 0
    assert r["elements"]["Rline"]["p_w"] > 0


def test_impedance_is_null_for_sources_and_controlled_elements():
    r = solve("frequency 50 Hz\nV: voltage a -> 0 1\nR: resistor a -> 0 2\n"
              "E: vcvs b -> 0 2 sense a -> 0\nRb: resistor b -> 0 1")
    assert r["elements"]["V"]["impedance"] is None
    assert r["elements"]["E"]["impedance"] is None
    assert phasor(r["elements"]["R"]["impedance"]) == pytest.approx(2 + 0j)


def test_angles_lie_in_the_half_open_range():
    # results-contract.md: deg in (-180, 180]
    r = solve("frequency 50 Hz\nV: voltage a -> 0 1 V phase 180 deg\nR: resistor a -> 0 1")
    assert r["nodes"]["a"]["deg"] == pytest.approx(180.0)
    values = phasor_dicts([complex(-1, -0.0), complex(-1, 0.0), 1j, -1j, 0j])
    for d in values:
        assert -180.0 < d["deg"] <= 180.0


def test_power_factor_sense_rules():
    # results-contract.md: passive lagging when it takes Q; a source quotes its load's sense
    assert power_factor(3, 4, 5, source=False) == (0.6, "lagging")
    assert power_factor(3, -4, 5, source=False) == (0.6, "leading")
    assert power_factor(-3, -4, 5, source=True) == (0.6, "lagging")
    assert power_factor(-3, 4, 5, source=True) == (0.6, "leading")
    assert power_factor(0, 0, 0, source=False) == (1.0, "unity")
    assert power_factor(5, 1e-12, 5, source=False)[1] == "unity"


def test_peak_amplitudes_report_peak_magnitudes():
    r = solve("frequency 50 Hz\namplitudes peak\nV: voltage a -> 0 10 V\nR: resistor a -> 0 5")
    assert r["amplitudes"] == "peak"
    assert r["elements"]["R"]["current"]["mag"] == pytest.approx(2.0)
    # results-contract.md: ½·V·I* with peak phasors
    assert r["elements"]["R"]["p_w"] == pytest.approx(10.0)


def test_transformer_reports_secondary_and_both_ports_power():
    r = solve("frequency 50 Hz\nV: voltage p -> 0 100 V\n"
              "T: transformer p -> 0, s -> 0 ratio 5:1\nR: resistor s -> 0 4 ohm")
    t = r["elements"]["T"]
    assert set(t["secondary"]) >= {"voltage", "current"}
    assert phasor(t["secondary"]["voltage"]) == pytest.approx(20 + 0j)
    assert t["impedance"] is None
    assert abs(t["p_w"]) < 1e-9 and abs(t["q_var"]) < 1e-9     # an ideal transformer is lossless


def test_couplings_are_listed_apart_from_elements():
    r = solve("frequency 50 Hz\nV: voltage a -> 0 1\nL1: inductor a -> 0 10 mH\n"
              "L2: inductor b -> 0 40 mH\nR: resistor b -> 0 5\nK: coupling L1 L2 k 0.5")
    assert "K" not in r["elements"]
    assert r["couplings"]["K"]["inductors"] == ["L1", "L2"]
    assert r["couplings"]["K"]["m_h"] == pytest.approx(0.5 * math.sqrt(10e-3 * 40e-3))


def test_warnings_have_the_contract_shape():
    r = solve("frequency 50 Hz\nV: voltage a -> 0 1\nR: resistor a -> 0 1\n"
              "Rx: resistor a -> c3 1")
    assert r["warnings"], "a node reached by one terminal is a warning"
    w = r["warnings"][0]
    assert set(w) == {"line", "column", "message", "hint"}
    assert w["line"] == 4 and "c3" in w["message"]


def test_isolated_part_gets_its_own_reference():
    r = solve("frequency 50 Hz\nV: voltage p -> 0 100 V\n"
              "T: transformer p -> 0, s -> t ratio 2:1\nR: resistor s -> t 5 ohm")
    assert r["references"] == ["t"]
    assert r["nodes"]["t"]["mag"] == 0.0
    assert current(r, "R") == pytest.approx(10 + 0j)
    assert any("no conductive path to ground" in w["message"] for w in r["warnings"])


def test_balance_is_in_every_result():
    r = solve(FEEDER)
    total = sum(e["s_va"] for e in r["elements"].values())
    # Tellegen's theorem (common practice, no source)
    assert abs(complex(r["balance"]["p_w"], r["balance"]["q_var"])) <= 1e-12 * total
    assert r["balance"]["ok"] is True


def test_fortescue_identities():
    # Fortescue (1918): a balanced abc set has only a positive-sequence part;
    # check-values C27 (Grainger & Stevenson, open conductor, from memory)
    zero, pos, neg = sequence_components([polar(1, 0), polar(1, -120), polar(1, 120)])
    assert abs(zero) < 1e-15 and abs(neg) < 1e-15 and pos == pytest.approx(1 + 0j)
    zero, pos, neg = sequence_components([10, -10, 0])
    assert abs(zero) < 1e-14
    assert pos == pytest.approx(polar(5.7735, -30), rel=1e-5)
    assert neg == pytest.approx(polar(5.7735, 30), rel=1e-5)


def test_lossless_resonance_is_flagged():
    # formula: an ideal L and C in parallel at f0 = 1/(2π√(LC)) have zero admittance, so a
    # current source into them has no finite answer: tuned in the input's own digits the
    # admittances cancel within their rounding, and the result says singular
    with pytest.raises(AnalysisError) as info:
        solve("frequency 50\nI: current 0 -> a 1\nL: inductor a -> 0 1\n"
              "C: capacitor a -> 0 (1/((2*pi*50)^2))")
    assert "singular" in str(info.value)
    # check-values C6: a damped parallel resonance (Q = 1600) is a plain, trusted result
    ok = solve("frequency 3978.8735 Hz\namplitudes peak\nIs: current 0 -> a 10 mA\n"
               "R: resistor a -> 0 8k\nL: inductor a -> 0 0.2 mH\nC: capacitor a -> 0 8 uF")
    assert not ok["warnings"]


def test_power_balance_closes_with_a_tiny_series_element():
    # Tellegen's theorem (common practice, no source): Σ S = 0; 1 µΩ in series with 10 GΩ
    # used to lose the current's digits in V/R; its own current unknown keeps them:
    # I = 230 / (10e9 + 1e-6) (Ohm's law)
    r = solve("frequency 50\nV: voltage a -> 0 230\nRbus: resistor a -> c 1u\n"
              "Rleak: resistor c -> 0 10G")
    assert r["balance"]["ok"]
    assert current(r, "Rbus").real == pytest.approx(230 / (10e9 + 1e-6), rel=1e-14)


def test_voltage_unbalance_of_a_balanced_acb_system_is_zero():
    # common practice, no source: a balanced set has no unbalance whichever way it turns
    r = solve("frequency 50\nG: voltage3 a b c -> 0 400 V line sequence acb phase 10 deg\n"
              "Y: load3 wye a b c -> 0 10 ohm")
    assert r["groups"]["G"]["voltage_unbalance"] < 1e-12
    assert r["groups"]["Y"]["voltage_unbalance"] < 1e-12


def test_acb_sequence_values_and_unbalance_follow_one_rule():
    # Issue's case. Fortescue (1918): a balanced set turning in the declared order is all
    # positive sequence; V_an = 400/√3 ∠10° (common practice, no source).
    r = solve("frequency 50 Hz\nG: voltage3 a b c -> 0 400 line sequence acb phase 10\n"
              "L: load3 wye a b c -> 0 12 + j4, 8, 15 - j6")
    g = r["groups"]["G"]
    seq = {k: complex(v["re"], v["im"]) for k, v in g["sequence_voltage"].items()}
    assert g["rotation"] == "acb"
    assert seq["positive"] == pytest.approx(polar(400 / math.sqrt(3), 10), rel=1e-12)
    assert abs(seq["negative"]) < 1e-12 and abs(seq["zero"]) < 1e-12
    assert g["voltage_unbalance"] < 1e-14
    # The load takes the sources' rotation: its unbalance is |V2|/|V1| of its own labels.
    load = r["groups"]["L"]
    assert load["rotation"] == "acb"
    lv = {k: complex(v["re"], v["im"]) for k, v in load["sequence_voltage"].items()}
    assert load["voltage_unbalance"] == pytest.approx(
        abs(sequence_components([phasor(load["line_voltage"][p]) for p in ("ab", "bc", "ca")],
                                "acb")[2]) /
        abs(sequence_components([phasor(load["line_voltage"][p]) for p in ("ab", "bc", "ca")],
                                "acb")[1]), rel=1e-12)
    assert abs(lv["positive"]) > abs(lv["negative"])


def test_acb_labels_are_the_abc_labels_swapped():
    # Fortescue (1918): an acb-turning balanced set is the abc formulas' negative sequence
    abc = sequence_components([polar(1, 0), polar(1, 120), polar(1, -120)])
    acb = sequence_components([polar(1, 0), polar(1, 120), polar(1, -120)], "acb")
    assert abs(abc[1]) < 1e-15 and abc[2] == pytest.approx(1 + 0j)
    assert acb[1] == pytest.approx(1 + 0j) and abs(acb[2]) < 1e-15


def test_zero_power_elements_report_one_rule():
    # Issue case: an ideal transformer takes no power (V1·I1* + V2·I2* = 0, common
    # practice, no source); its round-off |S| must read pf 1.0 'unity', like any other
    # zero-power element
    r = solve("frequency 50 Hz\nV1: voltage p -> 0 230\n"
              "T: transformer p -> 0, s -> 0 ratio 10:1\nR: impedance s -> 0 5 + j3\n"
              "C: capacitor p -> 0 1 uF")
    t = r["elements"]["T"]
    assert t["s_va"] < 1e-9 * r["elements"]["R"]["s_va"]
    assert (t["pf"], t["pf_sense"]) == (1.0, "unity")


def test_coupled_inductor_impedance_is_its_own_jwl():
    # Issue case: 40 mH at 50 Hz: Z = jωL = j12.566 Ω (formula), whatever the coupling
    # does to V/I; the mutual is reported on the coupling (M = k·√(L1·L2), formula)
    r = solve("frequency 50 Hz\nV1: voltage a -> 0 10\nL1: inductor a -> 0 40 mH\n"
              "L2: inductor b -> 0 10 mH\nR2: resistor b -> 0 2\nK: coupling L1 L2 k 0.9")
    z = r["elements"]["L1"]["impedance"]
    assert complex(z["re"], z["im"]) == pytest.approx(2j * math.pi * 50 * 40e-3, rel=1e-14)
    assert r["couplings"]["K"]["m_h"] == pytest.approx(0.9 * math.sqrt(40e-3 * 10e-3))


def test_a_supply_reports_the_current_and_power_it_delivers():
    # Ohm's law on 230 V across 4 + j3 Ω (any circuits textbook): I = 46 A ∠−36.87°,
    # S = V·I* = 8464 W + j6348 var taken by the load; the supply delivers exactly that,
    # its passive-sign values being the negatives
    r = solve("frequency 50 Hz\nV1: voltage a -> 0 230\nZ1: impedance a -> 0 4 + j3\n")
    v1 = r["elements"]["V1"]
    d = v1["delivered"]
    assert d["current"]["mag"] == pytest.approx(46, rel=1e-12)
    assert d["current"]["deg"] == pytest.approx(-36.8698976458, abs=1e-9)
    assert d["p_w"] == pytest.approx(8464, rel=1e-12) == -v1["p_w"]
    assert d["q_var"] == pytest.approx(6348, rel=1e-12) == -v1["q_var"]
    assert "delivered" not in r["elements"]["Z1"]


def test_a_three_phase_supply_delivers_its_line_currents():
    # balanced wye, 400 V line on 16 + j12 Ω per phase (check-values C22, textbook
    # three-phase relations): line current 230.94/20 = 11.547 A lagging its phase
    # voltage by 36.87°; the block delivers P = 6400 W, Q = 4800 var
    r = solve("frequency 50 Hz\nG: voltage3 A B C -> 0 400 V line\n"
              "M: load3 wye A B C -> 0 16 + j12 ohm\n")
    g = r["groups"]["G"]["delivered"]
    assert g["p_w"] == pytest.approx(6400, rel=1e-9)
    assert g["q_var"] == pytest.approx(4800, rel=1e-9)
    a = g["line_current"]["a"]
    assert a["mag"] == pytest.approx(400 / math.sqrt(3) / 20, rel=1e-9)
    assert a["deg"] == pytest.approx(-36.8698976458, abs=1e-7)
    assert "delivered" not in r["groups"]["M"]
