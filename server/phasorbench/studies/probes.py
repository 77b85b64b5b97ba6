"""The one probe syntax every study reads: ``V(n)``, ``V(a, b)``, ``I(E)``, ``Z(a, b)``,
``Z(n)`` and the ratio ``X / Y`` of two of them (studies.md, "Probes").

A probe text parses into a small frozen tree (``Voltage``, ``Current``, ``Impedance``,
``Ratio``), each name carrying its column inside the probe text, so a diagnostic's caret
points at the name that is wrong. ``parse_probes`` reads several probes, checks them
against a circuit and reports every problem of every probe in one ``CircuitError``.
Results are keyed by ``Probe.text``: the probe text exactly as the user gave it.

>>> p = parse_probe("V(out) / V(in)")
>>> p.expr.numerator.a.name, p.expr.denominator.a.column, p.unit
('out', 13, '')
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass
from typing import Union

from ..errors import CircuitError, Diagnostic
from ..model import GROUND, Circuit

#: The longest probe text read (a guard against pasted junk).
MAX_PROBE_LENGTH = 400
_NAME = re.compile(r"[A-Za-z0-9_.]+")
_UNITS = {"V": "V", "I": "A", "Z": "Ω"}
_WHAT = {"V": "voltage", "I": "current", "Z": "impedance"}


@dataclass(frozen=True)
class Name:
    """A node or element name inside a probe; ``column`` counts from 1 in the probe text."""

    name: str
    column: int
    length: int

    @property
    def node(self) -> str:
        """The circuit's spelling of a node name: ``gnd`` and ``0`` are ground ``"0"``."""
        return GROUND if self.name.lower() in ("0", "gnd") else self.name


@dataclass(frozen=True)
class Voltage:
    """``V(a)`` (``b`` is None: to ground) or ``V(a, b)`` = V(a) − V(b)."""

    a: Name
    b: Name | None = None
    unit = "V"


@dataclass(frozen=True)
class Current:
    """``I(E)``: the current of element E from its ``from`` node to its ``to`` node."""

    element: Name
    unit = "A"


@dataclass(frozen=True)
class Impedance:
    """``Z(a, b)`` (``b`` None: to ground) with every independent source zeroed."""

    a: Name
    b: Name | None = None
    unit = "Ω"


Simple = Union[Voltage, Current, Impedance]


@dataclass(frozen=True)
class Ratio:
    """``numerator / denominator``, two simple probes divided point by point."""

    numerator: Simple
    denominator: Simple

    @property
    def unit(self) -> str:
        return ratio_unit(self.numerator.unit, self.denominator.unit)


@dataclass(frozen=True)
class Probe:
    """One parsed probe: ``text`` exactly as given (the results' key) and its tree."""

    text: str
    expr: Union[Simple, Ratio]

    @property
    def unit(self) -> str:
        return self.expr.unit

    @property
    def is_ratio(self) -> bool:
        return isinstance(self.expr, Ratio)

    def parts(self) -> tuple[Simple, ...]:
        """The simple probes this one is made of (one, or a ratio's two)."""
        if isinstance(self.expr, Ratio):
            return (self.expr.numerator, self.expr.denominator)
        return (self.expr,)


def ratio_unit(numerator: str, denominator: str) -> str:
    """The unit of a ratio: ``""`` for like over like, Ω for V/A, S for A/V."""
    if numerator == denominator:
        return ""
    known = {("V", "A"): "Ω", ("A", "V"): "S", ("V", "Ω"): "A", ("Ω", "A"): "V/A²"}
    return known.get((numerator, denominator), f"{numerator}/{denominator}")


class _ProbeSyntax(Exception):
    def __init__(self, message: str, hint: str, start: int, end: int | None = None):
        super().__init__(message)
        self.message, self.hint, self.start = message, hint, start
        self.end = start + 1 if end is None else end


_FORMS = "probes: V(n), V(a, b), I(E), Z(a, b), Z(n), or a ratio such as V(out)/V(in)"


