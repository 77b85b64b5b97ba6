"""The value grammar of element lines: numbers, units, rectangular and polar complex values.

A value is a sum of terms (``8.2 + j5.1``), optionally in polar form
(``10 ohm @ 36.87 deg``, ``10∠36.87° Ω``), where a term is a number with an optional
glued prefix/unit, an imaginary number (``j5.1``, ``5.1j``), a named value or a
parenthesised expression (``expressions.py``). Units are checked against what the
element kind takes (``expect_unit``).
"""

from __future__ import annotations

import cmath
import math

from .expressions import (UNIT_NAMES, UNKNOWN_UNIT, LanguageError, Quantity, TokenStream,
                          decode_suffix, imaginary_word, spelling_hint)

#: Words that end a value: the options that may follow it.
OPTION_WORDS = frozenset({"phase", "rms", "peak", "freq", "sense", "tol", "line",
                          "sequence", "uniform", "normal", "spectrum"})


def parse_value(stream: TokenStream, what: str = "value") -> Quantity:
    """Read one value at the stream's cursor; stop before an option word or a comma."""
    start_token = stream.peek()
    if start_token is None or _is_option(start_token) or stream.at(","):
        raise stream.fail_here(f"missing {what}", "write a number, e.g. 4.7k, 150 uF, 8.2 + j5.1")
    magnitude = _rectangular(stream)
    if stream.at("@", "∠"):
        stream.take()
        angle = _angle(stream)
        magnitude = Quantity(magnitude.value * cmath.exp(1j * angle), magnitude.unit)
        trailing = _unit_word(stream)
        if trailing is not None:
            scale, unit, token = trailing
            magnitude = _apply_unit(magnitude, scale, unit, token)
    value = magnitude.value
    if not (math.isfinite(value.real) and math.isfinite(value.imag)):
        end = stream.peek(-1).end if stream.pos else start_token.end
        raise LanguageError("the value is not finite", "every value must be a finite number",
                            start_token.start, end)
    return magnitude


def parse_angle_radians(stream: TokenStream) -> float:
    """An angle option value: degrees unless marked ``rad``; returns radians."""
    if stream.peek() is None or _is_option(stream.peek()):
        raise stream.fail_here("missing angle", "write e.g. phase -30 deg")
    return _angle(stream)


def expect_unit(quantity: Quantity, expected: str | None, kind: str, span: tuple[int, int],
                raw: str) -> None:
    """Raise when the value's unit does not fit ``expected`` (None: the kind takes no unit)."""
    unit = quantity.unit
    if unit is None or unit == UNKNOWN_UNIT or unit == expected:
        return
    article = "an" if kind[:1] in "aeiou" else "a"
    # The language's own wording: "a capacitor takes farads (F); '150 uH' is in henries".
    given = UNIT_NAMES[unit].split(" (")[0]
    if expected is None:
        raise LanguageError(f"{article} {kind} value takes no unit; '{raw}' is in {given}",
                            "write the plain number", *span)
    raise LanguageError(f"{article} {kind} takes {UNIT_NAMES[expected]}; '{raw}' is in "
                        f"{given}", f"write the value in {UNIT_NAMES[expected]}", *span)


def _is_option(token) -> bool:
    return token.kind == "word" and token.text.lower() in OPTION_WORDS


def _rectangular(stream: TokenStream) -> Quantity:
    terms: list[tuple[complex, str | None, bool]] = []   # value, unit, unit given apart
    first = stream.peek()
    sign = 1
    if stream.at("+", "-"):
        sign = -1 if stream.take().text == "-" else 1
    while True:
        starts = stream.peek()
        literal = starts is not None and starts.kind == "number"
        value, unit = _term(stream)
        apart = False
        word = _unit_word(stream)
        if word is not None:
            scale, word_unit, token = word
            if unit is not None and (literal or not (word_unit == unit and scale == 1.0)):
                if literal or unit == UNKNOWN_UNIT or word_unit != unit:
                    raise LanguageError(f"two units on one number ('{token.text}')",
                                        "give the unit once", token.start, token.end)
                raise LanguageError(
                    f"'{token.text}' would scale a value that already carries "
                    f"{UNIT_NAMES[unit]}", f"write the unit without a prefix, or leave "
                    "it out", token.start, token.end)
            if unit is not None:        # 'Cpf F': the unit written again, as a check
                word_unit = unit
            value, unit, apart = value * scale, word_unit, True
            last_scale = scale
        terms.append((sign * value, unit, apart))
        if stream.at("+", "-"):
            sign = -1 if stream.take().text == "-" else 1
            continue
        break
    # A unit written apart after the last term ends the whole value: '8.2 + j5.1 kohm'.
    if len(terms) > 1 and terms[-1][2] and all(u is None for _, u, _ in terms[:-1]):
        unit = terms[-1][1]
        total = sum(v for v, _, _ in terms[:-1]) * last_scale + terms[-1][0]
        return Quantity(total, unit)
    units = {u for _, u, _ in terms if u is not None}
    if len(units) > 1:
        raise LanguageError("the parts of this value carry different units",
                            "give one unit for the whole value", first.start,
                            stream.peek(-1).end)
    return Quantity(sum(v for v, _, _ in terms), units.pop() if units else None)


