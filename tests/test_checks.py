"""Tests of the structure checks (checks.py): errors that name the elements, warnings.

The rules are the language design's (circuit-language.md, "Errors": source loops, current
cuts, k outside [-1, 1], sense to a missing element or node, dangling nodes, isolated
parts, a voltage source across a transformer winding). Numbers are computed with math
(`# formula`): M = k·√(L1·L2) and the ideal transformer's V1 = n·V2, I2 = n·I1 (check-values
C33, C34).
"""

from __future__ import annotations

import math

import pytest

from phasorbench.errors import (CircuitError, CircuitStructureError, CircuitSyntaxError,
                                format_diagnostic)
from phasorbench.workflow import check_text, read_circuit, solve_text

HEAD = "frequency 50 Hz\n"


def structure_errors(body: str, head: str = HEAD):
    with pytest.raises(CircuitStructureError) as caught:
        read_circuit(head + body, "feeder.circuit")
    return caught.value.errors


def messages(body: str) -> list[str]:
    return [e.message for e in structure_errors(body)]


# --- loops of ideal voltage-type branches ---------------------------------------------------

def test_voltage_source_loop_spec_example():
    # circuit-language.md, "Errors": feeder.circuit:12:1: error: voltage sources V1, V2
    # form a loop of ideal sources: the circuit has no unique solution
    lines = [HEAD.strip(), "V1: voltage a -> 0 230 V"] + \
        [f"R{k}: resistor a -> 0 {k} ohm" for k in range(1, 10)] + ["V2: voltage a -> 0 110 V"]
    text = "\n".join(lines)
    with pytest.raises(CircuitStructureError) as caught:
        read_circuit(text, "feeder.circuit")
    [error] = caught.value.errors
    assert format_diagnostic(error, "feeder.circuit", text).splitlines()[0] == (
        "feeder.circuit:12:1: error: voltage sources V1, V2 form a loop of ideal sources: "
        "the circuit has no unique solution")
    assert error.hint


def test_loop_through_several_sources_names_them_all():
    # circuit-language.md: a loop of ideal voltage sources (voltage, vcvs, ccvs)
    [message] = messages("V1: voltage a -> 0 1\nV2: voltage b -> a 1\n"
                         "E1: vcvs b -> 0 2 sense a -> 0\nR1: resistor b -> 0 1\n")
    assert message.startswith("ideal voltage-type branches")
    named = message.split(") ", 1)[1].split(" form a loop")[0]
    assert sorted(named.split(", ")) == ["E1", "V1", "V2"]


def test_zero_ohm_resistor_closes_a_loop():
    # common practice, no source: 0 Ω fixes a voltage like an ideal source
    [message] = messages("V1: voltage a -> 0 1\nR0: resistor a -> 0 0\n")
    assert "V1, R0 form a loop" in message


def test_voltage_source_shorted_by_itself():
    [message] = messages("V1: voltage a -> a 1\nR1: resistor a -> 0 1\n")
    assert "V1 form a loop" in message                                 # circuit-language.md


# --- cuts reached only through current-type branches ---------------------------------------

def test_node_between_two_current_sources():
    # circuit-language.md: a node or cut reached only through current sources
    [error] = structure_errors("I1: current 0 -> a 1\nI2: current a -> 0 2\n"
                               "V1: voltage b -> 0 1\nR1: resistor b -> 0 1\n")
    assert error.message.startswith("node a is reached only through current-type branches "
                                    "(I1, I2)")
    assert error.line == 2 and error.hint


def test_cut_through_controlled_current_sources():
    # circuit-language.md: current sources are current, vccs, cccs
    [error] = structure_errors("V1: voltage a -> 0 1\nR1: resistor a -> 0 1\n"
                               "G1: vccs a -> x 0.1 sense a -> 0\nC1: capacitor x -> y 1 uF\n"
                               "F1: cccs y -> 0 2 sense R1\n")
    assert error.message.startswith("nodes x, y are reached only through current-type "
                                    "branches (G1, F1)")


def test_current_source_into_a_dangling_node_is_an_error_not_a_warning():
    # circuit-language.md: a single-terminal node is a warning unless it leaves the
    # circuit without a unique solution
    with pytest.raises(CircuitStructureError) as caught:
        read_circuit(HEAD + "V1: voltage a -> 0 1\nR1: resistor a -> 0 1\nI1: current a -> x 1\n")
    assert [d.severity for d in caught.value.diagnostics] == ["error"]
    assert "node x is reached only through current-type branches (I1)" in \
        caught.value.errors[0].message


