"""The ``sweep`` directive: a circuit's default frequency-response range.

    sweep FROM to TO[, N points] [log|linear]

(circuit-language.md; studies.md, "Frequency response"). FROM and TO are values in Hz
(a unit optional, named values allowed), finite and above zero, FROM below TO; N is a
whole number from 2 to 100,000; the spacing word is ``log`` or ``linear``. Left out,
the points and the spacing take the study's defaults (200, log). Every problem of the
line is reported, each at its own columns, in one pass.

>>> from phasorbench.language.parser import parse_circuit
>>> c = parse_circuit("frequency 50 Hz\\nsweep 50 Hz to 2.5 kHz, 400 points log\\n"
...                   "R1: resistor a -> 0 1")
>>> c.sweep.start, c.sweep.stop, c.sweep.points, c.sweep.spacing
(50.0, 2500.0, 400, 'log')
"""

from __future__ import annotations

import difflib
from typing import Callable

from ..model import SWEEP_MAX_POINTS, SWEEP_MIN_POINTS, SWEEP_SPACINGS, SweepRange
from .expressions import LanguageError, Quantity, TokenStream, decode_suffix, spelling_hint
from .lexer import Token
from .values import expect_unit, parse_value

__all__ = ["EXAMPLE", "read_sweep"]

EXAMPLE = "e.g. sweep 10 Hz to 10 kHz, 400 points log"
_POINTS_WORDS = ("points", "point")


def _is_word(token: Token, *words: str) -> bool:
    return token.kind == "word" and token.text.lower() in words


def _trailing_word(tokens: list[Token]) -> bool:
    """Whether the last of ``tokens`` (a value and maybe more) is a word apart that no
    value reads: a unit (``kHz``) or a unit miswritten (``KHZ``) stays with the value."""
    last = tokens[-1] if len(tokens) > 1 else None
    return (last is not None and last.kind == "word" and not last.glued and
            decode_suffix(last.text) is None and spelling_hint(last.text) is None)


def _span(tokens: list[Token]) -> tuple[int, int]:
    return tokens[0].start, tokens[-1].end


class _Reader:
    def __init__(self, text: str, lookup: Callable[[Token], Quantity], nesting: list[int],
                 quiet: tuple[type[BaseException], ...]):
        self.text, self.lookup, self.nesting, self.quiet = text, lookup, nesting, quiet
        self.errors: list[LanguageError] = []
        self.failed = False

    def fail(self, message: str, hint: str, start: int, end: int) -> None:
        self.errors.append(LanguageError(message, hint, start, end))
        self.failed = True

    def value(self, tokens: list[Token], what: str) -> tuple[Quantity | None, list[Token]]:
        """The value at the start of ``tokens`` and the tokens after it (None on failure,
        reported)."""
        stream = TokenStream(tokens, self.lookup, self.nesting)
        try:
            quantity = parse_value(stream, what)
        except LanguageError as exc:
            self.errors.append(exc)
            self.failed = True
            return None, []
        except self.quiet:              # a named value already reported where defined
            self.failed = True
            return None, []
        return quantity, tokens[stream.pos:]

    def frequency(self, tokens: list[Token], which: str, anchor: Token) -> tuple[float | None,
                                                                                 list[Token]]:
        if not tokens:
            self.fail(f"the sweep's {which} frequency is missing",
                      EXAMPLE, anchor.start, anchor.end)
            return None, []
        quantity, rest = self.value(tokens, "frequency")
        if quantity is None:
            return None, []
        used = tokens[:len(tokens) - len(rest)]
        start, end = _span(used)
        try:
            expect_unit(quantity, "Hz", "frequency", (start, end), self.text[start:end])
        except LanguageError as exc:
            self.errors.append(exc)
            self.failed = True
            return None, rest
        value = quantity.value
        if value.imag != 0 or not value.real > 0:
            self.fail(f"the sweep's {which} frequency must be a real number greater than "
                      "zero", "frequencies are in Hz and above 0, " + EXAMPLE, start, end)
            return None, rest
        return value.real, rest

    def points(self, tokens: list[Token], comma: Token) -> int | None:
        """``N points`` after the comma."""
        word = next((k for k, t in enumerate(tokens) if _is_word(t, *_POINTS_WORDS)), None)
        if not tokens or word == 0 or (word is None and tokens[0].kind == "word"):
            at = tokens[0] if tokens else comma
            self.fail("the number of points is missing after ','",
                      "write ', N points', e.g. , 400 points log (or drop the comma before "
                      "a spacing alone: sweep 10 Hz to 10 kHz log)", at.start, at.end)
            return None
        if word is None:
            self.fail("the word 'points' is missing after the number of points",
                      "e.g. , 400 points", *_span(tokens))
            return None
        quantity, rest = self.value(tokens[:word], "number of points")
        if quantity is None:
            return None
        start, end = _span(tokens[:word])
        if rest:
            self.fail(f"unexpected '{rest[0].text}' in the number of points",
                      "e.g. , 400 points", rest[0].start, rest[-1].end)
            return None
        if quantity.unit is not None:
            self.fail("the number of points takes no unit", "e.g. , 400 points", start, end)
            return None
        value = quantity.value
        if value.imag != 0 or value.real != int(value.real):
            self.fail("the number of points must be a whole number", "e.g. , 400 points",
                      start, end)
            return None
        count = int(value.real)
        if not SWEEP_MIN_POINTS <= count <= SWEEP_MAX_POINTS:
            self.fail(f"a sweep has {SWEEP_MIN_POINTS} to {SWEEP_MAX_POINTS:,} points, not "
                      f"{count:,}", f"e.g. , 400 points (a log grid of {SWEEP_MAX_POINTS:,} "
                      "is already finer than any drawing)" if count > SWEEP_MAX_POINTS
                      else "a sweep needs both ends: at least 2 points", start, end)
            return None
        return count

    def spacing(self, tokens: list[Token], after: str) -> str | None:
        """The spacing word, when ``tokens`` (what is left of the line) is one."""
        if not tokens:
            return None
        if len(tokens) == 1 and tokens[0].kind == "word":
            word = tokens[0].text.lower()
            if word in SWEEP_SPACINGS:
                return word
            close = difflib.get_close_matches(word, SWEEP_SPACINGS, n=1, cutoff=0.5)
            self.fail(f"'{tokens[0].text}' is not a spacing of a sweep",
                      f"did you mean '{close[0]}'?" if close else
                      "the spacing is log or linear", tokens[0].start, tokens[0].end)
            return None
        hint = (f"put a comma before the number of points: {EXAMPLE}"
                if tokens[0].kind == "number" and after == "frequency" else EXAMPLE)
        self.fail(f"unexpected '{tokens[0].text}' after the {after}", hint,
                  tokens[0].start, tokens[-1].end)
        return None


