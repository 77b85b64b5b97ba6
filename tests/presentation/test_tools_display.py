"""The power tools' words of `presentation/tools_display.py`: a correction that needs no
capacitor reads as a plain answer, and a supply's P + jQ writes the sign of Q once."""

from __future__ import annotations

import math

import pytest

from phasorbench.presentation.tools_display import correction_display, supply_power
from phasorbench.tools import correct_power_factor
from phasorbench.workflow import read_circuit

#: An invented 230 V, 50 Hz supply into 8 + j2 Ω: PF = 8/√68 ≈ 0.9701 lagging.
GOOD = """frequency 50 Hz
V1: voltage a -> 0 230 V
Z1: impedance a -> 0 8 + j2 ohm
"""


def _fact(shown: dict, key: str) -> dict:
    return next(f for f in shown["facts"] if f["key"] == key)


def test_no_correction_needed_reads_as_an_answer():
    r = correct_power_factor(read_circuit(GOOD), "V1", 0.95)
    shown = correction_display(r)
    # common practice, no source: a load already at its target needs nothing added,
    # so there is nothing to append, no units, no ratings and no capacitor cautions
    assert shown["heading"] == "V1: no correction needed"
    assert shown["lines"] == [] and shown["comment"] == "" and shown["capacitors"] == []
    assert shown["standard"] is None and shown["cautions"] == [] and shown["scope_note"]
    assert [f["key"] for f in shown["facts"]] == ["pf", "supply", "supply_current", "reason"]
    # PF = R/|Z| = 8/√68 of a series RL load (textbook impedance triangle).
    pf = 8 / math.sqrt(68)
    fact = _fact(shown, "pf")
    assert fact["value"].startswith(f"{pf:.4f} lagging now") and "target 0.95 lagging" in \
        fact["value"]
    assert fact["flag"] == "ok" and "✓" in fact["value"]          # a flag always with words
    # P = |V|²·R/|Z|², Q = |V|²·X/|Z|² (textbook power triangle): 6.224 kW + 1.556 kvar.
    p, q = 230 ** 2 * 8 / 68, 230 ** 2 * 2 / 68
    assert _fact(shown, "supply")["value"] == f"{p / 1e3:.4g} kW + {q / 1e3:.4g} kvar"
    # I = V/|Z| (Ohm's law): 27.89 A.
    assert _fact(shown, "supply_current")["value"].startswith(f"{230 / math.sqrt(68):.4g} A")
    assert _fact(shown, "reason")["value"] == r["reason"]


def test_a_normal_correction_still_has_its_lines():
    # PF = R/|Z| = 8/10 = 0.8 lagging for 8 + j6 Ω (textbook impedance triangle): below
    # 0.95, so a capacitor is sized and its line offered.
    shown = correction_display(correct_power_factor(read_circuit(GOOD.replace("j2", "j6")),
                                                    "V1", 0.95))
    assert shown["lines"] and shown["comment"].startswith("# power-factor correction of V1")
    assert shown["heading"].startswith("V1: capacitor at")


@pytest.mark.parametrize("q, floor, words", [
    (3000.0, 0.0, "4 kW + 3 kvar"),
    (-1569.0, 0.0, "4 kW − 1.569 kvar"),
    (-2e-9, 1e-6, "4 kW + 0 var"),          # round-off of a unity supply
])
def test_supply_power_writes_the_sign_once(q, floor, words):
    # common practice, no source: a complex power is written P ± j|Q|, one sign.
    assert supply_power({"p_w": 4000.0, "q_var": q}, floor) == words


def test_a_correction_to_a_leading_target_writes_the_supplys_q_with_its_sign_once():
    # power triangle (Alexander & Sadiku, ch. 11): at 0.9 leading from 8 + j2 Ω the
    # supply's Q is −P·tan(acos 0.9) after the capacitor; common practice, no source:
    # it is written "P − |Q|", never "P + −|Q|"
    r = correct_power_factor(read_circuit(GOOD), "V1", 0.9, leading=True)
    assert r["supply_after"]["q_var"] == pytest.approx(
        -r["supply_after"]["p_w"] * math.tan(math.acos(0.9)), rel=1e-9)
    after = _fact(correction_display(r), "supply")["value"].split(" → ")[1]
    assert " − " in after and "+ -" not in after and "−" not in after.split(" − ")[1]