def test_open_admittance_is_no_path():
    # common practice, no source: 0 S conducts nothing
    [message] = messages("I1: current 0 -> a 1\nY1: admittance a -> 0 0\n")
    assert message.startswith("node a is reached only through current-type branches")


# --- couplings --------------------------------------------------------------------------------

@pytest.mark.parametrize("coupling, k_text", [
    ("k 1.5", "k = 1.5 (M = 0.03 H)"),       # formula: M = 1.5·√(10 mH·40 mH) = 30 mH
    ("k -1.2", "k = -1.2 (M = -0.024 H)"),
    ("M 25 mH", "k = 1.25 (M = 0.025 H)"),   # formula: k = 25 mH / 20 mH
])
def test_k_outside_the_unit_interval(coupling, k_text):
    # circuit-language.md: coupling with k outside [-1, 1] is an error (also given by M)
    [error] = structure_errors("V1: voltage a -> 0 1\nR1: resistor a -> b 1\n"
                               "L1: inductor b -> 0 10 mH\nL2: inductor c -> 0 40 mH\n"
                               f"R2: resistor c -> 0 1\nK1: coupling L1 L2 {coupling}\n")
    assert error.message == f"coupling K1: {k_text} is outside [-1, 1]"
    assert (error.line, error.column) == (7, 1)


@pytest.mark.parametrize("coupling, k", [("k 1", 1.0), ("k -1", -1.0), ("M 20 mH", 1.0),
                                         ("M 10 mH", 0.5), ("k 0", 0.0)])
def test_k_on_the_boundary_and_inside_is_accepted(coupling, k):
    c = read_circuit(HEAD + "V1: voltage a -> 0 1\nR1: resistor a -> b 1\n"
                     "L1: inductor b -> 0 10 mH\nL2: inductor c -> 0 40 mH\n"
                     f"R2: resistor c -> 0 1\nK1: coupling L1 L2 {coupling}\n")
    link = c.couplings["K1"]
    assert link.k == pytest.approx(k, abs=1e-12)
    assert link.m == pytest.approx(k * math.sqrt(10e-3 * 40e-3), abs=1e-15)   # formula


def test_coupling_of_tiny_inductors_does_not_divide_by_zero():
    # common practice, no source: L1·L2 of two tiny values underflows; k must still come out
    c = read_circuit(HEAD + "V1: voltage a -> 0 1\nR1: resistor a -> 0 1\n"
                     "L1: inductor a -> 0 1e-200\nL2: inductor a -> 0 1e-200\n"
                     "K1: coupling L1 L2 M 0.5e-200\n")
    assert c.couplings["K1"].k == pytest.approx(0.5)                        # formula


@pytest.mark.parametrize("coupling, message", [
    ("K1: coupling L1 Lx k 0.5", "coupling K1: 'Lx' is not an element"),
    ("K1: coupling L1 R1 k 0.5", "coupling K1: 'R1' is a resistor"),
    ("K1: coupling L1 L1 k 0.5", "coupling K1 joins L1 to itself"),
])
def test_coupling_must_join_two_inductors(coupling, message):
    # circuit-language.md: coupling | L1 L2 (two inductor names)
    assert messages(f"V1: voltage a -> 0 1\nR1: resistor a -> 0 1\nL1: inductor a -> 0 1 mH\n"
                    f"{coupling}\n") == [message]


def test_a_pair_coupled_twice_is_an_error():
    # circuit-language.md: |k| ≤ 1; two couplings of one pair add their M (0.8 + 0.8 > 1)
    assert messages("V1: voltage a -> 0 1\nR1: resistor a -> b 1\nL1: inductor b -> 0 1 mH\n"
                    "L2: inductor c -> 0 1 mH\nR2: resistor c -> 0 1\n"
                    "K1: coupling L1 L2 k 0.8\nK2: coupling L2 L1 k 0.8\n") == [
        "coupling K2 joins L2 and L1 again (first by K1 at line 7)"]


# --- sense ----------------------------------------------------------------------------------

