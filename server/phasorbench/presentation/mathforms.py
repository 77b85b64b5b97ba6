"""Formulas as text, LaTeX and MathML: the one renderer of the formula study's trees.

The core hands a formula over as a small tree of JSON lists (no sympy object crosses
into this floor), so the command line, the page and the sheet show one rendering:

========================  ==========================================================
``["n", "p", "q"]``        the rational p/q (integers as decimal strings, q > 0)
``["x", "R1"]``            a symbol, named as in the circuit
``["j"]``, ``["pi"]``      the imaginary unit (written j), π
``["+", [a, b, …]]``       a sum, in the order given (a term ``["-", t]`` is subtracted)
``["-", a]``               a negation
``["*", [a, b, …]]``       a product, in the order given
``["/", a, b]``            a fraction
``["^", a, b]``            a power
``["sqrt", a]``            a square root
``["=", a, b]``            an equation
``["probe", "V(out)"]``    a probe's own text (a quantity, not a product)
========================  ==========================================================

>>> t = ["/", ["n", "1", "1"], ["+", [["*", [["x", "C1"], ["x", "R1"], ["x", "s"]]],
...                                    ["n", "1", "1"]]]]
>>> text(t)
'1/(C1*R1*s + 1)'
>>> latex(t)
'\\\\frac{1}{C_{1} R_{1} s + 1}'
"""

from __future__ import annotations

import re
from fractions import Fraction

__all__ = ["text", "latex", "mathml", "math_block", "forms", "number_text", "MATHML_NS"]

MATHML_NS = "http://www.w3.org/1998/Math/MathML"

# precedence: sums and negations bind loosest, then products and fractions, then powers
_SUM, _PRODUCT, _POWER, _ATOM = 1, 2, 3, 4
#: Plain decimals are written for exponents in this range; scientific notation outside.
_PLAIN_EXPONENTS = range(-3, 6)
#: Names shown with an index: ``R_load``, ``R1``/``Cb12`` (letters, then digits) and a
#: capital with up to three small letters (``Vin``, ``Cpf``, ``Rf``); others as written.
_INDEXED = re.compile(r"^([A-Za-z]+)_([A-Za-z0-9]+)$|^([A-Za-z]+?)([0-9]+)$|^([A-Z])([a-z]{1,3})$")


def _split_name(name: str):
    match = _INDEXED.match(name)
    if not match:
        return None
    groups = [g for g in match.groups() if g is not None]
    return groups[0], groups[1]


def _precedence(node) -> int:
    op = node[0]
    if op in ("+", "-", "="):
        return _SUM
    if op in ("*", "/"):
        return _PRODUCT
    if op == "^":
        return _POWER
    if op == "n":
        value = Fraction(int(node[1]), int(node[2]))
        if value < 0:
            return _SUM
        dec = _decimal(value)
        return _PRODUCT if dec is None or dec[1] else _ATOM
    return _ATOM


