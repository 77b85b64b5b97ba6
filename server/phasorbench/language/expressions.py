"""The language's own evaluator for numbers, named values and parenthesised expressions.

User text never reaches ``eval``, ``exec`` or a computer-algebra parser: this module
walks the tokens itself and knows only numbers (with SI prefixes and units), named
values, ``+ - * / ^``, parentheses, ``pi``, ``sqrt`` and ``j``. Every result is a
``Quantity``: a complex number and the unit it carries (or ``None`` for a plain number,
``UNKNOWN_UNIT`` when arithmetic mixed units and the unit cannot be checked).
"""

from __future__ import annotations

import cmath
import math
import re
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Callable

from .lexer import Token

UNKNOWN_UNIT = "?"

PREFIXES = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "μ": 1e-6,
            "m": 1e-3, "k": 1e3, "M": 1e6, "G": 1e9, "T": 1e12}

# Spellings of every unit the language accepts, mapped to one canonical name.
UNITS = {"ohm": "ohm", "ohms": "ohm", "Ohm": "ohm", "Ω": "ohm", "\u2126": "ohm",
         "F": "F", "H": "H", "S": "S", "V": "V", "A": "A", "Hz": "Hz",
         "W": "W", "var": "var", "VA": "VA",
         "deg": "deg", "°": "deg", "rad": "rad"}

UNIT_NAMES = {"ohm": "ohms (Ω)", "F": "farads (F)", "H": "henries (H)", "S": "siemens (S)",
              "V": "volts (V)", "A": "amperes (A)", "Hz": "hertz (Hz)", "W": "watts (W)",
              "var": "vars (var)", "VA": "volt-amperes (VA)", "deg": "degrees",
              "rad": "radians"}

_IMAGINARY_WORD = re.compile(r"j((?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)(.*)")

#: Expressions may nest this deep (parentheses, signs, powers and named values used inside
#: named values, all counted together); deeper input is refused rather than overflowing
#: Python's stack.
MAX_DEPTH = 60


class LanguageError(Exception):
    """A problem in one line, pointing at columns ``start``..``end`` (0-based)."""

    def __init__(self, message: str, hint: str = "", start: int = 0, end: int = 1):
        super().__init__(message)
        self.message = message
        self.hint = hint
        self.start = start
        self.end = max(end, start + 1)
        #: Further problems of the same line found in the same pass (a spectrum's
        #: entries are all checked before the line gives up).
        self.more: list[LanguageError] = []


@dataclass(frozen=True, slots=True)
class Quantity:
    value: complex
    unit: str | None = None


def decode_suffix(word: str) -> tuple[float, str | None, bool] | None:
    """Read a prefix/unit word: return (multiplier, unit, imaginary) or None if unknown.

    >>> decode_suffix("mH")
    (0.001, 'H', False)
    >>> decode_suffix("kj")
    (1000.0, None, True)
    """
    if word in UNITS:
        return 1.0, UNITS[word], False
    if word[:1] in PREFIXES and word[1:] in UNITS and UNITS[word[1:]] not in ("deg", "rad"):
        return PREFIXES[word[0]], UNITS[word[1:]], False
    if word in PREFIXES:
        return PREFIXES[word], None, False
    if word.endswith("j") and (len(word) == 1 or word[:-1] in PREFIXES):
        return PREFIXES.get(word[:-1], 1.0), None, True
    return None


#: Characters that look like the language's own but are not (pasted from documents).
LOOKALIKES = {"−": "-", "–": "-", "—": "-", "‐": "-", "º": "°", "˚": "°", "×": "*",
              "·": "*", "＋": "+"}


