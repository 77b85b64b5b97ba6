"""Standard capacitor ratings beside the exact correction: the next rating down and up.

Capacitor units and banks are sold in kvar steps at a rated voltage and frequency. A unit
rated Q_r at V_r and f_r has ``C = Q_r / (2π·f_r·V_r²)``; at the voltage it sees in the
circuit it supplies ``Q = Q_r·(V/V_r)²·(f/f_r)``. The exact capacitance is turned into
its rating at V_r; the ratings either side of it are then each added to the circuit and
solved again, so the power factor each gives is the circuit's own, not an estimate.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from ..errors import NUMERIC_RANGE_ERRORS, CircuitError, Diagnostic
from ..model import Element
from ..results import contract
from ..solver import solve
from ._correction_report import capacitance_text
from ._network import derived

__all__ = ["DEFAULT_RATINGS_KVAR", "parse_ratings", "standard_sizes"]

#: Bank ratings in kvar (all units together, at their rated voltage): the steps low-voltage
#: units and banks are commonly sold in, extended down for small supplies and up to
#: medium-voltage banks. # common practice, no source (manufacturers' catalogue steps)
DEFAULT_RATINGS_KVAR = (0.25, 0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 7.5, 10.0, 12.5,
                        15.0, 20.0, 25.0, 30.0, 40.0, 50.0, 60.0, 75.0, 100.0, 125.0, 150.0,
                        200.0, 250.0, 300.0, 400.0, 500.0, 600.0, 750.0, 1000.0, 1200.0,
                        1500.0, 2000.0, 2500.0, 3000.0, 4000.0, 5000.0)

#: A rating within this share of the exact one counts as equal to it (round-off).
_SAME = 1e-9


def parse_ratings(ratings) -> tuple[float, ...]:
    """Ratings in kvar from a list of numbers or a text ``"5, 7.5 10"``; sorted, repeats
    dropped. Raises ``CircuitError`` naming every entry that is not a positive number."""
    if ratings is None:
        return DEFAULT_RATINGS_KVAR
    items = ratings.replace(",", " ").replace(";", " ").split() if isinstance(ratings, str) \
        else list(ratings)
    values, bad = [], []
    for item in items:
        try:
            value = float(item)
        except (TypeError, ValueError):
            bad.append(str(item))
            continue
        if not (math.isfinite(value) and value > 0):
            bad.append(str(item))
        else:
            values.append(value)
    if bad or not values:
        message = ("the standard ratings must be positive numbers of kvar, not "
                   + ", ".join(repr(b) for b in bad[:8])) if bad else \
            "the list of standard ratings is empty"
        raise CircuitError([Diagnostic(message, "e.g. 5, 7.5, 10, 12.5, 15 (kvar)")])
    return tuple(sorted(set(values)))


def standard_sizes(circuit, *, source: str, group, legs, names: Sequence[str],
                   capacitance: float, operating_v: float, rated_voltage: float | None,
                   rated_frequency: float | None, target: float, leading: bool,
                   ratings=None) -> dict:
    """The standard ratings next below and above the exact correction, each re-solved.

    Parameters
    ----------
    circuit : Circuit
        The circuit at the analysis frequency (without the correction).
    source, group : str, Group or None
        The corrected source (a ``voltage3`` block is ``group``).
    legs, names : the units' terminals and names, as the exact correction placed them.
    capacitance : float
        The exact capacitance of each unit, F.
    operating_v : float
        RMS voltage the units see before correction: their rated voltage when
        ``rated_voltage`` is None.
    rated_voltage, rated_frequency : float or None
        Rating of each unit (rms V, Hz); default the operating voltage and the circuit's
        frequency.
    target, leading : the aim of the correction (to say whether a size meets it).
    ratings : sequence of kvar or text, optional
        Bank ratings (all units together); default `DEFAULT_RATINGS_KVAR`.

    Returns
    -------
    dict
        ``{"ratings_kvar", "rated_voltage_v", "rated_frequency_hz", "rated_voltage_given",
        "exact_kvar", "below", "above"}``; ``below``/``above`` are None where the list has
        no such rating, else ``{"rating_kvar", "capacitance_f" (each unit), "units",
        "q_var" (supplied at the voltage the units see, from the re-solve), "pf",
        "pf_sense", "meets_target", "circuit_lines"}`` (a size the circuit cannot be
        solved with has ``pf`` None and an ``error``). A rating equal to the exact one is
        both.
    """
    values = parse_ratings(ratings)
    v_r = float(rated_voltage) if rated_voltage is not None else float(operating_v)
    f_r = float(rated_frequency) if rated_frequency is not None else circuit.frequency
    units = len(legs)
    omega_r = 2.0 * math.pi * f_r
    exact_kvar = units * omega_r * capacitance * v_r ** 2 / 1000.0
    below = [q for q in values if q <= exact_kvar * (1 + _SAME)]
    above = [q for q in values if q >= exact_kvar * (1 - _SAME)]
    out = {"ratings_kvar": list(values), "rated_voltage_v": v_r, "rated_frequency_hz": f_r,
           "rated_voltage_given": rated_voltage is not None, "exact_kvar": exact_kvar,
           "below": None, "above": None}
    for key, pick in (("below", below[-1] if below else None),
                      ("above", above[0] if above else None)):
        if pick is not None:
            out[key] = _resolved(circuit, source, group, legs, names, pick, omega_r, v_r,
                                 target, leading)
    return out


def _resolved(circuit, source, group, legs, names, rating_kvar, omega_r, v_r, target,
              leading) -> dict:
    """The circuit with a bank of ``rating_kvar`` at the place, solved: its source's PF."""
    each = rating_kvar * 1000.0 / len(legs) / (omega_r * v_r ** 2)
    added = tuple(Element(name, "capacitor", leg, each + 0j) for name, leg in zip(names, legs))
    try:
        after = contract(solve(derived(circuit, add=added)))
    except (CircuitError, *NUMERIC_RANGE_ERRORS) as exc:
        # a rating far outside the circuit's scale: that size has no answer, the exact
        # correction still stands
        message = exc.diagnostics[0].message if isinstance(exc, CircuitError) else str(exc)
        return {"rating_kvar": rating_kvar, "capacitance_f": each, "units": len(legs),
                "q_var": None, "pf": None, "pf_sense": None, "meets_target": False,
                "circuit_lines": [], "error": f"not solved with this bank: {message}"}
    entry = after["groups"][group.name] if group is not None else after["elements"][source]
    supplied = -sum(after["elements"][n]["q_var"] for n in names)
    pf, sense = entry["pf"], entry["pf_sense"]
    wanted = "leading" if leading else "lagging"
    meets = pf >= target - 1e-9 and (sense in (wanted, "unity") or target == 1.0)
    return {"rating_kvar": rating_kvar, "capacitance_f": each, "units": len(legs),
            "q_var": supplied, "pf": pf, "pf_sense": sense, "meets_target": bool(meets),
            "circuit_lines": [f"{n}: capacitor {leg[0]} -> {leg[1]} {capacitance_text(each)}"
                              for n, leg in zip(names, legs)]}
