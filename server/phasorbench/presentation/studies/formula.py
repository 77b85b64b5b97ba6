"""The formula study as the page, the sheet and the command line show it: one display
dict from the study's JSON (studies.md, "Formulas").

The formula itself is rendered once, by ``presentation/mathforms.py``, into the JSON's
``text``/``latex``/``mathml``; this module adds the rows around it (symbols, poles,
zeros, balance conditions) and the numeric check in words, every number through
``formatting.py``.
"""

from __future__ import annotations

from .. import formatting as fmt
from .. import mathforms

__all__ = ["KIND_UNITS", "formula_display", "summary_text"]

#: The unit of each kind's symbol.
KIND_UNITS = {"resistor": "Ω", "impedance": "Ω", "capacitor": "F", "inductor": "H",
              "admittance": "S", "voltage": "V", "current": "A", "vcvs": "", "vccs": "S",
              "ccvs": "Ω", "cccs": "", "transformer": "", "coupling": "H"}
_KIND_WORDS = {"vcvs": "voltage gain", "vccs": "transconductance", "ccvs": "transresistance",
               "cccs": "current gain", "transformer": "turns ratio n (n:1)",
               "coupling": "mutual inductance M"}


def _number(ph: dict, unit: str = "") -> str:
    """A real number in engineering notation, a complex one in rectangular form."""
    return fmt.eng(ph["re"], unit) if ph["im"] == 0 else fmt.rect(ph, unit)


def _value(entry: dict) -> str:
    return _number(entry, KIND_UNITS.get(entry["kind"], ""))


_SUPERSCRIPT = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")


def _root_rows(roots: list[dict]) -> list[dict]:
    rows = []
    for r in roots:
        damping = r["damping"]
        rows.append({"s": _number(r, "rad/s"), "frequency": fmt.eng(r["frequency_hz"], "Hz"),
                     "damping": fmt.MISSING if damping is None else fmt.plain(damping),
                     "q": (fmt.plain(1 / (2 * damping)) if damping and 0 < damping < 1
                           else fmt.MISSING)})
    return rows


#: A formula whose text is longer than this is also shown coefficient by coefficient
#: (MathML does not break lines, and a sheet is printed).
LONG_FORMULA = 110


def _power_of(term) -> tuple[int, list]:
    """``(k, coefficient tree)`` of one term ``c·s^k`` of a polynomial tree."""
    negative = term[0] == "-"
    body = term[1] if negative else term
    k, coefficient = 0, body
    if body == ["x", "s"]:
        k, coefficient = 1, ["n", "1", "1"]
    elif body[0] == "^" and body[1] == ["x", "s"]:
        k, coefficient = int(body[2][1]), ["n", "1", "1"]
    elif body[0] == "*" and body[1] and (body[1][-1] == ["x", "s"] or (
            body[1][-1][0] == "^" and body[1][-1][1] == ["x", "s"])):
        last = body[1][-1]
        k = 1 if last == ["x", "s"] else int(last[2][1])
        rest = body[1][:-1]
        coefficient = rest[0] if len(rest) == 1 else ["*", rest]
    return k, (["-", coefficient] if negative else coefficient)


def coefficient_rows(poly_tree) -> list[dict]:
    """One row per power of s of a polynomial tree: the power and its coefficient."""
    terms = poly_tree[1] if poly_tree[0] == "+" else [poly_tree]
    rows = []
    for term in terms:
        k, coefficient = _power_of(term)
        rows.append({"k": k, "power": "s" + str(k).translate(_SUPERSCRIPT),
                     "mathml": mathforms.math_block(mathforms.mathml(coefficient), False),
                     "text": mathforms.text(coefficient)})
    return rows


def _coefficient_table(result: dict) -> list[dict]:
    """Rows of (power, numerator's coefficient, denominator's), highest power first."""
    num = {r["k"]: r for r in coefficient_rows(result["numerator"]["tree"])}
    den = {r["k"]: r for r in coefficient_rows(result["denominator"]["tree"])}
    return [{"power": "s" + str(k).translate(_SUPERSCRIPT),
             "numerator": num[k]["mathml"] if k in num else None,
             "denominator": den[k]["mathml"] if k in den else None}
            for k in sorted(set(num) | set(den), reverse=True)]


