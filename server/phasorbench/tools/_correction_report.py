"""The result dict of a power-factor correction, from the solves before and after.

``correction.py`` finds the capacitance; this module turns the two solved circuits
(as contract dicts) into the fields a person reads: before/after, the ideal-bus
estimate beside the exact answer, the resonance estimate, the rating check, the stored
charge and the circuit line(s) to add. Every phasor is a contract phasor dict in the
circuit's amplitude convention; ratings and stored energy use rms and peak values.
"""

from __future__ import annotations

import math

import numpy as np

from ..presentation import cautions as caution_texts
from ..presentation.formatting import eng
from ..results import phasor_dict
from . import capacitors as cap


#: Above this harmonic order a "resonance" is the round-off of an ideal source's zero
#: impedance, not a network property (and far beyond any harmonic a load produces).
_MAX_ORDER = 1000.0


def report(*, circuit, source, sources, group, place, target, leading, method, capacitance,
           names, before, after, legs_before, model, formula, susceptance, rated_voltage,
           rated_frequency) -> dict:
    """Assemble the correction result.

    Fields: ``source``, ``source_kind``, ``frequency_hz``, ``amplitudes``, ``place``
    (``connection`` single/wye/delta, ``nodes``, ``star``, ``star_floating``,
    ``description``), ``target_pf``, ``target_sense``, ``method``; ``capacitance_f``
    (each unit), ``units``, ``q_var`` (reactive power all units supply at the voltage
    they see, positive); ``pf_before``/``pf_sense_before``, ``pf_after``/``pf_sense_after``
    (from the re-solved circuit), ``pf_error`` (after − target); ``supply_before`` and
    ``supply_after`` (``p_w``/``q_var`` delivered by the source, ``s_va``, ``pf``,
    ``pf_sense``, ``current``: the current(s) it delivers into the circuit, the contract's
    ``delivered``, as the branch table shows them); ``formula_capacitance_f``, ``formula_q_var``,
    ``formula_difference_f`` (exact − formula) and ``formula_difference_rel``;
    ``voltage_before``, ``voltage_after``, ``capacitor_current`` (a phasor for one
    capacitor, a {name: phasor} map for a bank); ``capacitors`` (one row per unit);
    ``harmonic_order`` (lowest), ``harmonic_orders``, ``resonance_hz``,
    ``capacitor_reactance_ohm``, ``network_reactance_ohm``, ``near_harmonic``;
    ``stored_energy_j`` (all units), ``discharge``; ``ieee18`` (None without a rated
    voltage); ``circuit_lines``; ``warnings`` (contract shape), ``cautions``
    (``title``, ``text``, ``detail``) and ``scope_note``; ``needed`` (True here) and
    ``reason`` (None here: see `not_needed`). A ``voltage3`` block adds
    ``pf_positive_sequence_before``/``_after``.
    """
    rms = 1.0 if circuit.amplitudes == "rms" else 1.0 / math.sqrt(2.0)
    freq = circuit.frequency
    src_before, src_after = _source_entry(before, source, group), _source_entry(after, source,
                                                                                 group)
    rows = []
    for name, leg, v0 in zip(names, place["legs"], legs_before):
        el = after["elements"][name]
        v_peak = el["voltage"]["mag"] * rms * math.sqrt(2.0)
        rows.append({"name": name, "from": leg[0], "to": leg[1], "capacitance_f": capacitance,
                     "voltage_before": phasor_dict(v0), "voltage_after": el["voltage"],
                     "current": el["current"], "q_var": -el["q_var"],
                     "voltage_rms_v": el["voltage"]["mag"] * rms, "voltage_peak_v": v_peak,
                     "stored_energy_j": cap.stored_energy(capacitance, v_peak)})
    single = place["connection"] == "single"
    formula_c, formula_q = formula
    warnings = [d.as_dict() for d in circuit.warnings]

    # Resonance: the network behind the bank as an inductance (reactance X at the
    # fundamental, h·X at harmonic h), the bank as I = j·h·B·M·V. Parallel resonance
    # where I − h²·B·X·M is singular: h = 1/√(B·μ) for each positive eigenvalue μ of X·M.
    # For one capacitor that is h = √(X_C/X_th) = √(S_sc/Q_c).
    mu = np.linalg.eigvals(model.z.imag @ place["m"])
    orders = []
    for order in sorted(1.0 / math.sqrt(susceptance * x.real) for x in mu
                        if x.real > 0 and abs(x.imag) <= 1e-9 * abs(x)):
        if order > _MAX_ORDER:
            continue   # round-off of an ideal source behind the bank: no network reactance
        if not orders or order > orders[-1] * (1 + 1e-9):   # a balanced bank repeats a mode
            orders.append(order)
    h = orders[0] if orders else None
    near = [n for n in (cap.near_characteristic_harmonic(o) for o in orders) if n]
    for order, n in zip(orders, (cap.near_characteristic_harmonic(o) for o in orders)):
        if n:
            warnings.append(_warning(
                f"the capacitor and the network behind it resonate near harmonic {order:.3g} "
                f"({eng(order * freq, 'Hz')}), within 10 % of the {_ordinal(n)}",
                "a harmonic source there would be magnified: make a harmonic study, or use a "
                "detuned (reactor-protected) bank"))

    ieee18 = None
    if rated_voltage is not None:
        ieee18 = _ieee18(rows, capacitance, rated_voltage, rated_frequency or freq, freq,
                         warnings)
    rise = max(r["voltage_after"]["mag"] / max(abs(v), 1e-300) for r, v in
               zip(rows, legs_before)) - 1.0

    discharge = _discharge(rows, capacitance)
    out = {
        **_head(circuit, source, group, place, target, leading), "method": method,
        "needed": True, "reason": None,
        "capacitance_f": capacitance, "units": len(rows),
        "q_var": sum(r["q_var"] for r in rows),
        "pf_before": src_before["pf"], "pf_sense_before": src_before["pf_sense"],
        "pf_after": src_after["pf"], "pf_sense_after": src_after["pf_sense"],
        "pf_error": src_after["pf"] - target,
        "supply_before": _supply(src_before, group), "supply_after": _supply(src_after, group),
        "formula_capacitance_f": formula_c, "formula_q_var": formula_q,
        "formula_difference_f": capacitance - formula_c,
        "formula_difference_rel": (capacitance - formula_c) / capacitance,
        "voltage_before": rows[0]["voltage_before"] if single else
        {r["name"]: r["voltage_before"] for r in rows},
        "voltage_after": rows[0]["voltage_after"] if single else
        {r["name"]: r["voltage_after"] for r in rows},
        "voltage_rise_rel": rise,
        "capacitor_current": rows[0]["current"] if single else
        {r["name"]: r["current"] for r in rows},
        "bank_line_current": None if single else _bank_line_currents(place, rows),
        "capacitors": rows,
        "harmonic_order": h, "harmonic_orders": orders,
        "resonance_hz": h * freq if h is not None else None,
        "capacitor_reactance_ohm": 1.0 / susceptance,
        "network_reactance_ohm": 1.0 / (susceptance * h * h) if h is not None else None,
        "near_harmonic": near[0] if near else None,
        "stored_energy_j": sum(r["stored_energy_j"] for r in rows),
        "discharge": discharge, "ieee18": ieee18,
        "circuit_lines": [f"{r['name']}: capacitor {r['from']} -> {r['to']} "
                          f"{capacitance_text(capacitance)}" for r in rows],
        "warnings": warnings,
    }
    if group is not None:
        out["pf_positive_sequence_before"] = _positive_sequence_pf(src_before, model.half)
        out["pf_positive_sequence_after"] = _positive_sequence_pf(src_after, model.half)
    out["cautions"] = _cautions(out, rows, discharge)
    out["scope_note"] = caution_texts.SCOPE_NOTE
    return out


