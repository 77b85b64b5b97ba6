"""Tests of the language's own evaluator (language/expressions.py).

What an expression may hold is the language design's (circuit-language.md: numbers with
prefixes, named values, + - * / ^, parentheses, pi, sqrt, j and nothing else). Every
expected number is computed here with Python's math/cmath on the same operands (marked
`# formula`), never by the evaluator under test.
"""

from __future__ import annotations

import cmath
import math
import operator
import re
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from phasorbench.language import expressions
from phasorbench.language.expressions import (MAX_DEPTH, UNKNOWN_UNIT, LanguageError,
                                              Quantity, TokenStream, decode_suffix)
from phasorbench.language.lexer import tokenize


def evaluate(text: str, names: dict[str, Quantity] | None = None) -> Quantity:
    """Evaluate ``(text)`` and check the whole text was read."""
    names = names or {}
    tokens, _ = tokenize(f"({text})")

    def lookup(token):
        if token.text in names:
            return names[token.text]
        raise LanguageError(f"unknown {token.text}", "", token.start, token.end)

    stream = TokenStream(tokens, lookup)
    result = stream.parenthesised()
    assert stream.peek() is None
    return result


def close(a: complex, b: complex) -> bool:
    return abs(a - b) <= 1e-12 * max(1.0, abs(b))


@pytest.mark.parametrize("text, expected", [
    ("2*3", 6),                                        # formula
    ("1/(2*pi*60*10)", 1 / (2 * math.pi * 60 * 10)),   # formula; circuit-language.md form
    ("sqrt(16)", 4),                                   # formula
    ("sqrt(2)/2", math.sqrt(2) / 2),                   # formula
    ("2^10", 2 ** 10),                                 # formula
    ("2^3^2", 2 ** (3 ** 2)),     # common practice, no source: ^ groups to the right
    ("-2^2", -(2 ** 2)),          # common practice, no source: the sign binds looser
    ("2^-1", 0.5),                                     # formula
    ("1 - 2 - 3", (1 - 2) - 3),   # common practice, no source: - groups to the left
    ("8 / 4 / 2", (8 / 4) / 2),
    ("2 + 3 * 4", 2 + 3 * 4),     # common practice, no source: * before +
    ("(2 + 3) * 4", (2 + 3) * 4),
    ("4j", 4j),                   # circuit-language.md: write 4j or j*4 inside an expression
    ("j*4", 4j),
    ("3 + 4j", 3 + 4j),
    ("j^2", -1),                  # formula: j² = -1
    ("pi", math.pi),              # formula
    ("sqrt(-4)", cmath.sqrt(-4)), # formula (principal root, 2j)
    ("1.12m*2", 1.12e-3 * 2),     # circuit-language.md: numbers with prefixes
    ("4.7k/47", 4.7e3 / 47),
    ("150u + 150µ", 300e-6),
])
def test_expression_values(text, expected):
    assert close(evaluate(text).value, expected)


def test_named_values_and_their_units():
    # circuit-language.md: a named value may carry a unit, checked where it is used
    cpf = Quantity(150e-6, "F")
    assert evaluate("2*Cpf", {"Cpf": cpf}) == Quantity(2 * 150e-6, "F")   # formula
    assert evaluate("Cpf/2", {"Cpf": cpf}).unit == "F"
    # a quotient of two values in the same unit is a plain number
    assert evaluate("Cpf/Cpf", {"Cpf": cpf}).unit is None
    # arithmetic that changes the dimension gives a unit the reader cannot check
    assert evaluate("1/(2*pi*60*Xc)", {"Xc": Quantity(10, "ohm")}).unit == UNKNOWN_UNIT
    assert evaluate("sqrt(Cpf)", {"Cpf": cpf}).unit == UNKNOWN_UNIT
    assert evaluate("Cpf + 1", {"Cpf": cpf}).unit == UNKNOWN_UNIT


def test_glued_unit_inside_an_expression():
    assert evaluate("2*150uF") == Quantity(2 * 150e-6, "F")    # formula, circuit-language.md