def test_sense_to_a_missing_element_or_node():
    # circuit-language.md: sense naming an element that does not exist or a node not in
    # the circuit
    errors = structure_errors("V1: voltage a -> 0 1\nR1: resistor a -> 0 1\n"
                              "E1: vcvs b -> 0 2 sense x -> 0\nR2: resistor b -> 0 1\n"
                              "F1: cccs b -> 0 2 sense R22\nH1: ccvs c -> 0 5 sense K9\n"
                              "R3: resistor c -> 0 1\n")
    assert [(e.line, e.message) for e in errors] == [
        (4, "E1 senses node 'x', which no element touches"),
        (6, "F1 senses 'R22', which is not an element"),
        (7, "H1 senses 'K9', which is not an element"),
    ]
    assert errors[1].hint == "did you mean 'R2'?"


def test_sensing_a_transformer_is_refused():
    assert messages("V1: voltage a -> 0 1\nT1: transformer a -> 0, b -> 0 2:1\n"
                    "R1: resistor b -> 0 1\nF1: cccs c -> 0 2 sense T1\nR2: resistor c -> 0 1\n"
                    ) == ["F1 senses transformer T1: only two-terminal elements can be sensed"]


# --- transformers -------------------------------------------------------------------------

def test_transformer_with_both_windings_held():
    # circuit-language.md: any structure that leaves the equations singular names the
    # elements; both windings fixed by sources is one
    [message] = messages("V1: voltage a -> 0 240\nV2: voltage b -> 0 24\n"
                         "T1: transformer a -> 0, b -> 0 ratio 10:1\n")
    assert message.startswith("transformer T1 has both windings held by ideal sources "
                              "(V1, V2)")


def test_voltage_source_across_a_winding_is_fine():
    # circuit-language.md: a voltage source straight across a transformer winding is fine
    r = solve_text(HEAD + "V1: voltage a -> 0 240 V\nT1: transformer a -> 0, b -> 0 ratio 10:1\n"
                   "R1: resistor b -> 0 8 ohm\n")
    assert r["warnings"] == []
    assert r["elements"]["R1"]["voltage"]["mag"] == pytest.approx(24.0)   # formula V1/n


# --- warnings -------------------------------------------------------------------------------

def test_node_reached_by_one_terminal_spec_example():
    # circuit-language.md: feeder.circuit:14:1: warning: node 'c3' is reached by one
    # terminal only (Rx): no current can flow in Rx; a misspelt node?
    lines = [HEAD.strip(), "V1: voltage a -> 0 1"] + \
        [f"R{k}: resistor a -> 0 {k}" for k in range(1, 12)] + ["Rx: resistor a -> c3 1"]
    text = "\n".join(lines)
    circuit = read_circuit(text, "feeder.circuit")
    [warning] = circuit.warnings
    assert format_diagnostic(warning, "feeder.circuit", text).splitlines()[0] == (
        "feeder.circuit:14:1: warning: node 'c3' is reached by one terminal only (Rx): "
        "no current can flow in Rx; a misspelt node?")
    # a warning does not stop the solution, and the contract carries it
    r = solve_text(text)
    assert [(w["line"], w["column"]) for w in r["warnings"]] == [(14, 1)]
    assert r["elements"]["Rx"]["current"]["mag"] == pytest.approx(0.0, abs=1e-12)


def test_isolated_part_gets_its_own_reference_with_a_warning():
    # circuit-language.md: a part with no conductive path to ground is not an error: one
    # of its nodes becomes its own reference and a warning names the part and the node;
    # currents and powers there are exact
    text = (HEAD + "V1: voltage a -> 0 240 V\nT1: transformer a -> 0, s -> t ratio 10:1\n"
            "R1: resistor s -> t 8 ohm\n")
    circuit = read_circuit(text)
    [warning] = circuit.warnings
    assert warning.severity == "warning" and warning.line == 3
    assert "s, t" in warning.message and "node 't' is taken as their reference" in \
        warning.message
    assert circuit.references == ("t",)
    r = solve_text(text)
    assert r["elements"]["R1"]["current"]["mag"] == pytest.approx(3.0)   # formula 24 V / 8 Ω
    assert r["elements"]["R1"]["p_w"] == pytest.approx(72.0)            # formula 24²/8
    assert r["elements"]["V1"]["current"]["mag"] == pytest.approx(0.3)  # formula I2/n


def test_check_text_returns_warnings_and_errors_without_raising():
    # DEVELOPERS.md (workflow facade): check_text never raises for input problems
    assert [d.severity for d in check_text(HEAD + "V1: voltage a -> 0 1\n"
                                           "R1: resistor a -> b 1\n")] == ["warning"]
    found = check_text(HEAD + "V1: voltage a -> 0 1\nV2: voltage a -> 0 1\n")
    assert [d.severity for d in found] == ["error"]