def not_needed(*, circuit, source, group, place, target, leading, before, model,
               reason) -> dict:
    """The result when the source already meets its target: no capacitor is needed.

    The keys of `report`, so a reader of either never misses one: ``needed`` False,
    ``reason`` (one sentence with the numbers), ``method`` "none needed";
    ``capacitance_f``, ``q_var`` and ``stored_energy_j`` 0.0, ``units`` 0, ``capacitors``,
    ``circuit_lines``, ``harmonic_orders`` and ``cautions`` empty (no capacitor to caution
    about; ``scope_note`` stays); ``pf_after``, ``pf_sense_after`` and ``supply_after``
    are those before (one solve, nothing added); ``pf_error`` is after − target; every
    field that describes a capacitor (the ideal-bus estimate, its voltages and currents,
    the resonance, ``discharge``, ``ieee18``, ``standard_sizes``) is None.
    """
    entry = _source_entry(before, source, group)
    supply = _supply(entry, group)
    out = {
        **_head(circuit, source, group, place, target, leading), "method": "none needed",
        "needed": False, "reason": reason,
        "capacitance_f": 0.0, "units": 0, "q_var": 0.0,
        "pf_before": entry["pf"], "pf_sense_before": entry["pf_sense"],
        "pf_after": entry["pf"], "pf_sense_after": entry["pf_sense"],
        "pf_error": entry["pf"] - target,
        "supply_before": supply, "supply_after": dict(supply),
        "formula_capacitance_f": None, "formula_q_var": None,
        "formula_difference_f": None, "formula_difference_rel": None,
        "voltage_before": None, "voltage_after": None, "voltage_rise_rel": None,
        "capacitor_current": None, "bank_line_current": None, "capacitors": [],
        "harmonic_order": None, "harmonic_orders": [], "resonance_hz": None,
        "capacitor_reactance_ohm": None, "network_reactance_ohm": None,
        "near_harmonic": None, "stored_energy_j": 0.0, "discharge": None, "ieee18": None,
        "circuit_lines": [], "warnings": [d.as_dict() for d in circuit.warnings],
    }
    if group is not None:
        out["pf_positive_sequence_before"] = _positive_sequence_pf(entry, model.half)
        out["pf_positive_sequence_after"] = out["pf_positive_sequence_before"]
    out["cautions"] = []
    out["scope_note"] = caution_texts.SCOPE_NOTE
    out["standard_sizes"] = None
    return out


