"""Helpers shared by the tests: contract phasors as complex numbers, polar values."""

from __future__ import annotations

import cmath

from phasorbench.workflow import solve_text


def phasor(d: dict) -> complex:
    """A contract phasor dict as a complex number."""
    return complex(d["re"], d["im"])


def solve(text: str) -> dict:
    return solve_text(text, "<test>")


def polar(mag: float, deg: float) -> complex:
    return cmath.rect(mag, cmath.pi * deg / 180.0)


def current(result: dict, name: str) -> complex:
    return phasor(result["elements"][name]["current"])


def voltage(result: dict, name: str) -> complex:
    return phasor(result["elements"][name]["voltage"])


def node(result: dict, name: str) -> complex:
    return phasor(result["nodes"][name])


def formula_value(result: dict, frequency: float | None = None, values: dict | None = None):
    """The formula study's own shown formula (its tree) evaluated at s = j·2πf with every
    symbol at its value from the text (or ``values``), in 40-digit arithmetic, as a
    Python complex: what a reader of the formula would compute by hand."""
    import mpmath

    given = {e["name"]: complex(e["re"], e["im"]) for e in result["symbols"]}
    given.update(values or {})
    f = result["frequency_hz"] if frequency is None else frequency
    with mpmath.workdps(40):
        given["s"] = mpmath.mpc(0, 2 * mpmath.pi * mpmath.mpf(f))
        return complex(_tree_mp(result["formula"]["tree"][2], given, mpmath))


def _tree_mp(node, values, mpmath):
    op = node[0]
    if op == "n":
        return mpmath.mpf(int(node[1])) / int(node[2])
    if op == "x":
        return mpmath.mpmathify(values[node[1]])
    if op == "j":
        return mpmath.mpc(0, 1)
    if op == "pi":
        return mpmath.pi
    if op == "+":
        return mpmath.fsum(_tree_mp(t, values, mpmath) for t in node[1])
    if op == "-":
        return -_tree_mp(node[1], values, mpmath)
    if op == "*":
        out = mpmath.mpf(1)
        for f in node[1]:
            out *= _tree_mp(f, values, mpmath)
        return out
    if op == "/":
        return _tree_mp(node[1], values, mpmath) / _tree_mp(node[2], values, mpmath)
    if op == "^":
        return _tree_mp(node[1], values, mpmath) ** _tree_mp(node[2], values, mpmath)
    if op == "sqrt":
        return mpmath.sqrt(_tree_mp(node[1], values, mpmath))
    raise ValueError(op)


def formula_sympy(tree):
    """The shown formula's tree as a sympy expression, built with sympy's constructors
    (symbols plain, s as ``Symbol('s')``)."""
    import sympy as sp

    op = tree[0]
    if op == "=":
        return formula_sympy(tree[2])
    if op == "n":
        return sp.Rational(int(tree[1]), int(tree[2]))
    if op == "x":
        return sp.Symbol(tree[1])
    if op == "j":
        return sp.I
    if op == "pi":
        return sp.pi
    if op == "+":
        return sp.Add(*[formula_sympy(t) for t in tree[1]])
    if op == "-":
        return -formula_sympy(tree[1])
    if op == "*":
        return sp.Mul(*[formula_sympy(t) for t in tree[1]])
    if op == "/":
        return formula_sympy(tree[1]) / formula_sympy(tree[2])
    if op == "^":
        return formula_sympy(tree[1]) ** formula_sympy(tree[2])
    if op == "sqrt":
        return sp.sqrt(formula_sympy(tree[1]))
    raise ValueError(op)


def plain_symbols(expr):
    """``expr`` with every symbol replaced by a plain one of the same name (no
    assumptions), so expressions from two libraries compare."""
    import sympy as sp

    return expr.xreplace({x: sp.Symbol(x.name) for x in expr.free_symbols})
