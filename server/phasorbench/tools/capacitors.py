"""Shunt-capacitor duty: ratings, resonance, stored charge — the numbers around a bank.

A correction result is only useful with the facts a plant engineer checks next: what
the unit delivers at the voltage it really sees, where it resonates with the supply,
whether it runs inside its standard's limits, how much charge it holds and what
discharge resistor brings that down in time. Each is a closed formula kept here, away
from the circuit solves, so each can be checked against its source on its own.
"""

from __future__ import annotations

import math

__all__ = [
    "CHARACTERISTIC_HARMONICS",
    "IEEE18_EDITION",
    "IEEE18_LIMITS",
    "NEAR_HARMONIC_BAND",
    "capacitor_duty",
    "discharge_requirement",
    "discharge_resistor_max",
    "ieee18_check",
    "near_characteristic_harmonic",
    "reactive_power",
    "resonance_order",
    "stored_energy",
]

#: Harmonic orders that loads commonly produce: 6-pulse converters give 5, 7, 11, 13;
#: single-phase and unbalanced loads add the 3rd. A resonance near one is a warning.
CHARACTERISTIC_HARMONICS = (3, 5, 7, 11, 13)
#: ±10 %: the rule h = √(S_sc/Q_c) is itself only that good on real networks, so
#: anything closer than this to a characteristic order is a real risk.
NEAR_HARMONIC_BAND = 0.10

IEEE18_EDITION = "IEEE Std 18-2002"
#: Continuous operating limits of a shunt power capacitor, per unit of its rating:
#: IEEE Std 18-2002 (110 % rms voltage, 120 % peak voltage including harmonics,
#: 135 % rms current, 135 % reactive power).
IEEE18_LIMITS = {"voltage_rms": 1.10, "voltage_peak": 1.20, "current_rms": 1.35, "kvar": 1.35}


def reactive_power(capacitance: float, voltage_rms: float, frequency: float) -> float:
    """Reactive power a capacitor supplies, Q = ωCV² (var, positive)."""
    return 2.0 * math.pi * frequency * capacitance * voltage_rms ** 2


def resonance_order(x_c: float, x_network: float) -> float | None:
    """Parallel-resonance harmonic order of a capacitor with an inductive network.

    The network behind the capacitor is taken as an inductance, its reactance at
    harmonic h being ``h·x_network``, and the capacitor's ``x_c/h``; they resonate where
    the two are equal, ``h = √(x_c/x_network)``. With ``x_network = V²/S_sc`` and
    ``x_c = V²/Q_c`` this is the familiar ``h = √(S_sc/Q_c)``. None when the network is
    not inductive (no such resonance).

    >>> round(resonance_order(0.768, 0.013248), 5)
    7.61387
    """
    if not (x_network > 0 and x_c > 0) or not math.isfinite(x_c / x_network):
        return None
    return math.sqrt(x_c / x_network)


def near_characteristic_harmonic(order: float | None,
                                 orders=CHARACTERISTIC_HARMONICS,
                                 band: float = NEAR_HARMONIC_BAND) -> int | None:
    """The characteristic harmonic within ``band`` (relative) of ``order``, or None."""
    if order is None:
        return None
    for h in orders:
        if abs(order - h) <= band * h:
            return h
    return None


def capacitor_duty(harmonic_voltages: dict[float, float]) -> dict:
    """Per-unit duty of a capacitor from its applied voltage, harmonic by harmonic.

    ``harmonic_voltages`` maps the order h (relative to the rated frequency) to the
    rms voltage of that harmonic in per unit of the rated voltage. The capacitor's
    current at h is h·V_h pu (its admittance rises with frequency) and its reactive
    power h·V_h² pu. The peak voltage takes every harmonic's peak as coinciding, the
    worst case, as a rating check must.

    >>> d = capacitor_duty({1: 1.05, 5: 0.06, 7: 0.03})
    >>> round(d["voltage_rms"], 5), round(d["voltage_peak"], 5), round(d["kvar"], 4)
    (1.05214, 1.14, 1.1268)
    """
    values = [(float(h), float(v)) for h, v in harmonic_voltages.items()]
    return {
        "voltage_rms": math.sqrt(sum(v * v for _, v in values)),
        "voltage_peak": sum(abs(v) for _, v in values),
        "current_rms": math.sqrt(sum((h * v) ** 2 for h, v in values)),
        "kvar": sum(h * v * v for h, v in values),
    }


def ieee18_check(duty: dict) -> dict:
    """Compare a ``capacitor_duty`` result with the continuous limits of IEEE Std 18-2002.

    Returns ``{"edition", "limits", "duty", "exceeded": [names], "ok"}``; a value equal
    to its limit passes.
    """
    exceeded = [name for name, limit in IEEE18_LIMITS.items() if duty[name] > limit]
    return {"edition": IEEE18_EDITION, "limits": dict(IEEE18_LIMITS), "duty": dict(duty),
            "exceeded": exceeded, "ok": not exceeded}


def stored_energy(capacitance: float, voltage_peak: float) -> float:
    """Energy held by a capacitor charged to ``voltage_peak``: ½CV̂² (joules)."""
    return 0.5 * capacitance * voltage_peak ** 2


def discharge_requirement(voltage_rms: float) -> dict:
    """The residual-voltage rule a discharge device must meet, by the capacitor's voltage.

    NEC (NFPA 70) 460.6: capacitors of 600 V or less (1000 V or less from the 2020
    edition) must fall to 50 V or less within 1 minute of disconnection; above 1000 V,
    460.28 asks for 50 V within 5 minutes.
    """
    if voltage_rms <= 1000.0:
        return {"clause": "NEC (NFPA 70) 460.6", "residual_v": 50.0, "seconds": 60.0}
    return {"clause": "NEC (NFPA 70) 460.28", "residual_v": 50.0, "seconds": 300.0}


def discharge_resistor_max(capacitance: float, voltage_peak: float, residual: float = 50.0,
                           seconds: float = 60.0) -> float | None:
    """Largest resistor that discharges ``voltage_peak`` to ``residual`` in ``seconds``.

    RC decay from the worst case, disconnection at the crest:
    ``R = t / (C·ln(V̂/V_end))``. None when the capacitor never exceeds ``residual``.

    >>> round(discharge_resistor_max(575.647e-6, 678.823) / 1e3, 2)
    39.96
    """
    if voltage_peak <= residual or capacitance <= 0:
        return None
    return seconds / (capacitance * math.log(voltage_peak / residual))
