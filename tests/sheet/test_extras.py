"""Optional sections: the power tools' results on the sheet (sheet/extras.py, powertools.py)."""

from __future__ import annotations

import pytest

from phasorbench.errors import CircuitError
from phasorbench.sheet import render_sheet
from phasorbench.sheet.extras import extra_section, tool_section
from phasorbench.sheet.powertools import run_power_tools

from .conftest import NOW, visible_text

#: check-values C14: 4 kW at PF 0.8 lagging on 120 V RMS, 60 Hz, corrected to 0.95
#: lagging: C = 310.438 µF, Qc = 1685.26 var (Alexander & Sadiku, power-factor
#: correction worked example; book answer 310.5 µF). Z = V²/S∠φ = 2.304 + j1.728 Ω.
MOTOR = """\
title Motor on 120 V
frequency 60 Hz
V1: voltage   a -> 0   120 V
Z1: impedance a -> 0   2.304 + j1.728 ohm
"""

#: check-values C29: 120∠0° V, Z1 = 4+j3 to m, Z2 = −j10 shunt at m, Z3 = 2+j5 to the
#: terminal t: V_th = 148.842 V ∠-29.7449°, Z_th = 8.15385 + j5.76923 Ω.
THEVENIN = """\
frequency 50 Hz
Vs: voltage   s -> 0   120 V
Z1: impedance s -> m   4 + j3 ohm
Z2: impedance m -> 0   -j10 ohm
Z3: impedance m -> t   2 + j5 ohm
Rt: resistor  t -> 0   1 Mohm
"""


def test_generic_section_formats_by_key():
    section = extra_section({
        "title": "Bank", "q_c_var": -1685.26, "c_f": 310.438e-6, "pf_after": 0.95,
        "ratio_rel": 0.5, "ok": True, "thevenin_v": {"re": 129.231, "im": -73.8462,
                                                     "mag": 148.842, "deg": -29.7449},
        "place": {"nodes": ["a", "0"], "x_ohm": 0.768}, "scope_note": "said elsewhere",
        "warnings": [{"line": 3, "message": "near the 5th", "hint": "study it"},
                     {"line": None, "message": "the circuit's own", "hint": ""}]},
        "Correction", known=["the circuit's own"])
    rows = {r["label"]: r["text"] for r in section["rows"]}
    # Units from the key (SI symbols, common practice, no source); check-values C14, C29.
    assert rows == {"q_c_var": "-1.685 kvar", "c_f": "310.4 µF", "pf_after": "0.95",
                    "ratio_rel": "0.5", "ok": "yes", "thevenin_v": "148.8 V ∠-29.74°",
                    "place › nodes": "a, 0", "place › x_ohm": "768 mΩ"}
    assert section["title"] == "Bank"
    assert section["notes"] == ["line 3: near the 5th (study it)"]
    assert extra_section(None, "x") is None


def test_correction_on_the_sheet_is_the_pages_panel():
    tools = run_power_tools(MOTOR, correct={"source": "V1", "target": 0.95})
    assert tools["port"] is None
    section = tool_section(tools["correction"], "correction")
    facts = {f["term"]: f["value"] for f in section["facts"]}
    # C = 310.438 µF (check-values C14, 6 digits), as the page's correction panel says it.
    assert facts["capacitance"] == "310.438 µF (1 unit)" and section["rows"] == []
    assert section["lines"] == ["Cpf1: capacitor a -> 0 310.437533629 uF"]
    assert any(c["title"] == "Stored charge can kill" for c in section["cautions"])
    html = render_sheet(MOTOR, now=NOW, **tools)
    shown = visible_text(html)
    assert "Power-factor correction" in shown and "310.438 µF" in shown
    assert "0.8 lagging → 0.95 lagging" in shown


def test_a_correction_not_needed_on_the_sheet_reads_plainly():
    # check-values C14's motor (4 kW at 0.8 lagging, 120 V) asked for 0.7: nothing to add;
    # Q = P·tan(acos 0.8) = 3 kvar (power triangle).
    tools = run_power_tools(MOTOR, correct={"source": "V1", "target": 0.7})
    section = tool_section(tools["correction"], "correction")
    assert section["title"] == "V1: no correction needed" and section["rows"] == []
    assert section["lines"] == [] and section["capacitors"] == []
    assert section["cautions"] == [] and section["standard"] is None
    facts = {f["term"]: f["value"] for f in section["facts"]}
    assert facts["supply P + jQ"] == "4 kW + 3 kvar"                          # C14
    assert facts["power factor"].startswith("0.8 lagging now; target 0.7 lagging")
    shown = visible_text(render_sheet(MOTOR, now=NOW, **tools))
    assert "V1: no correction needed" in shown and "no capacitor is needed" in shown
    assert "Lines to add to the circuit" not in shown and "Capacitors" not in shown
    assert "Standard bank ratings" not in shown


def test_port_on_the_sheet():
    tools = run_power_tools(THEVENIN, port=("t", "0"))
    shown = visible_text(render_sheet(THEVENIN, now=NOW, **tools))
    # check-values C29: V_th = 148.842 V ∠-29.7449° (4 digits shown) and
    # Z_th = 8.15385 + j5.76923 Ω; the 1 MΩ probe changes them below the fourth digit.
    assert "Port equivalent" in shown and "148.8 V ∠-29.74°" in shown
    assert "8.154 + j5.769 Ω" in shown


def test_tool_input_errors_are_circuit_errors():
    with pytest.raises(CircuitError):
        run_power_tools(MOTOR, correct={"source": "Z1", "target": 0.95})   # not a source
    with pytest.raises(CircuitError):
        run_power_tools(MOTOR, port=("a", "nowhere"))
    assert run_power_tools(MOTOR) == {"correction": None, "port": None}