def _head(circuit, source, group, place, target, leading) -> dict:
    """The fields every correction result opens with: what was asked, where."""
    return {
        "source": source, "source_kind": group.kind if group is not None else
        circuit.elements[source].kind,
        "frequency_hz": circuit.frequency, "amplitudes": circuit.amplitudes,
        "place": {"connection": place["connection"], "nodes": place["nodes"],
                  "star": place["star"], "star_floating": place["floating"],
                  "description": place["description"]},
        "target_pf": target, "target_sense": "unity" if target == 1 else
        ("leading" if leading else "lagging"),
    }


def capacitance_text(c: float) -> str:
    """The value in the circuit language with 12 significant digits (``310.437807651 uF``).

    Twelve digits keep the re-read circuit on the target power factor far inside 1e-9.
    Microfarads up to 1 F, as capacitor units are quoted (1100.62 uF rather than mF).
    """
    if c >= 1.0:
        return f"{c:.12g} F"
    if c >= 1e-6:
        return f"{c / 1e-6:.12g} uF"
    if c >= 1e-9:
        return f"{c / 1e-9:.12g} nF"
    return f"{c / 1e-12:.12g} pF"


def _bank_line_currents(place: dict, rows) -> dict:
    """Current in each line feeding a bank (a delta unit's current is a branch current)."""
    i = [complex(r["current"]["re"], r["current"]["im"]) for r in rows]
    if place["connection"] == "delta":
        i = [i[0] - i[2], i[1] - i[0], i[2] - i[1]]
    return dict(zip("abc", (phasor_dict(x) for x in i)))


def _source_entry(result: dict, source: str, group) -> dict:
    return result["groups"][group.name] if group is not None else result["elements"][source]


def _supply(entry: dict, group) -> dict:
    """What the source delivers (positive when it feeds), and the current(s) it sends
    out into the circuit, as the branch table shows a supply's (its ``delivered``)."""
    current = entry["delivered"]["line_current" if group is not None else "current"]
    return {"p_w": -entry["p_w"], "q_var": -entry["q_var"], "s_va": entry["s_va"],
            "pf": entry["pf"], "pf_sense": entry["pf_sense"], "current": current}


def _positive_sequence_pf(entry: dict, half: float) -> float | None:
    """IEEE 1459's fundamental positive-sequence power factor P1+/S1+ of a block."""
    v = entry["sequence_voltage"]["positive"]
    i = entry["sequence_current"]["positive"]
    s1 = 3 * half * complex(v["re"], v["im"]) * complex(i["re"], -i["im"])
    return abs(s1.real) / abs(s1) if abs(s1) > 0 else None


def _ieee18(rows, capacitance, rated_voltage, rated_frequency, freq, warnings) -> dict:
    """Duty of the most stressed unit against IEEE Std 18-2002's continuous limits."""
    rated_voltage = float(rated_voltage)        # checked positive and finite by the caller
    worst = max(rows, key=lambda r: r["voltage_rms_v"])
    per_unit = worst["voltage_rms_v"] / rated_voltage
    check = cap.ieee18_check(cap.capacitor_duty({freq / rated_frequency: per_unit}))
    rated_kvar = cap.reactive_power(capacitance, rated_voltage, rated_frequency)
    names = {"voltage_rms": "rms voltage", "voltage_peak": "peak voltage",
             "current_rms": "rms current", "kvar": "reactive power"}
    for key in check["exceeded"]:
        warnings.append(_warning(
            f"{worst['name']} runs at {100 * check['duty'][key]:.1f} % of its rated "
            f"{names[key]}, above the {100 * check['limits'][key]:.0f} % continuous limit of "
            f"{cap.IEEE18_EDITION}", "choose units of a higher rated voltage"))
    check.update({"rated_voltage_v": rated_voltage, "rated_frequency_hz": rated_frequency,
                  "rated_q_var": rated_kvar, "unit": worst["name"],
                  "operating_voltage_v": worst["voltage_rms_v"]})
    return check


