"""The formula study (studies/formula.py): textbook closed forms, the formula evaluated
at the analysis frequency against the numeric solve, balance conditions, bad input and
the size and time limits."""

from __future__ import annotations

import math
from pathlib import Path

import pytest
import sympy as sp

from phasorbench.errors import CircuitError
from phasorbench.studies.formula import run_formula
from phasorbench.workflow import read_circuit, solve_text

from ..helpers import formula_sympy, formula_value, phasor

SAMPLES = Path(__file__).resolve().parents[2] / "samples"
s = sp.Symbol("s")
R1, R2, R3, R4, C1, C4, L1, Lx, Rx = sp.symbols("R1 R2 R3 R4 C1 C4 L1 Lx Rx")


def formula(text, probe, **kw):
    return run_formula(read_circuit(text, "<test>"), probe, **kw)


def expr_of(result):
    return formula_sympy(result["formula"]["tree"])


RC = """frequency 1 kHz
Vin: voltage in -> 0 1 V
R1: resistor in -> out 1 kohm
C1: capacitor out -> 0 100 nF
"""


def test_rc_low_pass_is_one_over_one_plus_src():
    r = formula(RC, "V(out)/V(in)")
    # textbook first-order low-pass H(s) = 1/(1 + sRC) (any circuits text, e.g. Nilsson &
    # Riedel, Electric Circuits, ch. 14; from memory)
    assert sp.simplify(expr_of(r) - 1 / (1 + s * R1 * C1)) == 0
    (pole,) = r["poles"]
    # pole at s = -1/(RC) = -10,000 rad/s, same textbook form
    assert math.isclose(pole["re"], -1e4, rel_tol=1e-12) and pole["im"] == 0
    assert r["zeros"] == []


def test_values_not_kept_are_exact_rationals_of_the_text():
    r = formula(RC, "V(out)/V(in)", keep=["C1"])
    # 1 kohm is 1000 exactly (studies.md: "4.7 kohm is 4700 exactly"), so H = 1/(1000 C1 s + 1)
    assert sp.simplify(expr_of(r) - 1 / (1 + 1000 * s * C1)) == 0
    r = formula(RC, "V(out)/V(in)", keep=[])
    # 100 nF is 1/10,000,000 F exactly: H = 10000/(s + 10000), same textbook form
    assert sp.simplify(expr_of(r) - sp.Integer(10000) / (s + 10000)) == 0


def test_divider_ratio():
    text = "frequency 50 Hz\nV1: voltage a -> 0 10 V\nR1: resistor a -> b 3k\nR2: resistor b -> 0 1k\n"
    r = formula(text, "V(b)/V(a)")
    # voltage divider R2/(R1 + R2) (textbook, common practice)
    assert sp.simplify(expr_of(r) - R2 / (R1 + R2)) == 0
    r = formula(text, "V(b)")
    V1 = sp.Symbol("V1")
    assert sp.simplify(expr_of(r) - V1 * R2 / (R1 + R2)) == 0     # same divider


def test_series_rlc_impedance_and_resonance():
    # check-values C5: R = 2 Ω, L = 1 mH, C = 0.4 µF: f0 = 7957.75 Hz, Q = 25
    text = """frequency 50 Hz
Is: current 0 -> a 1 A
R1: resistor a -> b 2 ohm
L1: inductor b -> c 1 mH
C1: capacitor c -> 0 0.4 uF
"""
    r = formula(text, "Z(a)")
    # series RLC: Z(s) = R + sL + 1/(sC) (textbook)
    assert sp.simplify(expr_of(r) - (R1 + s * L1 + 1 / (s * C1))) == 0
    y = formula(text, "I(R1)/V(a)")
    # admittance sC/(s²LC + sRC + 1): poles at ω0 = 1/√(LC), damping ζ = 1/(2Q)
    poles = y["poles"]
    assert len(poles) == 2
    for p in poles:
        assert math.isclose(p["frequency_hz"], 7957.75, rel_tol=1e-6)     # check-values C5
        assert math.isclose(1 / (2 * p["damping"]), 25, rel_tol=1e-9)      # check-values C5
    (zero,) = y["zeros"]
    assert zero["magnitude_rad_s"] == 0                                     # the s in sC


WHEATSTONE = """frequency 50 Hz
V1: voltage top -> 0 10 V
R1: resistor top -> l 1k
R2: resistor l -> 0 2k
R3: resistor top -> r 1.5k
R4: resistor r -> 0 3.1k
"""