# --- order of the checks ---------------------------------------------------------------

def test_structure_checks_wait_for_a_clean_read():
    # common practice, no source: a half-read circuit gives false alarms, so a file with a
    # syntax error reports that error only (no loop, no dangling-node noise)
    with pytest.raises(CircuitSyntaxError) as caught:
        read_circuit(HEAD + "V1: voltage a -> 0 1\nV2: voltage a -> 0 1\nR1: resistor a -> x 4q\n")
    assert [e.message for e in caught.value.errors] == [
        "'4q' is not a number with a known prefix or unit"]
    assert isinstance(caught.value, CircuitError)


def test_every_structure_error_names_its_elements_and_has_a_hint():
    # circuit-language.md: structures with no unique solution are errors that name the
    # elements
    for body, names in [
        ("V1: voltage a -> 0 1\nV2: voltage a -> 0 1\n", ["V1", "V2"]),
        ("I1: current 0 -> a 1\nI2: current a -> 0 1\n", ["I1", "I2"]),
        ("V1: voltage a -> 0 1\nE1: vcvs b -> 0 1 sense q -> 0\nR1: resistor b -> 0 1\n",
         ["E1"]),
    ]:
        for error in structure_errors(body):
            assert all(name in error.message for name in names)
            assert error.hint


def test_coupled_coils_must_have_a_positive_semidefinite_inductance_matrix():
    # formula: stored energy ½·iᵀ·L·i ≥ 0 for passive coils; three 1 H coils with k = -0.9
    # on every pair give L = [[1, -.9, -.9], [-.9, 1, -.9], [-.9, -.9, 1]], eigenvalue -0.8
    from phasorbench.workflow import check_text
    base = ("frequency 50\nV: voltage a -> 0 1\nL1: inductor a -> 0 1\nL2: inductor b -> 0 1\n"
            "L3: inductor c -> 0 1\nR2: resistor b -> 0 1\nR3: resistor c -> 0 1\n"
            "K12: coupling L1 L2 k {k}\nK13: coupling L1 L3 k {k}\nK23: coupling L2 L3 k {k}\n")
    bad = [d for d in check_text(base.format(k=-0.9)) if d.severity == "error"]
    assert len(bad) == 1 and "negative eigenvalue" in bad[0].message
    assert "-0.8" in bad[0].message
    assert not [d for d in check_text(base.format(k=0.9)) if d.severity == "error"]


def test_element_on_one_node_is_a_warning_and_block_lines_must_differ():
    # circuit-language.md: a likely misspelling is a warning; a block's three lines are
    # three different nodes (a three-phase block joins three lines)
    from phasorbench.workflow import check_text
    found = check_text("frequency 50\nV: voltage a -> 0 1\nR: resistor a -> a 5\n"
                       "R2: resistor a -> 0 5")
    assert [(d.severity, d.line) for d in found] == [("warning", 3)]
    [error] = check_text("frequency 50\nG: voltage3 a b c -> 0 1\n"
                         "Y: load3 wye a a c -> 0 5 ohm")
    assert error.severity == "error" and error.line == 3 and "must differ" in error.message


def test_sensing_a_block_points_at_its_phases():
    # circuit-language.md: a block stands for BLOCK.a, BLOCK.b, BLOCK.c; sense takes an element
    from phasorbench.workflow import check_text
    [error] = check_text("frequency 50\nG: voltage3 a b c -> 0 1\nM: load3 wye a b c -> 0 5\n"
                         "F: cccs x -> 0 2 sense M\nRx: resistor x -> 0 1")
    assert "three-phase block" in error.message and "M.a" in error.hint


def test_a_controlled_sources_sense_node_is_not_dangling():
    # Issue case (common practice, no source: an amplifier's input is sensed, not fed)
    from phasorbench.workflow import check_text
    found = check_text("frequency 50 Hz\nV1: voltage in -> 0 1\n"
                       "E1: vcvs out -> 0 1e5 sense in -> fb\nR1: resistor out -> fb 10k\n"
                       "R2: resistor fb -> 0 1k")
    assert not [d for d in found if "one terminal only" in d.message]
    # a node that nothing senses and one terminal reaches is still a warning
    found = check_text("frequency 50 Hz\nV1: voltage in -> 0 1\nR1: resistor in -> x 1k")
    assert [d for d in found if "one terminal only" in d.message and "'x'" in d.message]
