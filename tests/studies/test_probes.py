"""The probe syntax of studies.md ("Probes"): parse tree, columns, checks against a circuit.

The meanings are the design's own table; the checks below are that table, so each names
studies.md as its source (common practice for a small expression grammar otherwise).
"""

from __future__ import annotations

import pytest

from phasorbench.errors import CircuitError
from phasorbench.studies.probes import (Current, Impedance, Ratio, Voltage, describe,
                                        parse_probe, parse_probes, ratio_unit)
from phasorbench.workflow import read_circuit

CIRCUIT = read_circuit("""frequency 50 Hz
Vs: voltage in -> 0 10 V
R1: resistor in -> out 1 kohm
C1: capacitor out -> 0 1 uF
Load: load3 wye a b c -> n 8 + j6 ohm
Src: voltage3 a b c -> 0 230 V
""")


def _errors(texts, circuit=CIRCUIT):
    with pytest.raises(CircuitError) as info:
        parse_probes(texts, circuit)
    return info.value.diagnostics


def test_every_form_of_the_table_parses_to_its_tree():
    # studies.md "Probes" table: V(n), V(a, b), I(E), Z(a, b), Z(n), X / Y
    assert parse_probe("V(out)").expr == Voltage(parse_probe("V(out)").expr.a)
    v = parse_probe("V( in ,out )").expr
    assert isinstance(v, Voltage) and (v.a.name, v.b.name) == ("in", "out")
    assert (v.a.column, v.b.column) == (4, 8)                  # columns inside the text
    i = parse_probe("I(Load.a)").expr
    assert isinstance(i, Current) and i.element.name == "Load.a"
    z = parse_probe("Z(out)").expr
    assert isinstance(z, Impedance) and z.b is None
    r = parse_probe("V(out)/I(Vs)")
    assert isinstance(r.expr, Ratio) and r.unit == "Ω"          # studies.md: V/I is Ω
    assert parse_probe("V(out) / V(in)").unit == ""             # like over like
    assert ratio_unit("A", "V") == "S"                          # SI: A/V is siemens


def test_units_and_keys_are_the_probe_text_as_given():
    # studies.md: "Results are keyed by the probe text as given"
    probes = parse_probes(["V(out)", "  Z(out, 0) ", "I(R1)", "V(out)"], CIRCUIT)
    assert [p.text for p in probes] == ["V(out)", "  Z(out, 0) ", "I(R1)"]
    assert [p.unit for p in probes] == ["V", "Ω", "A"]
    assert probes[1].expr.b.node == "0"
    assert parse_probe("V(a, gnd)").expr.b.node == "0"          # circuit-language.md: gnd


def test_an_unknown_node_points_into_the_probe_with_a_did_you_mean():
    # studies.md: column inside the probe text, did-you-mean hint
    (d,) = _errors(["V(outt)/V(in)"])
    assert d.column == 3 and d.length == 4 and d.line is None
    assert "outt" in d.message and "did you mean 'out'" in d.hint
    (d,) = _errors(["V(in)/Z(ot)"])
    assert d.column == 9 and "did you mean 'out'" in d.hint


def test_unknown_elements_blocks_and_every_problem_in_one_pass():
    # studies.md: all problems in one pass; a block's phase is I(Load.a)
    diags = _errors(["I(R2)", "I(Load)", "V(out", "Z(out, out)", "v(out)"])
    assert len(diags) == 5
    assert "did you mean 'R1'" in diags[0].hint
    assert "I(Load.a)" in diags[1].hint
    assert diags[2].column == 6 and "')'" in diags[2].message
    assert diags[3].column == 8 and "two different nodes" in diags[3].message
    assert "capital" in diags[4].hint and diags[4].column == 1


@pytest.mark.parametrize("text, column", [
    ("", None), ("V()", 3), ("V(a)/", 6), ("V(a)/V(b)/V(c)", 10), ("I(R1, R2)", 5),
    ("V(a) V(b)", 6), ("W(a)", 1), ("V[a]", 2),
])
def test_malformed_probes_say_where(text, column):
    # common practice, no source: a parser error names the first offending column
    with pytest.raises(CircuitError) as info:
        parse_probe(text)
    assert info.value.diagnostics[0].column == column


def test_descriptions_read_as_the_table():
    # studies.md "Probes" table, the meaning column
    assert describe(parse_probe("V(a, b)")) == "voltage of a minus voltage of b"
    assert "sources zeroed" in describe(parse_probe("Z(a)"))