def ieee18_every_order(circuit, names, capacitance, rated_voltage, rated_frequency,
                       warnings) -> dict:
    """IEEE Std 18-2002 duty of the most stressed unit over every frequency the circuit
    carries (the corrected circuit with all its sources): rms and peak voltage (the sum
    of the components' peaks), rms current and reactive power, each order solved on its
    own (superposition.py)."""
    from ..solver import solve
    from ..superposition import circuit_at, source_frequencies
    rms = 1.0 if circuit.amplitudes == "rms" else 1.0 / math.sqrt(2.0)
    frequencies = sorted(source_frequencies(circuit))
    per_unit = {name: {} for name in names}
    for f in frequencies:
        solution = solve(circuit_at(circuit, f))
        where = {n: k for k, n in enumerate(solution.names)}
        for name in names:
            per_unit[name][f / rated_frequency] = (abs(solution.voltage[where[name]]) * rms
                                                   / rated_voltage)
    checks = {name: cap.ieee18_check(cap.capacitor_duty(pu)) for name, pu in per_unit.items()}
    worst = max(checks, key=lambda n: max(checks[n]["duty"][k] / checks[n]["limits"][k]
                                          for k in checks[n]["limits"]))
    check = checks[worst]
    names_of = {"voltage_rms": "rms voltage", "voltage_peak": "peak voltage",
                "current_rms": "rms current", "kvar": "reactive power"}
    for key in check["exceeded"]:
        warnings.append(_warning(
            f"{worst} runs at {100 * check['duty'][key]:.1f} % of its rated {names_of[key]} "
            f"over every order present, above the {100 * check['limits'][key]:.0f} % "
            f"continuous limit of {cap.IEEE18_EDITION}",
            "choose units of a higher rated voltage, or detune the bank"))
    fundamental = per_unit[worst].get(1.0, 0.0) * rated_voltage
    check.update({"rated_voltage_v": rated_voltage, "rated_frequency_hz": rated_frequency,
                  "rated_q_var": cap.reactive_power(capacitance, rated_voltage,
                                                    rated_frequency),
                  "unit": worst, "operating_voltage_v": fundamental,
                  "orders_hz": frequencies, "every_order": True})
    return check


def _discharge(rows, capacitance) -> dict:
    worst = max(rows, key=lambda r: r["voltage_peak_v"])
    rule = cap.discharge_requirement(worst["voltage_rms_v"])
    resistor = cap.discharge_resistor_max(capacitance, worst["voltage_peak_v"],
                                          rule["residual_v"], rule["seconds"])
    return dict(rule, voltage_peak_v=worst["voltage_peak_v"], resistor_max_ohm=resistor)


def _warning(message: str, hint: str = "") -> dict:
    return {"line": None, "column": None, "message": message, "hint": hint}


def _ordinal(n: int) -> str:
    return f"{n}{'rd' if n == 3 else 'th'}"


def _caution(word: str) -> tuple[str, str]:
    """The (title, text) of the cautions.py entry whose title holds ``word``."""
    for title, text in caution_texts.CAUTIONS:
        if word.lower() in title.lower():
            return title, text
    return word, ""


def _cautions(out: dict, rows, discharge) -> list[dict]:
    """The general cautions, each with this result's own numbers as its detail."""
    each = rows[0]
    energy = (f"each capacitor stores up to ½CV̂² = {eng(each['stored_energy_j'], 'J')} "
              f"at {eng(each['voltage_peak_v'], 'V')} peak "
              f"({eng(out['stored_energy_j'], 'J')} in all)")
    if discharge["resistor_max_ohm"] is not None:
        energy += (f"; {discharge['clause']} asks for {eng(discharge['residual_v'], 'V')} or "
                   f"less within {discharge['seconds'] / 60:g} min: a discharge resistor of at "
                   f"most {eng(discharge['resistor_max_ohm'], 'Ω')} across each unit "
                   "(R ≤ t / (C·ln(V̂/V_end)))")
    if out["harmonic_order"] is None:
        resonance = ("no inductive network lies behind this place at the fundamental, so no "
                     "parallel resonance is estimated; check the real supply impedance")
    else:
        resonance = (f"estimated parallel resonance at harmonic h = √(X_C/X_th) ≈ "
                     f"{out['harmonic_order']:.3g} ({eng(out['resonance_hz'], 'Hz')})")
    rise = (f"the voltage at the capacitor changes by {100 * out['voltage_rise_rel']:+.2f} % "
            f"when it is connected; the power factor is {out['pf_after']:.4g} "
            f"{out['pf_sense_after']} at this load and leads when the load drops")
    out_list = []
    for word, detail in (("charge", energy), ("resonance", resonance), ("light load", rise),
                         ("switching", ""), ("codes", "")):
        title, text = _caution(word)
        out_list.append({"title": title, "text": text, "detail": detail})
    return out_list