def _decimal(value: Fraction) -> tuple[str, int] | None:
    """``(mantissa, exponent)`` of an exact decimal (mantissa one digit before the point
    when the exponent is not 0); None when ``value`` has no finite decimal form."""
    q = value.denominator
    twos = fives = 0
    while q % 2 == 0:
        q //= 2
        twos += 1
    while q % 5 == 0:
        q //= 5
        fives += 1
    if q != 1:
        return None
    places = max(twos, fives)
    digits = str(abs(value.numerator) * 10 ** places // value.denominator)
    sign = "-" if value < 0 else ""
    stripped = digits.rstrip("0")
    exponent = len(digits) - 1 - places          # of the leading digit
    if exponent in _PLAIN_EXPONENTS:
        if places:
            whole = digits[:-places] or "0"
            frac = digits[-places:].rjust(places, "0").rstrip("0")
            return sign + whole + ("." + frac if frac else ""), 0
        return sign + digits, 0
    mantissa = stripped[0] + ("." + stripped[1:] if len(stripped) > 1 else "")
    return sign + mantissa, exponent


def number_text(node) -> str:
    """A number node as plain text: ``4700``, ``1e-07``, ``2.2e-09``, ``1/3``."""
    value = Fraction(int(node[1]), int(node[2]))
    dec = _decimal(value)
    if dec is None:
        return f"{value.numerator}/{value.denominator}"
    mantissa, exponent = dec
    return mantissa if not exponent else f"{mantissa}e{exponent:+03d}"


# -- text -------------------------------------------------------------------------


def text(node, outer: int = 0) -> str:
    """Plain text that reads as written by hand in ASCII (``*``, ``/``, ``^``, ``j``)."""
    out = _text(node)
    return f"({out})" if _precedence(node) < outer else out


def _text(node) -> str:
    op = node[0]
    if op == "n":
        return number_text(node)
    if op == "x":
        return node[1]
    if op == "j":
        return "j"
    if op == "pi":
        return "pi"
    if op == "probe":
        return node[1]
    if op == "+":
        parts = []
        for k, term in enumerate(node[1]):
            if term[0] == "-":
                parts.append(("-" if k == 0 else " - ") + text(term[1], _PRODUCT))
            else:
                parts.append(("" if k == 0 else " + ") + text(term, _SUM + 1))
        return "".join(parts)
    if op == "-":
        return "-" + text(node[1], _PRODUCT)
    if op == "*":
        return "*".join(text(f, _PRODUCT) for f in node[1])
    if op == "/":
        return text(node[1], _PRODUCT) + "/" + text(node[2], _POWER)
    if op == "^":
        return text(node[1], _ATOM) + "^" + text(node[2], _ATOM)
    if op == "sqrt":
        return f"sqrt({text(node[1])})"
    if op == "=":
        return f"{text(node[1])} = {text(node[2])}"
    raise ValueError(f"unknown formula node {op!r}")


# -- LaTeX ------------------------------------------------------------------------


def _latex_name(name: str) -> str:
    split = _split_name(name)
    if split:
        base, index = split
        base = base if len(base) == 1 else f"\\mathrm{{{base}}}"
        index = index if index.isdigit() or len(index) == 1 else f"\\mathrm{{{index}}}"
        return f"{base}_{{{index}}}"
    if len(name) == 1:
        return name
    return "\\mathrm{" + _latex_escape(name) + "}"


def _latex_escape(raw: str) -> str:
    return re.sub(r"([_#$%&{}])", r"\\\1", raw).replace("\\\\", "\\textbackslash{}")


def latex(node, outer: int = 0) -> str:
    out = _latex(node)
    return f"\\left({out}\\right)" if _precedence(node) < outer else out


def _latex_number(node) -> str:
    value = Fraction(int(node[1]), int(node[2]))
    dec = _decimal(value)
    if dec is None:
        sign = "-" if value < 0 else ""
        return f"{sign}\\frac{{{abs(value.numerator)}}}{{{value.denominator}}}"
    mantissa, exponent = dec
    if not exponent:
        return mantissa
    if mantissa in ("1", "-1"):
        return ("-" if mantissa == "-1" else "") + f"10^{{{exponent}}}"
    return f"{mantissa} \\cdot 10^{{{exponent}}}"


def _latex(node) -> str:
    op = node[0]
    if op == "n":
        return _latex_number(node)
    if op == "x":
        return _latex_name(node[1])
    if op == "j":
        return "j"
    if op == "pi":
        return "\\pi"
    if op == "probe":
        return "\\mathrm{" + _latex_escape(node[1]) + "}"
    if op == "+":
        parts = []
        for k, term in enumerate(node[1]):
            if term[0] == "-":
                parts.append(("-" if k == 0 else " - ") + latex(term[1], _PRODUCT))
            else:
                parts.append(("" if k == 0 else " + ") + latex(term, _SUM + 1))
        return "".join(parts)
    if op == "-":
        return "-" + latex(node[1], _PRODUCT)
    if op == "*":
        out = []
        for k, f in enumerate(node[1]):
            piece = latex(f, _PRODUCT)
            if k:
                out.append(" \\cdot " if f[0] == "n" else " ")
            out.append(piece)
        return "".join(out)
    if op == "/":
        return f"\\frac{{{latex(node[1])}}}{{{latex(node[2])}}}"
    if op == "^":
        return f"{latex(node[1], _ATOM)}^{{{latex(node[2])}}}"
    if op == "sqrt":
        return f"\\sqrt{{{latex(node[1])}}}"
    if op == "=":
        return f"{latex(node[1])} = {latex(node[2])}"
    raise ValueError(f"unknown formula node {op!r}")


# -- MathML -----------------------------------------------------------------------

_TIMES = "<mo>&#x2062;</mo>"           # invisible times
_DOT = "<mo>&#xB7;</mo>"
_MINUS = "<mo>&#x2212;</mo>"


def _escape(raw: str) -> str:
    return (raw.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
            .replace('"', "&quot;"))


def _mi(raw: str) -> str:
    return f"<mi>{_escape(raw)}</mi>"


def _ml_name(name: str) -> str:
    split = _split_name(name)
    if split:
        base, index = split
        sub = f"<mn>{index}</mn>" if index.isdigit() else \
            f'<mi mathvariant="normal">{_escape(index)}</mi>' if len(index) == 1 else _mi(index)
        return f"<msub>{_mi(base)}{sub}</msub>"
    return _mi(name)


def _ml_number(node) -> str:
    value = Fraction(int(node[1]), int(node[2]))
    dec = _decimal(value)
    sign = _MINUS if value < 0 else ""
    if dec is None:
        return (f"<mrow>{sign}<mfrac><mn>{abs(value.numerator)}</mn>"
                f"<mn>{value.denominator}</mn></mfrac></mrow>")
    mantissa, exponent = dec
    mantissa = mantissa.lstrip("-")
    if not exponent:
        return f"<mrow>{sign}<mn>{mantissa}</mn></mrow>" if sign else f"<mn>{mantissa}</mn>"
    power = f"<msup><mn>10</mn><mn>{exponent}</mn></msup>" if exponent > 0 else \
        f"<msup><mn>10</mn><mrow>{_MINUS}<mn>{-exponent}</mn></mrow></msup>"
    body = power if mantissa == "1" else f"<mn>{mantissa}</mn>{_DOT}{power}"
    return f"<mrow>{sign}{body}</mrow>"


def _paren(inner: str) -> str:
    return f"<mrow><mo>(</mo>{inner}<mo>)</mo></mrow>"


def mathml(node, outer: int = 0) -> str:
    """Presentation MathML of ``node`` (no ``<math>`` wrapper; see ``math_block``)."""
    out = _mathml(node)
    return _paren(out) if _precedence(node) < outer else out


def _mathml(node) -> str:
    op = node[0]
    if op == "n":
        return _ml_number(node)
    if op == "x":
        return _ml_name(node[1])
    if op == "j":
        return "<mi>j</mi>"
    if op == "pi":
        return "<mi>&#x3C0;</mi>"
    if op == "probe":
        return f"<mtext>{_escape(node[1])}</mtext>"
    if op == "+":
        parts = []
        for k, term in enumerate(node[1]):
            if term[0] == "-":
                parts.append(_MINUS + mathml(term[1], _PRODUCT))
            else:
                parts.append(("" if k == 0 else "<mo>+</mo>") + mathml(term, _SUM + 1))
        return "<mrow>" + "".join(parts) + "</mrow>"
    if op == "-":
        return f"<mrow>{_MINUS}{mathml(node[1], _PRODUCT)}</mrow>"
    if op == "*":
        out = []
        for k, f in enumerate(node[1]):
            if k:
                out.append(_DOT if f[0] == "n" else _TIMES)
            out.append(mathml(f, _PRODUCT))
        return "<mrow>" + "".join(out) + "</mrow>"
    if op == "/":
        return f"<mfrac>{mathml(node[1])}{mathml(node[2])}</mfrac>"
    if op == "^":
        return f"<msup>{mathml(node[1], _ATOM)}{mathml(node[2])}</msup>"
    if op == "sqrt":
        return f"<msqrt>{mathml(node[1])}</msqrt>"
    if op == "=":
        return f"<mrow>{mathml(node[1])}<mo>=</mo>{mathml(node[2])}</mrow>"
    raise ValueError(f"unknown formula node {op!r}")


def math_block(inner: str, display: bool = True) -> str:
    mode = "block" if display else "inline"
    return f'<math xmlns="{MATHML_NS}" display="{mode}">{inner}</math>'


def forms(node) -> dict:
    """``{"text", "latex", "mathml"}`` of one tree (the MathML a whole ``<math>``)."""
    return {"text": text(node), "latex": latex(node), "mathml": math_block(mathml(node))}