def test_wheatstone_balance():
    r = formula(WHEATSTONE, "V(l, r)/V(top)", solve_for="R4")
    (condition,) = r["solve_for"]["conditions"]
    (solution,) = condition["solutions"]
    # Wheatstone balance R1·R4 = R2·R3 (textbook; from memory)
    assert sp.simplify(formula_sympy(solution["tree"]) - R2 * R3 / R1) == 0
    assert math.isclose(solution["value"]["re"], 2000 * 1500 / 1000, rel_tol=1e-12)
    assert r["solve_for"]["single_value"] is True
    assert condition["holds"] is False          # 3.1k is off balance (3k balances)


MAXWELL = """frequency 1 kHz
Vs: voltage top -> 0 1 V
Lx: inductor top -> m 50 mH
Rx: resistor m -> left 7 ohm
R2: resistor top -> right 1k
R3: resistor left -> 0 500 ohm
R4: resistor right -> 0 80k
C4: capacitor right -> 0 100 nF
"""


def test_maxwell_bridge_balance():
    r = formula(MAXWELL, "V(left, right)/V(top)", solve_for="Lx")
    by_power = {c["power_of_s"]: c for c in r["solve_for"]["conditions"]}
    (sol,) = by_power[1]["solutions"]
    # Maxwell inductance bridge: L = R2·R3·C (from memory; the Maxwell–Wien bridge of
    # instrumentation texts, e.g. Helfrick & Cooper, Modern Electronic Instrumentation)
    assert sp.simplify(formula_sympy(sol["tree"]) - R2 * R3 * C4) == 0
    assert math.isclose(sol["value"]["re"], 1000 * 500 * 100e-9, rel_tol=1e-12)
    r = formula(MAXWELL, "V(left, right)/V(top)", solve_for="Rx")
    by_power = {c["power_of_s"]: c for c in r["solve_for"]["conditions"]}
    (sol,) = by_power[0]["solutions"]
    # and R = R2·R3/R4 (same source, from memory)
    assert sp.simplify(formula_sympy(sol["tree"]) - R2 * R3 / R4) == 0


@pytest.mark.parametrize("text, probe", [
    (RC, "V(out)/V(in)"), (RC, "I(C1)"), (WHEATSTONE, "V(l, r)"), (MAXWELL, "I(Rx)"),
    (MAXWELL, "V(left, right)/I(Vs)"),
])
def test_formula_at_the_analysis_frequency_equals_the_solve(text, probe):
    r = formula(text, probe)
    solved = solve_text(text, "<test>")
    numeric = _probe_value(solved, probe)
    # the numeric solve (held to lcapy by tests/reference) at 1e-12 relative (issue 16)
    assert abs(formula_value(r) - numeric) <= 1e-12 * abs(numeric)
    assert r["check"]["ok"] and r["check"]["relative_difference"] <= 1e-12


def _probe_value(result, probe):
    def one(text):
        kind, inside = text[0], text[2:-1]
        if kind == "I":
            return phasor(result["elements"][inside]["current"])
        names = [n.strip() for n in inside.split(",")]
        v = [phasor(result["nodes"][n]) if n != "0" else 0 for n in names]
        return v[0] - (v[1] if len(v) > 1 else 0)
    parts = [p.strip() for p in probe.split("/")]
    return one(parts[0]) if len(parts) == 1 else one(parts[0]) / one(parts[1])


def _sample_cases():
    out = []
    for path in sorted(SAMPLES.glob("*.circuit")):
        circuit = read_circuit(path.read_text(encoding="utf-8"), path.name)
        nodes = [n for n in circuit.nodes() if n != "0"][:2]
        elements = [e for e in circuit.elements if circuit.elements[e].kind != "transformer"]
        out += [(path.name, f"V({n})") for n in nodes] + [(path.name, f"I({elements[-1]})")]
    return out


@pytest.mark.parametrize("name, probe", _sample_cases())
def test_every_sample_formula_agrees_with_its_solve(name, probe):
    text = (SAMPLES / name).read_text(encoding="utf-8")
    r = formula(text, probe, keep=[])
    solved = solve_text(text, name)
    numeric = _probe_value(solved, probe)
    # the numeric solve (held to lcapy by tests/reference) at 1e-12 relative (issue 16)
    assert abs(formula_value(r) - numeric) <= 1e-12 * max(abs(numeric), 1e-300)