def parse_probe(text: str) -> Probe:
    """Parse one probe text (syntax only); raise ``CircuitError`` with the column in it."""
    diagnostics = _parse(text)
    if isinstance(diagnostics, Probe):
        return diagnostics
    raise CircuitError(diagnostics)


def _parse(text: str) -> Probe | list[Diagnostic]:
    if not isinstance(text, str) or not text.strip():
        return [Diagnostic("a probe is empty", _FORMS)]
    if len(text) > MAX_PROBE_LENGTH:
        return [Diagnostic(f"a probe is longer than {MAX_PROBE_LENGTH} characters",
                           _FORMS, None, 1)]
    try:
        reader = _Reader(text)
        first = reader.simple()
        reader.space()
        expr = first
        if reader.peek() == "/":
            reader.pos += 1
            second = reader.simple()
            expr = Ratio(first, second)
            reader.space()
            if reader.peek() == "/":
                raise _ProbeSyntax("a probe is a ratio of two quantities at most", _FORMS,
                                   reader.pos)
        if reader.pos < len(text):
            raise _ProbeSyntax(f"unexpected '{text[reader.pos]}' after the probe",
                               _FORMS, reader.pos)
    except _ProbeSyntax as exc:
        return [Diagnostic(f"probe '{text}': {exc.message}", exc.hint, None,
                           exc.start + 1, max(1, exc.end - exc.start))]
    return Probe(text, expr)


class _Reader:
    def __init__(self, text: str):
        self.text, self.pos = text, 0

    def peek(self) -> str:
        return self.text[self.pos] if self.pos < len(self.text) else ""

    def space(self) -> None:
        while self.pos < len(self.text) and self.text[self.pos].isspace():
            self.pos += 1

    def expect(self, char: str, what: str) -> None:
        self.space()
        if self.peek() != char:
            found = f"'{self.peek()}'" if self.peek() else "the end"
            raise _ProbeSyntax(f"expected {what}, found {found}", _FORMS, self.pos)
        self.pos += 1

    def name(self, what: str) -> Name:
        self.space()
        match = _NAME.match(self.text, self.pos)
        if not match:
            found = f"'{self.peek()}'" if self.peek() else "the end"
            raise _ProbeSyntax(f"expected {what}, found {found}",
                               "names are written as in the circuit", self.pos)
        self.pos = match.end()
        return Name(match.group(), match.start() + 1, match.end() - match.start())

    def simple(self) -> Simple:
        self.space()
        start = self.pos
        letter = self.peek()
        if letter not in _UNITS:
            word = _NAME.match(self.text, self.pos)
            hint = _FORMS
            if letter.upper() in _UNITS:
                hint = f"write the capital letter: {letter.upper()}(…)"
            found = f"'{word.group() if word else letter}'" if letter else "the end"
            raise _ProbeSyntax(f"expected V(…), I(…) or Z(…), found {found}", hint, start,
                               word.end() if word else None)
        self.pos += 1
        self.expect("(", f"'(' after {letter}")
        if letter == "I":
            element = self.name("an element name")
            self.space()
            if self.peek() == ",":
                raise _ProbeSyntax("I(…) takes one element name", "a current is "
                                   "measured through one element, e.g. I(R1)", self.pos)
            self.expect(")", "')'")
            return Current(element)
        a = self.name("a node name")
        b = None
        self.space()
        if self.peek() == ",":
            self.pos += 1
            b = self.name("a second node name")
        self.expect(")", "')' or ', NODE'" if b is None else "')'")
        return Voltage(a, b) if letter == "V" else Impedance(a, b)


