"""The page's choices and words of `presentation/display.py`: which tab a circuit opens on,
and the power factor of an element that takes no power."""

from __future__ import annotations

from phasorbench.presentation import formatting as fmt
from phasorbench.presentation.display import solve_display, suggested_tool, tool_choices
from phasorbench.workflow import solve_text

#: A balanced Wheatstone bridge on a 1 V, 1 kHz instrument supply (invented): equal arms,
#: so the detector sees no voltage and carries no current (textbook bridge balance,
#: R1/R2 = R3/R4).
BRIDGE = """title Balanced bridge
frequency 1 kHz
Vs: voltage top -> 0 1 V
R1: resistor top -> l 1 kohm
R2: resistor l -> 0 1 kohm
R3: resistor top -> r 1 kohm
R4: resistor r -> 0 1 kohm
Rd: resistor l -> r 100 ohm
"""

#: 230 V 50 Hz mains into an RL load (invented): real power is drawn.
MAINS_RL = """frequency 50 Hz
V1: voltage a -> 0 230 V
Z1: impedance a -> 0 8 + j6 ohm
"""

#: The same mains with a capacitor alone: no real power, nothing to correct.
MAINS_C = """frequency 50 Hz
V1: voltage a -> 0 230 V
C1: capacitor a -> 0 10 uF
"""

THREE = """frequency 50 Hz
G: voltage3 A B C -> 0 400 V line
M: load3 wye A B C -> 0 16 + j12 ohm
"""


def test_the_tab_a_circuit_opens_on():
    # common practice, no source: correction is for a mains supply delivering real power
    assert suggested_tool(solve_text(MAINS_RL)) == "correct"
    assert suggested_tool(solve_text(BRIDGE)) is None          # a 1 V instrument bridge
    assert suggested_tool(solve_text(MAINS_C)) is None         # P = 0 for an ideal C (formula)
    assert suggested_tool(solve_text(THREE)) == "three-phase"
    # the same RL load on a 1 kHz signal generator is no mains supply
    assert suggested_tool(solve_text(MAINS_RL.replace("50 Hz", "1 kHz"))) is None
    # a 12 V bench supply at 50 Hz is no mains supply either (below 100 V less 10 %)
    assert suggested_tool(solve_text(MAINS_RL.replace("230 V", "12 V"))) is None
    # peak amplitudes: 325 V peak is 230 V RMS (formula V = V̂/√2)
    peak = "amplitudes peak\n" + MAINS_RL.replace("230 V", "325 V")
    assert suggested_tool(solve_text(peak)) == "correct"
    assert tool_choices(solve_text(BRIDGE))["suggested"] is None


def test_an_element_that_takes_no_power_has_no_power_factor():
    result = solve_text(BRIDGE)
    # textbook bridge balance: V(l) = V(r) = 0.5 V, so Rd carries 0 A and takes 0 VA
    assert abs(result["elements"]["Rd"]["s_va"]) < 1e-15
    rows = {r["name"]: r for r in solve_display(result)["elements"]}
    assert rows["Rd"]["text"]["pf"] == fmt.NO_POWER
    assert "unity" not in rows["Rd"]["text"]["pf"]
    # an arm does take power and is a resistor: unity (contract: pf = |P|/|S| = 1)
    assert rows["R1"]["text"]["pf"] == "1 unity"
    # common practice, no source: no power, no angle to quote
    assert fmt.power_factor_of(1.0, "unity", 0.0) == fmt.NO_POWER
    assert fmt.power_factor_of(0.8, "lagging", 5.0) == "0.8 lagging"
    assert fmt.power_factor_of(1.0, "unity", 1e-20, floor=1e-9) == fmt.NO_POWER
