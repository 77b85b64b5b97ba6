"""The error tree of phasorbench: every failure the core can report to a user.

The core never knows HTTP codes or exit statuses; the command line and the web
app each map these classes once.

    PhasorbenchError                 base of everything the core raises on purpose
    ├── CircuitError                 the input is wrong; carries a list of Diagnostics
    │   ├── CircuitSyntaxError       a line could not be read (line, column, span, hint)
    │   ├── CircuitStructureError    the circuit reads but cannot be solved as drawn
    │   └── AnalysisError            the equations failed numerically (singular, NaN)

A ``Diagnostic`` is one message with its place; a ``CircuitError`` holds all the
diagnostics of one pass (errors and warnings), so a user sees every problem at once. All three are the user's to fix, so the
command line exits 2 and the API answers 422 for any ``CircuitError``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

_LINE_BREAK = re.compile(r"\r\n|\r|\n")


def source_lines(text: str) -> list[str]:
    """The lines of a circuit text, numbered as an editor numbers them.

    Only LF, CRLF and CR end a line: ``str.splitlines`` also splits at form feeds,
    U+2028 and other separators, and messages would then name the wrong line.
    """
    # str.split is three times faster than the pattern; most files have no CR at all.
    lines = _LINE_BREAK.split(text) if "\r" in text else text.split("\n")
    if lines[-1] == "":
        lines.pop()
    return lines


#: Characters kept of a message or a hint; diagnostics listed for one check.
MAX_TEXT, MAX_LISTED = 400, 100


@dataclass(frozen=True)
class Diagnostic:
    """One message about the input, with its place when it has one.

    ``line`` and ``column`` count from 1; ``length`` is the width of the caret span.
    ``severity`` is ``"error"`` or ``"warning"``.
    """

    message: str
    hint: str = ""
    line: int | None = None
    column: int | None = None
    length: int = 1
    severity: str = "error"

    def __post_init__(self):
        # Messages quote the input: a 300 KB token must not make a 300 KB message.
        for field in ("message", "hint"):
            value = getattr(self, field)
            if len(value) > MAX_TEXT:
                object.__setattr__(self, field, value[:MAX_TEXT - 1] + "\u2026")

    def as_dict(self) -> dict:
        """The contract's shape: ``{"line", "column", "message", "hint"}``."""
        return {"line": self.line, "column": self.column,
                "message": self.message, "hint": self.hint}


def bounded(diagnostics: list[Diagnostic], limit: int = MAX_LISTED) -> list[Diagnostic]:
    """The first ``limit`` diagnostics (errors before warnings) and one line for the rest.

    Error answers stay small whatever the input (300 KB of bad lines once gave 21 MB).

    >>> many = [Diagnostic("bad", line=n, column=1) for n in range(1, 1006)]
    >>> [d.message for d in bounded(many, 2)]
    ['bad', 'bad', '… and 1,003 more like these (the first 2 are listed)']
    """
    if len(diagnostics) <= limit:
        return list(diagnostics)
    errors = [d for d in diagnostics if d.severity == "error"]
    warnings = [d for d in diagnostics if d.severity != "error"]
    kept = (errors + warnings)[:limit]
    rest = len(diagnostics) - limit
    severity = "error" if len(errors) > limit else "warning"
    return kept + [Diagnostic(f"\u2026 and {rest:,} more like these (the first {limit} are "
                              "listed)", "fix these and check again", severity=severity)]


def answer(diagnostics) -> dict:
    """``{"errors": [...], "warnings": [...]}``: the contract's error items (plus the
    caret ``length`` and ``severity``), errors in line order (no line last) — the one
    shape of the API's 422 answers and the command line's ``--json`` on bad input."""
    def order(d: Diagnostic):
        return (d.line is None, d.line or 0, d.column or 0)

    def item(d: Diagnostic) -> dict:
        return {**d.as_dict(), "length": d.length, "severity": d.severity}

    ordered = sorted(diagnostics, key=order)
    return {"errors": [item(d) for d in ordered if d.severity != "warning"],
            "warnings": [item(d) for d in ordered if d.severity == "warning"]}