def formula_display(result: dict) -> dict:
    """Everything the page and the sheet show of one formula."""
    kept = set(result["kept"])
    appearing = set(result.get("appearing", ()))
    symbols = []
    for entry in result["symbols"]:
        role = ("symbol" if entry["name"] in appearing else "symbol, cancels out") \
            if entry["name"] in kept else "value from the text"
        what = _KIND_WORDS.get(entry["kind"], entry["kind"])
        if entry.get("named_value"):
            what += " (named value of " + ", ".join(entry["elements"]) + ")"
        symbols.append({"name": entry["name"], "what": what, "value": _value(entry),
                        "role": role, "kept": entry["name"] in kept})
    check = result["check"]
    f = fmt.eng(check["frequency_hz"], "Hz")
    unit = result["unit"]
    difference = check["relative_difference"]
    solved = _number(check["solved"], unit) if check["solved"] else fmt.MISSING
    check_text = (f"At {f} the formula gives {_number(check['formula'], unit)}; the numeric "
                  f"solve gives {solved} (relative difference "
                  + (f"{difference:.1e}" if difference is not None else fmt.MISSING) + "): "
                  + ("they agree." if check["ok"] else "they DIFFER."))
    balance = None
    if result.get("solve_for"):
        b = result["solve_for"]
        conditions = []
        for c in b["conditions"]:
            conditions.append({
                "power": "s" + str(c["power_of_s"]).translate(_SUPERSCRIPT),
                "equation_mathml": c["equation"]["mathml"], "equation_text": c["equation"]["text"],
                "holds": c["holds"],
                "at_values": ("holds at the circuit's values" if c["holds"] else
                              "at the circuit's values the left side is "
                              + _number(c["at_values"])),
                "solutions": [{"mathml": s["mathml"], "text": s["text"],
                               "value": _number(s["value"], _unit_of(result, b))}
                              for s in c["solutions"]]})
        balance = {"element": b["element"], "equation_mathml": b["equation"]["mathml"],
                   "equation_text": b["equation"]["text"], "conditions": conditions,
                   "note": ("Every condition must hold for the numerator to vanish at "
                            "every frequency (one per power of s).")}
    return {
        "title": f"Formula of {result['probe']}",
        "probe": result["probe"],
        "unit": unit,
        "mathml": result["formula"]["mathml"],
        "text": result["formula"]["text"],
        "latex": result["formula"]["latex"],
        "long": len(result["formula"]["text"]) > LONG_FORMULA,
        "coefficients": _coefficient_table(result),
        "degrees": (f"numerator of degree {result['numerator']['degree_in_s']} in s, "
                    f"denominator of degree {result['denominator']['degree_in_s']}; "
                    f"{result['terms']} terms"),
        "symbols": symbols,
        "poles": _root_rows(result["poles"]),
        "zeros": _root_rows(result["zeros"]),
        "roots_note": ("Poles and zeros at the circuit's values (every symbol at its value "
                       "from the text); s in rad/s."),
        "check": check_text,
        "check_ok": check["ok"],
        "balance": balance,
        "warnings": list(result["warnings"]),
    }


def _unit_of(result: dict, b: dict) -> str:
    for entry in result["symbols"]:
        if entry["name"] == b["symbol"] or b["element"] in entry["elements"]:
            return KIND_UNITS.get(entry["kind"], "")
    return ""


def summary_text(result: dict) -> str:
    """The command line's plain-text answer."""
    d = formula_display(result)
    out = [d["text"], "", d["degrees"], "", "symbols:"]
    for s in d["symbols"]:
        out.append(f"  {s['name']:<12} {s['value']:>14}  {s['what']}; {s['role']}")
    for title, rows in (("poles", d["poles"]), ("zeros", d["zeros"])):
        if not rows:
            out.append(f"{title}: none")
            continue
        out.append(f"{title} (at the circuit's values):")
        for r in rows:
            out.append(f"  s = {r['s']:<28} |s|/2π {r['frequency']:>12}  damping "
                       f"{r['damping']}")
    if d["balance"]:
        b = d["balance"]
        out += ["", f"balance: {b['equation_text']}"]
        for c in b["conditions"]:
            out.append(f"  {c['power']}: {c['equation_text']}  ({c['at_values']})")
            for s in c["solutions"]:
                out.append(f"      {s['text']}  = {s['value']}")
        out.append("  " + b["note"])
    out += ["", d["check"]]
    return "\n".join(out) + "\n"