def read_sweep(tokens: list[Token], keyword: Token, text: str,
               lookup: Callable[[Token], Quantity], nesting: list[int],
               quiet: tuple[type[BaseException], ...] = ()
               ) -> tuple[SweepRange | None, list[LanguageError]]:
    """The range of a ``sweep`` line from the tokens after ``keyword``, and every problem
    of the line (the range is None when there is one).

    ``lookup`` reads named values; an exception of a ``quiet`` class from it marks the
    line failed without a message of its own (its cause is reported elsewhere).
    """
    reader = _Reader(text, lookup, nesting, quiet)
    if not tokens:
        reader.fail("a sweep line needs a range", EXAMPLE, keyword.start, keyword.end)
        return None, reader.errors
    cut = next((k for k, t in enumerate(tokens) if _is_word(t, "to")), None)
    if cut is None:
        reader.fail("a sweep line needs 'to' between its two frequencies", EXAMPLE,
                    *_span(tokens))
        return None, reader.errors
    to = tokens[cut]
    after = tokens[cut + 1:]
    comma = next((k for k, t in enumerate(after) if t.kind == "punct" and t.text == ","),
                 None)
    start, rest = reader.frequency(tokens[:cut], "lowest", to)
    if rest:
        reader.fail(f"unexpected '{rest[0].text}' after the lowest frequency",
                    "write 'to' right after it: " + EXAMPLE, rest[0].start, rest[-1].end)
    points = spacing = None
    if comma is None:
        # 'sweep 10 to Fmax log': the spacing word is read apart, not as the value's unit
        word = after[-1:] if _trailing_word(after) else []
        stop, rest = reader.frequency(after[:len(after) - len(word)], "highest", to)
        spacing = reader.spacing(rest + word, "frequency")
    else:
        stop, rest = reader.frequency(after[:comma], "highest", to)
        if rest:
            reader.fail(f"unexpected '{rest[0].text}' after the highest frequency",
                        EXAMPLE, rest[0].start, rest[-1].end)
        tail = after[comma + 1:]
        word = next((k for k, t in enumerate(tail) if _is_word(t, *_POINTS_WORDS)), None)
        points = reader.points(tail if word is None else tail[:word + 1], after[comma])
        if word is not None:
            spacing = reader.spacing(tail[word + 1:], "points")
    if start is not None and stop is not None and start >= stop:
        reader.fail(f"the sweep's lowest frequency ({start:g} Hz) must be below its highest "
                    f"({stop:g} Hz)", "swap the two ends" if start > stop else
                    "give two different frequencies", tokens[0].start, to.end if not after
                    else (after[:comma] if comma is not None else after)[-1].end)
    if reader.failed:
        return None, reader.errors
    return SweepRange(start, stop, points, spacing), reader.errors