def _term(stream: TokenStream) -> tuple[complex, str | None]:
    token = stream.peek()
    if token is None or _is_option(token):
        raise stream.fail_here("a value ends with an operator", "complete the value or remove "
                               "the trailing + or -")
    if token.kind == "number":
        q = stream.number()
    elif token.kind == "word" and token.text == "j" and _signed_after(stream):
        # 'j-5' (a sign glued between j and its number) means j·(-5), as engineers write
        # '8 + j-5 ohm' for 8 - j5; read it so, rather than as 8 + j - 5.
        stream.take()
        sign = -1 if stream.take().text == "-" else 1
        value, unit = _term(stream)
        return 1j * sign * value, unit
    elif token.kind == "word":
        q = stream.word_atom()
    elif stream.at("("):
        q = stream.parenthesised()
    else:
        raise stream.fail_here(f"'{token.text}' is not a value",
                               spelling_hint(token.text) or
                               "write a number, e.g. 4.7k, 150 uF, 8.2 + j5.1, 10∠30°")
    return q.value, q.unit


def _signed_after(stream: TokenStream) -> bool:
    """A sign glued right after the current 'j' and a number glued right after the sign."""
    sign, after = stream.peek(1), stream.peek(2)
    return (sign is not None and after is not None and sign.glued and after.glued
            and sign.kind == "punct" and sign.text in "+-" and after.kind == "number")


def _unit_word(stream: TokenStream):
    """A unit word standing apart after a term: (scale, unit, token), or None."""
    token = stream.peek()
    if token is None or token.kind != "word" or _is_option(token):
        return None
    if imaginary_word(token) is not None:
        raise LanguageError(f"'{token.text}' needs a + or - before it",
                            "write e.g. 8.2 + j5.1", token.start, token.end)
    decoded = decode_suffix(token.text)
    if decoded is None or decoded[2]:
        raise LanguageError(f"unexpected '{token.text}' after the value",
                            spelling_hint(token.text) or
                            "a value may be followed by a unit (ohm, F, H, S, V, A, Hz) and "
                            "then options (phase, rms, peak, freq, spectrum, sense, tol)",
                            token.start, token.end)
    stream.take()
    return decoded[0], decoded[1], token


def _apply_unit(q: Quantity, scale: float, unit: str | None, token) -> Quantity:
    if q.unit is not None and unit is not None and q.unit != unit:
        raise LanguageError(f"'{token.text}' does not match the unit given before",
                            "give the unit once", token.start, token.end)
    return Quantity(q.value * scale, unit if unit is not None else q.unit)


def _angle(stream: TokenStream) -> float:
    first = stream.peek()
    sign = 1
    if stream.at("+", "-"):
        sign = -1 if stream.take().text == "-" else 1
    token = stream.peek()
    if token is None:
        raise stream.fail_here("missing angle after the polar sign", "write e.g. 10∠36.87°")
    if token.kind == "number":
        q = stream.number()
    elif token.kind == "word" and not _is_option(token):
        q = stream.word_atom()
    elif stream.at("("):
        q = stream.parenthesised()
    else:
        raise stream.fail_here(f"'{token.text}' is not an angle", "write e.g. 36.87 deg")
    unit = q.unit
    nxt = stream.peek()
    if nxt is not None and nxt.kind == "word" and nxt.text in ("deg", "°", "rad"):
        if unit is not None:
            raise LanguageError("two angle units", "give deg or rad once", nxt.start, nxt.end)
        unit = "rad" if nxt.text == "rad" else "deg"
        stream.take()
    if unit not in (None, "deg", "rad", UNKNOWN_UNIT):
        raise LanguageError(f"an angle takes deg, ° or rad, not {UNIT_NAMES[unit]}",
                            "write e.g. 36.87 deg", first.start, stream.peek(-1).end)
    if abs(q.value.imag) > 0:
        raise LanguageError("an angle must be real", "write e.g. 36.87 deg",
                            first.start, stream.peek(-1).end)
    angle = sign * q.value.real
    if not math.isfinite(angle):
        raise LanguageError("the angle is not finite", "every value must be a finite number",
                            first.start, stream.peek(-1).end)
    return angle if unit == "rad" else math.radians(angle)