def spelling_hint(word: str) -> str | None:
    """'did you mean …' for a look-alike character or a unit written in the wrong case."""
    from .lookalikes import foreign_digits_hint, name_hint
    foreign = foreign_digits_hint(word)
    if foreign:
        return foreign
    for char, meant in LOOKALIKES.items():
        if char in word:
            return f"'{char}' only looks like '{meant}': type the plain '{meant}'"
    if not word.isascii() and (letters := name_hint(word)):
        return letters
    lowered = {k.lower(): k for k in UNITS}
    for p in PREFIXES:                 # m before M: 'mh' most likely means mH
        for u in UNITS:
            if UNITS[u] not in ("deg", "rad"):
                lowered.setdefault((p + u).lower(), p + u)
    meant = lowered.get(word.lower())
    if meant is not None and meant != word:
        return f"did you mean '{meant}'? (units and prefixes are case-sensitive)"
    return None


def suffix_error(token: Token, number_text: str = "") -> LanguageError:
    text = number_text + token.text
    return LanguageError(
        f"'{text}' is not a number with a known prefix or unit",
        spelling_hint(token.text) or
        "prefixes: f p n u µ m k M G T (case matters: m milli, M mega); "
        "units: ohm Ω F H S V A Hz deg rad — e.g. 4.7k, 150 uF, 2.2 mH",
        token.start - len(number_text), token.end)


def imaginary_word(token: Token) -> Quantity | None:
    """``j5.1`` or ``j4.7k`` as an imaginary number; None when the word is something else."""
    match = _IMAGINARY_WORD.fullmatch(token.text)
    if not match:
        return None
    number, suffix = match.groups()
    unit = None
    scale = 1.0
    if suffix:
        decoded = decode_suffix(suffix)
        if decoded is None or decoded[2]:
            raise suffix_error(token)
        scale, unit, _ = decoded
    return Quantity(1j * float(number) * scale, unit)