def check_probe(probe: Probe, circuit: Circuit) -> list[Diagnostic]:
    """Every unknown node or element of ``probe`` in ``circuit``, with a did-you-mean."""
    out = []
    nodes = circuit.nodes()
    known_nodes = set(nodes)
    for part in probe.parts():
        if isinstance(part, Current):
            out.extend(_check_element(probe.text, part.element, circuit))
            continue
        for name in (part.a, part.b):
            if name is not None and name.node not in known_nodes:
                close = _close(name.name, nodes)
                hint = (f"did you mean '{close[0]}'?" if close else
                        "nodes of this circuit: " + ", ".join(nodes[:12]) +
                        (", …" if len(nodes) > 12 else ""))
                out.append(_at(probe.text, name, f"'{name.name}' is not a node of this "
                               "circuit", hint))
        if isinstance(part, Impedance) and part.a.node == (part.b.node if part.b
                                                           else GROUND):
            where = part.b if part.b is not None else part.a
            out.append(_at(probe.text, where, "Z(…) needs two different nodes",
                           "the impedance between a node and itself is 0: name the "
                           "other terminal"))
    return out


def _check_element(text: str, name: Name, circuit: Circuit) -> list[Diagnostic]:
    if name.name in circuit.elements:
        return []
    group = circuit.groups.get(name.name)
    if group is not None:
        return [_at(text, name, f"'{name.name}' is a three-phase block, not one element",
                    f"name one of its phases, e.g. I({group.elements[0]})")]
    if name.name in circuit.couplings:
        return [_at(text, name, f"'{name.name}' is a coupling and carries no current",
                    "name one of its inductors: I(" + circuit.couplings[name.name]
                    .inductors[0] + ")")]
    names = list(circuit.elements)
    close = _close(name.name, names)
    hint = (f"did you mean '{close[0]}'?" if close else "elements of this circuit: " +
            ", ".join(names[:12]) + (", …" if len(names) > 12 else ""))
    return [_at(text, name, f"'{name.name}' is not an element of this circuit", hint)]


def _close(name: str, candidates: list[str]) -> list[str]:
    """The likeliest intended name: a different case first, then a near spelling."""
    same = [c for c in candidates if c.lower() == name.lower()]
    return same[:1] or difflib.get_close_matches(name, candidates, n=1, cutoff=0.5)


def _at(text: str, name: Name, message: str, hint: str) -> Diagnostic:
    return Diagnostic(f"probe '{text}': {message}", hint, None, name.column, name.length)


def parse_probes(texts, circuit: Circuit | None = None) -> list[Probe]:
    """Parse (and, given a circuit, check) every probe; one ``CircuitError`` for all.

    A probe given twice is read once (results are keyed by the text).
    """
    texts = list(texts)
    if not texts:
        raise CircuitError([Diagnostic("no probe given", _FORMS)])
    probes, diagnostics = [], []
    for text in dict.fromkeys(texts):
        parsed = _parse(text)
        if isinstance(parsed, list):
            diagnostics.extend(parsed)
            continue
        if circuit is not None:
            diagnostics.extend(check_probe(parsed, circuit))
        probes.append(parsed)
    if diagnostics:
        raise CircuitError(diagnostics)
    return probes


def describe(probe: Probe | Simple | Ratio) -> str:
    """A probe's meaning in words, for the sheet's table of probe definitions."""
    expr = probe.expr if isinstance(probe, Probe) else probe
    if isinstance(expr, Ratio):
        return f"{describe(expr.numerator)}, divided by {describe(expr.denominator)}"
    if isinstance(expr, Current):
        return f"current of {expr.element.name}, from its first terminal to its second"
    a = expr.a.node
    b = expr.b.node if expr.b is not None else GROUND
    if isinstance(expr, Voltage):
        return f"voltage of {a} to ground" if b == GROUND else \
            f"voltage of {a} minus voltage of {b}"
    target = "ground" if b == GROUND else b
    return (f"impedance seen between {a} and {target} with the independent sources "
            "zeroed")


def probe_kind(simple: Simple) -> str:
    """``"voltage"``, ``"current"`` or ``"impedance"``."""
    return {Voltage: "voltage", Current: "current", Impedance: "impedance"}[type(simple)]
