"""Every string the page's power tools and the sheet show of a correction or a port
equivalent (``tools.correct_power_factor``, ``tools.port_equivalent``), and the
standard bank ratings either side of an exact correction. Reads their result dicts only;
numbers through ``formatting.py``.
"""

from __future__ import annotations

from .amplitudes import shown_word
from .display import _percent, _signed_percent
from .formatting import MISSING, eng, phasor, plain, power_factor, rect

__all__ = ["correction_display", "port_display", "standard_sizes_display", "supply_power"]


def _fact(key: str, term: str, value: str, flag: str | None = None) -> dict:
    """One line of a tool's answer; ``flag`` ("ok", "warn") always comes with words too."""
    return {"key": key, "term": term, "value": value, "flag": flag}


def supply_current(current) -> str:
    """A supply's current(s) as text: one phasor, or each line's (``a 41.67 A ∠-36.87°, …``)."""
    if isinstance(current, dict) and "mag" in current:
        return phasor(current, "A")
    return ", ".join(f"{k} {phasor(v, 'A')}" for k, v in (current or {}).items())


#: The exact answer is found to a few units of double precision and checked by a solve:
#: a difference from the ideal-bus formula below this share of it is round-off.
_SAME_AS_FORMULA = 1e-9


def _difference_text(r: dict, each: str) -> str:
    rel = r["formula_difference_rel"]
    if rel is None or abs(rel) < _SAME_AS_FORMULA:
        return "none: nothing lies between the source and this place, so the formula is exact"
    return (f"{eng(r['formula_difference_f'], 'F', 4)}{each} ({_signed_percent(rel)} of the "
            "exact value): the line and transformer impedance in between")


_IEEE18_NAMES = {"voltage_rms": "rms voltage", "voltage_peak": "peak voltage",
                 "current_rms": "rms current", "kvar": "reactive power"}