class TokenStream:
    """A cursor over a slice of tokens with helpers for the grammars built on it.

    ``nesting`` is a one-item list shared by every stream of one reader, so a named value
    evaluated inside an expression counts its own nesting towards the same limit.
    """

    def __init__(self, tokens: list[Token], lookup: Callable[[Token], Quantity],
                 nesting: list[int] | None = None):
        self.tokens = tokens
        self.pos = 0
        self.lookup = lookup
        self.nesting = nesting if nesting is not None else [0]

    def peek(self, offset: int = 0) -> Token | None:
        i = self.pos + offset
        return self.tokens[i] if i < len(self.tokens) else None

    def take(self) -> Token:
        token = self.tokens[self.pos]
        self.pos += 1
        return token

    def at(self, *texts: str) -> bool:
        token = self.peek()
        return token is not None and token.kind == "punct" and token.text in texts

    def end_column(self) -> int:
        return self.tokens[-1].end if self.tokens else 0

    def fail_here(self, message: str, hint: str = "") -> LanguageError:
        token = self.peek()
        if token is None:
            end = self.end_column()
            return LanguageError(message, hint, end, end + 1)
        return LanguageError(message, hint, token.start, token.end)

    # -- atoms shared by the value grammar and expressions ------------------------

    def number(self) -> Quantity:
        """A number token with an optional glued prefix/unit/j word."""
        token = self.take()
        value = complex(float(token.text))
        unit = None
        follower = self.peek()
        if follower is not None and follower.glued and follower.kind == "word":
            decoded = decode_suffix(follower.text)
            if decoded is None:
                raise suffix_error(follower, token.text)
            self.take()
            scale, unit, imaginary = decoded
            value *= scale * (1j if imaginary else 1)
        return Quantity(value, unit)

    def word_atom(self) -> Quantity:
        token = self.take()
        imag = imaginary_word(token)
        if imag is not None:
            return imag
        if token.text == "pi":
            return Quantity(complex(math.pi))
        if token.text == "j":
            return Quantity(1j)
        if token.text == "sqrt":
            if not self.at("("):
                raise LanguageError("sqrt needs parentheses", "write sqrt(2)",
                                    token.start, token.end)
            inner = self.parenthesised()
            unit = None if inner.unit is None else UNKNOWN_UNIT
            return Quantity(cmath.sqrt(inner.value), unit)
        with self.deeper(token):        # a named value may itself hold an expression
            return self.lookup(token)

    @contextmanager
    def deeper(self, token: Token):
        """One level of nesting (a parenthesis, a sign, a power, a named value) while inside;
        refuse more than MAX_DEPTH."""
        if self.nesting[0] >= MAX_DEPTH:
            raise LanguageError("expression nested too deeply",
                                f"write it with at most {MAX_DEPTH} levels of parentheses, "
                                "signs, powers and named values", token.start, token.end)
        self.nesting[0] += 1
        try:
            yield
        finally:
            self.nesting[0] -= 1

    def parenthesised(self) -> Quantity:
        opening = self.take()
        with self.deeper(opening):
            return self._parenthesised(opening)

    def _parenthesised(self, opening: Token) -> Quantity:
        if self.at(")"):
            raise LanguageError("empty parentheses", "put an expression inside ( )",
                                opening.start, self.peek().end)
        result = self.expression()
        if not self.at(")"):
            if self.peek() is None:
                raise LanguageError("'(' is never closed", "add the missing ')'",
                                    opening.start, opening.end)
            raise self.fail_here(f"unexpected '{self.peek().text}' in the expression",
                                 "expressions allow numbers, names, + - * / ^, ( ), pi, sqrt, j")
        self.take()
        return result

    # -- expressions (inside parentheses) -----------------------------------------

    def expression(self) -> Quantity:
        first = self.peek()
        left = self.product()
        while self.at("+", "-"):
            op = self.take().text
            right = self.product()
            value = left.value + right.value if op == "+" else left.value - right.value
            left = Quantity(value, left.unit if left.unit == right.unit else UNKNOWN_UNIT)
        return _finite(left, first, self.peek(-1))

    def product(self) -> Quantity:
        left = self.power()
        while self.at("*", "/"):
            op_token = self.take()
            right = self.power()
            if op_token.text == "*":
                left = Quantity(left.value * right.value, _product_unit(left.unit, right.unit))
            else:
                if right.value == 0:
                    raise LanguageError("division by zero", "check the divisor",
                                        op_token.start, op_token.end)
                left = Quantity(left.value / right.value, _quotient_unit(left.unit, right.unit))
        return left

    def power(self) -> Quantity:
        # A sign or a power recurses like a parenthesis, so it counts towards MAX_DEPTH:
        # a long chain ('------1', '2^2^2^...') must end in a message, not a RecursionError.
        if self.at("-", "+"):
            sign_token = self.take()
            with self.deeper(sign_token):
                inner = self.power()
            return Quantity((-1 if sign_token.text == "-" else 1) * inner.value, inner.unit)
        base = self.atom()
        if self.at("^"):
            op_token = self.take()
            with self.deeper(op_token):
                exponent = self.power()
            try:
                value = base.value ** exponent.value
            except (ZeroDivisionError, OverflowError):
                raise LanguageError("this power cannot be computed (zero to a negative "
                                    "power, or too large)", "check the base and the exponent",
                                    op_token.start, op_token.end)
            unit = None if base.unit is None and exponent.unit is None else UNKNOWN_UNIT
            return Quantity(value, unit)
        return base

    def atom(self) -> Quantity:
        token = self.peek()
        if token is None:
            raise self.fail_here("the expression ends too early", "complete the expression")
        if token.kind == "number":
            return self.number()
        if token.kind == "word":
            return self.word_atom()
        if self.at("("):
            return self.parenthesised()
        raise self.fail_here(f"unexpected '{token.text}' in the expression",
                             "expressions allow numbers, names, + - * / ^, ( ), pi, sqrt, j")


def _product_unit(a: str | None, b: str | None) -> str | None:
    if a is None:
        return b
    if b is None:
        return a
    return UNKNOWN_UNIT


def _quotient_unit(a: str | None, b: str | None) -> str | None:
    if b is None:
        return a
    if a == b:
        return None
    return UNKNOWN_UNIT


def _finite(quantity: Quantity, first: Token, last: Token) -> Quantity:
    """The expression from ``first`` to ``last`` must not have overflowed."""
    v = quantity.value
    if not (math.isfinite(v.real) and math.isfinite(v.imag)):
        raise LanguageError("the value is not finite", "every value must be a finite number",
                            first.start, last.end)
    return quantity