def test_named_value_shares_one_symbol():
    text = ("frequency 50 Hz\nCx = 10 uF\nV1: voltage a -> 0 1 V\nR1: resistor a -> b 100\n"
            "C1: capacitor b -> 0 Cx\nC2: capacitor b -> 0 Cx\n")
    r = formula(text, "V(b)/V(a)")
    Cx = sp.Symbol("Cx")
    # two equal capacitors in parallel: 1/(1 + sR·2C) (textbook parallel capacitance)
    assert sp.simplify(expr_of(r) - 1 / (1 + 2 * s * R1 * Cx)) == 0
    (entry,) = [e for e in r["symbols"] if e["name"] == "Cx"]
    assert entry["elements"] == ["C1", "C2"] and entry["named_value"]


def test_controlled_source_gain_stays_symbolic():
    text = (SAMPLES / "transconductance-stage.circuit").read_text(encoding="utf-8")
    r = formula(text, "V(out)/V(in)", keep=["Gm", "Rload", "Cstray"])
    Gm, Rl, Cs = sp.symbols("Gm Rload Cstray")
    # a transconductance stage into R‖C: -gm·R/(1 + sRC) (textbook small-signal stage)
    assert sp.simplify(expr_of(r) + Gm * Rl / (1 + s * Rl * Cs)) == 0


# -- bad input ----------------------------------------------------------------------


def test_every_input_problem_in_one_error():
    with pytest.raises(CircuitError) as info:
        formula(RC, "V(ot)/V(in)", keep=["R9", "C1"], solve_for="Q1")
    messages = [d.message for d in info.value.diagnostics]
    # studies.md: all problems in one pass, a did-you-mean where one is close
    assert len(messages) == 3
    assert any("'ot' is not a node" in m for m in messages)
    assert any("--keep 'R9'" in m for m in messages)
    assert any("--solve-for 'Q1'" in m for m in messages)
    probe = [d for d in info.value.diagnostics if "'ot'" in d.message][0]
    assert probe.column == 3 and "did you mean 'out'" in probe.hint


def test_solve_for_an_element_outside_the_numerator():
    with pytest.raises(CircuitError) as info:
        formula(RC, "V(out)/V(in)", solve_for="R1")
    (d,) = info.value.diagnostics
    # H = 1/(1 + sRC): no value of R makes the numerator 1 vanish (textbook form)
    assert "does not appear in the numerator" in d.message


def test_size_limit_on_unknowns():
    big = "frequency 50 Hz\nV1: voltage n0 -> 0 1 V\n" + "".join(
        f"R{k}: resistor n{k} -> n{k + 1} 1 ohm\nC{k}: capacitor n{k + 1} -> 0 1 uF\n"
        for k in range(45))
    with pytest.raises(CircuitError) as info:
        formula(big, "V(n45)", keep=[])
    # common practice, no source: a bounded study says which limit it hit
    assert "size limit" in info.value.diagnostics[0].message
    assert "unknowns" in info.value.diagnostics[0].message


def test_size_limit_on_terms():
    with pytest.raises(CircuitError) as info:
        formula(MAXWELL, "V(left, right)", max_terms=5)
    (d,) = info.value.diagnostics
    # common practice, no source: the error names the limit and suggests --keep
    assert "size limit" in d.message and "terms" in d.message and "--keep" in d.hint


def test_time_limit_stops_the_worker_and_the_next_formula_still_runs():
    ladder = "frequency 50 Hz\nV1: voltage n0 -> 0 1 V\n" + "".join(
        f"R{k}: resistor n{k} -> n{k + 1} 1 ohm\nC{k}: capacitor n{k + 1} -> 0 1 uF\n"
        f"L{k}: inductor n{k + 1} -> 0 1 mH\n" for k in range(7))
    with pytest.raises(CircuitError) as info:
        formula(ladder, "Z(n3, n7)", time_limit=0.3)
    (d,) = info.value.diagnostics
    # common practice, no source: the error names the limit and suggests keeping fewer
    assert "time limit" in d.message and "keep fewer" in d.hint
    r = formula(RC, "V(out)/V(in)")
    assert sp.simplify(expr_of(r) - 1 / (1 + s * R1 * C1)) == 0   # textbook, as above
