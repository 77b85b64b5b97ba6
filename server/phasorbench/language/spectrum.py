"""The ``spectrum`` option of sources: ``spectrum 5: 18 %, 7: 11 % @ 180 deg, 11: 6 %``.

studies.md, "Harmonic spectra": each entry is ``ORDER: PERCENT [@ ANGLE]`` — the
component at ORDER × the source's frequency, PERCENT of the source's own magnitude, at
``ANGLE + ORDER × (source phase)``. ORDER is greater than 1 (integers are harmonics,
others interharmonics) and appears once; PERCENT lies in 0–1000 % (the ``%`` sign may be
left out); ANGLE is in degrees unless marked ``rad`` and defaults to 0.

The entries' value problems (an order of 1, an order twice, a percentage out of range)
are all collected before the line gives up, so one pass names every one of them; a
broken shape (a missing colon) ends the reading where it stands.
"""

from __future__ import annotations

import math

from .expressions import LanguageError, TokenStream, spelling_hint
from .values import OPTION_WORDS, expect_unit, parse_angle_radians

#: Largest percentage of one component (ten times the fundamental).
MAX_PERCENT = 1000.0
#: Two orders closer than this (relative) are the same order.
SAME_ORDER = 1e-9
EXAMPLE = "e.g. spectrum 5: 18 %, 7: 11 % @ 180 deg"


def _is_option(token) -> bool:
    return token is not None and token.kind == "word" and token.text.lower() in OPTION_WORDS


def _number(stream: TokenStream, what: str, line_text: str):
    """A plain real number (an expression or a named value allowed): (value, span)."""
    first = stream.peek()
    if first is None or _is_option(first) or stream.at(",", ":", "%", "@", "∠"):
        raise stream.fail_here(f"missing {what}", EXAMPLE)
    q = stream.expression()
    last = stream.peek(-1)
    span = (first.start, last.end)
    token = stream.peek()
    if token is not None and token.kind == "word" and not _is_option(token):
        raise LanguageError(f"unexpected '{token.text}' after the {what}",
                            spelling_hint(token.text) or
                            f"the {what} is a plain number, {EXAMPLE}", token.start, token.end)
    expect_unit(q, None, what, span, line_text[span[0]:span[1]])
    if q.value.imag != 0:
        raise LanguageError(f"the {what} must be a real number", EXAMPLE, *span)
    return q.value.real, span


def read_spectrum(stream: TokenStream, option_token, line_text: str
                  ) -> tuple[tuple[float, float, float], ...]:
    """The entries after the word ``spectrum``: ``((order, fraction, angle_rad), ...)``."""
    if stream.peek() is None or _is_option(stream.peek()):
        raise LanguageError("spectrum needs at least one entry ORDER: PERCENT", EXAMPLE,
                            option_token.start, option_token.end)
    entries: list[tuple[float, float, float]] = []
    seen: dict[float, tuple[int, int]] = {}
    problems: list[LanguageError] = []
    try:
        while True:
            order, order_span = _number(stream, "harmonic order", line_text)
            if not stream.at(":"):
                token = stream.peek()
                hint = ("write ORDER: PERCENT, " + EXAMPLE if token is None or
                        token.text != "=" else "the order and its percentage are "
                        "separated by ':', " + EXAMPLE)
                raise stream.fail_here(f"expected ':' after the order {order:g}", hint)
            stream.take()
            percent, percent_span = _number(stream, "percentage", line_text)
            if stream.at("%"):
                stream.take()
            angle = 0.0
            if stream.at("@", "∠"):
                stream.take()
                angle = parse_angle_radians(stream)
            if not order > 1:
                problems.append(LanguageError(
                    f"harmonic order {order:g} is not above 1",
                    "the fundamental is the source's own value; orders are above 1 "
                    "(2, 3, 5, … or an interharmonic such as 2.5)", *order_span))
            else:
                twin = next((o for o in seen if abs(o - order) <= SAME_ORDER * order), None)
                if twin is not None:
                    problems.append(LanguageError(
                        f"harmonic order {order:g} is given twice in the spectrum",
                        "keep one entry per order (first at column "
                        f"{seen[twin][0] + 1})", *order_span))
                else:
                    seen[order] = order_span
            if not 0 <= percent <= MAX_PERCENT:
                problems.append(LanguageError(
                    f"a spectrum percentage must be from 0 % to {MAX_PERCENT:g} %; this "
                    f"one is {percent:g} %", "percent of the source's own magnitude, "
                    "e.g. 5: 18 %", *percent_span))
            entries.append((order, percent / 100.0, angle))
            if not stream.at(","):
                break
            comma = stream.take()
            if stream.peek() is None or _is_option(stream.peek()):
                raise LanguageError("a spectrum ends with a comma", "remove the comma or "
                                    "add the next entry, " + EXAMPLE, comma.start, comma.end)
    except LanguageError as exc:
        if problems:
            first, *rest = problems
            first.more = rest + [exc] + exc.more
            raise first from None
        raise
    if problems:
        first, *rest = problems
        first.more = rest
        raise first
    token = stream.peek()
    if token is not None and not _is_option(token):
        raise LanguageError(f"unexpected '{token.text}' after the spectrum",
                            "entries are separated by commas, " + EXAMPLE,
                            token.start, token.end)
    return tuple(sorted(entries))


def component(value: complex, order: float, fraction: float, angle: float) -> complex:
    """The phasor of one spectrum entry of a source whose fundamental phasor is ``value``:
    ``fraction·|value|`` at ``angle + order·arg(value)`` (the spectrum turns with its
    fundamental)."""
    phase = angle + order * math.atan2(value.imag, value.real)
    return abs(value) * fraction * complex(math.cos(phase), math.sin(phase))