class PhasorbenchError(Exception):
    """Base of every error the core raises on purpose."""


class CircuitError(PhasorbenchError):
    """The input circuit is wrong; ``diagnostics`` lists every problem found."""

    def __init__(self, diagnostics: list[Diagnostic]):
        self.diagnostics = list(diagnostics)
        first = next((d for d in self.diagnostics if d.severity == "error"),
                     self.diagnostics[0] if self.diagnostics else None)
        super().__init__(first.message if first else "invalid circuit")

    @property
    def errors(self) -> list[Diagnostic]:
        return [d for d in self.diagnostics if d.severity == "error"]


class CircuitSyntaxError(CircuitError):
    """A line of the circuit text could not be read."""


class CircuitStructureError(CircuitError):
    """The circuit reads, but its structure has no unique solution."""


class AnalysisError(CircuitError):
    """The equations could not be solved numerically (singular matrix, NaN)."""


#: Arithmetic failures that mean a number computed from the circuit left the range of
#: double-precision floats (the square of 1e200, an exponent past the range). The
#: shells map them once, as an input problem (exit 2, HTTP 422), never as a crash.
NUMERIC_RANGE_ERRORS = (OverflowError, FloatingPointError)


def out_of_range(exc: BaseException | None = None) -> AnalysisError:
    """The ``AnalysisError`` a shell reports for one of ``NUMERIC_RANGE_ERRORS``."""
    return AnalysisError([Diagnostic(
        "a number computed from this circuit is outside the range of floating point "
        "(about 1e-308 to 1e308 in magnitude): the values are too extreme to solve",
        "scale the values to what the equipment has (for example kΩ and µF rather than "
        "1e300 Ω or 1e-320 V)")])


#: A source line longer than this is shown as a window around the caret.
SHOWN_LINE = 160


def format_diagnostic(diagnostic: Diagnostic, filename: str, text: str | None = None,
                      *, lines: list[str] | None = None) -> str:
    """``FILE:LINE:COL: error: message``, the source line, a caret span and the hint.

    >>> d = Diagnostic("bad", "fix it", line=1, column=3, length=2)
    >>> print(format_diagnostic(d, "f.circuit", "R1 x9"))
    f.circuit:1:3: error: bad
      R1 x9
        ^^
      hint: fix it
    """
    message = _escaped(diagnostic.message)
    if diagnostic.line is None:
        head = f"{filename}: {diagnostic.severity}: {message}"
    else:
        head = (f"{filename}:{diagnostic.line}:{diagnostic.column or 1}: "
                f"{diagnostic.severity}: {message}")
    out = [head]
    if lines is None and text is not None and diagnostic.line is not None:
        lines = source_lines(text)       # callers with many diagnostics pass ``lines``
    if diagnostic.line is not None and lines is not None:
        if 0 < diagnostic.line <= len(lines):
            raw = lines[diagnostic.line - 1]
            column = diagnostic.column or 1
            width = max(1, diagnostic.length)
            start = 0
            if len(raw) > SHOWN_LINE:    # a window around the caret, not megabytes
                start = max(0, column - 1 - SHOWN_LINE // 2)
                raw = raw[start:start + SHOWN_LINE]
                width = min(width, SHOWN_LINE)
            # One printable character per column, so the caret stays under its span
            # (a tab is one column) and no control character reaches the terminal.
            source = "".join(c if c.isprintable() else " " if c.isspace() else "\ufffd"
                             for c in raw)
            out.append("  " + source)
            out.append("  " + " " * (column - 1 - start) + "^" * width)
    if diagnostic.hint:
        out.append(f"  hint: {_escaped(diagnostic.hint)}")
    return "\n".join(out)


def _escaped(text: str) -> str:
    """Messages quote the input: show its control characters as escapes (\\x1b), so none
    reaches a terminal and the user sees what is there."""
    if text.isprintable():
        return text
    return "".join(c if c.isprintable() else c.encode("unicode_escape").decode("ascii")
                   for c in text)
