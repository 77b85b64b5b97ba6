"""The formula study's answer from sympy expressions: trees for the one renderer
(``presentation/mathforms.py``), poles and zeros, balance conditions, the value at the
analysis frequency. Run in the worker process (``formula_worker.py``).

A formula is shown as numerator over denominator, each a sum over descending powers of
``s`` with factored coefficients: the form a filter or bridge designer reads.
"""

from __future__ import annotations

import math

import numpy as np
import sympy as sp

from ..model import Circuit
from ..presentation import mathforms
from .probes import Current, Probe, Voltage
from .symbolic import (S, FormulaProblem, FormulaTooLarge, SymbolicMNA, count_terms, exact,
                       exact_complex, make_symbols, probe_fraction, readable)

# -- sympy → tree -------------------------------------------------------------------


def tree(expr) -> list:
    """The renderer's tree of a sympy expression (symbols by their printed names)."""
    if not isinstance(expr, sp.Basic):               # a Python int from a sparse matrix
        expr = sp.Integer(expr)
    if expr.is_Rational:
        if expr < 0:
            return ["-", tree(-expr)]
        return ["n", str(expr.p), str(expr.q)]
    if expr.is_Float:
        return tree(exact(float(expr)))
    if expr is sp.I:
        return ["j"]
    if expr is sp.pi:
        return ["pi"]
    if expr.is_Symbol:
        return ["x", expr.name]
    if expr.is_Add:
        terms = []
        for term in expr.as_ordered_terms():
            terms.append(["-", tree(-term)] if term.could_extract_minus_sign() else tree(term))
        return ["+", terms]
    if expr.is_Mul:
        if expr.could_extract_minus_sign():
            return ["-", tree(-expr)]
        num, den = sp.fraction(expr)
        if den != 1:
            return ["/", tree(num), tree(den)]
        coeff, factors = expr.as_coeff_mul()
        ordered = sorted(factors, key=_factor_order)
        items = ([] if coeff == 1 else [tree(coeff)]) + [tree(f) for f in ordered]
        return items[0] if len(items) == 1 else ["*", items]
    if expr.is_Pow:
        base, power = expr.as_base_exp()
        if power == sp.Rational(1, 2):
            return ["sqrt", tree(base)]
        if power.is_negative:
            return ["/", ["n", "1", "1"], tree(base ** -power)]
        return ["^", tree(base), tree(power)]
    raise ValueError(f"no formula tree for {type(expr).__name__}")


def _factor_order(factor):
    """j first, then symbols by name, powers of symbols, then sums; s last of all."""
    if factor is sp.I:
        return (0, "")
    base = factor.as_base_exp()[0]
    if base == S:
        return (4, "")
    if base.is_Symbol:
        return (1, base.name)
    return (3, sp.srepr(factor))


def poly_tree(poly: sp.Expr) -> list:
    """A polynomial in ``s`` as a sum over descending powers, coefficients factored."""
    poly = sp.expand(poly)
    if not poly.has(S):
        return tree(sp.factor(poly))
    terms = []
    for (degree,), coefficient in sorted(sp.Poly(poly, S).terms(), reverse=True):
        power = None if degree == 0 else (["x", "s"] if degree == 1 else
                                          ["^", ["x", "s"], ["n", str(degree), "1"]])
        coefficient = sp.factor(coefficient)
        negative = coefficient.could_extract_minus_sign()
        if negative:
            coefficient = -coefficient
        if power is None:
            term = tree(coefficient)
        elif coefficient == 1:
            term = power
        else:
            c = tree(coefficient)
            term = ["*", (c[1] if c[0] == "*" else [c]) + [power]]
        terms.append(["-", term] if negative else term)
    return terms[0] if len(terms) == 1 else ["+", terms]


def _part_text(part) -> str:
    if isinstance(part, Current):
        return f"I({part.element.name})"
    letter = "V" if isinstance(part, Voltage) else "Z"
    return f"{letter}({part.a.name}" + (f", {part.b.name})" if part.b else ")")


def probe_tree(probe: Probe) -> list:
    parts = probe.parts()
    if len(parts) == 2:
        return ["/", ["probe", _part_text(parts[0])], ["probe", _part_text(parts[1])]]
    return ["probe", _part_text(parts[0])]


def fraction_tree(num: sp.Expr, den: sp.Expr) -> list:
    return poly_tree(num) if den == 1 else ["/", poly_tree(num), poly_tree(den)]


def with_tree(node: list) -> dict:
    """Text, LaTeX and MathML of ``node``, and the tree itself."""
    return dict(mathforms.forms(node), tree=node)


# -- the whole study ----------------------------------------------------------------