def correction_display(r: dict) -> dict:
    """Every string the correction panel shows of a ``correct_power_factor`` result.

    ``{"comment", "heading", "method", "facts": [{"key", "term", "value", "flag"}],
    "capacitors": [{"name", "terminals", "voltage_before", "voltage_after", "current",
    "q"}], "lines", "warnings": [{"message", "hint"}], "cautions": [{"title", "detail"}],
    "scope_note"}``. ``comment`` and ``lines`` are what the page appends to the circuit
    (a ``#`` comment line saying what was sized, then the capacitor lines); ``cautions``
    are those with this result's own numbers (stored charge first). A result with
    ``needed`` False (the source meets its target already) reads as `_not_needed`.
    """
    if r.get("needed") is False:
        return _not_needed(r)
    units = r["units"]
    each = " each" if units > 1 else ""
    before, after = r["supply_before"], r["supply_after"]
    connection = r["place"]["connection"]
    count = f"{units} unit{'s' if units > 1 else ''}" + ("" if connection == "single"
                                                         else f", {connection} bank")
    facts = [
        _fact("capacitance", "capacitance", f"{eng(r['capacitance_f'], 'F', 6)}{each} ({count})"),
        _fact("q", "reactive power supplied", f"{eng(r['q_var'], 'var')} at the voltage it sees"),
        _fact("pf", "power factor", f"{power_factor(r['pf_before'], r['pf_sense_before'])} → "
                                    f"{power_factor(r['pf_after'], r['pf_sense_after'])} (target "
                                    f"{power_factor(r['target_pf'], r['target_sense'])})"),
        _fact("supply", "supply P + jQ", f"{supply_power(before)} → {supply_power(after)}"),
        _fact("supply_current", "supply current", f"{supply_current(before['current'])} → "
                                                  f"{supply_current(after['current'])}"),
        _fact("formula", "textbook estimate",
              f"{eng(r['formula_capacitance_f'], 'F', 6)}{each} from Qc = P(tanφ1 − tanφ2) = "
              f"{eng(r['formula_q_var'], 'var')}, C = Qc/(ωV²) on an ideal bus"),
        _fact("difference", "exact − estimate", _difference_text(r, each)),
    ]
    if units == 1:
        facts += [_fact("voltage", "voltage there", f"{phasor(r['voltage_before'], 'V')} → "
                                                    f"{phasor(r['voltage_after'], 'V')} "
                                                    f"({_signed_percent(r['voltage_rise_rel'])})"),
                  _fact("capacitor_current", "capacitor current",
                        phasor(r["capacitor_current"], "A"))]
    else:
        facts += [_fact("voltage", "voltage change", f"{_signed_percent(r['voltage_rise_rel'])} "
                                                     "at the most raised unit"),
                  _fact("capacitor_current", "bank line currents",
                        supply_current(r["bank_line_current"]))]
    if r["harmonic_order"] is None:
        facts.append(_fact("resonance", "parallel resonance",
                           "none estimated (no inductive network behind this place)"))
    else:
        near = r.get("near_harmonic")
        words = (f"h ≈ {plain(r['harmonic_order'], 4)} ({eng(r['resonance_hz'], 'Hz')}) with the "
                 f"network behind it: X_C {eng(r['capacitor_reactance_ohm'], 'Ω')}, "
                 f"X_th {eng(r['network_reactance_ohm'], 'Ω')}")
        if near:
            words += f" — ▲ within 10 % of the {near}{'rd' if near == 3 else 'th'} harmonic"
        facts.append(_fact("resonance", "parallel resonance", words, "warn" if near else None))
    check = r.get("ieee18")
    if check is not None:
        duty = ", ".join(f"{_IEEE18_NAMES.get(k, k)} {_percent(v, digits=4)} (limit "
                         f"{_percent(check['limits'][k])})" for k, v in check["duty"].items())
        state = ("✓ within the continuous limits" if check["ok"] else "▲ EXCEEDS: " +
                 ", ".join(_IEEE18_NAMES.get(k, k) for k in check["exceeded"]))
        facts.append(_fact("ieee18", f"{check['edition']} duty",
                           f"{state}; rated {eng(check['rated_voltage_v'], 'V')}, "
                           f"{eng(check['rated_q_var'], 'var')} per unit at "
                           f"{eng(check['rated_frequency_hz'], 'Hz')}; {check['unit']} runs at "
                           f"{eng(check['operating_voltage_v'], 'V')}"
                           + (" at the fundamental, with every order present "
                              f"({', '.join(eng(f, 'Hz') for f in check['orders_hz'])})"
                              if check.get("every_order") else "") + f": {duty}",
                           "ok" if check["ok"] else "warn"))
    discharge = r["discharge"]
    energy = f"{eng(r['stored_energy_j'], 'J')} in all"
    if discharge.get("resistor_max_ohm") is not None:
        energy += (f"; discharge resistor ≤ {eng(discharge['resistor_max_ohm'], 'Ω')} per unit "
                   f"({discharge['clause']}: {eng(discharge['residual_v'], 'V')} within "
                   f"{plain(discharge['seconds'] / 60)} min)")
    facts.append(_fact("stored_energy", "stored energy", energy, "warn"))
    capacitors = [{"name": c["name"], "terminals": f"{c['from']} → {c['to']}",
                   "voltage_before": phasor(c["voltage_before"], "V"),
                   "voltage_after": phasor(c["voltage_after"], "V"),
                   "current": phasor(c["current"], "A"), "q": eng(c["q_var"], "var")}
                  for c in r["capacitors"]]
    target = power_factor(r["target_pf"], r["target_sense"])
    return {
        "comment": f"# power-factor correction of {r['source']} to {target}, "
                   f"{eng(r['capacitance_f'], 'F', 6)}{each} at {r['place']['description']}",
        "heading": f"{r['source']}: {'capacitor' if units == 1 else 'capacitor bank'} at "
                   f"{r['place']['description']}",
        "method": f"exact for the circuit as drawn, by {r['method']}; checked by solving the "
                  "corrected circuit",
        "facts": facts, "capacitors": capacitors, "lines": list(r["circuit_lines"]),
        "warnings": [{"message": w.get("message", ""), "hint": w.get("hint", "")}
                     for w in r.get("warnings", [])],
        "cautions": [{"title": c["title"], "detail": c["detail"]}
                     for c in r.get("cautions", []) if c.get("detail")],
        "scope_note": r.get("scope_note", ""),
        "standard": standard_sizes_display(r),
    }


def supply_power(supply: dict, floor: float = 0.0) -> str:
    """'8.756 kW + 3.866 kvar' of a supply dict, the sign of Q written once
    ('− 1.569 kvar'); a Q below ``floor`` (round-off) reads as '+ 0 var'."""
    q = supply["q_var"]
    return (f"{eng(supply['p_w'], 'W')} {'−' if q < 0 and abs(q) >= floor else '+'} "
            f"{eng(abs(q), 'var', floor=floor)}")


#: Reactive power below this share of |S| is round-off of a unity supply (the core's
#: own threshold for "no reactive power to cancel").
_UNITY_Q = 1e-9