@pytest.mark.parametrize("text, message, column", [
    # circuit-language.md: "nothing else"; columns count from 1 within '(text)'
    ("1/0", "division by zero", 3),
    ("1/(2-2)", "division by zero", 3),
    ("0^-1", "this power cannot be computed", 3),
    ("10^400", "this power cannot be computed", 4),
    ("1e200*1e200", "the value is not finite", 2),
    ("", "empty parentheses", 1),
    ("2 +", "unexpected ')' in the expression", 5),
    ("2 ** 3", "unexpected '*' in the expression", 5),
    ("abs(3)", "unknown abs", 2),
    ("__import__", "unknown __import__", 2),
    ("sqrt 4", "sqrt needs parentheses", 2),
    ("2 ohm", "unexpected 'ohm' in the expression", 4),
    ("2, 3", "unexpected ',' in the expression", 3),
    ("1.5q", "'1.5q' is not a number with a known prefix or unit", 2),
])
def test_expression_errors_point_at_their_column(text, message, column):
    with pytest.raises(LanguageError) as caught:
        evaluate(text)
    assert caught.value.message.startswith(message)
    assert caught.value.start + 1 == column
    assert caught.value.hint or message.startswith("unknown")   # a hint says what to do


def test_unclosed_parenthesis():
    tokens, _ = tokenize("((1+2)")
    stream = TokenStream(tokens, lambda t: Quantity(0))
    with pytest.raises(LanguageError, match="never closed") as caught:
        stream.parenthesised()
    assert caught.value.start == 0              # the opening that is never closed


def test_nesting_limit_is_a_message_not_a_crash():
    # common practice, no source: deep input must end in a message, never in Python's
    # RecursionError
    assert evaluate("(" * (MAX_DEPTH - 1) + "1" + ")" * (MAX_DEPTH - 1)).value == 1
    with pytest.raises(LanguageError, match="nested too deeply"):
        evaluate("(" * MAX_DEPTH + "1" + ")" * MAX_DEPTH)


@pytest.mark.parametrize("text", [
    "-" * 5000 + "1",
    "+-" * 3000 + "1",
    "2^" * 5000 + "1",
    "sqrt(" * 500 + "4" + ")" * 500,
])
def test_long_chains_end_in_a_message(text):
    with pytest.raises(LanguageError, match="nested too deeply"):     # common practice
        evaluate(text)


def test_long_flat_sums_are_fine():
    # common practice, no source: length alone is not nesting
    assert evaluate("1" + " + 1" * 5000).value == 5001          # formula


@pytest.mark.parametrize("word, expected", [
    # circuit-language.md: prefixes f p n u µ m k M G T, case-sensitive; units of the kinds
    ("mH", (1e-3, "H", False)),
    ("MH", (1e6, "H", False)),
    ("uF", (1e-6, "F", False)),
    ("µF", (1e-6, "F", False)),
    ("kohm", (1e3, "ohm", False)),
    ("kΩ", (1e3, "ohm", False)),
    ("Ω", (1.0, "ohm", False)),
    ("\u2126", (1.0, "ohm", False)),    # the ohm sign, a different code point from Ω
    ("k", (1e3, None, False)),
    ("kj", (1e3, None, True)),
    ("j", (1.0, None, True)),
    ("Hz", (1.0, "Hz", False)),
    ("kHz", (1e3, "Hz", False)),
    ("deg", (1.0, "deg", False)),
    ("mdeg", None),                      # angles take no prefix
    ("K", None),                         # kilo is lower case
    ("q", None),
])
def test_decode_suffix(word, expected):
    assert decode_suffix(word) == expected


# --- property: random expression trees against Python's own arithmetic -------------

_OPS = {"+": operator.add, "-": operator.sub, "*": operator.mul, "/": operator.truediv}


@st.composite
def trees(draw, depth=0):
    """An expression as (text, value): the value is computed by Python, not by the reader."""
    if depth > 4 or draw(st.booleans()):
        n = draw(st.integers(0, 999))
        return str(n), complex(n)
    op = draw(st.sampled_from(sorted(_OPS)))
    left_text, left = draw(trees(depth + 1))
    right_text, right = draw(trees(depth + 1))
    if op == "/" and right == 0:
        right_text, right = f"({right_text}+1)", right + 1
    return f"({left_text} {op} {right_text})", _OPS[op](left, right)


@settings(max_examples=300, deadline=None, derandomize=True, database=None)
@given(trees())
def test_random_arithmetic_matches_python(tree):
    text, expected = tree
    assert close(evaluate(text).value, expected)       # formula (Python's own arithmetic)


def test_the_evaluator_never_calls_eval():
    # DEVELOPERS.md rule: user text never reaches eval, exec, sympify or parse_expr
    source = "\n".join(p.read_text(encoding="utf-8")
                       for p in Path(expressions.__file__).parent.glob("*.py"))
    code = re.sub(r'""".*?"""|#.*', "", source, flags=re.S)
    for word in ("eval(", "exec(", "sympify", "parse_expr", "compile("):
        assert word not in code