def formula_result(circuit: Circuit, probe: Probe, entries: list[dict], kept: list[str],
                   solve_for: str | None, max_terms: int) -> dict:
    """The sympy part of ``formula.run_formula``: forms, poles, zeros, the value at the
    analysis frequency and the balance conditions, all JSON-ready."""
    symbols = make_symbols([e for e in entries if e["name"] in kept])
    exact_values = {e["name"]: exact_complex(complex(e["re"], e["im"])) for e in entries}
    values = {}
    for entry in entries:
        for owner in entry["elements"]:
            values[owner] = symbols.get(entry["name"], exact_values[entry["name"]])
    for name, e in circuit.elements.items():        # zeroed own-frequency sources
        values.setdefault(name, exact_complex(e.value))
    mna = SymbolicMNA(circuit, values, probe)
    numerator, denominator = probe_fraction(mna, probe)
    num, den = readable(numerator, denominator)
    terms = count_terms(num) + count_terms(den)
    if terms > max_terms:
        raise FormulaTooLarge(terms, max_terms)

    everything = {symbols[name]: exact_values[name] for name in symbols}
    num_at = sp.expand(num.xreplace(everything))
    den_at = sp.expand(den.xreplace(everything))
    if den_at == 0:
        raise FormulaProblem("the probe's denominator is zero at the circuit's values",
                             "the formula is undefined there; keep the elements that "
                             "make it vanish symbolic to see why")
    reduced = sp.cancel(num_at / den_at)
    n_at, d_at = sp.fraction(reduced)
    omega = 2 * sp.pi * exact(circuit.frequency)
    at_f = complex(sp.N(reduced.xreplace({S: sp.I * omega}), 30))
    present = (num.free_symbols | den.free_symbols) - {S}

    out = {
        "formula": with_tree(["=", probe_tree(probe), fraction_tree(num, den)]),
        "numerator": dict(with_tree(poly_tree(num)), degree_in_s=_degree(num)),
        "denominator": dict(with_tree(poly_tree(den)), degree_in_s=_degree(den)),
        "terms": terms,
        "appearing": sorted(str(x) for x in present),
        "zeros": roots(n_at),
        "poles": roots(d_at),
        "value_at_frequency": {"re": at_f.real, "im": at_f.imag},
    }
    if solve_for is not None:
        out["solve_for"] = balance(num, symbols[solve_for], solve_for, everything)
    return out


def _degree(poly: sp.Expr) -> int:
    return int(sp.degree(poly, S)) if poly.has(S) else 0


def roots(poly: sp.Expr) -> list[dict]:
    """Numeric roots in s (rad/s) of a polynomial with exact numeric coefficients, with
    their natural frequency |s|/2π and damping ratio −Re(s)/|s|; ascending |s|."""
    if not poly.has(S):
        return []
    coefficients = [complex(sp.N(c, 30)) for c in sp.Poly(poly, S).all_coeffs()]
    found = np.roots(np.array(coefficients, dtype=complex))
    out = []
    for r in sorted(found.tolist(), key=lambda z: (abs(z), z.imag)):
        magnitude = abs(r)
        out.append({"re": r.real, "im": r.imag, "magnitude_rad_s": magnitude,
                    "frequency_hz": magnitude / (2 * math.pi),
                    "damping": (-r.real / magnitude) if magnitude else None})
    return out


def balance(num: sp.Expr, symbol: sp.Symbol, name: str, everything: dict) -> dict:
    """Solutions of "numerator = 0" for ``symbol``: one condition per power of s (a
    balance that holds at every frequency needs each to vanish)."""
    if symbol not in num.free_symbols:
        others = sorted(str(x) for x in num.free_symbols - {S})
        raise FormulaProblem(f"'{name}' does not appear in the numerator, so no value of "
                             "it makes the probe zero",
                             "solve for a symbol of the numerator: " + ", ".join(others)
                             if others else "the numerator holds no symbol")
    coefficients = (sp.Poly(num, S).all_coeffs()[::-1] if num.has(S) else [num])
    conditions, solutions = [], []
    for power, coefficient in enumerate(coefficients):
        coefficient = sp.expand(coefficient)
        if coefficient == 0:
            continue
        _, factors = sp.factor_list(coefficient)
        # factors that can vanish (a positive symbol such as a resistance cannot)
        vanishing = [f ** m for f, m in factors if f.free_symbols and not f.is_positive]
        with_symbol = [f for f in vanishing if symbol in f.free_symbols]
        condition = sp.Mul(*(with_symbol or vanishing)) if vanishing else coefficient
        at_values = complex(sp.N(condition.xreplace(everything), 30))
        item = {"power_of_s": power,
                "equation": with_tree(["=", tree(condition), ["n", "0", "1"]]),
                "at_values": {"re": at_values.real, "im": at_values.imag},
                "holds": bool(sp.expand(condition.xreplace(everything)) == 0),
                "solutions": []}
        if symbol in condition.free_symbols:
            for root in sp.solve(condition, symbol):
                value = complex(sp.N(root.xreplace(everything), 30))
                forms = with_tree(["=", tree(symbol), tree(sp.factor(root))])
                forms["value"] = {"re": value.real, "im": value.imag}
                item["solutions"].append(forms)
                if all(sp.simplify(root - other) != 0 for other in solutions):
                    solutions.append(root)
        conditions.append(item)
    return {"element": name, "symbol": str(symbol), "conditions": conditions,
            "single_value": len(solutions) == 1,
            "equation": with_tree(["=", poly_tree(num), ["n", "0", "1"]])}
