"""The safety cautions: one text, shown by the page, the sheet and the README.

A phasor result can look like a go-ahead for work on real equipment. These notes say
what the numbers do not cover and where the real dangers of capacitor work lie. Keep
the wording here only; every shell reads `CAUTIONS` and `SCOPE_NOTE`.

Code clauses are quoted as they were checked for this project; standards change
between editions, which is why the text asks the reader to check the edition in force.
"""

from __future__ import annotations

__all__ = ["CAUTIONS", "HARMONIC_CAUTIONS", "HARMONIC_SOURCES", "SCOPE_NOTE", "SWEEP_CAUTIONS",
           "TOLERANCE_NOTE", "cautions_text"]

#: One sentence for the foot of every result: what the numbers are and are not.
SCOPE_NOTE = (
    "Results are linear, sinusoidal steady-state estimates from ideal component models. "
    "They are not a protection, short-circuit or arc-flash study, and they say nothing "
    "about switching transients. Local electrical codes and a licensed engineer or "
    "electrician decide what is safe for a real installation."
)

#: Under every tolerance study (page and sheet): what the spread does not cover.
TOLERANCE_NOTE = (
    "The spread is that of the stated tolerances only, drawn independently per part "
    "(a named value once per run). Parts also drift with age and temperature (capacitor "
    "banks lose capacitance, so a detuned bank's tuning moves), and a worst case near a "
    "resonance can overload a bank or its reactor: check the ratings at the worst case, "
    "and let local codes and licensed practice decide for a real installation."
)

#: (title, text) pairs, most dangerous first.
CAUTIONS: tuple[tuple[str, str], ...] = (
    (
        "Stored charge can kill",
        "A capacitor or capacitor bank stays charged after it is disconnected, up to the "
        "peak of the voltage it last saw, and can deliver a lethal shock. Discharge "
        "devices are required: NEC (NFPA 70) 460.6 asks that the residual voltage of "
        "capacitors rated 600 V or less fall to 50 V or less within 1 minute of "
        "disconnection (later editions extend this to 1000 V; check the edition in "
        "force, and the standard that applies where you work). Do not rely on a "
        "discharge resistor alone: before touching, verify zero voltage at every "
        "terminal with a rated tester, then short the terminals together and to ground.",
    ),
    (
        "Harmonic resonance",
        "A shunt capacitor and the inductance of the supply form a parallel resonance. "
        "Adding capacitance lowers its frequency, roughly at the harmonic order "
        "h = √(short-circuit power / capacitor reactive power). Near a harmonic that "
        "loads produce (5th, 7th, 11th, 13th) it can magnify harmonic voltages and "
        "currents, overheat the capacitors and blow fuses. A result at one frequency "
        "does not show this: sweep the frequency, and for real banks ask for a harmonic "
        "study or consider a detuned (reactor-protected) bank.",
    ),
    (
        "Overvoltage at light load",
        "Capacitance sized for full load leaves the power factor leading when the load "
        "drops, and the voltage then rises along the feeder. Check the capacitor voltage "
        "and current against their ratings at the lightest load as well as the heaviest, "
        "and switch capacitance off as the load falls.",
    ),
    (
        "Switching transients are not covered",
        "Energising a capacitor bank, above all next to one already energised, draws a "
        "high-frequency inrush current and causes overvoltages; reclosing onto a bank "
        "still charged with the opposite polarity is worse. Steady-state phasor results "
        "say nothing about these events: wait out the discharge time before "
        "re-energising, and have switching duty checked separately.",
    ),
    (
        "Scope of the results",
        "Every element is ideal and linear: no saturation, losses only where modelled, "
        "no temperature or ageing, one frequency at a time. The results are estimates for "
        "study and teaching, not a protection, short-circuit or arc-flash study.",
    ),
    (
        "Codes and licensed practice come first",
        "Follow the electrical code that applies (for example the NEC, IEC 60364, and "
        "the rules of the supply utility) and the capacitor maker's instructions. Any work "
        "on a real installation is for licensed engineers and electricians.",
    ),
)


#: (title, text) pairs the harmonic study shows beside its results (page, sheet, terminal).
HARMONIC_CAUTIONS: tuple[tuple[str, str], ...] = (
    (
        "A bank near resonance needs a real harmonic study",
        "Where the network seen from a capacitor resonates near an order that loads "
        "inject, small harmonic currents become large harmonic voltages and capacitor "
        "currents: capacitors overheat, fuses blow, and other equipment on the bus sees "
        "the distortion. The spectra here are assumptions written into the circuit; "
        "real drives, the supply's own background distortion and other plants' banks "
        "change the picture. Before a bank is bought, moved or enlarged, have a "
        "qualified engineer measure and study the real network, and consider a detuned "
        "(reactor-protected) bank or a filter.",
    ),
    (
        "Capacitor overvoltage and overcurrent",
        "Harmonics add to a capacitor's rms current and to its peak voltage; the duty "
        "shown is against the continuous limits of IEEE Std 18-2002 as recalled here "
        "(110 % rms voltage, 120 % peak voltage, 135 % rms current, 135 % reactive "
        "power of rating). A unit beyond them ages fast or fails. Check the maker's "
        "ratings and the standard that applies where you work, and switch the bank off "
        "when measured distortion is high.",
    ),
    (
        "Harmonic limits are the utility's and the standard's to set",
        "The voltage limits at the point of common coupling follow IEEE Std 519-2014 "
        "Table 1 as recalled here; the supply utility's own rules, the contract and the "
        "standard in force (and its current-distortion limits, not computed here) "
        "decide what applies. Defer to local codes, the utility and licensed "
        "engineers.",
    ),
)

#: Beside a frequency response (the sheet's section): what a resonance in it means for a
#: real bank. The same texts as above, picked by title, so each lives here once.
SWEEP_CAUTIONS: tuple[tuple[str, str], ...] = tuple(
    next(c for c in CAUTIONS + HARMONIC_CAUTIONS if c[0] == title)
    for title in ("Harmonic resonance", "A bank near resonance needs a real harmonic study",
                  "Codes and licensed practice come first"))

#: The sources of the harmonic study's limits and definitions, named with its tables.
HARMONIC_SOURCES = (
    "Powers: IEEE Std 1459-2010, clause 3.2 (single-phase non-sinusoidal definitions).",
    "PCC voltage limits: IEEE Std 519-2014, Table 1 (values as recalled, from memory).",
    "Capacitor duty: IEEE Std 18-2002 continuous limits (values as recalled, from memory).",
)


def cautions_text(width: int = 0) -> str:
    """The cautions as plain text for a terminal or a README: titles, then text.

    ``width`` > 0 wraps the text to that many columns (indented under its title).
    """
    import textwrap

    blocks = []
    for heading, body in CAUTIONS:
        if width > 0:
            body = textwrap.fill(body, width=width, initial_indent="  ", subsequent_indent="  ")
        blocks.append(f"{heading}\n{body}")
    return "\n\n".join(blocks)