def _not_needed(r: dict) -> dict:
    """`correction_display`'s keys for a source that needs no capacitor: the power factor
    now against the target, the supply as it is, the reason; no lines, no capacitors."""
    supply = r["supply_before"]
    target = power_factor(r["target_pf"], r["target_sense"])
    facts = [
        _fact("pf", "power factor", f"{power_factor(r['pf_before'], r['pf_sense_before'])} now; "
                                    f"target {target} — ✓ met already", "ok"),
        _fact("supply", "supply P + jQ",
              supply_power(supply, floor=_UNITY_Q * (supply.get("s_va") or 0.0))),
        _fact("supply_current", "supply current", supply_current(supply["current"])),
        _fact("reason", "why", r["reason"]),
    ]
    return {
        "comment": "", "heading": f"{r['source']}: no correction needed",
        "method": "the source meets the target as the circuit is drawn (solved once, "
                  "nothing added)",
        "facts": facts, "capacitors": [], "lines": [],
        "warnings": [{"message": w.get("message", ""), "hint": w.get("hint", "")}
                     for w in r.get("warnings", [])],
        "cautions": [], "scope_note": r.get("scope_note", ""), "standard": None,
    }


def standard_sizes_display(r: dict) -> dict | None:
    """The standard ratings next to the exact correction, as the panel and sheet show them.

    ``{"heading", "note", "columns", "rows": [{"which", "rating", "capacitance", "q",
    "pf", "meets", "lines"}], "ratings"}`` (``ratings``: the list used, as editable text);
    None when the result carries no ``standard_sizes``.
    """
    sizes = r.get("standard_sizes")
    if not sizes:
        return None
    units = r.get("units", 1)
    each = " each" if units > 1 else ""
    rated = eng(sizes["rated_voltage_v"], "V", 4)
    given = ("" if sizes["rated_voltage_given"]
             else "no rated voltage was given, so the units are rated at the voltage they see; ")
    rows = []
    for which, words in (("below", "next rating down"), ("above", "next rating up")):
        size = sizes.get(which)
        if size is None:
            rows.append({"which": which, "rating": f"{words}: none in the list",
                         "capacitance": MISSING, "q": MISSING, "pf": MISSING, "meets": "",
                         "lines": []})
            continue
        rows.append({
            "which": which,
            "rating": f"{words}: {plain(size['rating_kvar'], 6)} kvar",
            "capacitance": f"{eng(size['capacitance_f'], 'F', 4)}{each}",
            "q": eng(size["q_var"], "var"),
            "pf": power_factor(size["pf"], size["pf_sense"]),
            "meets": (f"▲ {size['error']}" if size.get("error") else
                      "✓ meets the target" if size["meets_target"] else "▲ short of the target"),
            "lines": list(size["circuit_lines"])})
    return {"heading": f"Standard bank ratings at {rated}, "
                       f"{eng(sizes['rated_frequency_hz'], 'Hz')}",
            "note": f"{given}the exact correction is {plain(sizes['exact_kvar'], 4)} kvar at "
                    "that rating; each standard size was added to the circuit and solved",
            "columns": ["Bank rating", "Capacitance", "Q supplied", "Power factor", ""],
            "rows": rows,
            "ratings": ", ".join(plain(q, 6) for q in sizes["ratings_kvar"])}


def port_display(r: dict) -> dict:
    """Every string the port panel shows of a ``port_equivalent`` result.

    ``{"heading", "facts": [{"key", "term", "value", "flag"}], "notes": [...]}``.
    """
    a, b = r["a"], r["b"]
    facts = []
    if r.get("thevenin_v") is not None:
        facts.append(_fact("thevenin_v", "Thevenin voltage",
                           f"{phasor(r['thevenin_v'], 'V')} (open-circuit V({a}) − V({b}))"))
    if r.get("thevenin_z") is not None:
        facts.append(_fact("thevenin_z", "Thevenin impedance",
                           f"{rect(r['thevenin_z'], 'Ω')} = {phasor(r['thevenin_z'], 'Ω')}"))
    if r.get("norton_i") is not None:
        facts.append(_fact("norton_i", "Norton current",
                           f"{phasor(r['norton_i'], 'A')} ({a} → {b} through a short)"))
    if r.get("norton_y") is not None:
        facts.append(_fact("norton_y", "Norton admittance", rect(r["norton_y"], "S")))
    if r.get("matched_load_z") is not None:
        facts.append(_fact("matched", "matched load (Z_th*)",
                           f"{rect(r['matched_load_z'], 'Ω')} takes {eng(r['max_power_w'], 'W')},"
                           " the most any load can"))
    if r.get("resistive_load_ohm") is not None:
        facts.append(_fact("resistive", "best resistor (|Z_th|)",
                           f"{eng(r['resistive_load_ohm'], 'Ω')} takes "
                           f"{eng(r['resistive_power_w'], 'W')}"))
    amps = shown_word(r)
    return {"heading": f"Port {a} → {b} at {eng(r.get('frequency_hz'), 'Hz')} ({amps} phasors)",
            "facts": facts, "notes": list(r.get("notes", []))}
